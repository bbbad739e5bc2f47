//! What the downloaded charts and tables say, checked against the analysis they draw:
//! one burial line per horizon, phase bands at the phases' ages, the map's colour bar
//! spanning the wells' betas, axis labels with units, and on every download the study
//! name, the model parameters, the date and the caution.
//!
//! Every study, well and horizon name here is invented.

mod common;

use common::rift::{TROUGH_WELL, rift_study, stretching};
use common::{Answer, TestApp};
use reqwest::StatusCode;
use roxmltree::{Document, Node};
use sagline_science::params::PARAMETER_RANGES;
use sagline_science::tolerance::assert_relative;
use serde_json::{Value, json};
use std::collections::{BTreeMap, BTreeSet};

/// The caution every result carries (PRODUCT.md "Team, access and safety": results
/// "support, and do not replace, the judgement of qualified geoscientists and the
/// rules that apply locally").
const CAUTION_CORE: &str = "support, and do not replace, the judgement of qualified geoscientists and the rules that apply locally";
/// The study name of most tests, with characters that need escaping in XML.
const STUDY: &str = "Tarn Trough <north> & \"east\"";
/// Half a pixel of rounding at each end, and a little more.
const PX_SLACK: f64 = 1.5;

struct Scene {
    app: TestApp,
    study: i64,
    well: i64,
}

impl Scene {
    async fn new(name: &str) -> Scene {
        let app = TestApp::empty().await;
        let study = rift_study(&app, name).await;
        let well = app.well_id(study, TROUGH_WELL).await;
        Scene { app, study, well }
    }

    async fn well_json(&self) -> Value {
        self.app
            .get_json(&format!("/api/studies/{}/wells/{}", self.study, self.well))
            .await
    }

    /// A download of the trough well's page.
    async fn well_file(&self, file: &str) -> Answer {
        self.download(&format!(
            "/studies/{}/wells/{}/download/{file}",
            self.study, self.well
        ))
        .await
    }

    /// A download of the study overview.
    async fn study_file(&self, file: &str) -> Answer {
        self.download(&format!("/studies/{}/download/{file}", self.study))
            .await
    }

    async fn download(&self, path: &str) -> Answer {
        let answer = self.app.get(path).await;
        assert_eq!(answer.status, StatusCode::OK, "GET {path}: {}", answer.body);
        answer
    }
}

fn parse(svg: &str) -> Document<'_> {
    Document::parse(svg).unwrap_or_else(|e| panic!("not well-formed SVG ({e}): {svg}"))
}

/// The `<g data-series="…">` groups of one series, in document order.
fn series<'a>(doc: &'a Document<'a>, name: &str) -> Vec<Node<'a, 'a>> {
    doc.descendants()
        .filter(|n| n.has_tag_name("g") && n.attribute("data-series") == Some(name))
        .collect()
}

fn attr(node: &Node, name: &str) -> f64 {
    node.attribute(name)
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("<{}> has no number in {name}", node.tag_name().name()))
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// The points of the first `<polyline>` in a group.
fn polyline_points(group: &Node) -> Vec<(f64, f64)> {
    let line = group
        .descendants()
        .find(|n| n.has_tag_name("polyline"))
        .expect("a polyline");
    line.attribute("points")
        .unwrap_or_default()
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').expect("x,y");
            (x.parse().expect("x"), y.parse().expect("y"))
        })
        .collect()
}

/// The axis titles and tick labels of a chart.
fn axis_texts(doc: &Document) -> Vec<String> {
    series(doc, "axes")
        .iter()
        .flat_map(|g| g.descendants().filter(|n| n.has_tag_name("text")))
        .map(|t| t.text().unwrap_or_default().trim().to_string())
        .collect()
}

