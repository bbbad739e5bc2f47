//! Uploading tops files through `POST /api/studies/{id}/tops`: a valid file is
//! stored exactly, every kind of bad file is refused with its line, column and
//! reason and stores nothing, units and column mappings end up in metres, and a
//! well that already exists is replaced only when the user says so.
//! The browser flow is in `upload_browser.rs`.
//!
//! Every well, horizon and study name here is invented.

mod common;

use common::tops::{
    HEADER, REPLACEMENT, VALID_TOPS, VEYRA_1, VEYRA_2, app_with_a_stored_well, assert_column,
    surface, with_line,
};
use common::{TestApp, only_problem};
use reqwest::StatusCode;
use sagline_science::tolerance::assert_printed;
use serde_json::Value;

#[tokio::test]
async fn a_valid_tops_file_is_stored_exactly() {
    let app = TestApp::empty().await;
    let study = app.create_study("Veyra Shelf").await;

    let answer = app.upload_tops(study, VALID_TOPS).await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    let body = answer.json();
    assert_eq!(body["stored"], true);
    assert_eq!(body["wells"], serde_json::json!(["Veyra-1", "Veyra-2"]));
    assert_eq!(
        body["outcome"]["wells_added"],
        serde_json::json!(["Veyra-1", "Veyra-2"])
    );
    assert_eq!(body["outcome"]["surfaces_stored"], 8);

    assert_column(&app.well_json(study, "Veyra-1").await, &VEYRA_1);
    assert_column(&app.well_json(study, "Veyra-2").await, &VEYRA_2);

    // The database holds the same, in position order, and nothing else for the wells.
    let rows: Vec<(String, i64, String, f64, f64, Option<String>)> = sqlx::query_as(
        "SELECT w.name, f.position, f.horizon, f.depth_m, f.age_ma, f.lithology
         FROM surfaces f JOIN wells w ON w.id = f.well_id ORDER BY w.name, f.position",
    )
    .fetch_all(&app.pool)
    .await
    .unwrap();
    let expected: Vec<(String, i64, String, f64, f64, Option<String>)> =
        [("Veyra-1", &VEYRA_1[..]), ("Veyra-2", &VEYRA_2[..])]
            .iter()
            .flat_map(|(well, column)| {
                column.iter().enumerate().map(move |(i, e)| {
                    (
                        well.to_string(),
                        i as i64,
                        e.horizon.to_string(),
                        e.depth_m,
                        e.age_ma,
                        e.lithology.map(str::to_string),
                    )
                })
            })
            .collect();
    assert_eq!(rows, expected);

    // The upload and each added well are in the activity log.
    let log = app.activity(study).await;
    let actions: Vec<(&str, &str)> = log
        .iter()
        .map(|e| {
            (
                e["action"].as_str().unwrap(),
                e["subject"].as_str().unwrap(),
            )
        })
        .collect();
    assert!(actions.contains(&("add well", "Veyra-1")), "{actions:?}");
    assert!(actions.contains(&("add well", "Veyra-2")), "{actions:?}");
    assert!(actions.contains(&("upload", "tops.csv")), "{actions:?}");
}

/// One bad file: what it is, the file, and the problem expected.
struct BadFile {
    what: &'static str,
    csv: String,
    line: u64,
    column: Option<&'static str>,
    reason: &'static str,
}

