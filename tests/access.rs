//! Accounts and access: every route refuses anonymous requests, each role may do
//! exactly its share, changes need the session's CSRF token, sign-in is throttled,
//! sessions end (sign-out, sign-out everywhere, idle and absolute expiry), and
//! passwords are neither stored in clear nor logged. The first-start admin is made once.
//!
//! Every user, study and well name here is invented.

mod common;

use common::tops::VALID_TOPS;
use common::{
    ADMIN_NAME, ADMIN_PASSWORD, Agent, Answer, CSRF_HEADER, MEMBER_PASSWORD, TestApp, csv_part,
    form_body,
};
use reqwest::header::{CONTENT_TYPE, RETRY_AFTER, SET_COOKIE};
use reqwest::multipart::Form;
use reqwest::{Method, StatusCode};
use sagline::auth::{self, Access, Role};
use sagline::services::accounts;
use serde_json::{Value, json};
use std::sync::{Arc, Mutex};
use std::time::Duration;
use tokio::io::{AsyncBufReadExt, BufReader};

/// A user id and a lithology id that do not exist: allowed requests to them change nothing.
const NO_USER: i64 = 999_999;
const NO_LITHOLOGY: i64 = 999_999;
/// An upload token that names no held upload.
const NO_UPLOAD: &str = "00000000000000ab";
/// A section id that names no section.
const NO_SECTION: i64 = 999_999;

/// Every page and JSON route that reads, for a study and well of the demo.
fn reads(study: i64, well: i64) -> Vec<String> {
    vec![
        "/".to_string(),
        "/studies".into(),
        "/api/studies".into(),
        format!("/studies/{study}"),
        format!("/api/studies/{study}"),
        format!("/studies/{study}/wells/{well}"),
        format!("/api/studies/{study}/wells/{well}"),
        format!("/api/studies/{study}/wells/{well}/review"),
        format!("/studies/{study}/upload"),
        format!("/api/studies/{study}/upload"),
        format!("/studies/{study}/upload/{NO_UPLOAD}"),
        format!("/api/studies/{study}/upload/{NO_UPLOAD}"),
        format!("/studies/{study}/catalogue"),
        format!("/api/studies/{study}/catalogue"),
        format!("/studies/{study}/sections"),
        format!("/api/studies/{study}/sections"),
        format!("/studies/{study}/sections/{NO_SECTION}"),
        format!("/api/studies/{study}/sections/{NO_SECTION}"),
        format!("/studies/{study}/sections/{NO_SECTION}/download/deflection.svg"),
        format!("/studies/{study}/activity"),
        format!("/api/studies/{study}/activity"),
        format!("/studies/{study}/activity/download"),
        format!("/studies/{study}/download/wells.csv"),
        format!("/studies/{study}/wells/{well}/download/subsidence.svg"),
        "/admin/users".into(),
        "/api/admin/users".into(),
        "/api/session".into(),
        "/account".into(),
        "/api/account".into(),
    ]
}

/// A state-changing route, the body sent to it, and the least role that may use it
/// (PRODUCT.md "Team, access and safety": viewers read, interpreters upload, pick and
/// comment, admins manage users, studies, parameters, the catalogue and deletes).
/// Bodies are incomplete or name nothing, so an allowed request is refused by the
/// handler (4xx other than 403) and changes nothing.
struct Change {
    method: Method,
    path: String,
    body: Body,
    least: Role,
}