#[tokio::test]
async fn the_burial_chart_draws_one_line_per_horizon_of_the_history() {
    let s = Scene::new(STUDY).await;
    let well = s.well_json().await;
    let history = well["analysis"]["history"].as_array().expect("history");
    // Each horizon's burial depths, oldest first, as the analysis gives them.
    let mut depths: BTreeMap<String, Vec<f64>> = BTreeMap::new();
    for step in history {
        for (name, depth) in step["horizon_depths_m"]
            .as_object()
            .expect("horizon depths")
        {
            depths.entry(name.clone()).or_default().push(num(depth));
        }
    }
    assert_eq!(depths.len(), 7, "the trough well has seven surfaces");

    let svg = s.well_file("burial.svg").await;
    assert!(
        svg.content_type.starts_with("image/svg+xml"),
        "{}",
        svg.content_type
    );
    let doc = parse(&svg.body);
    let lines = series(&doc, "horizon");
    let drawn: Vec<&str> = lines
        .iter()
        .filter_map(|g| g.attribute("data-name"))
        .collect();
    assert_eq!(drawn.len(), depths.len(), "one line per horizon: {drawn:?}");
    assert_eq!(
        drawn.iter().copied().collect::<BTreeSet<_>>(),
        depths.keys().map(String::as_str).collect::<BTreeSet<_>>()
    );
    for group in &lines {
        let name = group.attribute("data-name").unwrap_or_default();
        let wanted = &depths[name];
        if wanted.len() < 2 {
            // A horizon seen at one age only is a dot.
            assert!(
                group.descendants().any(|n| n.has_tag_name("circle")),
                "{name}"
            );
            continue;
        }
        let points = polyline_points(group);
        assert_eq!(points.len(), wanted.len(), "{name}: a point per age");
        // Old on the left, and deeper burial lower on the page.
        for (i, j) in (0..points.len()).flat_map(|i| (i + 1..points.len()).map(move |j| (i, j))) {
            assert!(points[i].0 < points[j].0, "{name}: time runs left to right");
            let deeper = wanted[j] - wanted[i];
            let lower = points[j].1 - points[i].1;
            assert!(
                deeper * lower >= 0.0,
                "{name}: depths {wanted:?}, y {points:?}"
            );
        }
    }
}

/// The pixel column of an age, from the chart's own record of its age axis (what the
/// page script reads), checked against the age labels printed under the axis (what a
/// reader sees): the two must agree.
fn age_axis(doc: &Document) -> impl Fn(f64) -> f64 {
    let axis = series(doc, "age-axis").pop().expect("an age-axis group");
    let (age_a, px_a) = (attr(&axis, "data-age-a-ma"), attr(&axis, "data-px-a"));
    let (age_b, px_b) = (attr(&axis, "data-age-b-ma"), attr(&axis, "data-px-b"));
    let to_px = move |age: f64| px_a + (age - age_a) * (px_b - px_a) / (age_b - age_a);
    let ticks: Vec<(f64, f64)> = series(doc, "axes")
        .iter()
        .flat_map(|g| g.descendants().filter(|n| n.has_tag_name("text")))
        .filter(|t| t.attribute("text-anchor") == Some("middle"))
        .filter_map(|t| Some((t.text()?.trim().parse::<f64>().ok()?, attr(&t, "x"))))
        .collect();
    assert!(ticks.len() >= 3, "age labels under the axis: {ticks:?}");
    for (age, x) in ticks {
        assert!(
            (to_px(age) - x).abs() <= PX_SLACK,
            "the label {age} Ma is at {x} px, the age-axis record puts it at {}",
            to_px(age)
        );
    }
    to_px
}

/// The subsidence chart's phase bands are the analysis' phases, drawn at their ages.
fn assert_bands_at_phases(svg: &str, phases: &Value) {
    let doc = parse(svg);
    let to_px = age_axis(&doc);
    assert!(to_px(200.0) < to_px(0.0), "older ages lie to the left");
    let bands = series(&doc, "phase-band");
    let phases = phases.as_array().expect("phases");
    assert_eq!(bands.len(), phases.len(), "a band per phase");
    for (band, phase) in bands.iter().zip(phases) {
        assert_eq!(band.attribute("data-name"), phase["phase"].as_str());
        let (from, to) = (num(&phase["from_ma"]), num(&phase["to_ma"]));
        assert_eq!(
            (attr(band, "data-from-ma"), attr(band, "data-to-ma")),
            (from, to)
        );
        let rect = band
            .descendants()
            .find(|n| n.has_tag_name("rect"))
            .expect("a band rectangle");
        let (left, right) = (attr(&rect, "x"), attr(&rect, "x") + attr(&rect, "width"));
        assert!(
            (left - to_px(from)).abs() <= PX_SLACK,
            "{from} Ma at {left} px, axis says {}",
            to_px(from)
        );
        assert!(
            (right - to_px(to)).abs() <= PX_SLACK,
            "{to} Ma at {right} px, axis says {}",
            to_px(to)
        );
    }
}

#[tokio::test]
async fn the_subsidence_chart_bands_sit_at_the_phase_ages() {
    let s = Scene::new(STUDY).await;
    let well = s.well_json().await;
    assert_eq!(stretching(&well)["origin"], "proposed");
    let svg = s.well_file("subsidence.svg").await;
    assert_bands_at_phases(&svg.body, &well["analysis"]["phases"]);

    // After a team pick the download redraws the bands at the pick.
    let pick = json!({ "rift_onset_ma": 165.3, "rift_end_ma": 66.0, "version": 0 });
    let saved = s
        .app
        .put_json(
            &format!("/api/studies/{}/wells/{}/picks/1", s.study, s.well),
            &pick,
        )
        .await;
    assert_eq!(saved.status, StatusCode::OK, "{}", saved.body);
    let well = s.well_json().await;
    let syn = &well["analysis"]["phases"]
        .as_array()
        .expect("phases")
        .iter()
        .find(|p| p["phase"] == "syn-rift")
        .cloned()
        .expect("a syn-rift phase");
    assert_eq!((num(&syn["from_ma"]), num(&syn["to_ma"])), (165.3, 66.0));
    let svg = s.well_file("subsidence.svg").await;
    assert_bands_at_phases(&svg.body, &well["analysis"]["phases"]);
}

