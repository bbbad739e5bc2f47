//! The results cache: analyses are kept by the content of their inputs, so a page
//! shown again computes nothing, and an edit recomputes exactly the wells it touches:
//! a replaced well, the wells using an edited lithology, or every well after a model
//! parameter changes.
//!
//! Every study and well name here is invented.

mod common;

use common::TestApp;
use reqwest::StatusCode;
use sagline::services::cache::CacheStats;
use serde_json::{Value, json};
use std::collections::BTreeMap;

/// Four invented wells. Limestone is in Wren-1 (pure) and Wren-2 (in a mix) only;
/// Wren-3 and Wren-4 are shale and sandstone.
const TOPS: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m
Wren-1,Sea floor,100,0,shale,90,110
Wren-1,Top Clay,700,20,shale,50,100
Wren-1,Top Reef,1300,60,limestone,20,60
Wren-1,Top Sand,2100,120,sandstone,0,30
Wren-1,Top Basement,2600,160,,0,10
Wren-2,Sea floor,80,0,shale,70,90
Wren-2,Top Clay,650,20,shale:50;limestone:50,40,90
Wren-2,Top Reef,1200,60,limestone,20,60
Wren-2,Top Sand,1900,120,sandstone,0,30
Wren-2,Top Basement,2400,160,,0,10
Wren-3,Sea floor,120,0,shale,100,140
Wren-3,Top Clay,800,20,shale,60,120
Wren-3,Top Silt,1400,60,shale:70;sandstone:30,30,80
Wren-3,Top Sand,2200,120,sandstone,0,30
Wren-3,Top Basement,2800,160,,0,10
Wren-4,Sea floor,90,0,shale,80,100
Wren-4,Top Clay,600,20,shale,40,80
Wren-4,Top Silt,1100,60,sandstone,20,50
Wren-4,Top Sand,1800,120,sandstone,0,30
Wren-4,Top Basement,2300,160,,0,10
";

/// Wren-3 again with every surface below the sea floor 150 m deeper.
const WREN_3_DEEPER: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m
Wren-3,Sea floor,120,0,shale,100,140
Wren-3,Top Clay,950,20,shale,60,120
Wren-3,Top Silt,1550,60,shale:70;sandstone:30,30,80
Wren-3,Top Sand,2350,120,sandstone,0,30
Wren-3,Top Basement,2950,160,,0,10
";

const WELLS: [&str; 4] = ["Wren-1", "Wren-2", "Wren-3", "Wren-4"];

/// What one request did to the cache.
#[derive(Debug, PartialEq, Eq)]
struct Use {
    hits: u64,
    misses: u64,
    new_entries: usize,
}

fn used(before: CacheStats, after: CacheStats) -> Use {
    Use {
        hits: after.hits - before.hits,
        misses: after.misses - before.misses,
        new_entries: after.entries - before.entries,
    }
}

/// An app with the four wells uploaded; the study id.
async fn wren_study() -> (TestApp, i64) {
    let app = TestApp::empty().await;
    let study = app.create_study("Wren Shelf cache").await;
    let answer = app.upload_tops(study, TOPS).await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    (app, study)
}

/// Show the study overview (the JSON twin, or the page) and count what it did to the cache.
async fn render(app: &TestApp, study: i64, page: bool) -> Use {
    let before = app.state.cache.stats();
    if page {
        let html = app.get(&format!("/studies/{study}")).await;
        assert_eq!(html.status, StatusCode::OK, "{}", html.body);
    } else {
        let overview = app.get_json(&format!("/api/studies/{study}")).await;
        for row in overview["wells"].as_array().expect("wells") {
            let note = row["note"].as_str().unwrap_or_default();
            assert!(!note.starts_with("not analysed"), "{row}");
        }
    }
    used(before, app.state.cache.stats())
}

/// An unchanged study shown again: its results are remembered for the study's revision,
/// so the cache is neither asked nor filled.
fn shown_again() -> Use {
    expect(0, 0)
}

fn expect(hits: u64, misses: u64) -> Use {
    Use {
        hits,
        misses,
        // Every miss is computed and kept.
        new_entries: misses as usize,
    }
}

