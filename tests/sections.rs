//! Sections of the demo study: one made through the form is listed, its wells are those
//! within its distance, ordered by distance along the line; a save against an old
//! version is refused (409) and changes nothing; a viewer reads but may not write; the
//! JSON twin names its fields with their units; every change is in the activity
//! record; and with Te = 0 the flexural subsidence of every well equals its Airy
//! subsidence, which equals the well page's.
//!
//! The demo study, its wells and every name here are invented.

mod common;

use common::{ADMIN_NAME, TestApp};
use reqwest::StatusCode;
use sagline::auth::Role;
use serde_json::{Value, json};

/// The demo's well positions, read here from the file it is seeded from.
const DEMO_WELLS: &str = include_str!("../demo-db/wells.csv");

/// A line along the demo trough's axis, south-west to north-east (map metres), and the
/// distance within which wells are taken.
const LINE: [(f64, f64); 2] = [(488_000.0, 6_682_000.0), (514_000.0, 6_714_000.0)];
const WITHIN_M: f64 = 3_000.0;

/// The caution of section results, written out here (not taken from the code).
const CAUTION_WORDS: &str = "support, and do not replace, qualified judgement and local rules";

/// (well, distance along the line, signed offset to its left) worked out here for a
/// straight line of two points: the projection onto the segment, clamped to its ends.
fn expected_members() -> Vec<(String, f64, f64)> {
    let ((ax, ay), (bx, by)) = (LINE[0], LINE[1]);
    let (dx, dy) = (bx - ax, by - ay);
    let length = dx.hypot(dy);
    let mut members: Vec<(String, f64, f64)> = DEMO_WELLS
        .lines()
        .skip(1)
        .filter_map(|row| {
            let cells: Vec<&str> = row.split(',').collect();
            let (x, y): (f64, f64) = (cells[1].parse().ok()?, cells[2].parse().ok()?);
            let t = (((x - ax) * dx + (y - ay) * dy) / (length * length)).clamp(0.0, 1.0);
            let (px, py) = (ax + t * dx, ay + t * dy);
            let distance_from_line = (x - px).hypot(y - py);
            let left = dx * (y - ay) - dy * (x - ax) >= 0.0;
            let offset = if left {
                distance_from_line
            } else {
                -distance_from_line
            };
            (distance_from_line <= WITHIN_M).then(|| (cells[0].to_string(), t * length, offset))
        })
        .collect();
    members.sort_by(|a, b| a.1.total_cmp(&b.1));
    members
}

fn points_text() -> String {
    LINE.iter()
        .map(|(x, y)| format!("{x}, {y}"))
        .collect::<Vec<_>>()
        .join("\n")
}

fn edit_body(name: &str, te_km: f64, state: &str, version: i64) -> Value {
    json!({
        "name": name,
        "points": LINE.iter().map(|(x, y)| json!({ "x_m": x, "y_m": y })).collect::<Vec<_>>(),
        "max_offset_m": WITHIN_M,
        "elastic_thickness_km": te_km,
        "te_state": state,
        "version": version,
    })
}

struct Scene {
    app: TestApp,
    study: i64,
}

impl Scene {
    async fn new() -> Scene {
        let app = TestApp::with_demo().await;
        let study = app.demo_study.expect("demo study");
        Scene { app, study }
    }

    fn list(&self) -> String {
        format!("/studies/{}/sections", self.study)
    }

    fn twin(&self, section: i64) -> String {
        format!("/api/studies/{}/sections/{section}", self.study)
    }

    /// A section made through the API; its id.
    async fn create(&self, name: &str, te_km: f64) -> i64 {
        let answer = self
            .app
            .post_json(
                &format!("/api/studies/{}/sections", self.study),
                &edit_body(name, te_km, "proposed", 0),
            )
            .await;
        assert_eq!(answer.status, StatusCode::CREATED, "{}", answer.body);
        let created = answer.json();
        assert_eq!(created["version"], 1, "a new section is at version 1");
        created["id"].as_i64().expect("section id")
    }
}

