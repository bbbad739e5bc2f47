//! `sagline analyze` run as a user runs it: the real binary on invented files in a
//! temporary directory. Valid files give the JSON contract of PRODUCT.md ("Batch
//! command and its JSON"), or CSV, on stdout or into `--out`; every kind of bad input
//! exits non-zero, names the file, line, column and reason on stderr, and prints
//! nothing on stdout (README "Batch analysis": "nothing partial is printed").
//! `sagline serve` creates a missing database only on the default path or when asked.
//!
//! Wells with a clear rift are built by the forward model (`science::forward`), so the
//! stretching they were built with is known. Every well and horizon name is invented.

use sagline_science::analysis::{self, StudyInputs};
use sagline_science::forward::{ForwardSpec, ForwardStretching, ForwardSurface, forward_well};
use sagline_science::input::{self, TopsOptions};
use sagline_science::lithology::Catalogue;
use sagline_science::tolerance::assert_relative;
use sagline_science::{LithologyMix, MixPart, ModelParameters, SeaLevelCurve, WaterDepth};
use serde_json::Value;
use std::fmt::Write;
use std::path::PathBuf;
use std::process::{Command, Output};
use tempfile::TempDir;

/// The tops header the forward-modelled files use (PRODUCT.md "Input formats").
const TOPS_HEADER: &str =
    "well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m";

/// The two invented wells of most tests: each one uniform stretching event.
const KELDA_1: (&str, f64, f64, f64) = ("Kelda-1", 1.8, 160.0, 140.0);
const KELDA_2: (&str, f64, f64, f64) = ("Kelda-2", 1.4, 120.0, 105.0);

/// Surface ages (Ma), youngest first, 5 to 20 Myr apart, with both wells' rift onsets
/// and ends among them.
const AGES: [f64; 21] = [
    0.0, 5.0, 15.0, 30.0, 45.0, 60.0, 75.0, 90.0, 100.0, 105.0, 110.0, 115.0, 120.0, 130.0, 140.0,
    145.0, 150.0, 155.0, 160.0, 180.0, 200.0,
];

/// Linear from 0 before `onset` to 1 after `end` (ages in Ma, onset older).
fn ramp(onset: f64, end: f64, age: f64) -> f64 {
    ((onset - age) / (onset - end)).clamp(0.0, 1.0)
}

/// Shale, sandstone and a 70:30 shale-sandstone mix in turn (catalogue names of
/// docs/science.md 1.2).
fn lithology(i: usize) -> LithologyMix {
    match i % 3 {
        0 => LithologyMix::single("shale"),
        1 => LithologyMix::single("sandstone"),
        _ => LithologyMix {
            parts: vec![
                MixPart {
                    lithology: "shale".into(),
                    fraction: 0.7,
                },
                MixPart {
                    lithology: "sandstone".into(),
                    fraction: 0.3,
                },
            ],
        },
    }
}

/// A well that follows uniform stretching `beta` from `onset` to `end` Ma, water 20 m
/// deep before the rift deepening to 220 m by its end, ranges of +-(5 m + 10 %).
fn forward_spec((well, beta, onset, end): (&str, f64, f64, f64)) -> ForwardSpec {
    let surfaces = AGES
        .iter()
        .enumerate()
        .map(|(i, &age)| {
            let best = 20.0 + 200.0 * ramp(onset, end, age);
            let half = 5.0 + 0.1 * best;
            ForwardSurface {
                horizon: format!("Kelda horizon {i:02}"),
                age_ma: age,
                lithology_below: (i + 1 < AGES.len()).then(|| lithology(i)),
                water_depth: WaterDepth::new(best - half, best + half).expect("min below max"),
            }
        })
        .collect();
    ForwardSpec {
        well: well.to_string(),
        stretching: ForwardStretching::Uniform { beta },
        rift_onset_ma: onset,
        rift_end_ma: end,
        surfaces,
    }
}

/// The tops CSV of forward-modelled wells (default parameters, catalogue and sea level),
/// depths printed in full so they read back as built.
fn forward_tops(wells: &[(&str, f64, f64, f64)]) -> String {
    let catalogue = Catalogue::published_defaults();
    let params = ModelParameters::default();
    let mut csv = format!("{TOPS_HEADER}\n");
    for &well in wells {
        let column = forward_well(
            &forward_spec(well),
            &catalogue,
            &params,
            &SeaLevelCurve::default(),
        )
        .expect("the forward model builds the invented well");
        for s in &column.surfaces {
            writeln!(
                csv,
                "{},{},{},{},{},{},{}",
                column.name,
                s.horizon,
                s.depth_m,
                s.age_ma,
                s.lithology_below
                    .as_ref()
                    .map(|l| l.label())
                    .unwrap_or_default(),
                s.water_depth.min_m,
                s.water_depth.max_m
            )
            .expect("write to a String");
        }
    }
    csv
}

/// A small hand-written tops file: one well, three surfaces, no rift needed.
const SMALL_TOPS: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_m
Orrin-1,Sea floor,150,0,shale,150
Orrin-1,Top Marl,900,30,sandstone,60
Orrin-1,Base Marl,1600,70,,20
";

/// A temporary directory holding the invented files of one test.
struct Workspace {
    dir: TempDir,
}

