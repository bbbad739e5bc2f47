//! `sagline section` run as a user runs it: the real binary on invented files in a temporary
//! directory. The wells of the main test are forward-modelled (`flexure::forward`) so that
//! their Airy tectonic subsidence follows a known foreland load (Te 20 km, a line load
//! advancing 3 km/Myr), computed with the closed-form line-load solution (Turcotte &
//! Schubert eq. 3-129; docs/science-flexure.md 2); the command's fit uses the spectral
//! plate. Every well and horizon name is invented.

use sagline_science::flexure::ElasticPlate;
use sagline_science::flexure::forward::{CurveSurface, well_following_curve};
use sagline_science::flexure::plate::{
    continuous_line_load_deflection, continuous_line_load_peak_m,
};
use sagline_science::lithology::Catalogue;
use sagline_science::{LithologyMix, ModelParameters, SeaLevelCurve, WaterDepth};
use serde_json::Value;
use std::fmt::Write;
use std::path::PathBuf;
use std::process::{Command, Output};
use tempfile::TempDir;

const TOPS_HEADER: &str =
    "well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m";
const TE_M: f64 = 20e3;
const FORCE_N_PER_M: f64 = 2e12;
const SPACING_M: f64 = 10e3;

/// The load front (m along the section) at 10 and 0 Ma; far away at 30 Ma.
fn front(age: f64) -> f64 {
    if age > 20.0 {
        -2000e3
    } else {
        -10e3 - 3e3 * age
    }
}

/// The tectonic deflection at distance x and age (m).
fn deflection(x: f64, age: f64) -> f64 {
    let p = ElasticPlate::default().with_thickness(TE_M);
    let (d, alpha) = (p.rigidity_n_m(), p.flexural_parameter_m(2330.0));
    continuous_line_load_deflection(
        x - front(age),
        continuous_line_load_peak_m(FORCE_N_PER_M, d, alpha),
        alpha,
    )
}