#[tokio::test]
async fn a_section_added_by_coordinates_is_listed_with_its_wells_ordered_along_it() {
    let s = Scene::new().await;
    let points = points_text();
    let within = WITHIN_M.to_string();
    let answer = s
        .app
        .post_form(
            &s.list(),
            &[
                ("name", "Axis line"),
                ("points", points.as_str()),
                ("max_offset_m", within.as_str()),
                ("elastic_thickness_km", "20"),
            ],
        )
        .await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    let page_path = answer.location.expect("the new section's page");

    let study_page = s.app.get(&format!("/studies/{}", s.study)).await;
    assert!(
        study_page.body.contains(&s.list()),
        "the study page links its sections"
    );
    assert!(
        study_page
            .body
            .contains("data-series=\"section\" data-name=\"Axis line\""),
        "the study map draws the section line"
    );
    let list = s.app.get(&s.list()).await;
    assert_eq!(list.status, StatusCode::OK);
    assert!(list.body.contains("Axis line"), "{}", list.body);
    let listed = s
        .app
        .get_json(&format!("/api/studies/{}/sections", s.study))
        .await;
    assert_eq!(listed["sections"][0]["name"], "Axis line");

    let page = s.app.get(&page_path).await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    let view = s.app.get_json(&format!("/api{page_path}")).await;
    let wells = view["wells"].as_array().expect("wells on the section");
    let expected = expected_members();
    assert!(
        expected.len() >= 3,
        "the line passes several demo wells: {expected:?}"
    );
    let names: Vec<&str> = wells.iter().map(|w| w["well"].as_str().unwrap()).collect();
    let expected_names: Vec<&str> = expected.iter().map(|e| e.0.as_str()).collect();
    assert_eq!(
        names, expected_names,
        "the wells within the distance, in order along the line"
    );
    for (w, (name, distance, offset)) in wells.iter().zip(&expected) {
        let d = w["distance_m"].as_f64().unwrap();
        let o = w["offset_m"].as_f64().unwrap();
        assert!(
            (d - distance).abs() < 0.5,
            "{name}: {d} m along, expected {distance}"
        );
        assert!(
            (o - offset).abs() < 0.5,
            "{name}: offset {o} m, expected {offset}"
        );
        assert!(
            page.body.contains(&format!("{:.3}", distance / 1000.0)),
            "{name}'s distance in km on the page"
        );
    }
    for words in [
        "Distance along (km)",
        "Offset from the line (m)",
        "Airy (m)",
        "Flexural (m)",
        "Te sweep",
        "Distance along the section (km)",
        "<svg",
        CAUTION_WORDS,
    ] {
        assert!(
            page.body.contains(words),
            "the section page shows {words:?}"
        );
    }
    let svg = s
        .app
        .get(&format!("{page_path}/download/deflection.svg"))
        .await;
    assert_eq!(svg.status, StatusCode::OK, "{}", svg.body);
    assert!(svg.content_type.starts_with("image/svg+xml"));
    assert!(svg.body.contains("data-series=\"flexural\""));
    let restored = s
        .app
        .get(&format!("{page_path}/download/restored.svg"))
        .await;
    assert_eq!(restored.status, StatusCode::OK, "{}", restored.body);
    for (name, _, _) in &expected {
        assert!(
            restored.body.contains(&format!("data-well=\"{name}\"")),
            "{name} in the restored section"
        );
    }
    let png = s
        .app
        .get(&format!("{page_path}/download/deflection.png"))
        .await;
    assert_eq!(png.status, StatusCode::OK);
    assert_eq!(png.content_type, "image/png");
    let csv = s
        .app
        .get(&format!("{page_path}/download/comparison.csv"))
        .await;
    assert_eq!(csv.status, StatusCode::OK, "{}", csv.body);
    assert!(csv.body.contains("well,distance_m,age_ma,te_km,airy_tectonic_subsidence_m,flexural_tectonic_subsidence_m,flexural_minus_airy_m"), "{}", csv.body);
    assert!(
        csv.body.contains(&format!("{},", expected[0].0)),
        "the first well's rows"
    );
    assert!(
        csv.body.contains("qualified geoscientists"),
        "the caution travels with the file"
    );
}