impl Workspace {
    fn new() -> Workspace {
        Workspace {
            dir: tempfile::tempdir().expect("temporary directory"),
        }
    }

    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Write `text` to `name` and return the path as an argument.
    fn file(&self, name: &str, text: &str) -> String {
        let path = self.path(name);
        std::fs::write(&path, text).expect("write an invented file");
        path.display().to_string()
    }

    /// Run `sagline analyze ARGS` in this directory.
    fn analyze(&self, args: &[&str]) -> Output {
        Command::new(env!("CARGO_BIN_EXE_sagline"))
            .arg("analyze")
            .args(args)
            .current_dir(self.dir.path())
            .output()
            .expect("run the sagline binary")
    }
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// The JSON on stdout of a successful run.
fn success_json(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "exit {:?}; stderr: {}",
        out.status,
        stderr(out)
    );
    serde_json::from_slice(&out.stdout).unwrap_or_else(|e| {
        panic!(
            "stdout is not JSON ({e}): {}",
            String::from_utf8_lossy(&out.stdout)
        )
    })
}

/// A refusal: non-zero exit, nothing on stdout, and stderr naming each of `parts`
/// (file, "line N, column C", reason).
fn assert_refused(out: &Output, parts: &[&str]) {
    assert!(
        !out.status.success(),
        "a bad input must fail; stderr: {}",
        stderr(out)
    );
    assert!(
        out.stdout.is_empty(),
        "nothing may be printed on stdout when the input is refused, got: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    let err = stderr(out);
    for part in parts {
        assert!(err.contains(part), "stderr should name {part:?}: {err}");
    }
}

fn number(v: &Value, what: &str) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("{what} should be a number, got {v}"))
}

fn well<'a>(report: &'a Value, name: &str) -> &'a Value {
    report["wells"]
        .as_array()
        .expect("wells array")
        .iter()
        .find(|w| w["well"] == name)
        .unwrap_or_else(|| panic!("no well {name} in the report"))
}

/// Present-day tectonic subsidence from the report's own numbers by the Airy balance,
/// sea level at present 0: Y = S (rho_m - rho_s)/(rho_m - rho_w) + Wd
/// (docs/science.md 3.1, Steckler & Watts (1978) form).
fn airy_present_day(report: &Value, well_name: &str) -> (f64, f64) {
    let p = &report["parameters"];
    let (rho_m, rho_w) = (
        number(&p["mantle_density_kg_m3"], "mantle density"),
        number(&p["water_density_kg_m3"], "water density"),
    );
    let history = well(report, well_name)["history"]
        .as_array()
        .expect("history");
    let today = history.last().expect("a present-day entry");
    assert_eq!(
        number(&today["age_ma"], "age"),
        0.0,
        "history is oldest first"
    );
    let s = number(&today["sediment_thickness_m"], "sediment thickness");
    let rho_s = number(&today["sediment_density_kg_m3"], "sediment density");
    let wd = number(&today["water_depth_m"]["best"], "water depth");
    let expected = s * (rho_m - rho_s) / (rho_m - rho_w) + wd;
    let reported = number(
        &today["tectonic_subsidence_m"]["best"],
        "tectonic subsidence",
    );
    (reported, expected)
}

