//! Every page and its JSON twin on the demo study; missing studies and wells;
//! editing model parameters and lithologies, with the activity log.

mod common;

use common::{Answer, TestApp, csv_part};
use reqwest::StatusCode;
use reqwest::multipart::Form;
use serde_json::{Value, json};

/// The caution the brief asks for, written out here (not taken from the code), so a
/// page that lost or reworded it fails.
const CAUTION: &str = "They support, and do not replace, the judgement of qualified geoscientists and the rules that apply locally.";

/// The demo's own tops file, to compare a well page with what was seeded.
const DEMO_TOPS: &str = include_str!("../demo-db/tops.csv");

/// An app with the demo study; returns the study id and the id of its first well.
async fn demo_app() -> (TestApp, i64, i64) {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let overview = app.get_json(&format!("/api/studies/{study}")).await;
    let well = overview["wells"][0]["id"]
        .as_i64()
        .expect("the demo has wells");
    (app, study, well)
}

/// Stage an invented tops file through the browser form; the preview's path.
async fn staged_preview(app: &TestApp, study: i64) -> String {
    let csv = "well,horizon,depth_m,age_ma,lithology\nMarrow-3,Sea floor,95,0,shale\nMarrow-3,Top Chalk,1400,66,\n";
    let form = Form::new().part("tops", csv_part(csv.as_bytes().to_vec(), "marrow.csv"));
    let answer = app
        .post_multipart(&format!("/studies/{study}/upload"), form)
        .await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    answer.location.expect("preview location")
}

/// A page answers 200 with HTML that carries the caution and links its JSON twin;
/// the twin answers 200 with JSON. Returns the page and the twin's JSON.
async fn page_and_twin(app: &TestApp, page: &str, twin: &str) -> (Answer, Value) {
    let html = app.get(page).await;
    assert_eq!(html.status, StatusCode::OK, "GET {page}: {}", html.body);
    assert!(
        html.content_type.starts_with("text/html"),
        "GET {page}: {}",
        html.content_type
    );
    assert!(
        html.body.contains(CAUTION),
        "GET {page}: the caution is missing"
    );
    assert!(
        html.body.contains(&format!("href=\"{twin}\"")),
        "GET {page}: no link to its twin {twin}"
    );
    let json = app.get(twin).await;
    assert_eq!(json.status, StatusCode::OK, "GET {twin}: {}", json.body);
    assert!(
        json.content_type.starts_with("application/json"),
        "GET {twin}: {}",
        json.content_type
    );
    (html, json.json())
}