enum Body {
    Form(&'static [(&'static str, &'static str)]),
    Json(Value),
    Empty,
}

fn change(method: Method, path: String, body: Body, least: Role) -> Change {
    Change {
        method,
        path,
        body,
        least,
    }
}

fn changes(study: i64, well: i64) -> Vec<Change> {
    use Body::{Empty, Form, Json};
    use Method as M;
    use Role::{Admin, Interpreter, Viewer};
    vec![
        change(
            M::POST,
            "/studies".into(),
            Form(&[("description", "no name")]),
            Admin,
        ),
        change(M::POST, "/api/studies".into(), Json(json!({})), Admin),
        change(
            M::POST,
            format!("/studies/{study}/upload"),
            Empty,
            Interpreter,
        ),
        change(
            M::POST,
            format!("/studies/{study}/upload/{NO_UPLOAD}"),
            Form(&[]),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/api/studies/{study}/tops"),
            Empty,
            Interpreter,
        ),
        // Sections: adding, changing and removing (an interpreter's work, like picks).
        change(
            M::POST,
            format!("/studies/{study}/sections"),
            Form(&[("name", "")]),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/api/studies/{study}/sections"),
            Json(json!({})),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/studies/{study}/sections/{NO_SECTION}"),
            Form(&[("name", "")]),
            Interpreter,
        ),
        change(
            M::PUT,
            format!("/api/studies/{study}/sections/{NO_SECTION}"),
            Json(json!({})),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/studies/{study}/sections/{NO_SECTION}/remove"),
            Form(&[("version", "1")]),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/api/studies/{study}/sections/{NO_SECTION}/remove"),
            Json(json!({ "version": 1 })),
            Interpreter,
        ),
        // The review: picks (saving, agreeing and clearing) and comments.
        change(
            M::PUT,
            format!("/api/studies/{study}/wells/{well}/picks/1"),
            Json(json!({ "state": "agreed" })),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/studies/{study}/wells/{well}/picks"),
            Form(&[("state", "agreed")]),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/api/studies/{study}/wells/{well}/picks/1/clear"),
            Json(json!({})),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/api/studies/{study}/wells/{well}/comments"),
            Json(json!({ "body": "  " })),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/studies/{study}/wells/{well}/comments"),
            Form(&[("body", "")]),
            Interpreter,
        ),
        change(
            M::POST,
            format!("/studies/{study}/parameters"),
            Form(&[("water_density_kg_m3", "not a number")]),
            Admin,
        ),
        change(
            M::PUT,
            format!("/api/studies/{study}/parameters"),
            Json(json!({ "water_density_kg_m3": -1.0 })),
            Admin,
        ),
        change(
            M::POST,
            format!("/studies/{study}/lithologies"),
            Form(&[]),
            Admin,
        ),
        change(
            M::PUT,
            format!("/api/studies/{study}/lithologies"),
            Json(json!({})),
            Admin,
        ),
        change(
            M::POST,
            format!("/studies/{study}/lithologies/{NO_LITHOLOGY}/delete"),
            Form(&[]),
            Admin,
        ),
        change(
            M::POST,
            "/admin/users".into(),
            Form(&[("name", ""), ("role", "viewer")]),
            Admin,
        ),
        change(M::POST, "/api/admin/users".into(), Json(json!({})), Admin),
        change(
            M::POST,
            format!("/admin/users/{NO_USER}/role"),
            Form(&[("role", "admin")]),
            Admin,
        ),
        change(
            M::PUT,
            format!("/api/admin/users/{NO_USER}/role"),
            Json(json!({ "role": "admin" })),
            Admin,
        ),
        change(
            M::POST,
            format!("/admin/users/{NO_USER}/password"),
            Form(&[]),
            Admin,
        ),
        change(
            M::POST,
            format!("/api/admin/users/{NO_USER}/password"),
            Empty,
            Admin,
        ),
        change(
            M::POST,
            format!("/admin/users/{NO_USER}/disable"),
            Form(&[]),
            Admin,
        ),
        change(
            M::POST,
            format!("/api/admin/users/{NO_USER}/disable"),
            Empty,
            Admin,
        ),
        change(
            M::POST,
            format!("/admin/users/{NO_USER}/enable"),
            Form(&[]),
            Admin,
        ),
        change(
            M::POST,
            format!("/api/admin/users/{NO_USER}/enable"),
            Empty,
            Admin,
        ),
        change(
            M::POST,
            format!("/admin/users/{NO_USER}/sign-out"),
            Form(&[]),
            Admin,
        ),
        change(
            M::POST,
            format!("/api/admin/users/{NO_USER}/sign-out"),
            Empty,
            Admin,
        ),
        change(
            M::POST,
            format!("/admin/users/{NO_USER}/unlock"),
            Form(&[]),
            Admin,
        ),
        change(
            M::POST,
            format!("/api/admin/users/{NO_USER}/unlock"),
            Empty,
            Admin,
        ),
        // Everyone may change their own password; these bodies give no new one.
        change(M::POST, "/account/password".into(), Form(&[]), Viewer),
        change(
            M::POST,
            "/api/account/password".into(),
            Json(json!({})),
            Viewer,
        ),
    ]
}

/// The study's live change stream (server-sent events).
fn live_stream(study: i64) -> String {
    format!("/api/studies/{study}/events")
}

/// Sign-out routes: every signed-in role may use them (tested on their own, as they end sessions).
const SIGN_OUT: [&str; 2] = ["/logout", "/logout-everywhere"];

async fn send_change(agent: &Agent, c: &Change) -> Answer {
    let request = agent.request(c.method.clone(), &c.path);
    let request = match &c.body {
        Body::Form(fields) => request
            .header(CONTENT_TYPE, "application/x-www-form-urlencoded")
            .body(form_body(fields)),
        Body::Json(v) => request.json(v),
        Body::Empty => request,
    };
    agent.send(request).await
}

async fn demo_app() -> (TestApp, i64, i64) {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let overview = app.get_json(&format!("/api/studies/{study}")).await;
    let well = overview["wells"][0]["id"].as_i64().expect("a demo well");
    (app, study, well)
}

fn is_api(path: &str) -> bool {
    path.starts_with("/api/")
}

/// An anonymous request is refused: 401 JSON under /api, a redirect to the sign-in
/// page elsewhere (back to the page asked for, when it was a read).
fn assert_refused_anonymous(answer: &Answer, method: &Method, path: &str) {
    if is_api(path) {
        assert_eq!(
            answer.status,
            StatusCode::UNAUTHORIZED,
            "{method} {path}: {}",
            answer.body
        );
        assert!(
            answer.json()["error"].as_str().unwrap().contains("Sign in"),
            "{method} {path}"
        );
    } else {
        assert_eq!(
            answer.status,
            StatusCode::SEE_OTHER,
            "{method} {path}: {}",
            answer.body
        );
        let location = answer.location.as_deref().unwrap_or_default();
        if *method == Method::GET {
            let next = form_body(&[("next", path)]);
            assert_eq!(location, format!("/login?{next}"), "{method} {path}");
        } else {
            assert_eq!(location, "/login", "{method} {path}");
        }
    }
}

#[tokio::test]
async fn every_route_refuses_an_anonymous_request() {
    let (app, study, well) = demo_app().await;
    let before = app.database_content().await;
    let nobody = app.anonymous();

    for path in reads(study, well) {
        let answer = nobody.get(&path).await;
        assert_refused_anonymous(&answer, &Method::GET, &path);
    }
    // The live stream answers with headers at once and then stays open: only its status is read.
    let stream = nobody
        .request(Method::GET, &live_stream(study))
        .send()
        .await
        .expect("request the live stream");
    assert_eq!(stream.status(), StatusCode::UNAUTHORIZED);
    let mut all_changes = changes(study, well);
    for path in SIGN_OUT {
        all_changes.push(change(
            Method::POST,
            path.into(),
            Body::Form(&[]),
            Role::Viewer,
        ));
    }
    for c in &all_changes {
        let answer = send_change(&nobody, c).await;
        assert_refused_anonymous(&answer, &c.method, &c.path);
    }
    // Even with a made-up session cookie and CSRF header.
    let forged = nobody
        .send(
            nobody
                .request(Method::PUT, &format!("/api/studies/{study}/parameters"))
                .header("Cookie", format!("sagline_session={}", "ab".repeat(32)))
                .header(CSRF_HEADER, "cd".repeat(32))
                .json(&json!({ "water_density_kg_m3": 1030.0 })),
        )
        .await;
    assert_eq!(forged.status, StatusCode::UNAUTHORIZED, "{}", forged.body);
    assert_eq!(
        app.database_content().await,
        before,
        "anonymous requests change nothing"
    );

    // Only signing in and the static files are open.
    let login = nobody.get("/login").await;
    assert_eq!(login.status, StatusCode::OK);
    assert!(login.body.contains("name=\"password\""));
    assert_eq!(nobody.get("/static/style.css").await.status, StatusCode::OK);
    // The tab icon, which browsers ask for on their own, before and after signing in.
    let icon = nobody.get("/favicon.ico").await;
    assert_eq!(icon.status, StatusCode::OK);
    assert!(icon.body.contains("<svg"), "{}", icon.body);
    assert_eq!(app.get("/static/icon.svg").await.status, StatusCode::OK);
}

#[tokio::test]
async fn signing_in_returns_to_the_page_asked_for_and_only_to_a_local_one() {
    let (app, study, _) = demo_app().await;
    app.add_user("wren", Role::Viewer).await;
    let wanted = format!("/studies/{study}/activity");
    let answer = app.anonymous().get(&wanted).await;
    let login_path = answer.location.expect("sent to sign in");

    let page = app.anonymous().get(&login_path).await;
    assert!(
        page.body
            .contains(&format!("name=\"next\" value=\"{wanted}\"")),
        "{}",
        page.body
    );
    let signed = app
        .anonymous()
        .post_form(
            "/login",
            &[
                ("name", "wren"),
                ("password", MEMBER_PASSWORD),
                ("next", &wanted),
            ],
        )
        .await;
    assert_eq!(signed.status, StatusCode::SEE_OTHER);
    assert_eq!(signed.location.as_deref(), Some(wanted.as_str()));

    for elsewhere in ["https://elsewhere.invalid/", "//elsewhere.invalid/x"] {
        let signed = app
            .anonymous()
            .post_form(
                "/login",
                &[
                    ("name", "wren"),
                    ("password", MEMBER_PASSWORD),
                    ("next", elsewhere),
                ],
            )
            .await;
        assert_eq!(signed.location.as_deref(), Some("/studies"), "{elsewhere}");
    }
}

#[tokio::test]
async fn each_role_may_do_its_share_and_is_refused_the_rest_with_a_clear_403() {
    let (app, study, well) = demo_app().await;
    let agents = [
        (Role::Viewer, app.sign_in_as(Role::Viewer).await),
        (Role::Interpreter, app.sign_in_as(Role::Interpreter).await),
        (Role::Admin, app.admin.clone()),
    ];
    let before = app.database_content().await;

    for (role, agent) in &agents {
        for path in reads(study, well) {
            let least = if path.contains("/admin/") {
                Role::Admin
            } else {
                Role::Viewer
            };
            let answer = agent.get(&path).await;
            if *role >= least {
                assert_ne!(
                    answer.status,
                    StatusCode::FORBIDDEN,
                    "{role} GET {path}: {}",
                    answer.body
                );
                assert!(
                    !answer.status.is_server_error(),
                    "{role} GET {path}: {}",
                    answer.body
                );
            } else {
                assert_eq!(answer.status, StatusCode::FORBIDDEN, "{role} GET {path}");
            }
        }
        // Every signed-in role may listen to the live stream.
        let stream = agent
            .request(Method::GET, &live_stream(study))
            .send()
            .await
            .expect("request the live stream");
        assert_eq!(stream.status(), StatusCode::OK, "{role} live stream");
        drop(stream);
        for c in changes(study, well) {
            // The one table of rules agrees with the brief's matrix.
            assert_eq!(
                auth::required_access(c.method.as_str(), &c.path).access,
                Access::AtLeast(c.least),
                "{} {}",
                c.method,
                c.path
            );
            let answer = send_change(agent, &c).await;
            if *role >= c.least {
                assert_ne!(
                    answer.status,
                    StatusCode::FORBIDDEN,
                    "{role} {} {}: {}",
                    c.method,
                    c.path,
                    answer.body
                );
                assert!(
                    answer.status.is_client_error(),
                    "{role} {} {}: {}",
                    c.method,
                    c.path,
                    answer.body
                );
            } else {
                assert_eq!(
                    answer.status,
                    StatusCode::FORBIDDEN,
                    "{role} {} {}: {}",
                    c.method,
                    c.path,
                    answer.body
                );
                let says = format!("Your role ({role}) may not do this");
                assert!(
                    answer.body.contains(&says),
                    "{role} {} {}: {}",
                    c.method,
                    c.path,
                    answer.body
                );
                assert!(
                    answer.body.contains(&format!("the {} role", c.least)),
                    "{}",
                    answer.body
                );
            }
        }
    }
    assert_eq!(
        app.database_content().await,
        before,
        "no request of the matrix changed anything"
    );

    // And what an interpreter may do, it really does: an upload, recorded under its name.
    let interpreter = &agents[1].1;
    let answer = interpreter.upload_tops(study, VALID_TOPS).await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
    let log = app.activity(study).await;
    assert_eq!(log[0]["actor"], "member-interpreter", "{:?}", log[0]);
}

#[tokio::test]
async fn a_change_without_the_right_csrf_token_is_refused_and_changes_nothing() {
    let (app, study, _) = demo_app().await;
    let token = app.csrf.clone().expect("signed in");
    let other = app.sign_in_as(Role::Admin).await;
    let before = app.database_content().await;
    let params = format!("/api/studies/{study}/parameters");
    let form_path = format!("/studies/{study}/parameters");

    for agent in [
        app.without_csrf(),
        app.with_csrf("0123456789abcdef"),
        app.with_csrf(""),
    ] {
        let api = agent
            .put_json(&params, &json!({ "water_density_kg_m3": 1010.0 }))
            .await;
        assert_eq!(api.status, StatusCode::FORBIDDEN, "{}", api.body);
        assert!(
            api.json()["error"].as_str().unwrap().contains("CSRF token"),
            "{}",
            api.body
        );
        let form = agent
            .post_form(&form_path, &[("water_density_kg_m3", "1010")])
            .await;
        assert_eq!(form.status, StatusCode::FORBIDDEN, "{}", form.body);
        assert!(form.body.contains("CSRF token"), "{}", form.body);
        let upload = agent.upload_tops(study, VALID_TOPS).await;
        assert_eq!(upload.status, StatusCode::FORBIDDEN, "{}", upload.body);
    }
    // A token in the form body of another session is no better.
    let foreign = app
        .without_csrf()
        .post_form(
            &form_path,
            &[
                ("water_density_kg_m3", "1010"),
                ("csrf_token", other.csrf.as_deref().unwrap()),
            ],
        )
        .await;
    assert_eq!(foreign.status, StatusCode::FORBIDDEN);
    // A multipart form with a wrong token in its query.
    let staged = app
        .without_csrf()
        .post_multipart(
            &format!("/studies/{study}/upload?csrf_token=0123"),
            Form::new().part("tops", csv_part(VALID_TOPS.as_bytes().to_vec(), "tops.csv")),
        )
        .await;
    assert_eq!(staged.status, StatusCode::FORBIDDEN);
    assert_eq!(
        app.database_content().await,
        before,
        "refused changes change nothing"
    );

    // The browser's ways of sending the right token work: the form field ...
    let saved = app
        .without_csrf()
        .post_form(
            &form_path,
            &[("water_density_kg_m3", "1010"), ("csrf_token", &token)],
        )
        .await;
    assert_eq!(saved.status, StatusCode::OK, "{}", saved.body);
    assert!(
        saved.body.contains("Model parameters saved."),
        "{}",
        saved.body
    );
    // ... and the query parameter of a multipart form.
    let staged = app
        .without_csrf()
        .post_multipart(
            &format!("/studies/{study}/upload?csrf_token={token}"),
            Form::new().part("tops", csv_part(VALID_TOPS.as_bytes().to_vec(), "tops.csv")),
        )
        .await;
    assert_eq!(staged.status, StatusCode::SEE_OTHER, "{}", staged.body);
    // The pages carry it for the browser.
    let page = app.get(&format!("/studies/{study}/catalogue")).await;
    assert!(
        page.body
            .contains(&format!("name=\"csrf_token\" value=\"{token}\""))
    );
    let page = app.get(&format!("/studies/{study}/upload")).await;
    assert!(page.body.contains(&format!("/upload?csrf_token={token}\"")));
}

#[tokio::test]
async fn five_failed_sign_ins_are_followed_by_429_for_a_while() {
    let app = TestApp::empty().await;
    let guesser = app.anonymous();
    for i in 1..=auth::SIGN_IN_THROTTLE.free_tries {
        let answer = guesser
            .post_form(
                "/login",
                &[
                    ("name", ADMIN_NAME),
                    ("password", &format!("wrong guess {i}")),
                ],
            )
            .await;
        assert_eq!(
            answer.status,
            StatusCode::UNAUTHORIZED,
            "attempt {i}: {}",
            answer.body
        );
        assert!(answer.body.contains("Wrong user name or password."));
    }
    // After five wrong tries in a row from this address, even the right password waits.
    let refused = guesser
        .send(
            guesser
                .request(Method::POST, "/login")
                .header(CONTENT_TYPE, "application/x-www-form-urlencoded")
                .body(form_body(&[
                    ("name", ADMIN_NAME),
                    ("password", ADMIN_PASSWORD),
                ])),
        )
        .await;
    assert_eq!(
        refused.status,
        StatusCode::TOO_MANY_REQUESTS,
        "{}",
        refused.body
    );
    assert!(
        refused.body.contains("seconds, then try again"),
        "{}",
        refused.body
    );
    let retry: i64 = refused
        .header(RETRY_AFTER.as_str())
        .unwrap()
        .parse()
        .unwrap();
    assert!((1..=30).contains(&retry), "Retry-After {retry}");
    // The wait is for this name from this address: another name from it is checked.
    let raw = reqwest::Client::new()
        .post(app.url("/login"))
        .json(&json!({ "name": "someone-else", "password": "anything at all" }))
        .send()
        .await
        .unwrap();
    assert_eq!(raw.status(), StatusCode::UNAUTHORIZED);
    assert!(
        raw.text()
            .await
            .unwrap()
            .contains("Wrong user name or password.")
    );
}

#[tokio::test]
async fn a_successful_sign_in_resets_the_count() {
    let app = TestApp::empty().await;
    let attempt = |password: &'static str| {
        let agent = app.anonymous();
        async move {
            agent
                .post_form("/login", &[("name", ADMIN_NAME), ("password", password)])
                .await
                .status
        }
    };
    for _ in 0..4 {
        assert_eq!(attempt("a wrong guess").await, StatusCode::UNAUTHORIZED);
    }
    assert_eq!(attempt(ADMIN_PASSWORD).await, StatusCode::SEE_OTHER);
    for _ in 0..4 {
        assert_eq!(attempt("a wrong guess").await, StatusCode::UNAUTHORIZED);
    }
    // Eight failures in all, but only four since the success.
    assert_eq!(attempt(ADMIN_PASSWORD).await, StatusCode::SEE_OTHER);
}

