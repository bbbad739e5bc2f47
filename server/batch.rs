//! `sagline analyze`: the same parser and validation as the upload, then the whole
//! analysis, printed as the JSON contract of PRODUCT.md (or CSV, one row per well
//! and age). Nothing is printed to stdout unless every input is valid and the
//! output is complete.

use clap::{Args, ValueEnum};
use sagline_science::analysis::{self, StudyInputs, contract::Report};
use sagline_science::input::{self, InputProblem, TopsOptions};
use sagline_science::lithology::{Catalogue, Lithology};
use sagline_science::{ModelParameters, SeaLevelCurve};
use serde::Deserialize;
use std::io::{IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum OutputFormat {
    Json,
    Csv,
}

#[derive(Debug, Clone, Args)]
pub struct AnalyzeArgs {
    /// The tops CSV file (format in README.md).
    pub tops: PathBuf,
    /// Well locations and notes (CSV).
    #[arg(long)]
    pub wells: Option<PathBuf>,
    /// Eustatic sea-level curve (CSV: age_ma, sea_level_m).
    #[arg(long = "sea-level")]
    pub sea_level: Option<PathBuf>,
    /// Model parameters and lithologies (JSON, the shape of the output's `parameters`; any
    /// field may be left out; lithologies are added to or replace the published defaults by name).
    #[arg(long)]
    pub params: Option<PathBuf>,
    /// The team's rift picks (CSV: well, rift_onset_ma, rift_end_ma), used instead of the proposal.
    #[arg(long)]
    pub picks: Option<PathBuf>,
    /// Only decompact and backstrip: leave `phases` empty and `stretching` null (faster).
    #[arg(long, conflicts_with = "picks")]
    pub backstrip_only: bool,
    #[arg(long, value_enum, default_value = "json")]
    pub format: OutputFormat,
    /// Write the output here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Why `analyze` stopped: the message is printed to stderr as it is.
#[derive(Debug)]
pub struct BatchError(pub String);

impl From<Vec<InputProblem>> for BatchError {
    fn from(problems: Vec<InputProblem>) -> Self {
        let mut text = format!(
            "the input has {} problem(s); nothing was analysed:",
            problems.len()
        );
        for p in problems {
            text.push_str("\n  ");
            text.push_str(&p.to_string());
        }
        BatchError(text)
    }
}

pub fn run(args: &AnalyzeArgs) -> ExitCode {
    match analyze(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(BatchError(message)) => {
            eprintln!("error: {message}");
            ExitCode::FAILURE
        }
    }
}

pub(crate) fn read(path: &Path) -> Result<Vec<u8>, BatchError> {
    let meta = std::fs::metadata(path)
        .map_err(|e| BatchError(format!("cannot read {}: {e}", path.display())))?;
    if meta.len() > input::MAX_FILE_BYTES as u64 {
        return Err(BatchError(format!(
            "{} is {} MiB, over the limit of {} MiB; split it into several files",
            path.display(),
            meta.len() / (1024 * 1024),
            input::MAX_FILE_BYTES / (1024 * 1024)
        )));
    }
    std::fs::read(path).map_err(|e| BatchError(format!("cannot read {}: {e}", path.display())))
}

pub(crate) fn file_name(path: &Path) -> String {
    path.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string())
}

/// The `--params` file: model parameters (any subset) and lithologies.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct ParamsFile {
    #[serde(flatten)]
    model: ModelParameters,
    #[serde(default)]
    lithologies: Vec<LithologyEntry>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct LithologyEntry {
    name: String,
    surface_porosity: f64,
    compaction_per_km: f64,
    grain_density_kg_m3: f64,
}

/// Read `--params`: parameters validated against their physical ranges, lithologies
/// merged by name into the published defaults.
pub fn load_parameters(path: Option<&Path>) -> Result<(ModelParameters, Catalogue), BatchError> {
    let file: ParamsFile = match path {
        None => ParamsFile::default(),
        Some(p) => {
            let bytes = read(p)?;
            serde_json::from_slice(&bytes).map_err(|e| {
                BatchError(format!(
                    "{} line {}, column {}: {e}",
                    file_name(p),
                    e.line(),
                    e.column()
                ))
            })?
        }
    };
    if let Err(problems) = file.model.validate() {
        let list: Vec<String> = problems.iter().map(|e| e.to_string()).collect();
        let source = path
            .map(file_name)
            .unwrap_or_else(|| "the default parameters".into());
        return Err(BatchError(format!(
            "{source}: parameters out of range: {}",
            list.join("; ")
        )));
    }
    let mut lithologies: Vec<Lithology> = Catalogue::published_defaults().lithologies().to_vec();
    for entry in file.lithologies {
        let l = Lithology::new(
            &entry.name,
            entry.surface_porosity,
            entry.compaction_per_km,
            entry.grain_density_kg_m3,
        )
        .map_err(|e| {
            let source = path.map(file_name).unwrap_or_default();
            BatchError(format!("{source}: lithology '{}': {e}", entry.name))
        })?
        .with_source("given in the parameters file");
        match lithologies
            .iter_mut()
            .find(|x| x.name.eq_ignore_ascii_case(&l.name))
        {
            Some(slot) => *slot = l,
            None => lithologies.push(l),
        }
    }
    let catalogue = Catalogue::new(lithologies).map_err(|e| BatchError(e.to_string()))?;
    Ok((file.model, catalogue))
}

fn analyze(args: &AnalyzeArgs) -> Result<(), BatchError> {
    let (params, catalogue) = load_parameters(args.params.as_deref())?;

    // Read and validate every file first, reporting all problems together.
    let mut problems = Vec::new();
    let tops_bytes = read(&args.tops)?;
    let names: Vec<String> = catalogue
        .lithologies()
        .iter()
        .map(|l| l.name.clone())
        .collect();
    let spelling = |n: &str| names.iter().find(|c| c.eq_ignore_ascii_case(n)).cloned();
    let options = TopsOptions {
        file_name: Some(file_name(&args.tops)),
        ..Default::default()
    };
    let tops = input::parse_tops_with_catalogue(&tops_bytes, &options, &spelling)
        .map_err(|p| problems.extend(p))
        .ok();
    if let Some(path) = &args.wells {
        let opts = input::WellsOptions {
            file_name: Some(file_name(path)),
            ..Default::default()
        };
        if let Err(p) = input::parse_wells(&read(path)?, &opts) {
            problems.extend(p);
        }
    }
    let sea_level = match &args.sea_level {
        Some(path) => match input::parse_sea_level(&read(path)?) {
            Ok(c) => c,
            Err(mut p) => {
                input::name_file(&mut p, &file_name(path));
                problems.extend(p);
                SeaLevelCurve::default()
            }
        },
        None => SeaLevelCurve::default(),
    };
    let picks = match &args.picks {
        Some(path) => match input::parse_picks(&read(path)?) {
            Ok(p) => p,
            Err(mut p) => {
                input::name_file(&mut p, &file_name(path));
                problems.extend(p);
                Vec::new()
            }
        },
        None => Vec::new(),
    };
    let tops = match tops {
        Some(t) if problems.is_empty() => t,
        _ => return Err(problems.into()),
    };
    if let Some(unknown) = picks
        .iter()
        .find(|p| !tops.wells.iter().any(|w| w.name == p.well))
    {
        let picks_file = args.picks.as_deref().map(file_name).unwrap_or_default();
        return Err(BatchError(format!(
            "{picks_file}, column well: well '{}' is not in the tops file {}",
            unknown.well,
            file_name(&args.tops)
        )));
    }

    let inputs = StudyInputs {
        params,
        catalogue,
        sea_level,
    };
    let bar = progress_bar(tops.wells.len());
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let timing = |well: &str| {
        picks
            .iter()
            .find(|p| p.well == well)
            .map(|p| vec![(p.rift_onset_ma, p.rift_end_ma)])
    };
    let results = if args.backstrip_only {
        analysis::backstrip_wells(&tops.wells, &inputs, &tick)
    } else {
        analysis::analyse_wells(&tops.wells, &inputs, &timing, &tick)
    };
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    let report = analysis::report(&tops.wells, &results, &inputs);
    let output = render(&report, args.format)?;
    // The process ends right after writing: let the OS reclaim the analysis (freeing
    // millions of small allocations one by one would take a noticeable part of a large run).
    std::mem::forget(report);
    std::mem::forget(results);
    std::mem::forget(tops);
    match &args.out {
        Some(path) => std::fs::write(path, output)
            .map_err(|e| BatchError(format!("cannot write {}: {e}", path.display()))),
        None => {
            let mut out = std::io::stdout().lock();
            out.write_all(&output)
                .and_then(|_| out.flush())
                .map_err(|e| BatchError(format!("cannot write the output: {e}")))
        }
    }
}

/// Show a progress bar on stderr only for long runs on a terminal.
fn progress_bar(wells: usize) -> Option<indicatif::ProgressBar> {
    const MANY_WELLS: usize = 200;
    if wells < MANY_WELLS || !std::io::stderr().is_terminal() {
        return None;
    }
    let bar = indicatif::ProgressBar::new(wells as u64);
    if let Ok(style) =
        indicatif::ProgressStyle::with_template("{bar:40} {pos}/{len} wells analysed ({eta} left)")
    {
        bar.set_style(style);
    }
    Some(bar)
}

/// Above this many wells the JSON is written compact rather than indented.
pub const INDENTED_JSON_MAX_WELLS: usize = 100;

/// The whole output in memory, so that a failure prints nothing partial.
pub fn render(report: &Report, format: OutputFormat) -> Result<Vec<u8>, BatchError> {
    match format {
        OutputFormat::Json => {
            // Indented for reading when the set is small; compact (same content) when it is
            // large, where indentation would double the size of the file.
            let written = if report.wells.len() <= INDENTED_JSON_MAX_WELLS {
                serde_json::to_vec_pretty(report)
            } else {
                serde_json::to_vec(report)
            };
            let mut v = written.map_err(|e| BatchError(format!("cannot write JSON: {e}")))?;
            v.push(b'\n');
            Ok(v)
        }
        OutputFormat::Csv => {
            let mut w = csv::Writer::from_writer(Vec::new());
            let fail = |e: csv::Error| BatchError(format!("cannot write CSV: {e}"));
            w.write_record(analysis::CSV_HEADER).map_err(fail)?;
            for well in &report.wells {
                for row in analysis::csv_rows(well) {
                    w.write_record(&row).map_err(fail)?;
                }
            }
            w.into_inner()
                .map_err(|e| BatchError(format!("cannot write CSV: {e}")))
        }
    }
}