#[test]
fn valid_tops_give_the_json_contract() {
    let ws = Workspace::new();
    let tops = ws.file("kelda_tops.csv", &forward_tops(&[KELDA_1, KELDA_2]));
    let report = success_json(&ws.analyze(&[&tops]));

    // `parameters`: every field PRODUCT.md names, with the defaults of docs/science.md 4.1
    // (McKenzie 1978 table) where it gives one.
    let p = &report["parameters"];
    for (field, published) in [
        ("mantle_density_kg_m3", Some(3330.0)),
        ("crust_density_kg_m3", Some(2800.0)),
        ("water_density_kg_m3", Some(1000.0)),
        ("lithosphere_thickness_m", Some(125_000.0)),
        // docs/science.md 4.1: tc is "variable"; 35 km is its check crust.
        ("crust_thickness_m", Some(35_000.0)),
        ("asthenosphere_temperature_c", Some(1333.0)),
        ("thermal_expansion_per_c", Some(3.28e-5)),
        ("thermal_diffusivity_m2_s", Some(8e-7)),
        // docs/science.md 4.1 implies k = 3.141; the default is a round value (section 12).
        ("thermal_conductivity_w_m_k", None),
    ] {
        let value = number(&p[field], field);
        if let Some(published) = published {
            assert_relative(value, published, 1e-12, field);
        }
    }
    let lithologies = p["lithologies"].as_array().expect("lithologies array");
    let shale = lithologies
        .iter()
        .find(|l| l["name"] == "shale")
        .expect("shale in the catalogue");
    // docs/science.md 1.2, Sclater & Christie (1980): shale phi0 0.63, c 0.51 /km; grain
    // density 2720 [memory]; the same numbers as PRODUCT.md's example.
    assert_relative(
        number(&shale["surface_porosity"], "phi0"),
        0.63,
        1e-12,
        "shale phi0",
    );
    assert_relative(
        number(&shale["compaction_per_km"], "c"),
        0.51,
        1e-12,
        "shale c",
    );
    assert_relative(
        number(&shale["grain_density_kg_m3"], "grain density"),
        2720.0,
        1e-12,
        "shale grain density",
    );

    let wells = report["wells"].as_array().expect("wells array");
    assert_eq!(wells.len(), 2, "one entry per well of the file");
    for (name, beta, onset, end) in [KELDA_1, KELDA_2] {
        let w = well(&report, name);
        assert!(w["warnings"].is_array(), "{name}: warnings list");

        // One history entry per surface age, oldest first.
        let history = w["history"].as_array().expect("history");
        let ages: Vec<f64> = history
            .iter()
            .map(|h| number(&h["age_ma"], "age"))
            .collect();
        let mut expected: Vec<f64> = AGES.to_vec();
        expected.reverse();
        assert_eq!(
            ages, expected,
            "{name}: one entry per surface age, oldest first"
        );
        for h in history {
            for field in ["sediment_thickness_m", "sea_level_m"] {
                number(&h[field], field);
            }
            assert!(
                h["sediment_density_kg_m3"].is_number() || h["sediment_density_kg_m3"].is_null(),
                "{name}: sediment density is a number or null: {h}"
            );
            for range in ["water_depth_m", "tectonic_subsidence_m"] {
                let (min, best, max) = (
                    number(&h[range]["min"], range),
                    number(&h[range]["best"], range),
                    number(&h[range]["max"], range),
                );
                assert!(
                    min <= best && best <= max,
                    "{name}: {range} min <= best <= max: {h}"
                );
            }
            assert!(
                h["horizon_depths_m"].is_object(),
                "{name}: horizon depths: {h}"
            );
        }

        let phases = w["phases"].as_array().expect("phases");
        let labels: Vec<&str> = phases
            .iter()
            .map(|p| p["phase"].as_str().expect("phase"))
            .collect();
        assert!(
            labels.contains(&"syn-rift") && labels.contains(&"post-rift"),
            "{name}: a clear rift gives syn-rift and post-rift phases: {labels:?}"
        );
        for ph in phases {
            assert!(
                number(&ph["from_ma"], "from") >= number(&ph["to_ma"], "to"),
                "{name}: a phase runs from an older to a younger age: {ph}"
            );
        }

        // The forward model built the well on this rift, so the proposal finds it and
        // the fit recovers the factor it was built with.
        let s = &w["stretching"];
        assert_eq!(s["model"], "uniform", "{name}: {s}");
        assert_eq!(s["origin"], "proposed", "{name}: {s}");
        assert_eq!(
            number(&s["rift_onset_ma"], "onset"),
            onset,
            "{name}: rift onset"
        );
        assert_eq!(number(&s["rift_end_ma"], "end"), end, "{name}: rift end");
        let fitted = number(&s["beta"], "beta");
        assert_relative(
            fitted,
            beta,
            0.02,
            &format!("{name}: beta the well was built with"),
        );
        assert!(
            number(&s["beta_min"], "beta_min") <= fitted
                && fitted <= number(&s["beta_max"], "beta_max"),
            "{name}: beta within its range: {s}"
        );
        number(&s["rms_misfit_m"], "misfit");
        let heat_flow = s["heat_flow_mw_m2"].as_array().expect("heat flow");
        assert_eq!(
            heat_flow.len(),
            history.len(),
            "{name}: heat flow at every history age"
        );
        for point in heat_flow {
            assert!(
                number(&point["value"], "heat flow") > 0.0,
                "{name}: {point}"
            );
        }

        let (reported, expected) = airy_present_day(&report, name);
        assert_relative(
            reported,
            expected,
            1e-9,
            &format!("{name}: present-day Airy balance"),
        );
    }
}

#[test]
fn team_picks_replace_the_proposal() {
    let ws = Workspace::new();
    let tops = ws.file("kelda_tops.csv", &forward_tops(&[KELDA_1, KELDA_2]));
    // Kelda-1's pick differs from the rift it was built with; Kelda-2 has no pick.
    let picks = ws.file(
        "kelda_picks.csv",
        "well,rift_onset_ma,rift_end_ma\nKelda-1,155,130\n",
    );
    let report = success_json(&ws.analyze(&[&tops, "--picks", &picks]));

    let picked = &well(&report, "Kelda-1")["stretching"];
    assert_eq!(picked["origin"], "team pick", "{picked}");
    assert_eq!(number(&picked["rift_onset_ma"], "onset"), 155.0);
    assert_eq!(number(&picked["rift_end_ma"], "end"), 130.0);
    let syn_rift = well(&report, "Kelda-1")["phases"]
        .as_array()
        .expect("phases")
        .iter()
        .find(|p| p["phase"] == "syn-rift")
        .cloned()
        .expect("a syn-rift phase");
    assert_eq!(
        (
            number(&syn_rift["from_ma"], "from"),
            number(&syn_rift["to_ma"], "to")
        ),
        (155.0, 130.0),
        "the syn-rift phase is the pick"
    );

    let proposed = &well(&report, "Kelda-2")["stretching"];
    assert_eq!(proposed["origin"], "proposed", "{proposed}");
    assert_eq!(number(&proposed["rift_onset_ma"], "onset"), KELDA_2.2);
}

