//! The activity record: every change is listed with who and when, can be filtered by
//! kind and by person, and downloads as CSV carrying the study, the date and the caution.

mod common;

use common::tops::VALID_TOPS;
use common::{Answer, TestApp};
use reqwest::StatusCode;
use sagline::auth::Role;
use serde_json::json;

#[tokio::test]
async fn the_log_filters_by_kind_and_person_and_downloads_what_it_shows() {
    let app = TestApp::empty().await;
    let study = app.create_study("Lorn Shelf review log").await;
    assert_eq!(
        app.upload_tops(study, VALID_TOPS).await.status,
        StatusCode::OK
    );
    let well = app.well_id(study, "Veyra-1").await;

    // An interpreter comments; the admin (the app's own agent) comments too.
    let interpreter = app.sign_in_as(Role::Interpreter).await;
    let said: Answer = interpreter
        .post_json(
            &format!("/api/studies/{study}/wells/{well}/comments"),
            &json!({ "body": "Onset looks early; check the Veyra-1 palynology." }),
        )
        .await;
    assert_eq!(said.status, StatusCode::CREATED, "{}", said.body);
    let said = app
        .post_json(
            &format!("/api/studies/{study}/wells/{well}/comments"),
            &json!({ "body": "Agreed, revisit." }),
        )
        .await;
    assert_eq!(said.status, StatusCode::CREATED, "{}", said.body);

    let all = app
        .get_json(&format!("/api/studies/{study}/activity"))
        .await;
    let actions: Vec<&str> = all["actions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|a| a.as_str().unwrap())
        .collect();
    assert!(
        actions.contains(&"comment") && actions.contains(&"upload"),
        "{actions:?}"
    );

    // Only comments, only by the interpreter: exactly one entry.
    let only = app
        .get_json(&format!(
            "/api/studies/{study}/activity?action=comment&actor=member-interpreter"
        ))
        .await;
    let entries = only["entries"].as_array().unwrap();
    assert_eq!(entries.len(), 1, "{only}");
    assert_eq!(entries[0]["actor"], "member-interpreter");
    assert!(
        entries[0]["after_state"]
            .as_str()
            .unwrap()
            .contains("palynology")
    );

    // The CSV holds the same entries as the filtered page, with the export preamble.
    let csv = app
        .get(&format!(
            "/studies/{study}/activity/download?action=comment&actor=member-interpreter"
        ))
        .await;
    assert_eq!(csv.status, StatusCode::OK);
    assert!(
        csv.content_type.starts_with("text/csv"),
        "{}",
        csv.content_type
    );
    assert!(
        csv.body.contains("# study: Lorn Shelf review log"),
        "{}",
        csv.body
    );
    assert!(csv.body.contains("do not replace"), "{}", csv.body);
    let data: Vec<&str> = csv.body.lines().filter(|l| !l.starts_with('#')).collect();
    assert_eq!(data[0], "at_utc,who,change,what,before,after");
    assert_eq!(data.len(), 2, "{}", csv.body);
    assert!(
        data[1].contains("member-interpreter") && data[1].contains("palynology"),
        "{}",
        data[1]
    );

    // A viewer may read and download the log.
    let viewer = app.sign_in_as(Role::Viewer).await;
    assert_eq!(
        viewer
            .get(&format!("/studies/{study}/activity/download"))
            .await
            .status,
        StatusCode::OK
    );
}
