//! The browser's upload flow: the multipart form, the preview page with its rows,
//! problems and column choices, and storing on confirmation.
//!
//! Every well, horizon and study name here is invented.

mod common;

use common::tops::{
    REPLACEMENT, VALID_TOPS, VEYRA_1, VEYRA_2, app_with_a_stored_well, assert_column, with_line,
};
use common::{Answer, TestApp, csv_part};
use reqwest::StatusCode;
use reqwest::multipart::Form;

/// `(name, value)` of every hidden input of a page's forms.
fn hidden_fields(html: &str) -> Vec<(String, String)> {
    let attribute = |tag: &str, name: &str| {
        let start = tag.find(&format!("{name}=\""))? + name.len() + 2;
        let len = tag[start..].find('"')?;
        Some(tag[start..start + len].to_string())
    };
    html.split("<input")
        .skip(1)
        .map(|rest| &rest[..rest.find('>').unwrap_or(rest.len())])
        .filter(|tag| tag.contains("type=\"hidden\""))
        .filter_map(|tag| Some((attribute(tag, "name")?, attribute(tag, "value")?)))
        .collect()
}

/// Send a file through the browser's upload form; returns the preview page's path.
async fn stage_in_browser(app: &TestApp, study: i64, csv: &str) -> String {
    let form = Form::new()
        .part("tops", csv_part(csv.as_bytes().to_vec(), "shelf_tops.csv"))
        .text("depth_unit", "");
    let answer: Answer = app
        .post_multipart(&format!("/studies/{study}/upload"), form)
        .await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    let location = answer.location.expect("redirect to the preview");
    assert!(
        location.starts_with(&format!("/studies/{study}/upload/")),
        "{location}"
    );
    location
}

#[tokio::test]
async fn the_browser_flow_previews_then_stores_on_confirmation() {
    let (app, study) = app_with_a_stored_well().await;
    let before = app.database_content().await;

    let preview_path = stage_in_browser(&app, study, VALID_TOPS).await;
    let preview = app.get(&preview_path).await;
    assert_eq!(preview.status, StatusCode::OK, "{}", preview.body);
    assert!(
        preview.content_type.starts_with("text/html"),
        "{}",
        preview.content_type
    );
    for cell in [
        "Veyra-1",
        "Top Marl",
        "640.5",
        "shale:70;sandstone:30",
        "Base Chalk",
    ] {
        assert!(
            preview.body.contains(&format!("<td>{cell}</td>")),
            "the preview shows {cell}"
        );
    }
    assert!(
        preview.body.contains("2 well(s) ready to store"),
        "{}",
        preview.body
    );
    assert_eq!(
        app.database_content().await,
        before,
        "a preview stores nothing"
    );

    let fields = hidden_fields(&preview.body);
    assert!(
        fields
            .iter()
            .any(|(n, v)| n == "tops_col_2" && v == "depth_m"),
        "{fields:?}"
    );
    let pairs: Vec<(&str, &str)> = fields
        .iter()
        .map(|(n, v)| (n.as_str(), v.as_str()))
        .collect();
    let stored = app.post_form(&preview_path, &pairs).await;
    assert_eq!(stored.status, StatusCode::SEE_OTHER, "{}", stored.body);
    assert_eq!(
        stored.location.as_deref(),
        Some(format!("/studies/{study}").as_str())
    );
    assert_column(&app.well_json(study, "Veyra-1").await, &VEYRA_1);
    assert_column(&app.well_json(study, "Veyra-2").await, &VEYRA_2);
    let uploads = app.get_json(&format!("/api/studies/{study}/upload")).await;
    assert_eq!(
        uploads["uploads"][0]["file_name"], "shelf_tops.csv",
        "{uploads}"
    );

    // The held upload is gone once stored.
    assert_eq!(app.get(&preview_path).await.status, StatusCode::NOT_FOUND);
}

#[tokio::test]
async fn the_browser_preview_shows_problems_and_a_mapping_fixes_them() {
    let (app, study) = app_with_a_stored_well().await;
    let before = app.database_content().await;

    // A bad value: the preview lists it with its line and column, and cannot be stored.
    let bad = with_line(
        4,
        "Veyra-1,Top Marl,640.5,mid-Miocene,shale:70;sandstone:30,40,90,,",
    );
    let path = stage_in_browser(&app, study, &bad).await;
    let page = app.get(&path).await;
    assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        page.body.contains("shelf_tops.csv line 4, column age_ma"),
        "{}",
        page.body
    );
    assert!(
        !page
            .body
            .contains(&format!("method=\"post\" action=\"{path}\"")),
        "no store button while problems remain"
    );
    let refused = app.post_form(&path, &[]).await;
    assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(app.database_content().await, before);

    // A depth header named like a depth is offered as one, and the page says it guessed.
    let guessable = VALID_TOPS.replacen("depth_m", "TVDSS", 1);
    let path = stage_in_browser(&app, study, &guessable).await;
    let page = app.get(&path).await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    assert!(page.body.contains("matched by a guess"), "{}", page.body);
    assert!(
        page.body.contains("<option value=\"depth_m\" selected>"),
        "the guess is shown selected in the read-as row: {}",
        page.body
    );

    // A header that names nothing: missing until the user picks its column in the preview.
    let odd = VALID_TOPS.replacen("depth_m", "Kote", 1);
    let path = stage_in_browser(&app, study, &odd).await;
    let page = app.get(&path).await;
    assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(page.body.contains("depth_m or depth_ft"), "{}", page.body);
    let mapped = app.get(&format!("{path}?tops_col_2=depth_m")).await;
    assert_eq!(mapped.status, StatusCode::OK, "{}", mapped.body);
    let fields = hidden_fields(&mapped.body);
    let pairs: Vec<(&str, &str)> = fields
        .iter()
        .map(|(n, v)| (n.as_str(), v.as_str()))
        .collect();
    let stored = app.post_form(&path, &pairs).await;
    assert_eq!(stored.status, StatusCode::SEE_OTHER, "{}", stored.body);
    assert_column(&app.well_json(study, "Veyra-1").await, &VEYRA_1);
}

#[tokio::test]
async fn the_browser_asks_before_replacing_an_existing_well() {
    let app = TestApp::empty().await;
    let study = app.create_study("Veyra Shelf").await;
    assert_eq!(
        app.upload_tops(study, VALID_TOPS).await.status,
        StatusCode::OK
    );
    let before = app.database_content().await;

    let path = stage_in_browser(&app, study, REPLACEMENT).await;
    let page = app.get(&path).await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(
        page.body
            .contains("Replace the 1 existing well(s): Veyra-2"),
        "{}",
        page.body
    );
    let fields = hidden_fields(&page.body);
    let mut pairs: Vec<(&str, &str)> = fields
        .iter()
        .map(|(n, v)| (n.as_str(), v.as_str()))
        .collect();
    let unconfirmed = app.post_form(&path, &pairs).await;
    assert_eq!(unconfirmed.status, StatusCode::CONFLICT);
    assert!(
        unconfirmed
            .body
            .contains("These wells already exist: Veyra-2"),
        "{}",
        unconfirmed.body
    );
    assert_eq!(app.database_content().await, before);

    pairs.push(("replace", "true"));
    let confirmed = app.post_form(&path, &pairs).await;
    assert_eq!(
        confirmed.status,
        StatusCode::SEE_OTHER,
        "{}",
        confirmed.body
    );
    let replaced = app
        .get_json(&format!(
            "/api/studies/{study}/activity?action=replace%20well"
        ))
        .await;
    assert_eq!(replaced["entries"][0]["subject"], "Veyra-2", "{replaced}");
}