#[tokio::test]
async fn signing_out_everywhere_ends_every_session_of_the_account_only() {
    let app = TestApp::empty().await;
    let mut second = app.anonymous();
    assert_eq!(
        second.sign_in(ADMIN_NAME, ADMIN_PASSWORD).await.status,
        StatusCode::SEE_OTHER
    );
    let mut third = app.anonymous();
    assert_eq!(
        third.sign_in(ADMIN_NAME, ADMIN_PASSWORD).await.status,
        StatusCode::SEE_OTHER
    );
    let viewer = app.sign_in_as(Role::Viewer).await;

    // Plain sign-out ends one session.
    let out = third.post_form("/logout", &[]).await;
    assert_eq!(out.status, StatusCode::SEE_OTHER);
    assert_eq!(
        third.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED
    );
    assert_eq!(app.get("/api/session").await.status, StatusCode::OK);

    let out = second.post_form("/logout-everywhere", &[]).await;
    assert_eq!(out.status, StatusCode::SEE_OTHER);
    assert_eq!(out.location.as_deref(), Some("/login"));
    assert_eq!(
        second.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED
    );
    assert_eq!(
        app.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED,
        "the other browser is signed out"
    );
    assert_eq!(app.get("/studies").await.status, StatusCode::SEE_OTHER);
    assert_eq!(
        viewer.get("/api/session").await.status,
        StatusCode::OK,
        "other accounts stay signed in"
    );
}