#[tokio::test]
async fn the_map_colour_bar_spans_the_betas_of_the_overview() {
    let s = Scene::new(STUDY).await;
    let overview = s.app.get_json(&format!("/api/studies/{}", s.study)).await;
    let betas: BTreeMap<String, f64> = overview["wells"]
        .as_array()
        .expect("wells")
        .iter()
        .filter(|w| w["x"].is_number() && w["y"].is_number())
        .filter_map(|w| Some((w["name"].as_str()?.to_string(), w["beta"].as_f64()?)))
        .collect();
    assert_eq!(
        betas.len(),
        3,
        "every rift well is fitted and placed: {overview}"
    );
    let lo = betas.values().copied().fold(f64::INFINITY, f64::min);
    let hi = betas.values().copied().fold(f64::NEG_INFINITY, f64::max);
    assert!(hi > lo, "the wells differ in beta");

    let svg = s.study_file("map.svg").await;
    let doc = parse(&svg.body);
    let bar = series(&doc, "colour-bar").pop().expect("a colour bar");
    // serde_json's default float parsing may land one unit in the last place off the
    // value printed, hence a relative 1e-12 rather than equality.
    assert_relative(attr(&bar, "data-min"), lo, 1e-12, "colour bar minimum");
    assert_relative(attr(&bar, "data-max"), hi, 1e-12, "colour bar maximum");
    let drawn = series(&doc, "well");
    assert_eq!(drawn.len(), betas.len(), "a symbol per well");
    for well in drawn {
        let name = well.attribute("data-name").unwrap_or_default();
        assert_relative(attr(&well, "data-beta"), betas[name], 1e-12, name);
    }
}

#[tokio::test]
async fn axis_labels_carry_units() {
    let s = Scene::new(STUDY).await;
    let checks: [(&str, &[&str]); 4] = [
        ("subsidence.svg", &["Age (Ma)", "(m)"]),
        ("burial.svg", &["Age (Ma)", "(m)"]),
        ("heat-flow.svg", &["Age (Ma)", "(mW/m²)"]),
        ("map.svg", &["(m)"]),
    ];
    for (file, units) in checks {
        let svg = if file == "map.svg" {
            s.study_file(file).await
        } else {
            s.well_file(file).await
        };
        let doc = parse(&svg.body);
        let labels = axis_texts(&doc);
        for unit in units {
            assert!(
                labels.iter().any(|l| l.contains(unit)),
                "{file}: no axis label with {unit}: {labels:?}"
            );
        }
    }
}

/// `YYYY-MM-DD` somewhere in the text.
fn has_date(text: &str) -> bool {
    text.as_bytes().windows(10).any(|w| {
        w.iter().enumerate().all(|(i, b)| match i {
            4 | 7 => *b == b'-',
            _ => b.is_ascii_digit(),
        })
    })
}

/// The study name, every model parameter's name, a date and the caution are in `text`.
fn assert_self_explaining(text: &str, study: &str, what: &str) {
    assert!(text.contains(study), "{what}: no study name in {text}");
    for p in PARAMETER_RANGES {
        assert!(text.contains(p.name), "{what}: no parameter {}", p.name);
    }
    assert!(has_date(text), "{what}: no date");
    assert!(text.contains(CAUTION_CORE), "{what}: no caution");
}

/// An SVG download explains itself in its `<desc>` and, as JSON, in its `<metadata>`.
fn assert_svg_stamped(svg: &str, study: &str, file: &str) {
    let doc = parse(svg);
    let text_of = |tag: &str| {
        doc.root_element()
            .children()
            .find(|n| n.has_tag_name(tag))
            .and_then(|n| n.text())
            .unwrap_or_else(|| panic!("{file}: no <{tag}> under <svg>"))
            .to_string()
    };
    assert_self_explaining(&text_of("desc"), study, file);
    let meta: Value = serde_json::from_str(&text_of("metadata")).expect("metadata is JSON");
    assert_export_object(&meta, study, file);
}

