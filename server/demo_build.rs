//! The demo study's builder: `demo-db/basin.json` (an invented rift basin) in, the
//! three demo CSV files (tops, wells, sea level) out, the same for the same seed.
//!
//! Method, per well:
//! 1. The basin fields give the well's beta (a Gaussian across the trough axis), its
//!    rift onset (along the axis) and end (across it), and its palaeo-water depths;
//!    horizons tied to the rift take the local rift ages.
//! 2. The design curve is the well's tectonic subsidence: one uniform event
//!    (McKenzie 1978), two events, a two-layer event (Royden & Keen 1980), or, with no
//!    rift, a straight line of steady background subsidence.
//! 3. [`sagline_science::forward::forward_well`] builds the well without its hiatus and
//!    unconformity horizons. It follows one event (or none); the rest of the design
//!    curve (a second event, the background line) is carried meanwhile by a water depth
//!    shallower by that amount in Airy terms, and the recorded water depth is then put
//!    back, so the sediment is the one the whole curve needs under the recorded water.
//! 4. A hiatus horizon is placed at the depth of the horizon below it, so the unit
//!    between them is absent: nothing was laid down, the basin kept subsiding and the
//!    water deepened (docs/science.md 9.1).
//! 5. An erosional unconformity is a hiatus whose lower horizon carries an eroded
//!    section (of the lithology of its unit below, PRODUCT.md "Input formats"), laid
//!    down up to sea level by `eroded_at_ma` and removed before the upper horizon's age.
//!    Its thickness is found by bisection so that the subsidence at `eroded_at_ma`
//!    lies on the design curve. The units below keep the compaction of that deeper
//!    burial until they are buried deeper again; the builder refuses an eroded section
//!    thicker than today's cover, so present thicknesses are those of the forward model.
//! 6. Every surface's water depth is then set so that its backstripped tectonic
//!    subsidence lies on the design curve (exact: water depth enters one-for-one,
//!    docs/science.md 3). This places the inserted horizons and absorbs the over-compaction.
//! 7. Noise, seeded: each recorded water-depth range shifts by a normal draw (the sea
//!    floor's does not), each depth by a few metres (never more than a fifth of the
//!    thinner neighbouring unit; surfaces at one depth move together). Depths are then
//!    rounded to 0.1 m, water depths and eroded thicknesses to 1 m.
//!
//! The files are finally read back through the upload's parser and every well is
//! backstripped: a warning or a refusal fails the build.

mod spec;
#[cfg(test)]
mod tests;
mod well;

pub use spec::{
    BasinSpec, ErosionSpec, FieldValues, Horizon, Noise, RiftHorizon, RiftTiming, SecondRift,
    Trough, WaterDepthField, WellSpec,
};
pub use well::{DesignStretching, WellDesign};

use rand::SeedableRng;
use rand::rngs::StdRng;
use sagline_science::backstrip::backstrip;
use sagline_science::input::{self, TopsOptions, WellsOptions};
use sagline_science::lithology::Catalogue;
use sagline_science::mckenzie::Lithosphere;
use sagline_science::{ModelParameters, SeaLevelCurve};
use std::path::Path;
use std::process::ExitCode;
use well::{BuiltWell, Context};

/// The three files of the demo study, and what each well was built to show.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoFiles {
    pub tops_csv: String,
    pub wells_csv: String,
    pub sea_level_csv: String,
    /// One per well, in file order.
    pub designs: Vec<WellDesign>,
}