#[tokio::test]
async fn admins_manage_accounts_and_every_change_is_recorded_without_passwords() {
    let app = TestApp::empty().await;
    // Add through the page: the password is shown once, and not kept by the browser.
    let page = app
        .post_form("/admin/users", &[("name", "lark"), ("role", "interpreter")])
        .await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    let shown = between(&page.body, "<code class=\"issued-password\">", "</code>");
    assert_eq!(shown.len(), auth::password::GENERATED_LEN);
    let users = app.get_json("/api/admin/users").await;
    let lark = users["users"]
        .as_array()
        .unwrap()
        .iter()
        .find(|u| u["name"] == "lark")
        .unwrap()
        .clone();
    assert_eq!(lark["role"], "interpreter");
    let id = lark["id"].as_i64().unwrap();
    let mut lark_agent = app.anonymous();
    assert_eq!(
        lark_agent.sign_in("lark", shown).await.status,
        StatusCode::SEE_OTHER
    );

    // A role change applies to the open session at once.
    let changed = app
        .put_json(
            &format!("/api/admin/users/{id}/role"),
            &json!({ "role": "viewer" }),
        )
        .await;
    assert_eq!(changed.status, StatusCode::OK, "{}", changed.body);
    assert_eq!(lark_agent.get_json("/api/session").await["role"], "viewer");

    // A reset issues a new password, ends the sessions, and the old password stops working.
    let reset = app
        .post_json(&format!("/api/admin/users/{id}/password"), &json!({}))
        .await;
    assert_eq!(reset.status, StatusCode::OK, "{}", reset.body);
    let new_password = reset.json()["password"].as_str().unwrap().to_string();
    assert_eq!(
        lark_agent.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED
    );
    assert_eq!(
        app.anonymous().sign_in("lark", shown).await.status,
        StatusCode::UNAUTHORIZED
    );
    assert_eq!(
        lark_agent.sign_in("lark", &new_password).await.status,
        StatusCode::SEE_OTHER
    );

    // Disabling ends the sessions and refuses sign-in; enabling lets the account back in.
    let disabled = app
        .post_form(&format!("/admin/users/{id}/disable"), &[])
        .await;
    assert!(disabled.body.contains("is disabled"), "{}", disabled.body);
    assert_eq!(
        lark_agent.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED
    );
    let refused = app.anonymous().sign_in("lark", &new_password).await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    assert!(refused.body.contains("disabled"));
    app.post_json(&format!("/api/admin/users/{id}/enable"), &json!({}))
        .await;
    assert_eq!(
        lark_agent.sign_in("lark", &new_password).await.status,
        StatusCode::SEE_OTHER
    );
    let ended = app
        .post_json(&format!("/api/admin/users/{id}/sign-out"), &json!({}))
        .await;
    assert_eq!(ended.json()["sessions_ended"], 1);
    assert_eq!(
        lark_agent.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED
    );

    // The last admin cannot be demoted or disabled.
    let me = users["users"]
        .as_array()
        .unwrap()
        .iter()
        .find(|u| u["name"] == ADMIN_NAME)
        .unwrap()["id"]
        .as_i64()
        .unwrap();
    let demote = app
        .put_json(
            &format!("/api/admin/users/{me}/role"),
            &json!({ "role": "viewer" }),
        )
        .await;
    assert_eq!(demote.status, StatusCode::CONFLICT, "{}", demote.body);
    let disable = app
        .post_json(&format!("/api/admin/users/{me}/disable"), &json!({}))
        .await;
    assert_eq!(disable.status, StatusCode::CONFLICT, "{}", disable.body);

    // Every change is in the log, by the admin, outside any study, with no password.
    let rows: Vec<(Option<i64>, String, String, String, String)> = sqlx::query_as(
        "SELECT study_id, actor, action, subject, COALESCE(before_state, '') || ' ' || COALESCE(after_state, '')
         FROM activity WHERE subject = 'lark' ORDER BY id",
    )
    .fetch_all(&app.pool)
    .await
    .unwrap();
    let actions: Vec<&str> = rows.iter().map(|r| r.2.as_str()).collect();
    assert_eq!(
        actions,
        [
            "add user",
            "change role",
            "reset password",
            "disable user",
            "enable user",
            "sign out everywhere"
        ]
    );
    for (study, actor, action, _, states) in &rows {
        assert_eq!(*study, None, "{action}");
        assert_eq!(actor, ADMIN_NAME, "{action}");
        assert!(
            !states.contains(shown) && !states.contains(&new_password),
            "{action}: {states}"
        );
    }
    let listed = app.get("/admin/users").await;
    assert!(listed.body.contains("reset password") && listed.body.contains("lark"));
}