#[test]
fn a_params_file_changes_a_parameter_and_it_is_echoed() {
    let ws = Workspace::new();
    let tops = ws.file("kelda_tops.csv", &forward_tops(&[KELDA_1]));
    let params = ws.file(
        "denser_water.json",
        r#"{ "mantle_density_kg_m3": 3300, "water_density_kg_m3": 1030 }"#,
    );
    let default = success_json(&ws.analyze(&[&tops]));
    let changed = success_json(&ws.analyze(&[&tops, "--params", &params]));

    let p = &changed["parameters"];
    assert_eq!(number(&p["mantle_density_kg_m3"], "mantle"), 3300.0);
    assert_eq!(number(&p["water_density_kg_m3"], "water"), 1030.0);
    // Fields left out keep their defaults.
    for field in [
        "crust_density_kg_m3",
        "lithosphere_thickness_m",
        "thermal_expansion_per_c",
    ] {
        assert_eq!(p[field], default["parameters"][field], "{field} unchanged");
    }

    // The changed densities are the ones used: the Airy balance of docs/science.md 3.1 with
    // 3300 / 1030 holds on the new output, and not on the default output's sediment.
    let (reported, expected) = airy_present_day(&changed, "Kelda-1");
    assert_relative(
        reported,
        expected,
        1e-9,
        "Airy balance with the given densities",
    );
    let (default_reported, _) = airy_present_day(&default, "Kelda-1");
    assert!(
        (reported - default_reported).abs() > 1.0,
        "other densities must change the tectonic subsidence: {reported} vs {default_reported}"
    );
}

#[test]
fn a_params_file_adds_a_lithology() {
    let ws = Workspace::new();
    let tops = ws.file(
        "orrin_tops.csv",
        &SMALL_TOPS.replace(
            "Orrin-1,Top Marl,900,30,sandstone",
            "Orrin-1,Top Marl,900,30,siltstone-q",
        ),
    );
    // Without the parameters file the invented lithology is unknown (line 3 of the file).
    assert_refused(
        &ws.analyze(&[&tops]),
        &["orrin_tops.csv line 3, column lithology", "siltstone-q"],
    );

    let params = ws.file(
        "orrin_params.json",
        r#"{ "lithologies": [ { "name": "siltstone-q", "surface_porosity": 0.55,
             "compaction_per_km": 0.4, "grain_density_kg_m3": 2680 } ] }"#,
    );
    let report = success_json(&ws.analyze(&[&tops, "--params", &params]));
    let added = report["parameters"]["lithologies"]
        .as_array()
        .expect("lithologies")
        .iter()
        .find(|l| l["name"] == "siltstone-q")
        .cloned()
        .expect("the added lithology is echoed");
    assert_eq!(number(&added["surface_porosity"], "phi0"), 0.55);
    assert_eq!(number(&added["compaction_per_km"], "c"), 0.4);
    assert_eq!(number(&added["grain_density_kg_m3"], "grain"), 2680.0);
    assert!(
        report["parameters"]["lithologies"]
            .as_array()
            .expect("lithologies")
            .iter()
            .any(|l| l["name"] == "shale"),
        "the defaults stay beside the added lithology"
    );
}

#[test]
fn csv_gives_one_row_per_well_and_age_with_the_header() {
    let ws = Workspace::new();
    let tops = ws.file("kelda_tops.csv", &forward_tops(&[KELDA_1, KELDA_2]));
    let out = ws.analyze(&[&tops, "--format", "csv"]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    let mut reader = csv::Reader::from_reader(out.stdout.as_slice());
    let header: Vec<String> = reader
        .headers()
        .expect("a header row")
        .iter()
        .map(str::to_string)
        .collect();
    assert_eq!(&header[..2], ["well", "age_ma"], "{header:?}");
    for column in [
        "tectonic_subsidence_best_m",
        "phase",
        "beta",
        "rift_onset_ma",
        "rift_end_ma",
    ] {
        assert!(
            header.iter().any(|h| h == column),
            "column {column} in {header:?}"
        );
    }
    let rows: Vec<(String, f64)> = reader
        .records()
        .map(|r| {
            let r = r.expect("a CSV row");
            assert_eq!(r.len(), header.len(), "every row has every column: {r:?}");
            (r[0].to_string(), r[1].parse().expect("age_ma is a number"))
        })
        .collect();

    // The same wells and ages as the JSON history, each once.
    let report = success_json(&ws.analyze(&[&tops]));
    let expected: Vec<(String, f64)> = report["wells"]
        .as_array()
        .expect("wells")
        .iter()
        .flat_map(|w| {
            let name = w["well"].as_str().expect("name").to_string();
            w["history"]
                .as_array()
                .expect("history")
                .iter()
                .map(move |h| (name.clone(), number(&h["age_ma"], "age")))
                .collect::<Vec<_>>()
        })
        .collect();
    assert_eq!(rows, expected, "one row per well and age");
    assert_eq!(rows.len(), 2 * AGES.len());
}

#[test]
fn out_writes_the_file_and_nothing_on_stdout() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let target = ws.path("orrin_results.json");
    let out = ws.analyze(&[&tops, "--out", &target.display().to_string()]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    assert!(out.stdout.is_empty(), "the output goes to the file only");
    let written: Value =
        serde_json::from_slice(&std::fs::read(&target).expect("the --out file exists"))
            .expect("the file is JSON");
    assert_eq!(
        written,
        success_json(&ws.analyze(&[&tops])),
        "the same report as on stdout"
    );

    let csv_target = ws.path("orrin_results.csv");
    let out = ws.analyze(&[
        &tops,
        "--format",
        "csv",
        "--out",
        &csv_target.display().to_string(),
    ]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    let text = std::fs::read_to_string(&csv_target).expect("the CSV file exists");
    assert!(text.starts_with("well,age_ma,"), "{text}");
    assert_eq!(
        text.lines().count(),
        1 + 3,
        "header and one row per age of Orrin-1"
    );
}

#[test]
fn a_non_numeric_depth_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file(
        "orrin_tops.csv",
        &SMALL_TOPS.replace(",900,", ",nine hundred,"),
    );
    let target = ws.path("never.json");
    let out = ws.analyze(&[&tops, "--out", &target.display().to_string()]);
    assert_refused(
        &out,
        &[
            "orrin_tops.csv line 3, column depth_m",
            "\"nine hundred\" is not a number",
        ],
    );
    assert!(
        !target.exists(),
        "no output file is written for a refused input"
    );
}

#[test]
fn an_unknown_lithology_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file(
        "orrin_tops.csv",
        &SMALL_TOPS.replace(",0,shale,", ",0,moonrock,"),
    );
    assert_refused(
        &ws.analyze(&[&tops]),
        &[
            "orrin_tops.csv line 2, column lithology",
            "unknown lithology \"moonrock\"",
        ],
    );
}