#[tokio::test]
async fn a_save_against_an_old_version_is_refused_and_changes_nothing() {
    let s = Scene::new().await;
    let id = s.create("Stale test line", 20.0).await;
    let first = s
        .app
        .put_json(
            &s.twin(id),
            &edit_body("Stale test line", 25.0, "proposed", 1),
        )
        .await;
    assert_eq!(first.status, StatusCode::OK, "{}", first.body);
    assert_eq!(first.json()["version"], 2);
    let before = s.app.database_content().await;

    let stale = s
        .app
        .put_json(
            &s.twin(id),
            &edit_body("Stale test line", 30.0, "agreed", 1),
        )
        .await;
    assert_eq!(stale.status, StatusCode::CONFLICT, "{}", stale.body);
    let body = stale.json();
    assert_eq!(
        body["current"]["version"], 2,
        "the refusal shows the stored section"
    );
    assert_eq!(body["current"]["elastic_thickness_km"], 25.0);
    assert!(
        body["error"].as_str().unwrap().contains(ADMIN_NAME),
        "names who changed it: {body}"
    );

    let points = points_text();
    let form = s
        .app
        .post_form(
            &format!("/studies/{}/sections/{id}", s.study),
            &[
                ("name", "Stale test line"),
                ("points", points.as_str()),
                ("max_offset_m", "3000"),
                ("elastic_thickness_km", "40"),
                ("te_state", "agreed"),
                ("version", "1"),
            ],
        )
        .await;
    assert_eq!(form.status, StatusCode::CONFLICT, "{}", form.body);
    assert!(form.body.contains("Not saved"), "the page says why");
    let removal = s
        .app
        .post_json(&format!("{}/remove", s.twin(id)), &json!({ "version": 1 }))
        .await;
    assert_eq!(removal.status, StatusCode::CONFLICT, "{}", removal.body);
    assert_eq!(
        s.app.database_content().await,
        before,
        "nothing was overwritten"
    );
}

#[tokio::test]
async fn a_viewer_reads_sections_but_may_not_change_them() {
    let s = Scene::new().await;
    let id = s.create("Viewer's line", 20.0).await;
    let viewer = s.app.sign_in_as(Role::Viewer).await;
    assert_eq!(viewer.get(&s.list()).await.status, StatusCode::OK);
    assert_eq!(viewer.get(&s.twin(id)).await.status, StatusCode::OK);
    let before = s.app.database_content().await;
    let refused = [
        viewer
            .post_json(
                &format!("/api/studies/{}/sections", s.study),
                &edit_body("Another line", 20.0, "proposed", 0),
            )
            .await,
        viewer
            .put_json(&s.twin(id), &edit_body("Viewer's line", 0.0, "agreed", 1))
            .await,
        viewer
            .post_json(&format!("{}/remove", s.twin(id)), &json!({ "version": 1 }))
            .await,
    ];
    for answer in refused {
        assert_eq!(answer.status, StatusCode::FORBIDDEN, "{}", answer.body);
    }
    assert_eq!(s.app.database_content().await, before);
    let page = viewer
        .get(&format!("/studies/{}/sections/{id}", s.study))
        .await;
    assert!(
        !page.body.contains("id=\"edit-section\""),
        "no edit form for a viewer"
    );
}