fn between<'a>(text: &'a str, start: &str, end: &str) -> &'a str {
    let from = text
        .find(start)
        .unwrap_or_else(|| panic!("no {start} in {text}"))
        + start.len();
    &text[from..from + text[from..].find(end).expect("end marker")]
}

#[tokio::test]
async fn passwords_and_session_tokens_are_not_stored_in_clear() {
    let app = TestApp::empty().await;
    app.add_user("tern", Role::Viewer).await;
    let created = app
        .post_json(
            "/api/admin/users",
            &json!({ "name": "heron", "role": "interpreter" }),
        )
        .await;
    let generated = created.json()["password"].as_str().unwrap().to_string();
    // A raw sign-in by API, to see the cookie token itself.
    let answer = reqwest::Client::new()
        .post(app.url("/login"))
        .json(&json!({ "name": "heron", "password": generated }))
        .send()
        .await
        .unwrap();
    assert_eq!(answer.status(), StatusCode::OK);
    let cookie = answer.headers()[SET_COOKIE].to_str().unwrap().to_string();
    for attribute in ["HttpOnly", "SameSite=Strict", "Path=/", "Max-Age="] {
        assert!(cookie.contains(attribute), "{cookie}");
    }
    let token = between(&cookie, "sagline_session=", ";").to_string();
    assert_eq!(token.len(), 64);

    let dump = app.full_dump().await;
    for secret in [
        ADMIN_PASSWORD,
        MEMBER_PASSWORD,
        generated.as_str(),
        token.as_str(),
    ] {
        assert!(!dump.contains(secret), "{secret} is in the database");
    }
    // The session is kept by its SHA-256, and the passwords as Argon2id hashes.
    assert!(dump.contains(&auth::token::digest(&token)));
    let hashes: Vec<String> = sqlx::query_scalar("SELECT password_hash FROM users")
        .fetch_all(&app.pool)
        .await
        .unwrap();
    assert_eq!(hashes.len(), 3);
    assert!(
        hashes.iter().all(|h| h.starts_with("$argon2id$")),
        "{hashes:?}"
    );
}