#[tokio::test]
async fn every_page_and_its_json_twin_answer_on_the_demo_study() {
    let (app, study, well) = demo_app().await;
    let demo_name = sagline::demo::DEMO_STUDY_NAME;

    let (html, json) = page_and_twin(&app, "/studies", "/api/studies").await;
    assert!(html.body.contains(demo_name));
    assert_eq!(json["studies"][0]["name"], demo_name, "{json}");

    let (html, json) = page_and_twin(
        &app,
        &format!("/studies/{study}"),
        &format!("/api/studies/{study}"),
    )
    .await;
    let wells = json["wells"].as_array().unwrap();
    assert!(!wells.is_empty());
    for w in wells {
        assert!(
            html.body.contains(w["name"].as_str().unwrap()),
            "the overview lists {}",
            w["name"]
        );
    }
    assert!(
        json["sea_level_points"].as_u64().unwrap() > 0,
        "the demo has a sea-level curve: {json}"
    );

    let (html, json) = page_and_twin(
        &app,
        &format!("/studies/{study}/wells/{well}"),
        &format!("/api/studies/{study}/wells/{well}"),
    )
    .await;
    // The well holds the demo file's rows for it, shallowest first.
    let name = json["well"]["name"].as_str().unwrap();
    let horizons: Vec<&str> = DEMO_TOPS
        .lines()
        .skip(1)
        .map(|l| l.split(',').collect::<Vec<_>>())
        .filter(|cells| cells[0] == name)
        .map(|cells| cells[1])
        .collect();
    let stored: Vec<&str> = json["column"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["horizon"].as_str().unwrap())
        .collect();
    assert_eq!(stored, horizons, "{name}");
    for h in horizons {
        assert!(
            html.body.contains(&format!("<td>{h}</td>")),
            "the well page shows {h}"
        );
    }

    let (html, json) = page_and_twin(
        &app,
        &format!("/studies/{study}/upload"),
        &format!("/api/studies/{study}/upload"),
    )
    .await;
    assert!(html.body.contains("enctype=\"multipart/form-data\""));
    let mib = (sagline_science::input::MAX_FILE_BYTES / (1024 * 1024)) as u64;
    assert_eq!(json["max_file_mib"].as_u64(), Some(mib));
    assert_eq!(
        json["uploads"].as_array().unwrap().len(),
        3,
        "tops, wells and sea level: {json}"
    );

    let (html, json) = page_and_twin(
        &app,
        &format!("/studies/{study}/catalogue"),
        &format!("/api/studies/{study}/catalogue"),
    )
    .await;
    assert_eq!(
        json["parameters"].as_array().unwrap().len(),
        sagline_science::params::PARAMETER_RANGES.len()
    );
    assert!(
        json["lithologies"]
            .as_array()
            .unwrap()
            .iter()
            .any(|l| l["name"] == "shale"),
        "{json}"
    );
    assert!(html.body.contains("Save parameters"));

    let (html, json) = page_and_twin(
        &app,
        &format!("/studies/{study}/activity"),
        &format!("/api/studies/{study}/activity"),
    )
    .await;
    let entries = json["entries"].as_array().unwrap();
    assert!(
        entries.iter().any(|e| e["action"] == "create study"),
        "{json}"
    );
    assert!(html.body.contains("create study"));

    let preview = staged_preview(&app, study).await;
    let token = preview.rsplit('/').next().unwrap();
    let (html, json) = page_and_twin(
        &app,
        &preview,
        &format!("/api/studies/{study}/upload/{token}"),
    )
    .await;
    assert!(html.body.contains("<td>Marrow-3</td>"));
    assert_eq!(json["ready"], true, "{json}");
    assert_eq!(json["wells_in_upload"], json!(["Marrow-3"]));
    assert_eq!(json["files"][0]["preview"]["total_rows"], 2);
}

/// Words that would show the server's internals to a user.
const INTERNALS: [&str; 7] = [
    "sqlx",
    "SELECT",
    "panicked",
    "RowNotFound",
    "server/",
    ".rs",
    "Error {",
];

fn assert_plain_not_found(answer: &Answer, what: &str, path: &str) {
    assert_eq!(
        answer.status,
        StatusCode::NOT_FOUND,
        "GET {path}: {}",
        answer.body
    );
    assert!(
        answer.body.contains(&format!("{what} not found")),
        "GET {path}: {}",
        answer.body
    );
    for word in INTERNALS {
        assert!(
            !answer.body.contains(word),
            "GET {path} shows internals ({word}): {}",
            answer.body
        );
    }
}