#[tokio::test]
async fn the_json_twin_names_its_fields_with_their_units() {
    let s = Scene::new().await;
    let id = s.create("Twin line", 20.0).await;
    let view = s.app.get_json(&s.twin(id)).await;
    let section = &view["section"];
    assert_eq!(section["name"], "Twin line");
    assert_eq!(section["points"][0]["x_m"], LINE[0].0);
    assert_eq!(section["points"][1]["y_m"], LINE[1].1);
    assert_eq!(section["max_offset_m"], WITHIN_M);
    assert_eq!(section["elastic_thickness_km"], 20.0);
    assert_eq!(section["te_state"], "proposed");
    assert_eq!(section["version"], 1);
    let (dx, dy) = (LINE[1].0 - LINE[0].0, LINE[1].1 - LINE[0].1);
    assert!((section["length_m"].as_f64().unwrap() - dx.hypot(dy)).abs() < 1e-6);
    assert!(view["wells"][0]["distance_m"].is_number());
    assert!(view["wells"][0]["offset_m"].is_number());
    let row = &view["comparison"][0]["rows"][0];
    for field in ["age_ma", "airy_m", "flexural_m", "difference_m"] {
        assert!(
            row[field].is_number(),
            "comparison rows carry {field}: {row}"
        );
    }
    let sweep: Vec<f64> = view["sweep_te_km"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    assert!(sweep.contains(&0.0) && sweep.contains(&20.0), "{sweep:?}");
    assert_eq!(
        view["sweep"][0]["flexural_m"].as_array().unwrap().len(),
        sweep.len()
    );
    assert_eq!(view["report"]["flexural"]["elastic_thickness_m"], 20_000.0);
    assert!(
        view["report"]["restored"].is_array(),
        "the restored section"
    );
    assert!(view["caution"].as_str().unwrap().contains(CAUTION_WORDS));
}

#[tokio::test]
async fn every_change_of_a_section_is_in_the_activity_record() {
    let s = Scene::new().await;
    let id = s.create("Recorded line", 20.0).await;
    let agreed = s
        .app
        .put_json(&s.twin(id), &edit_body("Recorded line", 20.0, "agreed", 1))
        .await;
    assert_eq!(agreed.status, StatusCode::OK, "{}", agreed.body);
    let removed = s
        .app
        .post_json(&format!("{}/remove", s.twin(id)), &json!({ "version": 2 }))
        .await;
    assert_eq!(removed.status, StatusCode::OK, "{}", removed.body);
    let log = s.app.activity(s.study).await;
    let actions: Vec<&str> = log
        .iter()
        .filter(|e| e["subject"] == "Recorded line")
        .map(|e| e["action"].as_str().unwrap())
        .collect();
    assert_eq!(
        actions,
        ["remove section", "edit section Te", "create section"],
        "newest first"
    );
    let te = log
        .iter()
        .find(|e| e["action"] == "edit section Te")
        .unwrap();
    assert_eq!(te["actor"], ADMIN_NAME);
    assert!(
        te["before_state"]
            .as_str()
            .unwrap()
            .contains("\"proposed\"")
    );
    assert!(te["after_state"].as_str().unwrap().contains("\"agreed\""));
    let listed = s
        .app
        .get_json(&format!("/api/studies/{}/sections", s.study))
        .await;
    assert!(listed["sections"].as_array().unwrap().is_empty(), "removed");
}

#[tokio::test]
async fn te_zero_gives_the_well_pages_airy_subsidence_for_every_well() {
    let s = Scene::new().await;
    let id = s.create("Airy line", 20.0).await;
    let stiff = s.app.get_json(&s.twin(id)).await;
    let differs = stiff["comparison"].as_array().unwrap().iter().any(|c| {
        c["rows"]
            .as_array()
            .unwrap()
            .iter()
            .any(|r| r["difference_m"].as_f64().unwrap().abs() > 1.0)
    });
    assert!(
        differs,
        "with Te 20 km the plate spreads the load: some well differs from Airy by over 1 m"
    );

    let saved = s
        .app
        .put_json(&s.twin(id), &edit_body("Airy line", 0.0, "agreed", 1))
        .await;
    assert_eq!(saved.status, StatusCode::OK, "{}", saved.body);
    let view = s.app.get_json(&s.twin(id)).await;
    let comparison = view["comparison"].as_array().unwrap();
    assert!(!comparison.is_empty());
    let mut compared = 0;
    for c in comparison {
        let name = c["well"].as_str().unwrap();
        let page = s.app.well_json(s.study, name).await;
        let history = page["analysis"]["history"]
            .as_array()
            .expect("the well page's history");
        for r in c["rows"].as_array().unwrap() {
            let (age, airy, flexural) = (
                r["age_ma"].as_f64().unwrap(),
                r["airy_m"].as_f64().unwrap(),
                r["flexural_m"].as_f64().unwrap(),
            );
            // Te = 0 is local compensation: flexural equals Airy to the millimetre.
            assert!(
                (flexural - airy).abs() < 1e-3,
                "{name} at {age} Ma: {flexural} vs {airy}"
            );
            if let Some(h) = history
                .iter()
                .find(|h| (h["age_ma"].as_f64().unwrap() - age).abs() < 1e-9)
            {
                let on_page = h["tectonic_subsidence_m"]["best"].as_f64().unwrap();
                assert!(
                    (airy - on_page).abs() < 1e-3,
                    "{name} at {age} Ma: section {airy} m, well page {on_page} m"
                );
                compared += 1;
            }
        }
    }
    assert!(
        compared >= comparison.len(),
        "every well was compared at its own ages"
    );
}

#[tokio::test]
async fn a_line_of_one_point_and_a_taken_name_are_refused_plainly() {
    let s = Scene::new().await;
    s.create("Taken name", 20.0).await;
    let before = s.app.database_content().await;
    let one_point = s
        .app
        .post_form(
            &s.list(),
            &[
                ("name", "Short"),
                ("points", "490000, 6690000"),
                ("max_offset_m", "2000"),
            ],
        )
        .await;
    assert_eq!(
        one_point.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        one_point.body
    );
    assert!(one_point.body.contains("two or more"), "{}", one_point.body);
    let taken = s
        .app
        .post_json(
            &format!("/api/studies/{}/sections", s.study),
            &edit_body("Taken name", 10.0, "proposed", 0),
        )
        .await;
    assert_eq!(taken.status, StatusCode::CONFLICT, "{}", taken.body);
    let bad_te = s
        .app
        .post_json(
            &format!("/api/studies/{}/sections", s.study),
            &edit_body("Thick", 500.0, "proposed", 0),
        )
        .await;
    assert_eq!(
        bad_te.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        bad_te.body
    );
    assert!(bad_te.json()["error"].as_str().unwrap().contains("km"));
    assert_eq!(s.app.database_content().await, before);
}