/// Build the demo files from the basin description (method in the module notes), with
/// the default model parameters and lithology catalogue a new study starts with.
/// Pure: no I/O. Errors name the well and what could not be built.
pub fn build(spec: &BasinSpec) -> Result<DemoFiles, String> {
    spec.check()?;
    let params = ModelParameters::default();
    let sea_level =
        SeaLevelCurve::new(spec.sea_level.clone()).map_err(|e| format!("sea level: {e}"))?;
    let context = Context {
        spec,
        params,
        catalogue: Catalogue::published_defaults(),
        sea_level,
        lithosphere: Lithosphere::water_loaded(&params).map_err(|e| e.to_string())?,
    };
    if let Some(w) = spec
        .wells
        .iter()
        .enumerate()
        .find(|(i, w)| spec.wells[..*i].iter().any(|o| o.name == w.name))
    {
        return Err(format!("well '{}' appears twice", w.1.name));
    }
    let mut rng = StdRng::seed_from_u64(spec.seed);
    let built = spec
        .wells
        .iter()
        .map(|w| context.build_well(w, &mut rng))
        .collect::<Result<Vec<_>, _>>()?;
    let files = DemoFiles {
        tops_csv: tops_csv(&built)?,
        wells_csv: wells_csv(spec, &built)?,
        sea_level_csv: sea_level_csv(spec)?,
        designs: built.into_iter().map(|b| b.design).collect(),
    };
    check_files(&files, &context)?;
    Ok(files)
}

/// Read the basin description at `spec_path`, build, and write `tops.csv`, `wells.csv`
/// and `sea_level.csv` into `out_dir`. Prints what was written, or the error.
pub fn run(spec_path: &Path, out_dir: &Path) -> ExitCode {
    let result = std::fs::read_to_string(spec_path)
        .map_err(|e| format!("{}: {e}", spec_path.display()))
        .and_then(|text| {
            serde_json::from_str::<BasinSpec>(&text).map_err(|e| {
                format!(
                    "{} line {}, column {}: {e}",
                    spec_path.display(),
                    e.line(),
                    e.column()
                )
            })
        })
        .and_then(|spec| build(&spec))
        .and_then(|files| {
            for (name, text) in [
                ("tops.csv", &files.tops_csv),
                ("wells.csv", &files.wells_csv),
                ("sea_level.csv", &files.sea_level_csv),
            ] {
                let path = out_dir.join(name);
                std::fs::write(&path, text).map_err(|e| format!("{}: {e}", path.display()))?;
                println!("wrote {}", path.display());
            }
            Ok(files.designs.len())
        });
    match result {
        Ok(wells) => {
            println!("{wells} wells built from {}", spec_path.display());
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::FAILURE
        }
    }
}

/// A number as the files print it: the shortest text that reads back as the same value.
fn number(x: f64) -> String {
    format!("{}", x + 0.0)
}

/// Like every CSV Sagline writes, through `csv_cells::write_row` (no live formula).
fn csv_text(header: &[&str], rows: Vec<Vec<String>>) -> Result<String, String> {
    let mut writer = csv::Writer::from_writer(Vec::new());
    crate::csv_cells::write_row(&mut writer, header).map_err(|e| e.to_string())?;
    for row in rows {
        crate::csv_cells::write_row(&mut writer, &row).map_err(|e| e.to_string())?;
    }
    let bytes = writer.into_inner().map_err(|e| e.to_string())?;
    String::from_utf8(bytes).map_err(|e| e.to_string())
}

fn tops_csv(built: &[BuiltWell]) -> Result<String, String> {
    let header = [
        "well",
        "horizon",
        "depth_m",
        "age_ma",
        "lithology",
        "water_depth_min_m",
        "water_depth_max_m",
        "eroded_m",
        "eroded_at_ma",
    ];
    let rows = built
        .iter()
        .flat_map(|b| {
            b.column.surfaces.iter().map(|s| {
                vec![
                    b.column.name.clone(),
                    s.horizon.clone(),
                    format!("{:.1}", s.depth_m + 0.0),
                    number(s.age_ma),
                    s.lithology_below
                        .as_ref()
                        .map(|l| l.label())
                        .unwrap_or_default(),
                    format!("{:.0}", s.water_depth.min_m + 0.0),
                    format!("{:.0}", s.water_depth.max_m + 0.0),
                    s.erosion
                        .map(|e| format!("{:.0}", e.eroded_m))
                        .unwrap_or_default(),
                    s.erosion
                        .map(|e| number(e.eroded_at_ma))
                        .unwrap_or_default(),
                ]
            })
        })
        .collect();
    csv_text(&header, rows)
}