/// Thirteen wells 10 km apart along the line through (0, 1000) and (200 km, 21 km), 400 m to
/// either side of it (the last 2.5 km off), surfaces at 0, 10 and 30 Ma; water 90-110 m at
/// 30 Ma and 30-50 m after, so every well subsides with the load.
fn files() -> (String, String) {
    let catalogue = Catalogue::published_defaults();
    let params = ModelParameters::default();
    let mut tops = format!("{TOPS_HEADER}\n");
    let mut wells = "well,x,y\n".to_string();
    for i in 0..13 {
        let x = i as f64 * SPACING_M;
        let name = format!("Ossel-{i:02}");
        let surfaces: Vec<CurveSurface> = [(0.0, 40.0), (10.0, 40.0), (30.0, 100.0)]
            .iter()
            .enumerate()
            .map(|(k, &(age, wd))| CurveSurface {
                horizon: format!("Ossel horizon {k}"),
                age_ma: age,
                lithology_below: (k < 2)
                    .then(|| LithologyMix::single(if k == 0 { "shale" } else { "sandstone" })),
                water_depth: WaterDepth::new(wd - 10.0, wd + 10.0).unwrap(),
            })
            .collect();
        let column = well_following_curve(
            &name,
            &surfaces,
            &|age| deflection(x, age),
            &catalogue,
            &params,
            &SeaLevelCurve::default(),
        )
        .expect("the invented well builds");
        for s in &column.surfaces {
            writeln!(
                tops,
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
            .unwrap();
        }
        // Along the line's direction (cos, sin of atan 0.1), offset alternately 400 m left/right.
        let (c, s) = (1.0 / 1.01f64.sqrt(), 0.1 / 1.01f64.sqrt());
        let off = match i {
            12 => 2500.0,
            _ if i % 2 == 0 => 400.0,
            _ => -400.0,
        };
        writeln!(
            wells,
            "{name},{},{}",
            x * c - off * s,
            1000.0 + x * s + off * c
        )
        .unwrap();
    }
    (tops, wells)
}

const LINE: &str = "0,1000;200000,21000";

struct Workspace {
    dir: TempDir,
}

impl Workspace {
    fn new() -> Workspace {
        let w = Workspace {
            dir: tempfile::tempdir().unwrap(),
        };
        let (tops, wells) = files();
        w.file("tops.csv", &tops);
        w.file("wells.csv", &wells);
        w
    }

    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    fn file(&self, name: &str, text: &str) -> String {
        std::fs::write(self.path(name), text).unwrap();
        self.path(name).display().to_string()
    }

    fn run(&self, command: &str, args: &[&str]) -> Output {
        Command::new(env!("CARGO_BIN_EXE_sagline"))
            .arg(command)
            .args(args)
            .current_dir(self.dir.path())
            .output()
            .unwrap()
    }

    fn section(&self, args: &[&str]) -> Output {
        let mut all = vec!["tops.csv", "--wells", "wells.csv"];
        all.extend_from_slice(args);
        self.run("section", &all)
    }
}

fn json(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn assert_refused(out: &Output, parts: &[&str]) {
    assert!(!out.status.success());
    assert!(
        out.stdout.is_empty(),
        "nothing on stdout: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    let err = String::from_utf8_lossy(&out.stderr);
    for p in parts {
        assert!(err.contains(p), "stderr should name {p:?}: {err}");
    }
}

#[test]
fn te_zero_reproduces_the_airy_backstrip_of_analyze() {
    let w = Workspace::new();
    let section = json(&w.section(&["--line", LINE, "--distance-m", "1000", "--te-km", "0"]));
    let analyze = json(&w.run("analyze", &["tops.csv", "--backstrip-only"]));
    let wells = section["wells"].as_array().unwrap();
    assert_eq!(wells.len(), 12);
    assert_eq!(wells[0]["well"], "Ossel-00");
    assert_eq!(wells[11]["well"], "Ossel-11");
    let far = &section["wells_too_far"][0];
    assert_eq!(far["well"], "Ossel-12");
    assert!((far["offset_m"].as_f64().unwrap() - 2500.0).abs() < 1e-6);
    for c in section["comparison"].as_array().unwrap() {
        let a = analyze["wells"]
            .as_array()
            .unwrap()
            .iter()
            .find(|x| x["well"] == c["well"])
            .unwrap();
        for (i, age) in c["ages_ma"].as_array().unwrap().iter().enumerate() {
            let step = a["history"]
                .as_array()
                .unwrap()
                .iter()
                .find(|h| h["age_ma"] == *age)
                .unwrap();
            let airy = step["tectonic_subsidence_m"]["best"].as_f64().unwrap();
            let flexural = c["flexural_m"][i].as_f64().unwrap();
            assert!(
                (airy - flexural).abs() < 1e-3,
                "{}: {airy} vs {flexural}",
                c["well"]
            );
        }
    }
    assert!(
        section["caution"]
            .as_str()
            .unwrap()
            .contains("qualified judgement")
    );
}

#[test]
fn the_foreland_fit_recovers_the_load_and_its_migration() {
    let w = Workspace::new();
    let report = json(&w.section(&[
        "--line",
        LINE,
        "--distance-m",
        "1000",
        "--te-km",
        "0",
        "--fit-ages",
        "10,0",
    ]));
    let fits = report["foreland"]["fits"].as_array().unwrap();
    assert_eq!(fits.len(), 2);
    for f in fits {
        let age = f["age_ma"].as_f64().unwrap();
        let model = &f["fit"]["model"];
        let te = model["elastic_thickness_m"].as_f64().unwrap();
        assert!((te - TE_M).abs() < 0.1 * TE_M, "Te {te} at {age} Ma");
        let got = model["load"]["front_m"].as_f64().unwrap();
        assert!(
            (got - front(age)).abs() < SPACING_M,
            "front {got} at {age} Ma, true {}",
            front(age)
        );
        assert!(f["fit"]["forebulge"]["crest_m"].as_f64().is_some());
    }
    let rate = report["foreland"]["front_migration_m_per_myr"]
        .as_f64()
        .unwrap();
    assert!((rate - 3e3).abs() < 0.3e3, "front migration {rate} m/Myr");
}

#[test]
fn a_plate_with_strength_spreads_the_load_and_the_sweep_and_csv_show_it() {
    let w = Workspace::new();
    let out = w.section(&[
        "--line",
        LINE,
        "--te-km",
        "20",
        "--te-sweep-km",
        "0,10,40",
        "--format",
        "csv",
        "--extension",
        "taper",
        "--taper-m",
        "20000",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines();
    assert!(
        lines
            .next()
            .unwrap()
            .starts_with("section,te_m,well,distance_m,offset_m,age_ma")
    );
    // 13 wells x 3 ages at Te 20 km, then 3 sweep values x 13 x 3.
    assert_eq!(lines.count(), 13 * 3 * 4);
    let differs = text.lines().skip(1).take(39).any(|l| {
        let c: Vec<&str> = l.split(',').collect();
        (c[8].parse::<f64>().unwrap() - c[11].parse::<f64>().unwrap()).abs() > 1.0
    });
    assert!(
        differs,
        "at Te 20 km flexural and Airy subsidence must differ somewhere"
    );

    let broken = json(&w.section(&["--line", LINE, "--plate", "broken", "--break-m", "60000"]));
    assert_eq!(broken["geometry"]["kind"], "broken");
}

#[test]
fn a_line_file_is_read_and_its_mistakes_are_named() {
    let w = Workspace::new();
    w.file("line.csv", "x,y\n0,1000\n200000,21000\n");
    let report = json(&w.section(&[
        "--line-file",
        "line.csv",
        "--name",
        "Ossel line",
        "--te-km",
        "0",
    ]));
    assert_eq!(report["section"]["name"], "Ossel line");
    w.file("bad-line.csv", "x,y\n0,1000\nabc,21000\n");
    assert_refused(
        &w.section(&["--line-file", "bad-line.csv"]),
        &["bad-line.csv line 3, column x", "\"abc\""],
    );
}

#[test]
fn bad_options_and_files_are_refused_with_nothing_printed() {
    let w = Workspace::new();
    assert_refused(&w.section(&["--line", "0,0"]), &["--line", "two or more"]);
    assert_refused(&w.section(&["--line", "0,0;1,x"]), &["point 2"]);
    assert_refused(
        &w.section(&["--line", LINE, "--plate", "broken"]),
        &["--break-m"],
    );
    assert_refused(
        &w.section(&["--line", LINE, "--te-km=-5"]),
        &["elastic_thickness_m"],
    );
    assert_refused(
        &w.section(&["--line", LINE, "--fit-ages", "7"]),
        &["7 Ma is not an age of the section"],
    );
    assert_refused(
        &w.section(&["--line", LINE, "--fit-load", "block"]),
        &["--block-width-m"],
    );
    assert_refused(
        &w.section(&["--line", LINE, "--distance-m", "1"]),
        &["no well lies within 1 m"],
    );
    w.file(
        "tops.csv",
        "well,horizon,depth_m,age_ma,lithology\nA-1,Top,100,0,shale\nA-1,Base,abc,10,\n",
    );
    assert_refused(
        &w.section(&["--line", LINE]),
        &["tops.csv line 3, column depth_m"],
    );
    // A well without a projected position is reported, not silently dropped.
    let w = Workspace::new();
    let (_, wells) = files();
    let mut lines: Vec<String> = wells.lines().map(String::from).collect();
    lines[0] = "well,x,y,lat,lon".into();
    for l in lines.iter_mut().skip(1) {
        l.push_str(",,");
    }
    let last = lines
        .iter()
        .position(|l| l.starts_with("Ossel-12"))
        .unwrap();
    lines[last] = "Ossel-12,,,57.1,2.3".into();
    w.file("wells.csv", &(lines.join("\n") + "\n"));
    let report = json(&w.section(&["--line", LINE, "--te-km", "0"]));
    assert_eq!(report["wells_unplaced"][0], "Ossel-12");
    assert!(
        report["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|m| m.as_str().unwrap().contains("Ossel-12"))
    );
}