/// The `export` object of a JSON download (and the SVG metadata).
fn assert_export_object(export: &Value, study: &str, what: &str) {
    assert_eq!(export["study"], study, "{what}");
    for p in PARAMETER_RANGES {
        assert!(
            export["parameters"][p.name].is_number(),
            "{what}: no {}",
            p.name
        );
    }
    assert!(
        has_date(export["generated_at"].as_str().unwrap_or_default()),
        "{what}"
    );
    assert!(
        export["caution"]
            .as_str()
            .unwrap_or_default()
            .contains(CAUTION_CORE),
        "{what}"
    );
}

/// A CSV download: `#` lines that explain it, then the table with its header.
fn assert_csv_stamped(csv: &str, study: &str, file: &str, first_column: &str) {
    let preamble: Vec<&str> = csv.lines().take_while(|l| l.starts_with('#')).collect();
    // Each preamble entry is one line: a line break in a name is written as a space.
    let study = study.replace(['\r', '\n'], " ");
    assert_self_explaining(&preamble.join("\n"), &study, file);
    let table: Vec<&str> = csv.lines().skip(preamble.len()).collect();
    let header = table.first().unwrap_or_else(|| panic!("{file}: no table"));
    assert!(
        header.starts_with(first_column),
        "{file}: the line after the preamble is the header, not {header}"
    );
    assert!(table.len() > 1, "{file}: no rows");
    let table = table.join("\n");
    let mut reader = csv::Reader::from_reader(table.as_bytes());
    let width = reader.headers().expect("header").len();
    for row in reader.records() {
        assert_eq!(row.expect("a CSV row").len(), width, "{file}");
    }
}

/// Every download of a study named `study`, checked for its explanation.
async fn check_every_download(study: &str) {
    let s = Scene::new(study).await;
    for file in ["subsidence.svg", "burial.svg", "heat-flow.svg"] {
        assert_svg_stamped(&s.well_file(file).await.body, study, file);
    }
    for file in ["map.svg", "rift-timing.svg"] {
        assert_svg_stamped(&s.study_file(file).await.body, study, file);
    }
    for file in ["history.csv", "heat-flow.csv", "column.csv"] {
        let csv = s.well_file(file).await;
        assert!(
            csv.content_type.starts_with("text/csv"),
            "{file}: {}",
            csv.content_type
        );
        assert_csv_stamped(&csv.body, study, file, "well,");
    }
    assert_csv_stamped(
        &s.study_file("wells.csv").await.body,
        study,
        "wells.csv",
        "well,",
    );

    let well = s.well_json().await;
    let json = s.well_file("analysis.json").await.json();
    assert_export_object(&json["export"], study, "well analysis.json");
    // The well's file holds the analysis the page shows.
    assert_eq!(json["wells"][0], well["analysis"]);
    let json = s.study_file("analysis.json").await.json();
    assert_export_object(&json["export"], study, "study analysis.json");
    assert_eq!(json["wells"].as_array().map(Vec::len), Some(3));
}

#[tokio::test]
async fn every_download_carries_the_study_the_parameters_the_date_and_the_caution() {
    check_every_download(STUDY).await;
}

#[tokio::test]
async fn a_study_name_on_two_lines_keeps_the_csv_preamble_whole() {
    // A name with a line break (the API accepts one) must not end the `#` preamble.
    check_every_download("Tarn Trough\nnorth block").await;
}

/// Width and height from a PNG's IHDR chunk.
fn png_size(png: &[u8]) -> (u32, u32) {
    let be = |b: &[u8]| u32::from_be_bytes([b[0], b[1], b[2], b[3]]);
    (be(&png[16..20]), be(&png[20..24]))
}

#[tokio::test]
async fn every_chart_also_downloads_as_a_png_at_twice_its_size() {
    let s = Scene::new("Pell Trough pictures").await;
    let paths = [
        format!(
            "/studies/{}/wells/{}/download/subsidence.png",
            s.study, s.well
        ),
        format!("/studies/{}/wells/{}/download/burial.png", s.study, s.well),
        format!(
            "/studies/{}/wells/{}/download/heat-flow.png",
            s.study, s.well
        ),
        format!("/studies/{}/download/map.png", s.study),
        format!("/studies/{}/download/rift-timing.png", s.study),
    ];
    for path in paths {
        let response = s
            .app
            .request(reqwest::Method::GET, &path)
            .send()
            .await
            .expect("GET");
        assert_eq!(response.status(), StatusCode::OK, "{path}");
        assert_eq!(response.headers()["content-type"], "image/png", "{path}");
        let png = response.bytes().await.expect("body");
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "{path}");
        let (width, height) = png_size(&png);
        // 900 px charts drawn at twice their size, plus the caption strip below.
        assert_eq!(width, 1800, "{path}");
        assert!(height > 2 * 320, "{path}: {height}");
    }
}
