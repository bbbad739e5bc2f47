//! `sagline analyze`: the same parser and validation as the upload, then the whole
//! analysis, printed as the JSON contract of PRODUCT.md (or CSV, one row per well
//! and age).
//!
//! Every input is read and validated before anything is written: a bad input prints
//! nothing on stdout and leaves `--out` as it was. Then the wells are analysed in
//! parallel a chunk at a time and written in input order as they complete, so the
//! process holds about one chunk of wells, not the whole report. `--out` is written to
//! a temporary file in the same directory and renamed into place at the end.

use clap::{Args, ValueEnum};
use sagline_science::analysis::contract::{ParametersOut, WellOut};
use sagline_science::analysis::thermal::{ThermalChoices, ThermalInputs};
use sagline_science::analysis::{self, RiftTiming, StudyInputs};
use sagline_science::input::{self, InputProblem, TopsOptions};
use sagline_science::lithology::{Catalogue, Lithology};
use sagline_science::thermal::ThermalMethod;
use sagline_science::{ModelParameters, SeaLevelCurve, WellColumn};
use serde::{Deserialize, Serialize};
use std::cell::RefCell;
use std::io::{IsTerminal, Write};
use std::panic::{AssertUnwindSafe, catch_unwind};
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
    /// The team's rift picks (CSV: well, rift_onset_ma, rift_end_ma, optional event 1 or 2),
    /// used instead of the proposal.
    #[arg(long)]
    pub picks: Option<PathBuf>,
    /// Measured temperatures, vitrinite reflectance and surface heat flow (CSV: well,
    /// depth_m, kind, value, uncertainty, optional note): each well's model is compared
    /// with its points and a basal heat-flow offset proposed (`calibration` in the output).
    #[arg(long)]
    pub calibration: Option<PathBuf>,
    /// Only decompact and backstrip: leave `phases` empty and `stretching` null (faster).
    #[arg(long, conflicts_with_all = ["picks", "calibration"])]
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
    #[serde(default)]
    thermal: ThermalEntry,
}

/// The `thermal` object of the `--params` file; every field optional.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct ThermalEntry {
    /// Surface (sea-floor) temperature at every age, °C.
    surface_temperature_c: Option<f64>,
    /// Radiogenic heat production at the top of the crust, µW/m³.
    crust_heat_production_uw_m3: Option<f64>,
    /// Depth over which it falls by a factor e, km.
    crust_heat_production_decay_km: Option<f64>,
    /// `transient` (the default) or `steady_per_step`.
    method: Option<ThermalMethod>,
}

impl ThermalEntry {
    /// The thermal inputs: the defaults with what the file sets, each checked.
    fn inputs(&self, source: &str) -> Result<ThermalInputs, BatchError> {
        let choices = ThermalChoices {
            surface_temperature_c: self.surface_temperature_c,
            crust_heat_production_uw_m3: self.crust_heat_production_uw_m3,
            crust_heat_production_decay_km: self.crust_heat_production_decay_km,
        };
        let mut inputs = choices
            .inputs(source)
            .map_err(|e| BatchError(format!("{source}: thermal: {e}")))?;
        if let Some(m) = self.method {
            inputs.settings.method = m;
        }
        Ok(inputs)
    }
}

