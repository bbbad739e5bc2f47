//! `sagline section`: flexural backstripping of the wells along a section line, on files.
//! The same parser and validation as `analyze`; nothing is printed unless every input is
//! valid and the whole output is ready.

use crate::batch::{self, BatchError, OutputFormat};
use clap::{Args, ValueEnum};
use sagline_science::SeaLevelCurve;
use sagline_science::analysis::section::{
    ForelandRequest, SectionReport, SectionRequest, analyse_section,
};
use sagline_science::analysis::{self, StudyInputs};
use sagline_science::flexure::backstrip::LoadExtension;
use sagline_science::flexure::foreland::{ForelandFitSettings, ForelandPlate, LoadShape};
use sagline_science::flexure::section::{MapPoint, SectionLine};
use sagline_science::flexure::{ElasticPlate, PlateGeometry};
use sagline_science::input::{self, TopsOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

const SECTION_HELP: &str = "\
The section line is given in the wells file's projected coordinates (x, y in metres), either
on the command line, --line \"x1,y1;x2,y2;...\", or as a CSV file, --line-file line.csv, with
the columns x and y and one point per row, in order along the line (two points or more).
Wells within --distance-m of the line are projected onto it and ordered by distance along
it; wells beyond an end of the line project onto that end.

The sediment load between wells is interpolated linearly; beyond the end wells it is held
at the end well's value (--extension hold) or tapered to zero over --taper-m metres
(--extension taper; 0 stops it at the end wells). Te = 0 gives the Airy result exactly.

Output: JSON (the section report: wells on the line, restored section, flexural
backstripping at --te-km, Airy against flexural subsidence per well, the Te sweep, the
foreland fit) or CSV (one row per elastic thickness, well and age; the foreland fit is in
the JSON only).

Example:
  sagline section tops.csv --wells wells.csv --line \"0,0;80000,20000\" --distance-m 3000 \\
      --te-km 20 --te-sweep-km 0,5,10,20,40 --fit-ages 10,0 --format json";

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PlateArg {
    Continuous,
    Broken,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ExtensionArg {
    Hold,
    Taper,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FitLoadArg {
    Line,
    Block,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FitPlateArg {
    Continuous,
    BrokenAtLoad,
}

#[derive(Debug, Clone, Args)]
#[command(after_long_help = SECTION_HELP)]
pub struct SectionArgs {
    /// The tops CSV file (format in README.md).
    pub tops: PathBuf,
    /// Well positions (CSV: well, x, y in projected metres); wells without x, y are not placed.
    #[arg(long)]
    pub wells: PathBuf,
    /// The section line: "x,y;x,y;..." in the wells file's projected metres (two or more points).
    #[arg(
        long,
        required_unless_present = "line_file",
        conflicts_with = "line_file"
    )]
    pub line: Option<String>,
    /// The section line as a CSV file with columns x, y, one point per row, in order.
    #[arg(long)]
    pub line_file: Option<PathBuf>,
    /// The section's name.
    #[arg(long, default_value = "section")]
    pub name: String,
    /// Keep the wells within this distance of the line (m).
    #[arg(long, default_value_t = 5000.0)]
    pub distance_m: f64,
    /// Elastic thickness Te of the plate (km); 0 is local (Airy) compensation.
    #[arg(long, default_value_t = 20.0)]
    pub te_km: f64,
    /// Also backstrip with each of these elastic thicknesses (km, comma-separated).
    #[arg(long, value_delimiter = ',')]
    pub te_sweep_km: Vec<f64>,
    /// The plate: continuous, or broken at --break-m.
    #[arg(long, value_enum, default_value = "continuous")]
    pub plate: PlateArg,
    /// Where a broken plate breaks: distance along the line (m).
    #[arg(long)]
    pub break_m: Option<f64>,
    /// How the load continues beyond the end wells: hold (as at the end well) or taper.
    #[arg(long, value_enum, default_value = "hold")]
    pub extension: ExtensionArg,
    /// With --extension taper: distance over which the load falls to zero (m; 0 stops it at the end wells).
    #[arg(long, default_value_t = 0.0)]
    pub taper_m: f64,
    /// Young's modulus of the plate (GPa).
    #[arg(long, default_value_t = 70.0)]
    pub young_modulus_gpa: f64,
    /// Poisson's ratio of the plate.
    #[arg(long, default_value_t = 0.25)]
    pub poisson_ratio: f64,
    /// Fit a foreland load to the flexural tectonic subsidence at these section ages (Ma, comma-separated).
    #[arg(long, value_delimiter = ',')]
    pub fit_ages: Vec<f64>,
    /// The fitted load: a line load, or a block of --block-width-m.
    #[arg(long, value_enum, default_value = "line")]
    pub fit_load: FitLoadArg,
    /// Width of a block load (m).
    #[arg(long)]
    pub block_width_m: Option<f64>,
    /// The plate of the foreland fit: continuous, or broken at the load's hinterland edge.
    #[arg(long, value_enum, default_value = "continuous")]
    pub fit_plate: FitPlateArg,
    /// Fit the subsidence since this section age (Ma) instead of the tectonic subsidence itself.
    #[arg(long)]
    pub reference_age: Option<f64>,
    /// Eustatic sea-level curve (CSV: age_ma, sea_level_m).
    #[arg(long = "sea-level")]
    pub sea_level: Option<PathBuf>,
    /// Model parameters and lithologies (JSON, as for `analyze`).
    #[arg(long)]
    pub params: Option<PathBuf>,
    #[arg(long, value_enum, default_value = "json")]
    pub format: OutputFormat,
    /// Write the output here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// `"x,y;x,y"` as points.
fn parse_line(text: &str) -> Result<Vec<MapPoint>, String> {
    text.split(';')
        .filter(|p| !p.trim().is_empty())
        .enumerate()
        .map(|(i, p)| {
            let parts: Vec<&str> = p.split(',').map(str::trim).collect();
            match parts.as_slice() {
                [x, y] => match (x.parse::<f64>(), y.parse::<f64>()) {
                    (Ok(x_m), Ok(y_m)) if x_m.is_finite() && y_m.is_finite() => {
                        Ok(MapPoint { x_m, y_m })
                    }
                    _ => Err(format!("point {} \"{p}\": x and y must be numbers", i + 1)),
                },
                _ => Err(format!("point {} \"{p}\" is not x,y", i + 1)),
            }
        })
        .collect()
}

/// Read the line CSV (columns x, y; any case, any order; other columns refused).
fn parse_line_file(path: &Path) -> Result<Vec<MapPoint>, BatchError> {
    let name = batch::file_name(path);
    let bytes = batch::read(path)?;
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(bytes.as_slice());
    let headers = reader
        .headers()
        .map_err(|e| BatchError(format!("{name}: {e}")))?
        .clone();
    let find = |want: &str| headers.iter().position(|h| h.eq_ignore_ascii_case(want));
    let (Some(xi), Some(yi)) = (find("x"), find("y")) else {
        return Err(BatchError(format!(
            "{name} line 1: the header needs the columns x and y (projected metres), found: {}",
            headers.iter().collect::<Vec<_>>().join(", ")
        )));
    };
    let mut problems = Vec::new();
    let mut points = Vec::new();
    for (i, record) in reader.records().enumerate() {
        let line = i + 2;
        let record = match record {
            Ok(r) => r,
            Err(e) => {
                problems.push(format!("{name} line {line}: {e}"));
                continue;
            }
        };
        if record.iter().all(|c| c.is_empty()) {
            continue;
        }
        let number = |index: usize, column: &str, problems: &mut Vec<String>| {
            let cell = record.get(index).unwrap_or("");
            match cell.parse::<f64>() {
                Ok(v) if v.is_finite() => Some(v),
                _ => {
                    problems.push(format!(
                        "{name} line {line}, column {column}: \"{cell}\" is not a number"
                    ));
                    None
                }
            }
        };
        let x = number(xi, "x", &mut problems);
        let y = number(yi, "y", &mut problems);
        if let (Some(x_m), Some(y_m)) = (x, y) {
            points.push(MapPoint { x_m, y_m });
        }
    }
    if problems.is_empty() {
        Ok(points)
    } else {
        Err(BatchError(format!(
            "the input has {} problem(s); nothing was analysed:\n  {}",
            problems.len(),
            problems.join("\n  ")
        )))
    }
}

pub fn run(args: &SectionArgs) -> ExitCode {
    match section(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(BatchError(message)) => {
            eprintln!("error: {message}");
            ExitCode::FAILURE
        }
    }
}

/// The request from the options, every option checked.
fn request(args: &SectionArgs, points: Vec<MapPoint>) -> Result<SectionRequest, BatchError> {
    let bad = |m: String| Err(BatchError(m));
    let line = SectionLine::new(args.name.clone(), points)
        .map_err(|e| BatchError(format!("--line: {e}")))?;
    if !(args.distance_m.is_finite() && args.distance_m >= 0.0) {
        return bad(format!(
            "--distance-m {} must be a non-negative number of metres",
            args.distance_m
        ));
    }
    let plate = ElasticPlate {
        young_modulus_pa: args.young_modulus_gpa * 1e9,
        poisson_ratio: args.poisson_ratio,
        elastic_thickness_m: args.te_km * 1e3,
    };
    plate.validate().map_err(|e| {
        BatchError(format!(
            "the plate (--te-km, --young-modulus-gpa, --poisson-ratio): {e}"
        ))
    })?;
    for &te in &args.te_sweep_km {
        plate
            .with_thickness(te * 1e3)
            .validate()
            .map_err(|e| BatchError(format!("--te-sweep-km {te}: {e}")))?;
    }
    let geometry = match (args.plate, args.break_m) {
        (PlateArg::Continuous, None) => PlateGeometry::Continuous,
        (PlateArg::Continuous, Some(_)) => {
            return bad("--break-m is given but --plate is continuous; add --plate broken".into());
        }
        (PlateArg::Broken, Some(b)) if b.is_finite() => PlateGeometry::Broken { break_m: b },
        (PlateArg::Broken, _) => {
            return bad("--plate broken needs --break-m, the distance along the line where the plate breaks".into());
        }
    };
    let extension = match args.extension {
        ExtensionArg::Hold => LoadExtension::Hold,
        ExtensionArg::Taper if args.taper_m.is_finite() && args.taper_m >= 0.0 => {
            LoadExtension::Taper {
                distance_m: args.taper_m,
            }
        }
        ExtensionArg::Taper => {
            return bad(format!(
                "--taper-m {} must be a non-negative number of metres",
                args.taper_m
            ));
        }
    };
    let shape = match (args.fit_load, args.block_width_m) {
        (FitLoadArg::Line, None) => LoadShape::Line,
        (FitLoadArg::Line, Some(_)) => {
            return bad(
                "--block-width-m is given but --fit-load is line; add --fit-load block".into(),
            );
        }
        (FitLoadArg::Block, Some(w)) if w.is_finite() && w > 0.0 => LoadShape::Block { width_m: w },
        (FitLoadArg::Block, _) => {
            return bad("--fit-load block needs a positive --block-width-m".into());
        }
    };
    let foreland = if args.fit_ages.is_empty() {
        if args.reference_age.is_some() {
            return bad("--reference-age is only used with --fit-ages".into());
        }
        None
    } else {
        Some(ForelandRequest {
            ages_ma: args.fit_ages.clone(),
            settings: ForelandFitSettings {
                shape,
                plate: match args.fit_plate {
                    FitPlateArg::Continuous => ForelandPlate::Continuous,
                    FitPlateArg::BrokenAtLoad => ForelandPlate::BrokenAtLoad,
                },
                ..Default::default()
            },
            reference_age_ma: args.reference_age,
        })
    };
    Ok(SectionRequest {
        line,
        max_offset_m: args.distance_m,
        plate,
        geometry,
        extension,
        te_sweep_m: args.te_sweep_km.iter().map(|t| t * 1e3).collect(),
        foreland,
    })
}

fn section(args: &SectionArgs) -> Result<(), BatchError> {
    let batch::LoadedParameters {
        params,
        catalogue,
        thermal,
    } = batch::load_parameters(args.params.as_deref())?;
    let points = match (&args.line, &args.line_file) {
        (Some(text), _) => parse_line(text).map_err(|e| BatchError(format!("--line: {e}")))?,
        (None, Some(path)) => parse_line_file(path)?,
        (None, None) => {
            return Err(BatchError(
                "give the section as --line or --line-file".into(),
            ));
        }
    };
    let request = request(args, points)?;

    // Every file read and validated first, all problems reported together.
    let mut problems = Vec::new();
    let tops_bytes = batch::read(&args.tops)?;
    let names: Vec<String> = catalogue
        .lithologies()
        .iter()
        .map(|l| l.name.clone())
        .collect();
    let spelling = |n: &str| names.iter().find(|c| c.eq_ignore_ascii_case(n)).cloned();
    let options = TopsOptions {
        file_name: Some(batch::file_name(&args.tops)),
        ..Default::default()
    };
    let tops = input::parse_tops_with_catalogue(&tops_bytes, &options, &spelling)
        .map_err(|p| problems.extend(p))
        .ok();
    let wells_options = input::WellsOptions {
        file_name: Some(batch::file_name(&args.wells)),
        ..Default::default()
    };
    let locations = input::parse_wells(&batch::read(&args.wells)?, &wells_options)
        .map_err(|p| problems.extend(p))
        .ok();
    let sea_level = match &args.sea_level {
        Some(path) => match input::parse_sea_level(&batch::read(path)?) {
            Ok(c) => c,
            Err(mut p) => {
                input::name_file(&mut p, &batch::file_name(path));
                problems.extend(p);
                SeaLevelCurve::default()
            }
        },
        None => SeaLevelCurve::default(),
    };
    let (tops, locations) = match (tops, locations) {
        (Some(t), Some(l)) if problems.is_empty() => (t, l),
        _ => return Err(problems.into()),
    };

    let inputs = StudyInputs {
        params,
        catalogue,
        sea_level,
        thermal,
    };
    let mut histories = Vec::with_capacity(tops.wells.len());
    for (well, result) in
        tops.wells
            .iter()
            .zip(analysis::backstrip_wells(&tops.wells, &inputs, &|| {}))
    {
        let a = result
            .map_err(|e| BatchError(format!("well '{}' cannot be backstripped: {e}", well.name)))?;
        histories.push(a.history);
    }
    let report = analyse_section(&request, &locations.wells, &histories, &inputs.params)
        .map_err(|e| BatchError(e.to_string()))?;
    let output = render(&report, args.format)?;
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

/// The CSV header of `sagline section --format csv`.
pub const CSV_HEADER: [&str; 15] = [
    "section",
    "te_m",
    "well",
    "distance_m",
    "offset_m",
    "age_ma",
    "interpolated_in_age",
    "airy_tectonic_subsidence_min_m",
    "airy_tectonic_subsidence_best_m",
    "airy_tectonic_subsidence_max_m",
    "flexural_tectonic_subsidence_min_m",
    "flexural_tectonic_subsidence_best_m",
    "flexural_tectonic_subsidence_max_m",
    "local_load_deflection_m",
    "flexural_load_deflection_m",
];

/// The whole output in memory, so that a failure prints nothing partial.
pub fn render(report: &SectionReport, format: OutputFormat) -> Result<Vec<u8>, BatchError> {
    match format {
        OutputFormat::Json => {
            let mut v = serde_json::to_vec_pretty(report)
                .map_err(|e| BatchError(format!("cannot write JSON: {e}")))?;
            v.push(b'\n');
            Ok(v)
        }
        OutputFormat::Csv => {
            let num = |x: f64| format!("{x:.3}");
            let offset = |well: &str| {
                report
                    .wells
                    .iter()
                    .find(|m| m.well == well)
                    .map(|m| num(m.offset_m))
                    .unwrap_or_default()
            };
            let mut w = csv::Writer::from_writer(Vec::new());
            let fail = |e: csv::Error| BatchError(format!("cannot write CSV: {e}"));
            crate::csv_cells::write_row(&mut w, CSV_HEADER).map_err(fail)?;
            let run = &report.flexural;
            for age in &run.ages {
                for well in &age.wells {
                    let (a, f) = (
                        well.airy_tectonic_subsidence,
                        well.flexural_tectonic_subsidence,
                    );
                    crate::csv_cells::write_row(
                        &mut w,
                        [
                            report.section.name.clone(),
                            num(run.elastic_thickness_m),
                            well.well.clone(),
                            num(well.distance_m),
                            offset(&well.well),
                            num(age.age_ma),
                            well.interpolated_in_age.to_string(),
                            num(a.min),
                            num(a.best),
                            num(a.max),
                            num(f.min),
                            num(f.best),
                            num(f.max),
                            num(well.local_load_deflection_m),
                            num(well.flexural_load_deflection_m),
                        ],
                    )
                    .map_err(fail)?;
                }
            }
            // The sweep: best values only.
            for sweep in &report.te_sweep {
                for c in &sweep.wells {
                    for ((age, airy), flexural) in
                        c.ages_ma.iter().zip(&c.airy_m).zip(&c.flexural_m)
                    {
                        let mut row = vec![String::new(); CSV_HEADER.len()];
                        row[0] = report.section.name.clone();
                        row[1] = num(sweep.elastic_thickness_m);
                        row[2] = c.well.clone();
                        row[3] = num(c.distance_m);
                        row[4] = offset(&c.well);
                        row[5] = num(*age);
                        row[8] = num(*airy);
                        row[11] = num(*flexural);
                        crate::csv_cells::write_row(&mut w, &row).map_err(fail)?;
                    }
                }
            }
            w.into_inner()
                .map_err(|e| BatchError(format!("cannot write CSV: {e}")))
        }
    }
}