/// Each well's backstripped history from the study's analysis download (read outside
/// the measured renders), by well name.
async fn histories(app: &TestApp, study: i64) -> BTreeMap<String, Value> {
    let answer = app
        .get(&format!("/studies/{study}/download/analysis.json"))
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    answer.json()["wells"]
        .as_array()
        .expect("wells")
        .iter()
        .map(|w| {
            (
                w["well"].as_str().expect("well name").to_string(),
                w["history"].clone(),
            )
        })
        .collect()
}

/// The wells whose history differs between two snapshots.
fn changed(before: &BTreeMap<String, Value>, after: &BTreeMap<String, Value>) -> Vec<String> {
    assert_eq!(
        before.keys().collect::<Vec<_>>(),
        after.keys().collect::<Vec<_>>()
    );
    before
        .iter()
        .filter(|(name, history)| after[*name] != **history)
        .map(|(name, _)| name.clone())
        .collect()
}

#[tokio::test]
async fn a_page_shown_again_computes_nothing() {
    let (app, study) = wren_study().await;
    assert_eq!(
        render(&app, study, false).await,
        expect(0, 4),
        "first view: every well is computed"
    );
    assert_eq!(
        render(&app, study, false).await,
        shown_again(),
        "the twin again: nothing computed"
    );
    assert_eq!(
        render(&app, study, true).await,
        shown_again(),
        "the page: nothing computed"
    );
    // A well page asks for its own well only (and its proposal, the same analysis here).
    let before = app.state.cache.stats();
    app.well_json(study, "Wren-4").await;
    let well = used(before, app.state.cache.stats());
    assert_eq!(well.misses, 0, "{well:?}");
    assert!(well.hits >= 1, "{well:?}");
}

#[tokio::test]
async fn replacing_one_well_recomputes_that_well_only() {
    let (app, study) = wren_study().await;
    render(&app, study, false).await;
    let before = histories(&app, study).await;

    let answer = app
        .upload_tops_with(
            study,
            WREN_3_DEEPER.as_bytes().to_vec(),
            &[("replace", "true")],
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    assert_eq!(answer.json()["wells"], json!(["Wren-3"]));

    assert_eq!(
        render(&app, study, false).await,
        expect(3, 1),
        "only Wren-3 is computed again"
    );
    assert_eq!(changed(&before, &histories(&app, study).await), ["Wren-3"]);
    assert_eq!(render(&app, study, false).await, shown_again());
}

#[tokio::test]
async fn editing_a_lithology_recomputes_exactly_the_wells_that_use_it() {
    let (app, study) = wren_study().await;
    render(&app, study, false).await;
    let before = histories(&app, study).await;

    // A more porous limestone (an invented edit, within the physical ranges).
    let edit = json!({
        "name": "limestone",
        "surface_porosity": 0.55,
        "compaction_per_km": 0.6,
        "grain_density_kg_m3": 2710.0,
        "source": "test edit"
    });
    let answer = app
        .put_json(&format!("/api/studies/{study}/lithologies"), &edit)
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);

    assert_eq!(
        render(&app, study, false).await,
        expect(2, 2),
        "Wren-1 and Wren-2 use limestone"
    );
    assert_eq!(
        changed(&before, &histories(&app, study).await),
        ["Wren-1", "Wren-2"]
    );

    // A lithology nobody uses changes nothing.
    let unused = json!({
        "name": "dolomite",
        "surface_porosity": 0.25,
        "compaction_per_km": 0.3,
        "grain_density_kg_m3": 2870.0,
        "source": "test edit"
    });
    let answer = app
        .put_json(&format!("/api/studies/{study}/lithologies"), &unused)
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    assert_eq!(render(&app, study, false).await, expect(4, 0));
}

#[tokio::test]
async fn editing_a_model_parameter_recomputes_every_well() {
    let (app, study) = wren_study().await;
    render(&app, study, false).await;
    let before = histories(&app, study).await;

    // The mantle density enters every well's Airy backstripping (docs/science.md 3.1).
    let answer = app
        .put_json(
            &format!("/api/studies/{study}/parameters"),
            &json!({ "mantle_density_kg_m3": 3300.0 }),
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);

    assert_eq!(
        render(&app, study, false).await,
        expect(0, 4),
        "every well is computed again"
    );
    assert_eq!(changed(&before, &histories(&app, study).await), WELLS);
    assert_eq!(render(&app, study, false).await, shown_again());
}