#[tokio::test]
async fn a_missing_study_or_well_answers_404_with_a_message_and_no_internals() {
    let (app, study, well) = demo_app().await;
    let other = app.create_study("Marrow Flats").await;
    let missing = 987_654;

    for suffix in [
        "",
        "/upload",
        "/catalogue",
        "/activity",
        &format!("/wells/{well}"),
    ] {
        for path in [
            format!("/studies/{missing}{suffix}"),
            format!("/api/studies/{missing}{suffix}"),
        ] {
            let answer = app.get(&path).await;
            assert_plain_not_found(&answer, &format!("study {missing}"), &path);
            if path.starts_with("/api/") {
                assert_eq!(
                    answer.json(),
                    json!({ "error": format!("study {missing} not found") }),
                    "{path}"
                );
            } else {
                assert!(answer.content_type.starts_with("text/html"), "{path}");
            }
        }
    }

    for path in [
        format!("/studies/{study}/wells/{missing}"),
        format!("/api/studies/{study}/wells/{missing}"),
    ] {
        assert_plain_not_found(
            &app.get(&path).await,
            &format!("well {missing} in study {study}"),
            &path,
        );
    }
    // A well is found only in its own study.
    for path in [
        format!("/studies/{other}/wells/{well}"),
        format!("/api/studies/{other}/wells/{well}"),
    ] {
        assert_plain_not_found(
            &app.get(&path).await,
            &format!("well {well} in study {other}"),
            &path,
        );
    }
    // An upload that is not held (never made, or stored, or expired).
    for path in [
        format!("/studies/{study}/upload/0123456789abcdef"),
        format!("/api/studies/{study}/upload/0123456789abcdef"),
    ] {
        assert_plain_not_found(&app.get(&path).await, "this upload", &path);
    }
    // A held upload belongs to its study.
    let preview = staged_preview(&app, study).await;
    let elsewhere = preview.replacen(
        &format!("/studies/{study}/"),
        &format!("/studies/{other}/"),
        1,
    );
    assert_plain_not_found(&app.get(&elsewhere).await, "this upload", &elsewhere);
}