fn bad_files() -> Vec<BadFile> {
    vec![
        BadFile {
            what: "missing depth",
            csv: with_line(3, "Veyra-1,Top Sand,,38,sandstone,0,25,250,30"),
            line: 3,
            column: Some("depth_m"),
            reason: "is empty; a value is required",
        },
        BadFile {
            what: "missing well name",
            csv: with_line(6, ",Sea floor,140,0,Shale,,,,"),
            line: 6,
            column: Some("well"),
            reason: "is empty; a value is required",
        },
        BadFile {
            what: "non-numeric age",
            csv: with_line(
                4,
                "Veyra-1,Top Marl,640.5,mid-Miocene,shale:70;sandstone:30,40,90,,",
            ),
            line: 4,
            column: Some("age_ma"),
            reason: "\"mid-Miocene\" is not a number",
        },
        BadFile {
            what: "NaN depth",
            csv: with_line(7, "Veyra-2,Top Chalk,NaN,60,chalk,150,300,,"),
            line: 7,
            column: Some("depth_m"),
            reason: "\"NaN\" is not a finite number",
        },
        BadFile {
            what: "infinite water depth",
            csv: with_line(7, "Veyra-2,Top Chalk,1020,60,chalk,150,inf,,"),
            line: 7,
            column: Some("water_depth_max_m"),
            reason: "\"inf\" is not a finite number",
        },
        BadFile {
            // Top Marl moved below Top Sand: by depth, an older surface lies above a younger one.
            what: "depths not increasing with age",
            csv: with_line(
                4,
                "Veyra-1,Top Marl,1300,12.5,shale:70;sandstone:30,40,90,,",
            ),
            line: 4,
            column: Some("age_ma"),
            reason: "ages must increase with depth",
        },
        BadFile {
            what: "duplicate horizon (in another case)",
            csv: format!("{VALID_TOPS}Veyra-2,top chalk,1200,80,chalk,,,,\n"),
            line: 10,
            column: Some("horizon"),
            reason: "appears twice in well \"Veyra-2\" (also on line 7)",
        },
        BadFile {
            what: "unknown lithology",
            csv: with_line(7, "Veyra-2,Top Chalk,1020,60,glimmerstone,150,300,,"),
            line: 7,
            column: Some("lithology"),
            reason: "unknown lithology \"glimmerstone\"",
        },
        BadFile {
            what: "mix not summing to 100",
            csv: with_line(
                4,
                "Veyra-1,Top Marl,640.5,12.5,shale:70;sandstone:20,40,90,,",
            ),
            line: 4,
            column: Some("lithology"),
            reason: "sum to 90, not 100",
        },
        BadFile {
            what: "a well with one surface",
            csv: format!("{VALID_TOPS}Veyra-3,Sea floor,95,0,,,,,\n"),
            line: 10,
            column: Some("well"),
            reason: "well \"Veyra-3\" has only one surface",
        },
        BadFile {
            what: "a row with a missing comma",
            csv: with_line(8, "Veyra-2,Base Chalk,1450,95,,,,"),
            line: 8,
            column: None,
            reason: "has 8 fields but the header has 9",
        },
    ]
}

#[tokio::test]
async fn each_kind_of_bad_file_is_refused_with_its_line_column_and_reason_and_stores_nothing() {
    let (app, study) = app_with_a_stored_well().await;
    let before = app.database_content().await;
    for bad in bad_files() {
        let answer = app.upload_tops(study, &bad.csv).await;
        assert_eq!(
            answer.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{}: {}",
            bad.what,
            answer.body
        );
        let problem = only_problem(&answer);
        assert_eq!(problem["file"], "tops.csv", "{}", bad.what);
        assert_eq!(
            problem["line"].as_u64(),
            Some(bad.line),
            "{}: {problem}",
            bad.what
        );
        assert_eq!(
            problem["column"].as_str(),
            bad.column,
            "{}: {problem}",
            bad.what
        );
        let reason = problem["reason"].as_str().unwrap_or_default();
        assert!(
            reason.contains(bad.reason),
            "{}: reason {reason:?} lacks {:?}",
            bad.what,
            bad.reason
        );
        assert_eq!(
            app.database_content().await,
            before,
            "{}: the database changed",
            bad.what
        );
    }
}

#[tokio::test]
async fn a_file_just_over_the_size_limit_is_refused_with_the_limit_named() {
    let (app, study) = app_with_a_stored_well().await;
    let before = app.database_content().await;
    let limit = sagline_science::input::MAX_FILE_BYTES;
    let row = "Veyra-1,Sea floor,85,0,shale,,,,\n";
    let mut big = format!("{HEADER}\n").into_bytes();
    big.extend(row.as_bytes().iter().cycle().take(limit + 1 - big.len()));
    assert_eq!(big.len(), limit + 1);

    let answer = app.upload_tops_with(study, big, &[]).await;
    assert_eq!(
        answer.status,
        StatusCode::PAYLOAD_TOO_LARGE,
        "{}",
        answer.body
    );
    let error = answer.json()["error"]
        .as_str()
        .unwrap_or_default()
        .to_string();
    let mib = format!("{} MiB", limit / (1024 * 1024));
    assert!(
        error.contains(&mib),
        "the refusal should name the limit ({mib}): {error}"
    );
    assert_eq!(app.database_content().await, before);
}

#[tokio::test]
async fn files_that_are_not_csv_text_are_refused_and_store_nothing() {
    let (app, study) = app_with_a_stored_well().await;
    let before = app.database_content().await;

    // A binary file (the first bytes of a PNG image): not UTF-8 on its first line.
    let binary = b"\x89PNG\r\n\x1a\n\0\0\0\rIHDR\0\0\0\x10".to_vec();
    let answer = app.upload_tops_with(study, binary, &[]).await;
    let problem = only_problem(&answer);
    assert_eq!(problem["line"], 1, "{problem}");
    assert!(
        problem["reason"].as_str().unwrap().contains("not UTF-8"),
        "{problem}"
    );

    // Text with no header row of ours: every required column is reported at line 1.
    let prose = "These are the tops we picked last week.\nThe chalk is deeper than we thought.\n";
    let answer = app.upload_tops(study, prose).await;
    assert_eq!(
        answer.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        answer.body
    );
    let problems = answer.json()["problems"].as_array().unwrap().clone();
    let missing: Vec<&str> = problems
        .iter()
        .inspect(|p| assert_eq!(p["line"], 1, "{p}"))
        .filter_map(|p| p["reason"].as_str())
        .filter(|r| r.contains("is missing"))
        .collect();
    assert_eq!(
        missing.len(),
        5,
        "well, horizon, depth, age and lithology are all missing: {problems:?}"
    );
    assert!(
        missing.iter().any(|r| r.contains("depth_m or depth_ft")),
        "{missing:?}"
    );

    // An empty file.
    let problem = only_problem(&app.upload_tops(study, "").await);
    assert_eq!(problem["reason"], "the file is empty");

    assert_eq!(app.database_content().await, before);
}

