//! A study's live stream belongs to the session that opened it: it ends when that
//! session is signed out (by its owner, everywhere, by an admin, or by a password
//! change made in another session) or its account is disabled, while everyone else's
//! streams go on; and one session holds at most eight streams at once.

mod common;

use common::{Agent, MEMBER_PASSWORD, TestApp};
use reqwest::{Method, StatusCode};
use sagline::auth::Role;
use sagline::web::live::{LiveEvent, MAX_STREAMS_PER_SESSION};
use serde_json::json;
use std::time::Duration;

/// Longer than any of this file's waits should take: a stream still open after this
/// is a failure.
const GIVE_UP: Duration = Duration::from_secs(30);

async fn open_stream(agent: &Agent, study: i64) -> reqwest::Response {
    let response = agent
        .request(Method::GET, &format!("/api/studies/{study}/events"))
        .send()
        .await
        .expect("open the live stream");
    assert_eq!(response.status(), StatusCode::OK, "open the live stream");
    response
}

/// Read the stream until the server ends it (panics if it stays open).
async fn assert_ends(mut stream: reqwest::Response, whose: &str) {
    let ended = tokio::time::timeout(GIVE_UP, async {
        while let Ok(Some(_)) = stream.chunk().await {}
    })
    .await;
    assert!(ended.is_ok(), "{whose} stream is still open");
}

/// Publish a change to the study and check this stream hears it (it is still open).
async fn assert_hears(app: &TestApp, stream: &mut reqwest::Response, study: i64, whose: &str) {
    let summary = format!("a change {whose} must hear");
    app.state.events.publish(
        study,
        LiveEvent {
            kind: "comment",
            well_id: 1,
            well: "Invented-1".into(),
            by: "someone".into(),
            summary: summary.clone(),
        },
    );
    let heard = tokio::time::timeout(GIVE_UP, async {
        let mut received = String::new();
        while !received.contains(&summary) {
            match stream.chunk().await {
                Ok(Some(chunk)) => received.push_str(&String::from_utf8_lossy(&chunk)),
                _ => return false,
            }
        }
        true
    })
    .await;
    assert_eq!(heard, Ok(true), "{whose} stream heard the change");
}

async fn user_id(app: &TestApp, name: &str) -> i64 {
    sagline::store::users::find_by_name(&app.pool, name)
        .await
        .expect("look up the account")
        .expect("the account exists")
        .id
}

#[tokio::test]
async fn a_stream_ends_when_its_session_signs_out_and_the_others_go_on() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let viewer = app.sign_in_as(Role::Viewer).await;
    let viewers = open_stream(&viewer, study).await;
    let mut admins = open_stream(&app, study).await;

    let signed_out = viewer.post_form("/logout", &[]).await;
    assert_eq!(
        signed_out.status,
        StatusCode::SEE_OTHER,
        "{}",
        signed_out.body
    );

    assert_ends(viewers, "the signed-out viewer's").await;
    assert_hears(&app, &mut admins, study, "the admin's").await;
}

#[tokio::test]
async fn every_stream_of_an_account_ends_when_an_admin_disables_it_or_signs_it_out() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let mut admins = open_stream(&app, study).await;

    // Disabled: both of its sessions' streams end.
    let laptop = app.sign_in_as(Role::Interpreter).await;
    let desktop = app.sign_in_as(Role::Interpreter).await;
    let on_laptop = open_stream(&laptop, study).await;
    let on_desktop = open_stream(&desktop, study).await;
    let id = user_id(&app, "member-interpreter").await;
    let disabled = app
        .post_json(&format!("/api/admin/users/{id}/disable"), &json!({}))
        .await;
    assert_eq!(disabled.status, StatusCode::OK, "{}", disabled.body);
    assert_ends(on_laptop, "the disabled account's laptop").await;
    assert_ends(on_desktop, "the disabled account's desktop").await;
    assert_hears(&app, &mut admins, study, "the admin's").await;

    // Signed out everywhere by an admin.
    let viewer = app.sign_in_as(Role::Viewer).await;
    let viewers = open_stream(&viewer, study).await;
    let id = user_id(&app, "member-viewer").await;
    let ended = app
        .post_json(&format!("/api/admin/users/{id}/sign-out"), &json!({}))
        .await;
    assert_eq!(ended.status, StatusCode::OK, "{}", ended.body);
    assert_ends(viewers, "the signed-out viewer's").await;
    assert_hears(&app, &mut admins, study, "the admin's").await;
}

#[tokio::test]
async fn a_password_change_ends_the_streams_of_the_accounts_other_sessions_only() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let here = app.sign_in_as(Role::Viewer).await;
    let elsewhere = app.sign_in_as(Role::Viewer).await;
    let mut on_this_machine = open_stream(&here, study).await;
    let on_another = open_stream(&elsewhere, study).await;

    let changed = here
        .post_json(
            "/api/account/password",
            &json!({
                "current_password": MEMBER_PASSWORD,
                "new_password": "granite-ledge-77-viewer",
            }),
        )
        .await;
    assert_eq!(changed.status, StatusCode::OK, "{}", changed.body);

    assert_ends(on_another, "the other session's").await;
    assert_hears(&app, &mut on_this_machine, study, "the changing session's").await;
}

#[tokio::test]
async fn a_session_holds_at_most_eight_streams_and_gets_a_place_back_when_one_closes() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let viewer = app.sign_in_as(Role::Viewer).await;
    assert_eq!(MAX_STREAMS_PER_SESSION, 8, "the limit the README states");

    let mut streams = Vec::new();
    for _ in 0..8 {
        streams.push(open_stream(&viewer, study).await);
    }
    let ninth = viewer.get(&format!("/api/studies/{study}/events")).await;
    assert_eq!(
        ninth.status,
        StatusCode::TOO_MANY_REQUESTS,
        "{}",
        ninth.body
    );
    assert!(
        ninth.json()["error"]
            .as_str()
            .is_some_and(|e| e.contains("8 live streams open already")),
        "{}",
        ninth.body
    );

    // Another session is not held back by this one's streams.
    let mut admins = open_stream(&app, study).await;
    assert_hears(&app, &mut admins, study, "the admin's").await;

    // Closing a page gives its place back.
    drop(streams.pop());
    let waited = tokio::time::timeout(GIVE_UP, async {
        while app.state.events.open_streams() > 8 {
            tokio::time::sleep(Duration::from_millis(20)).await;
        }
    })
    .await;
    assert!(waited.is_ok(), "the closed stream's place was given back");
    let mut again = open_stream(&viewer, study).await;
    assert_hears(&app, &mut again, study, "the reopened").await;
}