/// What a `--params` file gives: the model parameters, the lithology catalogue and the
/// thermal inputs.
pub struct LoadedParameters {
    pub params: ModelParameters,
    pub catalogue: Catalogue,
    pub thermal: ThermalInputs,
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
/// merged by name into the published defaults, thermal settings over their defaults.
pub fn load_parameters(path: Option<&Path>) -> Result<LoadedParameters, BatchError> {
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
    let source = path.map(file_name).unwrap_or_else(|| "the defaults".into());
    let thermal = file.thermal.inputs(&source)?;
    Ok(LoadedParameters {
        params: file.model,
        catalogue,
        thermal,
    })
}

fn analyze(args: &AnalyzeArgs) -> Result<(), BatchError> {
    let LoadedParameters {
        params,
        catalogue,
        thermal,
    } = load_parameters(args.params.as_deref())?;

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
    let calibration = match &args.calibration {
        Some(path) => match input::parse_calibration(&read(path)?) {
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
    // Rows of the picks and calibration files that name a well the tops file lacks.
    let tops_name = file_name(&args.tops);
    let strangers = |file: Option<&Path>, rows: Vec<(&str, usize)>| -> Vec<InputProblem> {
        let file = file.map(file_name).unwrap_or_default();
        rows.into_iter()
            .filter(|(well, _)| !tops.wells.iter().any(|w| w.name == *well))
            .map(|(well, line)| InputProblem {
                file: file.clone(),
                line: Some(line),
                column: Some("well".into()),
                reason: format!("well \"{well}\" is not in the tops file {tops_name}"),
            })
            .collect()
    };
    let mut unknown = strangers(
        args.calibration.as_deref(),
        calibration
            .iter()
            .map(|p| (p.well.as_str(), p.line))
            .collect(),
    );
    unknown.extend(strangers(
        args.picks.as_deref(),
        picks.iter().map(|p| (p.well.as_str(), p.line)).collect(),
    ));
    if !unknown.is_empty() {
        return Err(unknown.into());
    }

    let inputs = StudyInputs {
        params,
        catalogue,
        sea_level,
        thermal,
    };
    let timing = |well: &str| input::timings_of(&picks, well);
    let run = Run {
        wells: &tops.wells,
        inputs: &inputs,
        timing: &timing,
        backstrip_only: args.backstrip_only,
        calibration: &calibration,
    };
    // Every input is valid: from here on the output is written as the wells complete.
    let mut sink = Sink::open(args.out.as_deref())?;
    let bar = progress_bar(tops.wells.len());
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let written = write_output(&run, args.format, &mut sink.writer, &tick);
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    written?;
    sink.commit()
}

/// Where the output goes: standard output, or a temporary file beside `--out` that is
/// renamed over it only once the whole output is written (dropped, it is deleted, so a
/// failed run leaves no file and an existing `--out` untouched).
struct Sink {
    writer: std::io::BufWriter<Box<dyn Write>>,
    temp: Option<(tempfile::TempPath, PathBuf)>,
}

/// Output buffer: large writes, few system calls.
const OUTPUT_BUFFER_BYTES: usize = 1 << 20;

impl Sink {
    fn open(out: Option<&Path>) -> Result<Sink, BatchError> {
        let Some(path) = out else {
            let stdout: Box<dyn Write> = Box::new(std::io::stdout().lock());
            return Ok(Sink {
                writer: std::io::BufWriter::with_capacity(OUTPUT_BUFFER_BYTES, stdout),
                temp: None,
            });
        };
        let cannot =
            |e: std::io::Error| BatchError(format!("cannot write {}: {e}", path.display()));
        let dir = match path.parent() {
            Some(d) if !d.as_os_str().is_empty() => d,
            _ => Path::new("."),
        };
        // Hidden, and named after its target, should an interrupted run leave it behind.
        let prefix = format!(".{}.", file_name(path));
        let mut builder = tempfile::Builder::new();
        builder.prefix(&prefix).suffix(".tmp");
        // The file a plain create would make (read-write for the owner, readable by others).
        #[cfg(unix)]
        builder.permissions(std::os::unix::fs::PermissionsExt::from_mode(0o644));
        let (file, temp_path) = builder.tempfile_in(dir).map_err(cannot)?.into_parts();
        let file: Box<dyn Write> = Box::new(file);
        Ok(Sink {
            writer: std::io::BufWriter::with_capacity(OUTPUT_BUFFER_BYTES, file),
            temp: Some((temp_path, path.to_path_buf())),
        })
    }

    /// Flush, and move a temporary file into place.
    fn commit(self) -> Result<(), BatchError> {
        let Sink { writer, temp } = self;
        let target = temp.as_ref().map(|(_, p)| p.display().to_string());
        let cannot = |e: std::io::Error| match &target {
            Some(t) => BatchError(format!("cannot write {t}: {e}")),
            None => BatchError(format!("cannot write the output: {e}")),
        };
        let mut inner = writer.into_inner().map_err(|e| cannot(e.into_error()))?;
        inner.flush().map_err(cannot)?;
        drop(inner);
        if let Some((temp_path, path)) = temp {
            temp_path.persist(&path).map_err(|e| cannot(e.error))?;
        }
        Ok(())
    }
}

/// One analysis run: the validated wells and everything they are analysed with.
struct Run<'a> {
    wells: &'a [WellColumn],
    inputs: &'a StudyInputs,
    timing: &'a (dyn Fn(&str) -> Option<RiftTiming> + Sync),
    backstrip_only: bool,
    /// Calibration points of any of the wells (may be empty).
    calibration: &'a [input::CalibrationPoint],
}

/// Wells analysed together in parallel before their results are written: enough to
/// keep every core busy, few enough that the process holds little at a time.
const CHUNK_WELLS: usize = 32;

impl Run<'_> {
    /// The report entries of `wells`, in their order, analysed in parallel. A well whose
    /// analysis fails is an entry saying so; so is a well whose analysis panics (a bug,
    /// reported on stderr by the panic message): one bad well never stops the run.
    fn well_outs(&self, wells: &[WellColumn], tick: &(dyn Fn() + Sync)) -> Vec<WellOut> {
        let analyse = |wells: &[WellColumn]| {
            let results = if self.backstrip_only {
                analysis::backstrip_wells(wells, self.inputs, tick)
            } else {
                analysis::analyse_wells(wells, self.inputs, self.timing, tick)
            };
            let mut outs = analysis::report(wells, &results, self.inputs).wells;
            analysis::attach_calibration(wells, &results, &mut outs, self.inputs, self.calibration);
            outs
        };
        match catch_unwind(AssertUnwindSafe(|| analyse(wells))) {
            Ok(outs) => outs,
            // Find the well that panicked: run the chunk again one well at a time.
            Err(_) => wells
                .iter()
                .map(|w| {
                    catch_unwind(AssertUnwindSafe(|| analyse(std::slice::from_ref(w))))
                        .ok()
                        .and_then(|mut outs| outs.pop())
                        .unwrap_or_else(|| internal_failure(&w.name))
                })
                .collect(),
        }
    }

    /// Every well's report entry in input order, computed chunk by chunk on a producer
    /// thread while `consume` writes the chunk before; one finished chunk at most waits
    /// in between, so about three chunks are held at a time.
    fn stream<R>(
        &self,
        tick: &(dyn Fn() + Sync),
        consume: impl FnOnce(&mut dyn Iterator<Item = WellOut>) -> R,
    ) -> R {
        let (send, receive) = std::sync::mpsc::sync_channel::<Vec<WellOut>>(1);
        std::thread::scope(|scope| {
            let producer = scope.spawn(move || {
                for chunk in self.wells.chunks(CHUNK_WELLS) {
                    if send.send(self.well_outs(chunk, tick)).is_err() {
                        // The writer stopped (a write error): nothing more is wanted.
                        return;
                    }
                }
            });
            let mut outs = receive.iter().flatten();
            let result = consume(&mut outs);
            drop(outs);
            // `well_outs` does not panic; should the thread die all the same (out of
            // memory), the report it cut short must not pass for a whole one.
            if producer.join().is_err() {
                std::panic::resume_unwind(Box::new("the analysis thread failed"));
            }
            result
        })
    }
}

/// The report entry of a well whose analysis panicked.
fn internal_failure(well: &str) -> WellOut {
    WellOut {
        well: well.to_string(),
        warnings: vec![
            "not analysed: an internal error stopped this well's analysis (a bug; the message is on stderr)"
                .to_string(),
        ],
        history: Vec::new(),
        phases: Vec::new(),
        stretching: None,
        model_choice: None,
        fit_note: None,
        thermal: None,
        thermal_note: None,
        calibration: None,
    }
}

/// The JSON contract's report (`analysis::contract::Report`), its wells written one by
/// one as they come: the same keys in the same order, so the same bytes.
#[derive(Serialize)]
struct StreamedReport<'a> {
    parameters: &'a ParametersOut,
    wells: StreamedWells<'a>,
}