#[test]
fn ages_decreasing_with_depth_are_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", &SMALL_TOPS.replace("1600,70", "1600,20"));
    assert_refused(
        &ws.analyze(&[&tops]),
        &[
            "orrin_tops.csv line 4, column age_ma",
            "ages must increase with depth",
        ],
    );
}

#[test]
fn a_bad_sea_level_file_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let sea_level = ws.file(
        "orrin_sea_level.csv",
        "age_ma,sea_level_m\n0,0\n40,much higher\n",
    );
    assert_refused(
        &ws.analyze(&[&tops, "--sea-level", &sea_level]),
        &[
            "orrin_sea_level.csv line 3, column sea_level_m",
            "\"much higher\" is not a number",
        ],
    );
}

#[test]
fn a_bad_picks_file_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let picks = ws.file(
        "orrin_picks.csv",
        "well,rift_onset_ma,rift_end_ma\nOrrin-1,20,60\n",
    );
    assert_refused(
        &ws.analyze(&[&tops, "--picks", &picks]),
        &[
            "orrin_picks.csv line 2, column rift_onset_ma",
            "must be older",
        ],
    );
}

#[test]
fn a_params_value_out_of_range_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    // A density in g/cm3 instead of kg/m3. In a JSON file the field names the place;
    // the message must still say which file it is in.
    let params = ws.file(
        "grams_params.json",
        "{\n  \"crust_density_kg_m3\": 2800,\n  \"mantle_density_kg_m3\": 3.33\n}\n",
    );
    assert_refused(
        &ws.analyze(&[&tops, "--params", &params]),
        &[
            "grams_params.json",
            "mantle_density_kg_m3",
            "3.33",
            "3000 to 3600",
        ],
    );
}

#[test]
fn a_params_file_that_is_not_json_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let params = ws.file(
        "broken_params.json",
        "{\n  \"mantle_density_kg_m3\": 3300,\n}\n",
    );
    assert_refused(
        &ws.analyze(&[&tops, "--params", &params]),
        &["broken_params.json line 3, column 1", "trailing comma"],
    );
}

#[test]
fn a_missing_file_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    assert_refused(&ws.analyze(&["no_such_tops.csv"]), &["no_such_tops.csv"]);
    assert_refused(
        &ws.analyze(&[&tops, "--sea-level", "no_such_sea_level.csv"]),
        &["no_such_sea_level.csv"],
    );
}

#[test]
fn every_problem_of_every_file_is_listed_together() {
    let ws = Workspace::new();
    let tops = ws.file(
        "orrin_tops.csv",
        &SMALL_TOPS
            .replace(",900,", ",deep,")
            .replace(",0,shale,", ",0,moonrock,"),
    );
    let sea_level = ws.file("orrin_sea_level.csv", "age_ma,sea_level_m\n-5,0\n");
    assert_refused(
        &ws.analyze(&[&tops, "--sea-level", &sea_level]),
        &[
            "orrin_tops.csv line 2, column lithology",
            "orrin_tops.csv line 3, column depth_m",
            "orrin_sea_level.csv line 2, column age_ma",
        ],
    );
}

/// The report of `tops` as the JSON contract's own `Report` serialises it, computed in
/// this process from the same inputs (default parameters and catalogue, no sea level):
/// what the command's streamed output must equal byte for byte. `pretty` as README
/// "Batch analysis" says: indented up to 100 wells, compact above.
fn contract_report_bytes(tops: &str, pretty: bool) -> Vec<u8> {
    let catalogue = Catalogue::published_defaults();
    let names: Vec<String> = catalogue
        .lithologies()
        .iter()
        .map(|l| l.name.clone())
        .collect();
    let spelling = |n: &str| names.iter().find(|c| c.eq_ignore_ascii_case(n)).cloned();
    let options = TopsOptions {
        file_name: Some("tops.csv".into()),
        ..Default::default()
    };
    let parsed = input::parse_tops_with_catalogue(tops.as_bytes(), &options, &spelling)
        .expect("the invented tops are valid");
    let inputs = StudyInputs {
        params: ModelParameters::default(),
        catalogue: catalogue.clone(),
        sea_level: SeaLevelCurve::default(),
        thermal: analysis::thermal::ThermalInputs::default(),
    };
    let results = analysis::analyse_wells(&parsed.wells, &inputs, &|_| None, &|| {});
    let report = analysis::report(&parsed.wells, &results, &inputs);
    let mut bytes = if pretty {
        serde_json::to_vec_pretty(&report)
    } else {
        serde_json::to_vec(&report)
    }
    .expect("the report serialises");
    bytes.push(b'\n');
    bytes
}