#[tokio::test]
async fn sessions_end_after_idling_and_at_their_absolute_expiry() {
    let app = TestApp::empty().await;
    let db = &app.pool;
    let t0 = 1_900_000_000;
    let login = accounts::log_in(db, ADMIN_NAME, ADMIN_PASSWORD, "192.0.2.7", t0)
        .await
        .unwrap();
    let token = login.session_token;
    let idle = auth::SESSION_IDLE_SECS;
    // Active at least once per idle period: alive until the absolute expiry.
    let mut t = t0;
    while t + idle - 1 < t0 + auth::SESSION_ABSOLUTE_SECS {
        t += idle - 1;
        assert!(
            accounts::resolve_session(db, &token, t)
                .await
                .unwrap()
                .is_some(),
            "active at {}",
            t - t0
        );
    }
    assert!(
        accounts::resolve_session(db, &token, t0 + auth::SESSION_ABSOLUTE_SECS)
            .await
            .unwrap()
            .is_none()
    );

    let login = accounts::log_in(db, ADMIN_NAME, ADMIN_PASSWORD, "192.0.2.7", t0)
        .await
        .unwrap();
    assert!(
        accounts::resolve_session(db, &login.session_token, t0 + idle)
            .await
            .unwrap()
            .is_some()
    );
    assert!(
        accounts::resolve_session(db, &login.session_token, t0 + 2 * idle + 1)
            .await
            .unwrap()
            .is_none()
    );
    // Once ended, it stays ended.
    assert!(
        accounts::resolve_session(db, &login.session_token, t0 + idle)
            .await
            .unwrap()
            .is_none()
    );
}

