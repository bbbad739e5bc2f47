//! The well page's temperature and maturity: the section with its units and caution,
//! the maturity chart and its downloads, and the JSON twin's thermal extension, on the
//! demo study.

mod common;

use common::TestApp;
use reqwest::StatusCode;

/// The caution on every maturity output, written out here (not taken from the code).
const THERMAL_CAUTION: &str = "estimates from a model, not measurements; they support, and do not replace, qualified judgement and local rules";

async fn demo_well(app: &TestApp, name: &str) -> (i64, i64) {
    let study = app.demo_study.expect("demo study");
    (study, app.well_id(study, name).await)
}

#[tokio::test]
async fn a_demo_well_page_shows_temperatures_and_maturity_with_their_units_and_caution() {
    let app = TestApp::with_demo().await;
    let (study, well) = demo_well(&app, "BT-01").await;
    let page = app.get(&format!("/studies/{study}/wells/{well}")).await;
    assert_eq!(page.status, StatusCode::OK);
    let body = &page.body;
    assert!(
        body.contains("Temperature and maturity"),
        "no thermal section"
    );
    for heading in [
        "Temperature today (°C)",
        "EASY%Ro today (%)",
        "Entered oil window (Ma)",
        "Into the basement (mW/m²)",
        "Out of the surface (mW/m²)",
    ] {
        assert!(body.contains(heading), "no column {heading}");
    }
    assert!(
        body.contains(THERMAL_CAUTION),
        "the thermal caution is missing"
    );
    assert!(
        body.contains("data-series=\"horizon-ro\""),
        "no maturity chart"
    );
}

#[tokio::test]
async fn the_json_twin_carries_each_horizons_temperature_and_ro_growing_with_depth() {
    let app = TestApp::with_demo().await;
    let well = app.well_json(app.demo_study.unwrap(), "BT-01").await;
    let thermal = &well["analysis"]["thermal"];
    assert!(thermal.is_object(), "no thermal extension: {well}");
    assert!(
        thermal["caution"]
            .as_str()
            .unwrap()
            .contains("not measurements")
    );
    assert!(
        thermal["heat_flow_basis"]
            .as_str()
            .unwrap()
            .contains("radiogenic")
    );
    let horizons = thermal["horizons"].as_array().unwrap();
    assert!(horizons.len() >= 5);
    let now: Vec<(f64, f64, f64)> = horizons
        .iter()
        .map(|h| {
            (
                h["present_depth_m"].as_f64().unwrap(),
                h["present_temperature_c"].as_f64().unwrap(),
                h["present_ro_percent"].as_f64().unwrap(),
            )
        })
        .collect();
    for pair in now.windows(2) {
        if pair[1].0 > pair[0].0 + 1.0 {
            assert!(
                pair[1].1 > pair[0].1,
                "temperature grows with depth: {now:?}"
            );
            assert!(pair[1].2 >= pair[0].2, "%Ro grows with depth: {now:?}");
        }
    }
    // %Ro stays within the EASY%Ro range 0.20-4.69 (Sweeney & Burnham 1990 [memory]).
    assert!(now.iter().all(|h| (0.199..=4.7).contains(&h.2)), "{now:?}");
}

#[tokio::test]
async fn the_maturity_chart_and_table_download() {
    let app = TestApp::with_demo().await;
    let (study, well) = demo_well(&app, "BT-01").await;
    let base = format!("/studies/{study}/wells/{well}/download/");
    let svg = app.get(&format!("{base}maturity.svg")).await;
    assert_eq!(svg.status, StatusCode::OK);
    assert!(svg.content_type.starts_with("image/svg+xml"));
    assert!(svg.body.contains("EASY%Ro"));
    let csv = app.get(&format!("{base}maturity.csv")).await;
    assert_eq!(csv.status, StatusCode::OK);
    assert!(
        csv.body
            .contains("well,horizon,age_ma,temperature_c,easy_ro_percent"),
        "{}",
        &csv.body[..csv.body.len().min(600)]
    );
    assert!(csv.body.lines().count() > 20);
    let png = app.get(&format!("{base}maturity.png")).await;
    assert_eq!(png.status, StatusCode::OK);
    assert_eq!(png.content_type, "image/png");
}

#[tokio::test]
async fn an_admin_sets_the_study_surface_temperature_and_every_well_follows_it() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.unwrap();
    let answer = app
        .put_json(
            &format!("/api/studies/{study}/thermal"),
            &serde_json::json!({"surface_temperature_c": 22.0, "crust_heat_production_uw_m3": 1.0}),
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    let well = app.well_json(study, "BT-01").await;
    let thermal = &well["analysis"]["thermal"];
    assert_eq!(
        thermal["horizons"][0]["present_temperature_c"], 22.0,
        "the sea floor"
    );
    assert!(
        thermal["surface_temperature_source"]
            .as_str()
            .unwrap()
            .contains("22 °C at every age, set for this study")
    );
    assert_eq!(thermal["crust_heat_production_uw_m3"], 1.0);
    let log = app.activity(study).await;
    assert!(
        log.iter().any(|e| e["action"] == "edit thermal settings"),
        "no activity line: {log:?}"
    );
    // The form page shows the stored value.
    let page = app.get(&format!("/studies/{study}/catalogue")).await;
    assert!(
        page.body
            .contains("name=\"surface_temperature_c\" value=\"22\"")
    );
}

#[tokio::test]
async fn an_impossible_surface_temperature_is_refused_and_nothing_changes() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.unwrap();
    let before = app.database_content().await;
    let answer = app
        .put_json(
            &format!("/api/studies/{study}/thermal"),
            &serde_json::json!({"surface_temperature_c": 295.0}),
        )
        .await;
    assert!(answer.status.is_client_error(), "{}", answer.status);
    assert!(
        answer.body.contains("surface temperature"),
        "{}",
        answer.body
    );
    assert_eq!(app.database_content().await, before);
}

#[tokio::test]
async fn an_interpreter_may_not_change_the_thermal_settings() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.unwrap();
    let interpreter = app.sign_in_as(sagline::auth::Role::Interpreter).await;
    let answer = interpreter
        .put_json(
            &format!("/api/studies/{study}/thermal"),
            &serde_json::json!({"surface_temperature_c": 15.0}),
        )
        .await;
    assert_eq!(answer.status, StatusCode::FORBIDDEN);
}