#[tokio::test]
async fn a_file_that_is_not_utf8_is_refused_at_the_line_with_the_bad_bytes() {
    let (app, study) = app_with_a_stored_well().await;
    let before = app.database_content().await;
    // Saved in Latin-1: the horizon "Top Marl é" holds the byte 0xE9 on line 4.
    let mut bytes = Vec::new();
    for (i, line) in VALID_TOPS.lines().enumerate() {
        if i == 3 {
            bytes.extend_from_slice(
                b"Veyra-1,Top Marl \xE9,640.5,12.5,shale:70;sandstone:30,40,90,,",
            );
        } else {
            bytes.extend_from_slice(line.as_bytes());
        }
        bytes.push(b'\n');
    }
    let problem = only_problem(&app.upload_tops_with(study, bytes, &[]).await);
    assert_eq!(problem["line"], 4, "{problem}");
    assert!(
        problem["reason"].as_str().unwrap().contains("not UTF-8"),
        "{problem}"
    );
    assert_eq!(app.database_content().await, before);
}

#[tokio::test]
async fn a_column_mapping_reads_odd_headers_as_our_columns() {
    let app = TestApp::empty().await;
    let study = app.create_study("Veyra Shelf").await;
    let csv = "\
Well Name,Surface,TVD,Age (Ma),Rock,Remarks
Veyra-5,Sea floor,210,0,shale,picked twice
Veyra-5,Top Sand,1333.5,41.5,sandstone,
Veyra-5,Base Sand,1701,72,,
";
    // Without the mapping the headers are not ours.
    let refused = app.upload_tops(study, csv).await;
    assert_eq!(
        refused.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        refused.body
    );

    let mapping = [
        ("map.Well Name", "well"),
        ("map.Surface", "horizon"),
        ("map.TVD", "depth_m"),
        ("map.Age (Ma)", "age_ma"),
        ("map.Rock", "lithology"),
    ];
    let answer = app
        .upload_tops_with(study, csv.as_bytes().to_vec(), &mapping)
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    let notes = answer.json()["notes"].to_string();
    assert!(
        notes.contains("Remarks"),
        "an unknown column is reported: {notes}"
    );
    assert_column(
        &app.well_json(study, "Veyra-5").await,
        &[
            surface("Sea floor", 210.0, 0.0, Some("shale"), (210.0, 210.0), None),
            surface(
                "Top Sand",
                1333.5,
                41.5,
                Some("sandstone"),
                (0.0, 0.0),
                None,
            ),
            surface("Base Sand", 1701.0, 72.0, None, (0.0, 0.0), None),
        ],
    );
}

/// Depths of a well's column as stored (m).
fn depths(well: &Value) -> Vec<f64> {
    well["column"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["depth_m"].as_f64().unwrap())
        .collect()
}