/// The design of a well in words, for the wells file's notes.
fn design_note(d: &WellDesign) -> String {
    let mut parts = Vec::new();
    let rift = d
        .rift_ma
        .map(|(onset, end)| format!("rift {}-{} Ma", number(onset), number(end)));
    match d.stretching {
        DesignStretching::Uniform { beta } => {
            parts.push(format!("uniform stretching beta {beta:.2}"))
        }
        DesignStretching::TwoLayer { delta, beta } => parts.push(format!(
            "two-layer stretching crust delta {delta:.2} mantle beta {beta:.2}"
        )),
        DesignStretching::NoRift { rate_m_per_myr } => parts.push(format!(
            "no rift: steady subsidence {} m/Myr",
            number(rate_m_per_myr)
        )),
    }
    parts.extend(rift);
    if let Some(s) = d.second_rift {
        parts.push(format!(
            "second rift {}-{} Ma beta {:.2}",
            number(s.onset_ma),
            number(s.end_ma),
            s.beta
        ));
    }
    for (horizon, below) in &d.hiatuses {
        parts.push(format!("hiatus: {horizon} rests on {below}"));
    }
    if let Some((horizon, eroded_m, at)) = &d.erosion {
        parts.push(format!(
            "erosion: {eroded_m:.0} m removed from above {horizon} at {} Ma",
            number(*at)
        ));
    }
    parts.join(", ")
}

fn wells_csv(spec: &BasinSpec, built: &[BuiltWell]) -> Result<String, String> {
    let rows = spec
        .wells
        .iter()
        .zip(built)
        .map(|(w, b)| {
            vec![
                w.name.clone(),
                format!("{:.0}", w.x),
                format!("{:.0}", w.y),
                w.note.clone(),
                design_note(&b.design),
            ]
        })
        .collect();
    csv_text(&["well", "x", "y", "setting", "design"], rows)
}

fn sea_level_csv(spec: &BasinSpec) -> Result<String, String> {
    let mut points = spec.sea_level.clone();
    points.sort_by(|a, b| a.age_ma.total_cmp(&b.age_ma));
    let rows = points
        .iter()
        .map(|p| vec![number(p.age_ma), number(p.sea_level_m)])
        .collect();
    csv_text(&["age_ma", "sea_level_m"], rows)
}

/// The files read back through the upload's parsers, and every well backstrips with
/// no warning.
fn check_files(files: &DemoFiles, context: &Context) -> Result<(), String> {
    let problems = |p: Vec<input::InputProblem>| {
        p.iter()
            .map(|p| p.to_string())
            .collect::<Vec<_>>()
            .join("; ")
    };
    let known = |name: &str| context.catalogue.get(name).is_some();
    let tops = input::parse_tops(files.tops_csv.as_bytes(), &TopsOptions::default(), &known)
        .map_err(|p| format!("tops: {}", problems(p)))?;
    input::parse_wells(files.wells_csv.as_bytes(), &WellsOptions::default())
        .map_err(|p| format!("wells: {}", problems(p)))?;
    let sea_level = input::parse_sea_level(files.sea_level_csv.as_bytes())
        .map_err(|p| format!("sea level: {}", problems(p)))?;
    if tops.wells.len() != files.designs.len() {
        return Err(format!(
            "{} wells read back, {} built",
            tops.wells.len(),
            files.designs.len()
        ));
    }
    for well in &tops.wells {
        let history = backstrip(well, &context.catalogue, &context.params, &sea_level)
            .map_err(|e| e.to_string())?;
        if !history.warnings.is_empty() {
            return Err(format!(
                "well '{}': {}",
                well.name,
                history.warnings.join("; ")
            ));
        }
    }
    Ok(())
}