/// `n` copies of the small Orrin well, named `Orrin-001`… in file order.
fn many_small_wells(n: usize) -> String {
    let mut csv = String::from("well,horizon,depth_m,age_ma,lithology,water_depth_m\n");
    for i in 1..=n {
        for line in SMALL_TOPS.lines().skip(1) {
            writeln!(csv, "{}", line.replace("Orrin-1", &format!("Orrin-{i:03}")))
                .expect("write to a String");
        }
    }
    csv
}

#[test]
fn the_streamed_report_is_the_contract_report_byte_for_byte() {
    let ws = Workspace::new();
    // Few wells: indented JSON.
    let text = forward_tops(&[KELDA_1, KELDA_2]);
    let tops = ws.file("kelda_tops.csv", &text);
    let out = ws.analyze(&[&tops]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    assert!(
        out.stdout == contract_report_bytes(&text, true),
        "the indented report differs from the contract's serialisation"
    );
    // Many wells, more than one chunk of them in flight: compact JSON, still in file order.
    let text = many_small_wells(150);
    let tops = ws.file("orrin_tops.csv", &text);
    let target = ws.path("orrin_results.json");
    let out = ws.analyze(&[&tops, "--out", &target.display().to_string()]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    let written = std::fs::read(&target).expect("the --out file");
    assert!(
        written == contract_report_bytes(&text, false),
        "the compact report differs from the contract's serialisation"
    );
    let report: Value = serde_json::from_slice(&written).expect("JSON");
    let names: Vec<String> = report["wells"]
        .as_array()
        .expect("wells")
        .iter()
        .map(|w| w["well"].as_str().expect("a name").to_string())
        .collect();
    let expected: Vec<String> = (1..=150).map(|i| format!("Orrin-{i:03}")).collect();
    assert_eq!(names, expected, "wells in the order of the file");
}

/// Files in the workspace directory, sorted.
fn listing(ws: &Workspace) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(ws.dir.path())
        .expect("list the directory")
        .map(|e| {
            e.expect("an entry")
                .file_name()
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    names.sort();
    names
}

#[test]
fn a_refused_input_leaves_an_existing_out_file_untouched() {
    let ws = Workspace::new();
    let tops = ws.file(
        "orrin_tops.csv",
        &SMALL_TOPS.replace(",900,", ",nine hundred,"),
    );
    let previous = "{\"an earlier run\": true}\n";
    ws.file("orrin_results.json", previous);
    for format in ["json", "csv"] {
        let out = ws.analyze(&[
            &tops,
            "--format",
            format,
            "--out",
            &ws.path("orrin_results.json").display().to_string(),
        ]);
        assert_refused(&out, &["orrin_tops.csv line 3, column depth_m"]);
        assert_eq!(out.status.code(), Some(1), "exit status 1");
        assert_eq!(
            std::fs::read_to_string(ws.path("orrin_results.json")).expect("still there"),
            previous,
            "{format}: the earlier output is left as it was"
        );
        assert_eq!(
            listing(&ws),
            ["orrin_results.json", "orrin_tops.csv"],
            "{format}: no temporary file is left behind"
        );
    }
}

#[test]
fn a_good_run_replaces_the_out_file_and_leaves_no_temporary_file() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    ws.file(
        "orrin_results.csv",
        "an earlier, longer run\n".repeat(1000).as_str(),
    );
    let out = ws.analyze(&[
        &tops,
        "--format",
        "csv",
        "--out",
        &ws.path("orrin_results.csv").display().to_string(),
    ]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    let text = std::fs::read_to_string(ws.path("orrin_results.csv")).expect("the file");
    assert!(text.starts_with("well,age_ma,"), "{text}");
    assert_eq!(text.lines().count(), 1 + 3, "only the new rows: {text}");
    assert_eq!(listing(&ws), ["orrin_results.csv", "orrin_tops.csv"]);
}

#[test]
fn an_out_file_in_a_missing_directory_fails_before_any_analysis() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let target = ws.path("no_such_dir").join("results.json");
    let out = ws.analyze(&[&tops, "--out", &target.display().to_string()]);
    assert_refused(&out, &["cannot write", "results.json"]);
    assert!(!target.exists());
}

/// Orrin-1, and Vast-1 whose unconformity removed 1.7e308 m of section: every number
/// finite, the erosion where the rules want it, but a column no restoration can hold.
/// The input rules refuse it at the edge (physical bounds), so nothing is analysed.
const VAST_WELL: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_m,eroded_m,eroded_at_ma
Orrin-1,Sea floor,150,0,shale,150,,
Orrin-1,Top Marl,900,30,sandstone,60,,
Orrin-1,Base Marl,1600,70,,20,,
Vast-1,Sea floor,0,0,shale,0,,
Vast-1,Top Vast,1000,10,shale,0,,
Vast-1,Vast unconformity,1000,20,shale,0,1.7e308,15
Vast-1,Base Vast,1.7e308,30,,0,,
";

#[test]
fn a_column_beyond_physical_bounds_is_refused_before_anything_is_analysed() {
    let ws = Workspace::new();
    let tops = ws.file("vast_tops.csv", VAST_WELL);
    for extra in [&[][..], &["--backstrip-only"][..], &["--format", "csv"][..]] {
        let mut args = vec![tops.as_str()];
        args.extend_from_slice(extra);
        assert_refused(
            &ws.analyze(&args),
            &[
                "vast_tops.csv line 7, column eroded_m",
                "out of range for an eroded thickness",
                "vast_tops.csv line 8, column depth_m",
                "out of range for a depth",
            ],
        );
    }
}

impl Workspace {
    /// Start `sagline serve ARGS --bind 127.0.0.1:0` in this directory and read its
    /// standard output up to the line naming where it serves; then stop it. Returns
    /// that line, or `Err` with the exit status and standard error when the server
    /// stopped before serving.
    fn serve_once(&self, args: &[&str]) -> Result<String, (std::process::ExitStatus, String)> {
        use std::io::{BufRead, BufReader, Read};
        let mut child = Command::new(env!("CARGO_BIN_EXE_sagline"))
            .arg("serve")
            .args(args)
            .args(["--bind", "127.0.0.1:0"])
            .current_dir(self.dir.path())
            .env("RUST_LOG", "warn")
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .expect("start the server binary");
        let mut stdout = BufReader::new(child.stdout.take().expect("stdout"));
        let mut line = String::new();
        let serving = loop {
            line.clear();
            let read = stdout
                .read_line(&mut line)
                .expect("read the server's output");
            if read == 0 {
                break None;
            }
            if line.starts_with("Sagline is serving") {
                break Some(line.trim_end().to_string());
            }
        };
        match serving {
            Some(line) => {
                child.kill().expect("stop the server");
                child.wait().expect("wait for the server");
                Ok(line)
            }
            None => {
                let status = child.wait().expect("wait for the server");
                let mut err = String::new();
                child
                    .stderr
                    .take()
                    .expect("stderr")
                    .read_to_string(&mut err)
                    .expect("read stderr");
                Err((status, err))
            }
        }
    }
}

#[test]
fn serve_refuses_a_missing_database_unless_asked_to_create_it() {
    let ws = Workspace::new();
    let mistyped = ws.path("studies-typo.db");
    let path = mistyped.display().to_string();

    let (status, err) = ws
        .serve_once(&["--db", &path])
        .expect_err("a missing --db must not be served");
    assert_eq!(status.code(), Some(1), "{err}");
    assert!(
        err.contains(&format!("no database at {path}")) && err.contains("pass --create"),
        "{err}"
    );
    assert!(!mistyped.exists(), "nothing created at the mistyped path");
    assert!(
        !ws.path("studies-typo.db-wal").exists() && !ws.path("sagline.db").exists(),
        "no other database file made"
    );

    let serving = ws
        .serve_once(&["--db", &path, "--create", "--empty"])
        .unwrap_or_else(|(s, e)| panic!("--create must create it ({s}): {e}"));
    assert!(serving.contains("studies-typo.db"), "{serving}");
    assert!(mistyped.is_file(), "--create made the database");

    // Once it exists it is served without --create.
    let again = ws
        .serve_once(&["--db", &path])
        .unwrap_or_else(|(s, e)| panic!("an existing --db is served ({s}): {e}"));
    assert!(again.contains("studies-typo.db"), "{again}");
}

#[test]
fn serve_without_db_creates_the_default_demo_database() {
    let ws = Workspace::new();
    let serving = ws
        .serve_once(&[])
        .unwrap_or_else(|(s, e)| panic!("the default path is created ({s}): {e}"));
    assert!(serving.contains("sagline.db"), "{serving}");
    let db = ws.path("sagline.db");
    assert!(db.is_file(), "sagline.db made in the working directory");
    let studies = tokio::runtime::Runtime::new()
        .expect("runtime")
        .block_on(async {
            let pool = sagline::store::open(&db).await.expect("open sagline.db");
            let names: Vec<String> = sqlx::query_scalar("SELECT name FROM studies")
                .fetch_all(&pool)
                .await
                .expect("studies");
            pool.close().await;
            names
        });
    assert_eq!(studies.len(), 1, "the demo study: {studies:?}");
}

/// `kill PID` (SIGTERM) is what service managers and container runtimes send: it must
/// stop the server as cleanly as Ctrl-C, with a zero exit status and the log saying why.
#[cfg(unix)]
#[test]
fn sigterm_stops_the_server_cleanly() {
    use std::io::{BufRead, BufReader};
    let ws = Workspace::new();
    let mut child = Command::new(env!("CARGO_BIN_EXE_sagline"))
        .args([
            "serve",
            "--create",
            "--empty",
            "--bind",
            "127.0.0.1:0",
            "--db",
        ])
        .arg(ws.path("term.db"))
        .env("RUST_LOG", "info")
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("start the server binary");
    let mut stdout = BufReader::new(child.stdout.take().expect("stdout"));
    let mut seen = Vec::new();
    let mut line = String::new();
    while stdout
        .read_line(&mut line)
        .expect("read the server's output")
        > 0
    {
        let serving = line.starts_with("Sagline is serving");
        seen.push(std::mem::take(&mut line));
        if serving {
            break;
        }
    }
    assert!(
        seen.iter().any(|l| l.starts_with("Sagline is serving")),
        "the server never said it was serving: {seen:?}"
    );
    let status = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .expect("run kill");
    assert!(status.success(), "kill -TERM failed");
    // The rest of the output up to the end of the process.
    for l in stdout.lines() {
        seen.push(l.expect("read the server's output"));
    }
    let exit = child.wait().expect("wait for the server");
    let log = seen.concat();
    assert!(
        exit.success(),
        "exit status {exit:?} after SIGTERM; output:\n{log}"
    );
    assert!(
        log.contains("SIGTERM received"),
        "no SIGTERM line in:\n{log}"
    );
    assert!(
        log.contains("stopped"),
        "the server did not log a clean stop:\n{log}"
    );
}

#[test]
fn calibration_points_are_compared_and_a_heat_flow_offset_proposed() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    // Invented measurements: two temperatures and one reflectance in Orrin-1.
    let calibration = ws.file(
        "orrin_calibration.csv",
        "well,depth_m,kind,value,uncertainty,note\n\
         Orrin-1,800,temperature,40,3,corrected bottom-hole\n\
         Orrin-1,1500,temperature,62,3,\n\
         Orrin-1,1400,vitrinite_reflectance,0.45,0.05,\n",
    );
    let json = success_json(&ws.analyze(&[&tops, "--calibration", &calibration]));
    let well = &json["wells"][0];
    assert!(well["thermal"].is_object(), "{well}");
    let c = &well["calibration"];
    assert_eq!(c["current"]["points_used"], 3, "{c}");
    let residuals = c["current"]["residuals"].as_array().unwrap();
    assert_eq!(residuals[0]["note"], "corrected bottom-hole");
    assert!(residuals.iter().all(|r| r["modelled"].is_number()), "{c}");
    let p = &c["proposal"];
    let (low, best, high) = (
        p["offset_min_mw_m2"].as_f64().unwrap(),
        p["offset_mw_m2"].as_f64().unwrap(),
        p["offset_max_mw_m2"].as_f64().unwrap(),
    );
    assert!(low <= best && best <= high, "{p}");
    assert!(
        p["fitted"]["chi_square"].as_f64().unwrap()
            <= c["current"]["chi_square"].as_f64().unwrap() + 1e-9,
        "the fit cannot be worse than the model as it stands: {c}"
    );
}

#[test]
fn a_bad_calibration_file_is_refused() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let calibration = ws.file(
        "orrin_calibration.csv",
        "well,depth_m,kind,value,uncertainty\nOrrin-1,800,temperature,450,3\nOrrin-1,900,temperature,95,3\n",
    );
    assert_refused(
        &ws.analyze(&[&tops, "--calibration", &calibration]),
        &["orrin_calibration.csv line 2, column value", "400"],
    );
    let stranger = ws.file(
        "stranger_calibration.csv",
        "well,depth_m,kind,value,uncertainty\nNobody-9,800,temperature,40,3\n",
    );
    assert_refused(
        &ws.analyze(&[&tops, "--calibration", &stranger]),
        &[
            "stranger_calibration.csv line 2, column well",
            "not in the tops file",
        ],
    );
}