#[tokio::test]
async fn depths_in_feet_are_stored_in_metres() {
    let app = TestApp::empty().await;
    let study = app.create_study("Veyra Shelf").await;

    // A depth_ft column; water depths stay in metres unless told otherwise.
    let in_feet = "well,horizon,depth_ft,age_ma,lithology,water_depth_m\n\
                   Veyra-6,Sea floor,500,0,shale,\n\
                   Veyra-6,Top Sand,3280,30,sandstone,20\n\
                   Veyra-6,Base Sand,5000,70,,\n";
    let answer = app.upload_tops(study, in_feet).await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    assert!(
        answer.json()["notes"].to_string().contains("feet"),
        "the conversion is noted: {}",
        answer.body
    );
    let well = app.well_json(study, "Veyra-6").await;
    // 1 ft = 0.3048 m exactly (the international foot, by definition).
    for (actual, metres) in depths(&well).into_iter().zip([152.4, 999.744, 1524.0]) {
        assert_printed(actual, metres, 9, "depth in metres from depth_ft");
    }
    let column = &well["column"];
    // The present surface's water depth defaults to its own depth, now in metres.
    assert_printed(
        column[0]["water_depth_min_m"].as_f64().unwrap(),
        152.4,
        9,
        "sea-floor water depth",
    );
    assert_eq!(
        column[1]["water_depth_min_m"].as_f64(),
        Some(20.0),
        "water depth stays in metres"
    );

    // depth_unit=feet on a header mapped to depth_m converts it all the same.
    let tvd = "well,horizon,TVD,age_ma,lithology\n\
               Veyra-7,Sea floor,1000,0,shale\n\
               Veyra-7,Top Chalk,6000,66,\n";
    let answer = app
        .upload_tops_with(
            study,
            tvd.as_bytes().to_vec(),
            &[("map.TVD", "depth_m"), ("depth_unit", "feet")],
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    let well = app.well_json(study, "Veyra-7").await;
    for (actual, metres) in depths(&well).into_iter().zip([304.8, 1828.8]) {
        assert_printed(actual, metres, 9, "depth in metres from depth_unit=feet");
    }
}

#[tokio::test]
async fn uploading_an_existing_well_is_refused_naming_it_unless_replace_is_given() {
    let app = TestApp::empty().await;
    let study = app.create_study("Veyra Shelf").await;
    assert_eq!(
        app.upload_tops(study, VALID_TOPS).await.status,
        StatusCode::OK
    );
    let before = app.database_content().await;

    let answer = app.upload_tops(study, REPLACEMENT).await;
    assert_eq!(answer.status, StatusCode::CONFLICT, "{}", answer.body);
    let body = answer.json();
    assert_eq!(body["existing_wells"], serde_json::json!(["Veyra-2"]));
    assert!(
        body["error"].as_str().unwrap().contains("replace=true"),
        "{body}"
    );
    assert_eq!(
        app.database_content().await,
        before,
        "a refused replacement stores nothing, not even Veyra-4"
    );

    let answer = app
        .upload_tops_with(
            study,
            REPLACEMENT.as_bytes().to_vec(),
            &[("replace", "true")],
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    let outcome = &answer.json()["outcome"];
    assert_eq!(outcome["wells_replaced"], serde_json::json!(["Veyra-2"]));
    assert_eq!(outcome["wells_added"], serde_json::json!(["Veyra-4"]));

    assert_column(
        &app.well_json(study, "Veyra-2").await,
        &[
            surface("Sea floor", 150.0, 0.0, Some("shale"), (150.0, 150.0), None),
            surface("Top Chalk", 1010.0, 58.0, Some("chalk"), (0.0, 0.0), None),
            surface("Mid Chalk", 1200.0, 75.0, Some("chalk"), (0.0, 0.0), None),
            surface("Base Chalk", 1470.0, 97.0, None, (0.0, 0.0), None),
        ],
    );
    // The untouched well is as it was.
    assert_column(&app.well_json(study, "Veyra-1").await, &VEYRA_1);
    let stored: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM surfaces")
        .fetch_one(&app.pool)
        .await
        .unwrap();
    assert_eq!(stored, 5 + 4 + 2, "the old surfaces of Veyra-2 are gone");

    let log = app
        .get_json(&format!(
            "/api/studies/{study}/activity?action=replace%20well"
        ))
        .await;
    let entries = log["entries"].as_array().unwrap();
    assert_eq!(entries.len(), 1, "{log}");
    let entry = &entries[0];
    assert_eq!(entry["subject"], "Veyra-2");
    let (was, now) = (
        entry["before_state"].as_str().unwrap(),
        entry["after_state"].as_str().unwrap(),
    );
    assert!(
        was.starts_with("3 surfaces, 140.0–1450.0 m"),
        "before: {was}"
    );
    assert!(
        now.starts_with("4 surfaces, 150.0–1470.0 m"),
        "after: {now}"
    );
}

#[tokio::test]
async fn the_existence_check_names_the_stored_wells_in_the_order_asked() {
    let (app, study) = common::tops::app_with_a_stored_well().await;
    assert_eq!(
        app.upload_tops(study, VALID_TOPS).await.status,
        StatusCode::OK
    );
    let mut conn = app.pool.acquire().await.expect("a connection");
    let ask = |names: &[&str]| names.iter().map(|n| n.to_string()).collect::<Vec<_>>();
    let found = sagline::store::wells::existing_names(
        &mut conn,
        study,
        &ask(&["Veyra-2", "Nobody-9", "Orrin-7", "veyra-1", "Veyra-1"]),
    )
    .await
    .expect("the existence query");
    assert_eq!(found, ["Veyra-2", "Orrin-7", "Veyra-1"]);
    let none = sagline::store::wells::existing_names(&mut conn, study, &[])
        .await
        .expect("an empty question");
    assert!(none.is_empty());
    let other_study =
        sagline::store::wells::existing_names(&mut conn, study + 1000, &ask(&["Veyra-1"]))
            .await
            .expect("another study");
    assert!(other_study.is_empty(), "{other_study:?}");
}