#[tokio::test]
async fn the_first_start_admin_is_created_once() {
    let app = TestApp::empty().await;
    // The test app has an admin already: no first-start account.
    assert_eq!(accounts::ensure_first_admin(&app.pool).await.unwrap(), None);

    let dir = tempfile::tempdir().unwrap();
    let pool = sagline::store::open(&dir.path().join("first.db"))
        .await
        .unwrap();
    let password = accounts::ensure_first_admin(&pool)
        .await
        .unwrap()
        .expect("made on first start");
    assert_eq!(password.chars().count(), auth::password::GENERATED_LEN);
    assert_eq!(accounts::ensure_first_admin(&pool).await.unwrap(), None);
    let users = sagline::store::users::list(&pool).await.unwrap();
    assert_eq!(users.len(), 1);
    assert_eq!(
        (users[0].name.as_str(), users[0].role),
        (accounts::FIRST_ADMIN_NAME, Role::Admin)
    );
    let login = accounts::log_in(&pool, "admin", &password, "192.0.2.8", auth::unix_now()).await;
    assert!(login.is_ok());
}

/// The server binary's console: every line of its standard output and error.
struct Console {
    lines: Arc<Mutex<Vec<String>>>,
    child: tokio::process::Child,
}

impl Console {
    fn start(db: &std::path::Path) -> Console {
        let mut child = tokio::process::Command::new(env!("CARGO_BIN_EXE_sagline"))
            .args([
                "serve",
                "--create",
                "--empty",
                "--bind",
                "127.0.0.1:0",
                "--db",
            ])
            .arg(db)
            // Everything the server can log, to show the passwords are in none of it.
            .env("RUST_LOG", "trace")
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .kill_on_drop(true)
            .spawn()
            .expect("start the server binary");
        let lines = Arc::new(Mutex::new(Vec::new()));
        let stdout = child.stdout.take().unwrap();
        let stderr = child.stderr.take().unwrap();
        for stream in [
            Box::new(stdout) as Box<dyn tokio::io::AsyncRead + Unpin + Send>,
            Box::new(stderr),
        ] {
            let lines = lines.clone();
            tokio::spawn(async move {
                let mut reader = BufReader::new(stream).lines();
                while let Ok(Some(line)) = reader.next_line().await {
                    lines.lock().unwrap().push(line);
                }
            });
        }
        Console { lines, child }
    }

    fn text(&self) -> String {
        self.lines.lock().unwrap().join("\n")
    }

    /// Wait for a line containing `marker`; returns it.
    async fn wait_for(&self, marker: &str) -> String {
        self.wait_for_line(|l| l.contains(marker)).await
    }

    /// Wait for a line such that `wanted(line)`; returns it.
    async fn wait_for_line(&self, wanted: impl Fn(&str) -> bool) -> String {
        for _ in 0..400 {
            if let Some(line) = self.lines.lock().unwrap().iter().find(|l| wanted(l)) {
                return line.clone();
            }
            tokio::time::sleep(Duration::from_millis(50)).await;
        }
        panic!("no such line in:\n{}", self.text());
    }

