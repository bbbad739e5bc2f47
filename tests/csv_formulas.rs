//! No CSV Sagline writes opens in a spreadsheet with a live formula: a study, well,
//! horizon or comment whose text begins with `=`, `+`, `-` or `@` (the OWASP "CSV
//! Injection" list) is written with a leading `'`, in the `#` lines above the table as
//! in the table, by the web downloads and by `sagline analyze`; numbers stay numbers.
//!
//! Every study, well and horizon name here is invented.

mod common;

use common::TestApp;
use reqwest::StatusCode;
use serde_json::json;
use std::process::Command;

/// The well and horizons of the hostile study: a name for each formula start.
const WELL: &str = "=HYPERLINK(\"x\")";
const TOPS: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma
\"=HYPERLINK(\"\"x\"\")\",@Sea floor,120,0,shale,100,150,,
\"=HYPERLINK(\"\"x\"\")\",+Top Clay,820,23.03,shale,50,120,,
\"=HYPERLINK(\"\"x\"\")\",-Top Marl,1650,56.0,shale,150,300,,
\"=HYPERLINK(\"\"x\"\")\",Top Chalk,1900,66.0,chalk,200,400,,
\"=HYPERLINK(\"\"x\"\")\",Top Sand,3900,165.3,sandstone,0,20,,
\"=HYPERLINK(\"\"x\"\")\",Top Basement,4500,201.4,,0,10,,
";
/// The study's name puts a formula after a comma, where a spreadsheet starts a cell.
const STUDY: &str = "Orrin Shelf,=HYPERLINK(\"y\")";

/// Whether a spreadsheet would read this cell as a formula: it starts with one of the
/// OWASP characters and is not a finite number.
fn live(cell: &str) -> bool {
    cell.starts_with(['=', '+', '-', '@', '\t', '\r'])
        && !cell.parse::<f64>().is_ok_and(f64::is_finite)
}

/// Every cell of a CSV text, the `#` lines included (read as a spreadsheet reads them:
/// no comment lines, any number of cells per line).
fn cells(csv_text: &str) -> Vec<String> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(csv_text.as_bytes());
    reader
        .records()
        .flat_map(|r| {
            r.expect("a CSV record")
                .iter()
                .map(str::to_string)
                .collect::<Vec<_>>()
        })
        .collect()
}

fn assert_no_live_formula(csv_text: &str, what: &str) {
    let found: Vec<String> = cells(csv_text).into_iter().filter(|c| live(c)).collect();
    assert!(
        found.is_empty(),
        "{what}: live formulas {found:?}\n{csv_text}"
    );
}

#[tokio::test]
async fn downloads_of_a_study_with_formula_names_carry_no_live_formula() {
    let app = TestApp::empty().await;
    let created = app
        .post_json(
            "/api/studies",
            &json!({ "name": STUDY, "description": "an invented study for a test" }),
        )
        .await;
    assert_eq!(created.status, StatusCode::OK, "{}", created.body);
    let study = created.json()["id"].as_i64().expect("study id");
    let upload = app.upload_tops(study, TOPS).await;
    assert_eq!(upload.status, StatusCode::OK, "{}", upload.body);
    let well = app.well_id(study, WELL).await;
    let comment = app
        .post_json(
            &format!("/api/studies/{study}/wells/{well}/comments"),
            &json!({ "body": "@reviewer -see the marl" }),
        )
        .await;
    assert_eq!(comment.status, StatusCode::CREATED, "{}", comment.body);

    let mut paths: Vec<String> = ["history.csv", "heat-flow.csv", "column.csv"]
        .iter()
        .map(|f| format!("/studies/{study}/wells/{well}/download/{f}"))
        .collect();
    paths.push(format!("/studies/{study}/download/wells.csv"));
    paths.push(format!("/studies/{study}/activity/download"));
    for path in &paths {
        let csv = app.get(path).await;
        assert_eq!(csv.status, StatusCode::OK, "{path}: {}", csv.body);
        assert!(csv.content_type.starts_with("text/csv"), "{path}");
        assert_no_live_formula(&csv.body, path);
        // The `#` lines still open the file, and the study line is whole.
        let preamble: Vec<&str> = csv.body.lines().take(6).collect();
        assert!(
            preamble.iter().all(|l| l.starts_with('#')),
            "{path}: {preamble:#?}"
        );
        let all = cells(&csv.body);
        assert!(
            all.contains(&"'=HYPERLINK(\"y\")".to_string()),
            "{path}: the study name's second part, neutralised: {all:?}"
        );
    }

    // The table cells keep their text behind the quote mark.
    let wells = app
        .get(&format!("/studies/{study}/download/wells.csv"))
        .await;
    assert!(
        cells(&wells.body).contains(&format!("'{WELL}")),
        "{}",
        wells.body
    );
    let column = app
        .get(&format!(
            "/studies/{study}/wells/{well}/download/column.csv"
        ))
        .await;
    let column_cells = cells(&column.body);
    for horizon in ["'@Sea floor", "'+Top Clay", "'-Top Marl", "Top Chalk"] {
        assert!(
            column_cells.contains(&horizon.to_string()),
            "{horizon}: {}",
            column.body
        );
    }
    let log = app
        .get(&format!("/studies/{study}/activity/download"))
        .await;
    assert!(
        cells(&log.body)
            .iter()
            .any(|c| c.starts_with("'@reviewer -see the marl")),
        "{}",
        log.body
    );
}

#[test]
fn analyze_csv_writes_formula_names_as_text_and_numbers_as_numbers() {
    let dir = tempfile::tempdir().expect("temporary directory");
    let tops = dir.path().join("formula_tops.csv");
    std::fs::write(&tops, TOPS).expect("write the tops file");
    let out = Command::new(env!("CARGO_BIN_EXE_sagline"))
        .args(["analyze", "--format", "csv"])
        .arg(&tops)
        .output()
        .expect("run sagline analyze");
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_no_live_formula(&stdout, "sagline analyze --format csv");
    let mut reader = csv::Reader::from_reader(stdout.as_bytes());
    let rows: Vec<csv::StringRecord> = reader.records().map(|r| r.expect("a CSV row")).collect();
    assert!(!rows.is_empty(), "{stdout}");
    for row in &rows {
        assert_eq!(&row[0], format!("'{WELL}"), "the well cell: {row:?}");
    }
    // Every other cell is a number or plain text, never a neutralised number.
    for row in &rows {
        for cell in row.iter().skip(1) {
            let stripped = cell.strip_prefix('\'').unwrap_or(cell);
            assert!(
                !(cell.starts_with('\'') && stripped.parse::<f64>().is_ok()),
                "a number was marked as text: {cell} in {row:?}"
            );
        }
    }
}