#[test]
fn a_params_file_sets_the_surface_temperature_and_the_thermal_method() {
    let ws = Workspace::new();
    let tops = ws.file("orrin_tops.csv", SMALL_TOPS);
    let params = ws.file(
        "warm.json",
        r#"{"thermal": {"surface_temperature_c": 22, "method": "steady_per_step", "crust_heat_production_uw_m3": 1.0}}"#,
    );
    let json = success_json(&ws.analyze(&[&tops, "--params", &params]));
    let t = &json["wells"][0]["thermal"];
    assert_eq!(t["method"], "steady geotherm at each age", "{t}");
    assert!(
        t["surface_temperature_source"]
            .as_str()
            .unwrap()
            .contains("22 °C")
    );
    assert_eq!(t["crust_heat_production_uw_m3"], 1.0);
    // The sea floor sits at the surface temperature today.
    assert_eq!(t["horizons"][0]["present_temperature_c"], 22.0);

    let kelvin = ws.file(
        "kelvin.json",
        r#"{"thermal": {"surface_temperature_c": 295}}"#,
    );
    assert_refused(
        &ws.analyze(&[&tops, "--params", &kelvin]),
        &["kelvin.json: thermal", "surface temperature"],
    );
}

/// The demo's invented calibration file reads, and its BT-03 points (set warmer than the
/// default model, demo-db/README.md) give a positive offset that improves the misfit.
#[test]
fn the_demo_calibration_file_proposes_a_warmer_bt03() {
    let root = env!("CARGO_MANIFEST_DIR");
    let ws = Workspace::new();
    let out = ws.analyze(&[
        &format!("{root}/demo-db/tops.csv"),
        "--sea-level",
        &format!("{root}/demo-db/sea_level.csv"),
        "--calibration",
        &format!("{root}/demo-db/calibration.csv"),
    ]);
    let json = success_json(&out);
    let bt03 = json["wells"]
        .as_array()
        .unwrap()
        .iter()
        .find(|w| w["well"] == "BT-03")
        .unwrap();
    let c = &bt03["calibration"];
    let p = &c["proposal"];
    assert!(p["offset_min_mw_m2"].as_f64().unwrap() > 0.0, "{c}");
    assert!(
        p["fitted"]["chi_square"].as_f64().unwrap() < c["current"]["chi_square"].as_f64().unwrap()
    );
}