    async fn stop(mut self) -> String {
        // Let the last requests' log lines through before stopping.
        tokio::time::sleep(Duration::from_millis(300)).await;
        self.child.kill().await.expect("stop the server");
        self.text()
    }
}

#[tokio::test]
async fn the_server_prints_the_first_admin_password_once_and_never_logs_passwords() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("console.db");
    let console = Console::start(&db);
    let serving = console.wait_for("Sagline is serving").await;
    let base = serving
        .split(" at ")
        .last()
        .unwrap()
        .trim_end_matches('/')
        .to_string();
    console.wait_for("shown only this once").await;
    // The password stands alone on its line, indented.
    let password = console
        .wait_for_line(|l| l.starts_with("    ") && !l.trim().contains(' '))
        .await
        .trim()
        .to_string();
    assert_eq!(
        password.chars().count(),
        auth::password::GENERATED_LEN,
        "{password:?}"
    );

    let mut admin = Agent::new(&base);
    let wrong = "not-the-password-but-close";
    assert_eq!(
        admin.sign_in("admin", wrong).await.status,
        StatusCode::UNAUTHORIZED
    );
    assert_eq!(
        admin.sign_in("admin", &password).await.status,
        StatusCode::SEE_OTHER
    );
    let created = admin
        .post_json(
            "/api/admin/users",
            &json!({ "name": "petrel", "role": "viewer" }),
        )
        .await;
    assert_eq!(created.status, StatusCode::OK, "{}", created.body);
    let member = created.json()["password"].as_str().unwrap().to_string();
    let mut petrel = Agent::new(&base);
    assert_eq!(
        petrel.sign_in("petrel", &member).await.status,
        StatusCode::SEE_OTHER
    );
    let chosen = "a chosen phrase, sea-worn and long";
    let added = admin
        .post_json(
            "/api/admin/users",
            &json!({ "name": "gannet", "role": "viewer", "password": chosen }),
        )
        .await;
    assert_eq!(added.status, StatusCode::OK);
    assert_eq!(
        added.json()["password"],
        Value::Null,
        "a chosen password is not echoed"
    );
    let output = console.stop().await;

    assert!(
        output.contains("signed in"),
        "the log was captured:\n{output}"
    );
    assert_eq!(
        output.matches(&password).count(),
        1,
        "only the first-start line shows it:\n{output}"
    );
    for secret in [wrong, member.as_str(), chosen] {
        assert!(
            !output.contains(secret),
            "{secret} is in the console output:\n{output}"
        );
    }

    // A second start of the same database makes no new admin and prints no password.
    let console = Console::start(&db);
    console.wait_for("Sagline is serving").await;
    let output = console.stop().await;
    assert!(!output.contains("First start"), "{output}");
    let pool = sagline::store::open(&db).await.unwrap();
    assert_eq!(sagline::store::users::count(&pool).await.unwrap(), 3);
}

#[tokio::test]
async fn the_command_line_adds_an_account() {
    let app = TestApp::empty().await;
    let db = app.pool.connect_options().get_filename().to_path_buf();
    let run = |args: &[&str], stdin: &str| {
        let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_sagline"))
            .args(args)
            .arg("--db")
            .arg(&db)
            .stdin(std::process::Stdio::piped())
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .expect("run sagline user add");
        use std::io::Write;
        child
            .stdin
            .take()
            .unwrap()
            .write_all(stdin.as_bytes())
            .unwrap();
        child.wait_with_output().unwrap()
    };
    let generated = run(&["user", "add", "skua", "--role", "interpreter"], "");
    assert!(
        generated.status.success(),
        "{}",
        String::from_utf8_lossy(&generated.stderr)
    );
    let text = String::from_utf8(generated.stdout).unwrap();
    let password = text
        .lines()
        .rev()
        .find(|l| l.starts_with("    "))
        .expect("password line")
        .trim()
        .to_string();
    assert_eq!(
        app.anonymous().sign_in("skua", &password).await.status,
        StatusCode::SEE_OTHER
    );

    let chosen = run(
        &[
            "user",
            "add",
            "fulmar",
            "--role",
            "admin",
            "--password-stdin",
        ],
        "gannet-tide-over-the-ness\n",
    );
    assert!(
        chosen.status.success(),
        "{}",
        String::from_utf8_lossy(&chosen.stderr)
    );
    assert!(!String::from_utf8_lossy(&chosen.stdout).contains("gannet-tide-over-the-ness"));
    let mut fulmar = app.anonymous();
    assert_eq!(
        fulmar
            .sign_in("fulmar", "gannet-tide-over-the-ness")
            .await
            .status,
        StatusCode::SEE_OTHER
    );
    assert_eq!(fulmar.get_json("/api/session").await["role"], "admin");

    let twice = run(&["user", "add", "SKUA", "--role", "viewer"], "");
    assert!(!twice.status.success());
    assert!(String::from_utf8_lossy(&twice.stderr).contains("already exists"));
    let row: (String,) =
        sqlx::query_as("SELECT actor FROM activity WHERE action = 'add user' AND subject = 'skua'")
            .fetch_one(&app.pool)
            .await
            .unwrap();
    assert_eq!(row.0, accounts::COMMAND_LINE_ACTOR);
}