/// The value of one model parameter in the catalogue's JSON twin.
fn parameter(catalogue: &Value, name: &str) -> f64 {
    catalogue["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == name)
        .and_then(|p| p["value"].as_f64())
        .unwrap_or_else(|| panic!("no parameter {name}: {catalogue}"))
}

#[tokio::test]
async fn a_parameter_out_of_range_is_refused_with_its_range_and_changes_nothing() {
    let (app, study, _) = demo_app().await;
    let before = app.database_content().await;

    // A mantle density typed in g/cm³: the range is 3000 to 3600 kg/m³ (server/science/params.rs).
    let form = app
        .post_form(
            &format!("/studies/{study}/parameters"),
            &[("mantle_density_kg_m3", "3.33")],
        )
        .await;
    assert_eq!(
        form.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        form.body
    );
    assert!(form.body.contains("Nothing was saved"), "{}", form.body);
    assert!(
        form.body.contains("3000 to 3600 kg/m³"),
        "the range is named: {}",
        form.body
    );
    assert_eq!(app.database_content().await, before);

    let api = app
        .put_json(
            &format!("/api/studies/{study}/parameters"),
            &json!({ "crust_thickness_m": 200_000.0 }),
        )
        .await;
    assert!(api.status.is_client_error(), "{}: {}", api.status, api.body);
    let error = api.json()["error"].as_str().unwrap_or_default().to_string();
    assert!(
        error.contains("crust_thickness_m") && error.contains("10000 to 70000 m"),
        "{error}"
    );
    assert_eq!(app.database_content().await, before);

    let typo = app
        .post_form(
            &format!("/studies/{study}/parameters"),
            &[("water_density_kg_m3", "1,03")],
        )
        .await;
    assert_eq!(typo.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(typo.body.contains("is not a number"), "{}", typo.body);
    assert_eq!(app.database_content().await, before);
}

#[tokio::test]
async fn a_valid_parameter_edit_is_saved_and_recorded() {
    let (app, study, _) = demo_app().await;
    let catalogue = app
        .get_json(&format!("/api/studies/{study}/catalogue"))
        .await;
    let old = parameter(&catalogue, "thermal_conductivity_w_m_k");

    let answer = app
        .put_json(
            &format!("/api/studies/{study}/parameters"),
            &json!({ "thermal_conductivity_w_m_k": 2.5 }),
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    assert_eq!(parameter(&answer.json(), "thermal_conductivity_w_m_k"), 2.5);
    let stored: f64 =
        sqlx::query_scalar("SELECT thermal_conductivity_w_m_k FROM studies WHERE id = ?")
            .bind(study)
            .fetch_one(&app.pool)
            .await
            .unwrap();
    assert_eq!(stored, 2.5);

    // The browser form saves the same way.
    let form = app
        .post_form(
            &format!("/studies/{study}/parameters"),
            &[("lithosphere_thickness_m", "110000")],
        )
        .await;
    assert_eq!(form.status, StatusCode::OK, "{}", form.body);
    assert!(form.body.contains("Model parameters saved."));

    let log = app.activity(study).await;
    let edits: Vec<&Value> = log
        .iter()
        .filter(|e| e["action"] == "edit parameters")
        .collect();
    assert_eq!(edits.len(), 2, "{log:?}");
    // Newest first: the form edit, then the API edit, each with before and after.
    let api_edit: Value = serde_json::from_str(edits[1]["before_state"].as_str().unwrap()).unwrap();
    assert_eq!(api_edit["thermal_conductivity_w_m_k"].as_f64(), Some(old));
    let after: Value = serde_json::from_str(edits[1]["after_state"].as_str().unwrap()).unwrap();
    assert_eq!(after["thermal_conductivity_w_m_k"].as_f64(), Some(2.5));
    let form_after: Value =
        serde_json::from_str(edits[0]["after_state"].as_str().unwrap()).unwrap();
    assert_eq!(
        form_after["lithosphere_thickness_m"].as_f64(),
        Some(110_000.0)
    );
    assert_eq!(form_after["thermal_conductivity_w_m_k"].as_f64(), Some(2.5));
}

#[tokio::test]
async fn a_lithology_edit_is_saved_and_recorded_and_a_bad_one_is_refused() {
    let (app, study, _) = demo_app().await;
    let catalogue = app
        .get_json(&format!("/api/studies/{study}/catalogue"))
        .await;
    let shale = catalogue["lithologies"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["name"] == "shale")
        .unwrap()
        .clone();
    let before = app.database_content().await;

    // A porosity above 1 is no porosity.
    let bad = app
        .put_json(
            &format!("/api/studies/{study}/lithologies"),
            &json!({ "name": "shale", "surface_porosity": 1.2, "compaction_per_km": 0.5, "grain_density_kg_m3": 2700.0 }),
        )
        .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY, "{}", bad.body);
    assert!(
        bad.json()["error"]
            .as_str()
            .unwrap()
            .contains("surface_porosity"),
        "{}",
        bad.body
    );
    assert_eq!(app.database_content().await, before);

    let edit = app
        .put_json(
            &format!("/api/studies/{study}/lithologies"),
            &json!({ "name": "Shale", "surface_porosity": 0.6, "compaction_per_km": 0.5, "grain_density_kg_m3": 2700.0 }),
        )
        .await;
    assert_eq!(edit.status, StatusCode::OK, "{}", edit.body);
    let saved = edit.json()["lithologies"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|l| l["name"].as_str().unwrap().eq_ignore_ascii_case("shale"))
        .cloned()
        .collect::<Vec<_>>();
    assert_eq!(
        saved.len(),
        1,
        "the name matches in any case, so shale is changed, not doubled: {saved:?}"
    );
    assert_eq!(saved[0]["surface_porosity"].as_f64(), Some(0.6));
    assert_eq!(
        saved[0]["source"], shale["source"],
        "an edit without a source keeps the old one"
    );

    let log = app.activity(study).await;
    let entry = log
        .iter()
        .find(|e| e["action"] == "edit lithology")
        .expect("edit lithology recorded");
    assert_eq!(
        entry["actor"],
        common::ADMIN_NAME,
        "the signed-in user made the change"
    );
    let was = entry["before_state"].as_str().unwrap();
    let now = entry["after_state"].as_str().unwrap();
    assert!(
        was.contains(&format!("phi0 {}", shale["surface_porosity"])),
        "before: {was}"
    );
    assert!(
        now.contains("phi0 0.6") && now.contains("c 0.5 /km") && now.contains("2700"),
        "after: {now}"
    );
}