/// A JSON array written from an iterator, once.
struct StreamedWells<'a>(RefCell<Option<&'a mut dyn Iterator<Item = WellOut>>>);

impl Serialize for StreamedWells<'_> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let wells = self
            .0
            .borrow_mut()
            .take()
            .ok_or_else(|| serde::ser::Error::custom("the wells were already written"))?;
        serializer.collect_seq(wells)
    }
}

/// Write the whole output of `run` to `out` in `format`, analysing as it goes.
fn write_output(
    run: &Run<'_>,
    format: OutputFormat,
    out: &mut dyn Write,
    tick: &(dyn Fn() + Sync),
) -> Result<(), BatchError> {
    match format {
        OutputFormat::Json => {
            let parameters = analysis::parameters_out(run.inputs);
            // Indented for reading when the set is small; compact (same content) when it
            // is large, where indentation would double the size of the file.
            let pretty = run.wells.len() <= INDENTED_JSON_MAX_WELLS;
            run.stream(tick, |wells| {
                let report = StreamedReport {
                    parameters: &parameters,
                    wells: StreamedWells(RefCell::new(Some(wells))),
                };
                let written = if pretty {
                    serde_json::to_writer_pretty(&mut *out, &report)
                } else {
                    serde_json::to_writer(&mut *out, &report)
                };
                written
                    .map_err(|e| BatchError(format!("cannot write JSON: {e}")))
                    .and_then(|()| {
                        out.write_all(b"\n")
                            .map_err(|e| BatchError(format!("cannot write JSON: {e}")))
                    })
            })
        }
        OutputFormat::Csv => {
            let fail = |e: csv::Error| BatchError(format!("cannot write CSV: {e}"));
            let mut w = csv::Writer::from_writer(&mut *out);
            crate::csv_cells::write_row(&mut w, analysis::CSV_HEADER).map_err(fail)?;
            run.stream(tick, |wells| {
                for well in wells {
                    for row in analysis::csv_rows(&well) {
                        crate::csv_cells::write_row(&mut w, &row).map_err(fail)?;
                    }
                }
                w.flush()
                    .map_err(|e| BatchError(format!("cannot write CSV: {e}")))
            })
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

#[cfg(test)]
mod tests {
    use super::*;
    use sagline_science::{Erosion, LithologyMix, Surface, WaterDepth};

    fn surface(horizon: &str, depth_m: f64, age_ma: f64, lithology: bool) -> Surface {
        Surface {
            horizon: horizon.into(),
            depth_m,
            age_ma,
            lithology_below: lithology.then(|| LithologyMix::single("shale")),
            water_depth: WaterDepth::exact(if age_ma == 0.0 { depth_m } else { 20.0 }),
            erosion: None,
        }
    }

    /// A well the file rules would refuse (1.7e308 m eroded), built directly: its
    /// restoration overflows, so its analysis fails.
    fn vast_well() -> WellColumn {
        let mut unconformity = surface("Vast unconformity", 1000.0, 20.0, true);
        unconformity.erosion = Some(Erosion {
            eroded_m: 1.7e308,
            eroded_at_ma: 15.0,
        });
        WellColumn::new(
            "Vast-1",
            vec![
                surface("Sea floor", 0.0, 0.0, true),
                surface("Top Vast", 1000.0, 10.0, true),
                unconformity,
                surface("Base Vast", 1.7e308, 30.0, false),
            ],
        )
        .expect("a column the science types accept")
    }

    fn sound_well(name: &str) -> WellColumn {
        WellColumn::new(
            name,
            vec![
                surface("Sea floor", 150.0, 0.0, true),
                surface("Top Marl", 900.0, 30.0, true),
                surface("Base Marl", 1600.0, 70.0, false),
            ],
        )
        .expect("a sound column")
    }

    #[test]
    fn a_well_that_cannot_be_analysed_is_reported_and_the_others_are_kept() {
        let wells = [sound_well("Orrin-1"), vast_well(), sound_well("Orrin-2")];
        let inputs = StudyInputs {
            params: ModelParameters::default(),
            catalogue: Catalogue::published_defaults(),
            sea_level: SeaLevelCurve::default(),
            thermal: ThermalInputs::default(),
        };
        for backstrip_only in [false, true] {
            let run = Run {
                wells: &wells,
                inputs: &inputs,
                timing: &|_| None,
                backstrip_only,
                calibration: &[],
            };
            let outs = run.well_outs(&wells, &|| {});
            let names: Vec<&str> = outs.iter().map(|w| w.well.as_str()).collect();
            assert_eq!(names, ["Orrin-1", "Vast-1", "Orrin-2"]);
            let failed = &outs[1];
            assert!(
                failed.warnings[0].starts_with("not analysed: "),
                "{:?}",
                failed.warnings
            );
            assert!(failed.history.is_empty() && failed.stretching.is_none());
            for good in [&outs[0], &outs[2]] {
                assert_eq!(good.history.len(), 3, "{} is analysed in full", good.well);
            }
        }
    }
}
