//! A change a browser sends from another site's page (its `Origin` another host, or,
//! without `Origin`, `Sec-Fetch-Site: cross-site`) is refused with 403 before anything
//! is read or written, the sign-in form included. Requests from this server's own pages
//! and from clients that send neither header (command-line tools, scripts) go through.

mod common;

use common::{ADMIN_NAME, ADMIN_PASSWORD, Agent, Answer, TestApp, form_body};
use reqwest::header::{CONTENT_TYPE, SET_COOKIE};
use reqwest::{Method, StatusCode};
use serde_json::json;

/// `http://127.0.0.1:<port>`: the origin of the server's own pages.
fn own_origin(agent: &Agent) -> String {
    agent.base.clone()
}

async fn create_study_with(agent: &Agent, header: (&str, &str)) -> Answer {
    let name = format!("Study sent with {}: {}", header.0, header.1);
    agent
        .send(
            agent
                .request(Method::POST, "/api/studies")
                .header(header.0, header.1)
                .json(&json!({ "name": name, "description": "invented" })),
        )
        .await
}

async fn sign_in_form_with(agent: &Agent, header: (&str, &str)) -> Answer {
    agent
        .send(
            agent
                .request(Method::POST, "/login")
                .header(header.0, header.1)
                .header(CONTENT_TYPE, "application/x-www-form-urlencoded")
                .body(form_body(&[
                    ("name", ADMIN_NAME),
                    ("password", ADMIN_PASSWORD),
                ])),
        )
        .await
}

fn assert_refused_as_cross_site(answer: &Answer, what: &str) {
    assert_eq!(
        answer.status,
        StatusCode::FORBIDDEN,
        "{what}: {}",
        answer.body
    );
    assert!(
        answer.body.contains("sent from another site"),
        "{what} says why: {}",
        answer.body
    );
}

#[tokio::test]
async fn a_change_from_another_sites_page_is_refused_and_changes_nothing() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let before = app.full_dump().await;

    for header in [
        ("Origin", "http://elsewhere.invalid"),
        ("Origin", "null"),
        // Another program on the same machine is another origin.
        ("Origin", "http://127.0.0.1:1"),
        ("Sec-Fetch-Site", "cross-site"),
        ("Sec-Fetch-Site", "same-site"),
    ] {
        let what = format!("POST /api/studies with {}: {}", header.0, header.1);
        let answer = create_study_with(&app, header).await;
        assert_refused_as_cross_site(&answer, &what);
        assert!(
            answer.content_type.starts_with("application/json"),
            "{what}"
        );

        let put = app
            .send(
                app.request(Method::PUT, &format!("/api/studies/{study}/parameters"))
                    .header(header.0, header.1)
                    .json(&json!({ "water_density_kg_m3": 1010.0 })),
            )
            .await;
        assert_refused_as_cross_site(&put, &format!("PUT parameters with {header:?}"));

        // A browser form on another site gets a page saying why.
        let form = app
            .send(
                app.request(Method::POST, &format!("/studies/{study}/parameters"))
                    .header(header.0, header.1)
                    .header(CONTENT_TYPE, "application/x-www-form-urlencoded")
                    .body(form_body(&[
                        ("water_density_kg_m3", "1010"),
                        ("csrf_token", app.csrf.as_deref().unwrap_or_default()),
                    ])),
            )
            .await;
        assert_refused_as_cross_site(&form, &format!("parameters form with {header:?}"));
        assert!(form.content_type.starts_with("text/html"), "{header:?}");
    }
    assert_eq!(
        app.full_dump().await,
        before,
        "refused changes leave the database as it was"
    );
}

#[tokio::test]
async fn the_sign_in_form_posted_from_another_site_signs_nobody_in() {
    let app = TestApp::empty().await;
    let sessions_before: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM sessions")
        .fetch_one(&app.pool)
        .await
        .expect("count sessions");

    for header in [
        ("Origin", "http://elsewhere.invalid"),
        ("Sec-Fetch-Site", "cross-site"),
    ] {
        let visitor = app.anonymous();
        let answer = sign_in_form_with(&visitor, header).await;
        assert_refused_as_cross_site(&answer, &format!("sign-in with {header:?}"));
        assert!(
            !answer.headers.contains_key(SET_COOKIE),
            "no session cookie is given: {:?}",
            answer.headers
        );
        assert_eq!(
            visitor.get("/api/session").await.status,
            StatusCode::UNAUTHORIZED,
            "the visitor is still signed out"
        );
    }
    let sessions_after: i64 = sqlx::query_scalar("SELECT COUNT(*) FROM sessions")
        .fetch_one(&app.pool)
        .await
        .expect("count sessions");
    assert_eq!(sessions_after, sessions_before, "no session was opened");
}

#[tokio::test]
async fn changes_from_the_servers_own_pages_and_from_tools_go_through() {
    let app = TestApp::empty().await;
    let own = own_origin(&app);

    let from_own_page = create_study_with(&app, ("Origin", &own)).await;
    assert_eq!(
        from_own_page.status,
        StatusCode::OK,
        "{}",
        from_own_page.body
    );

    let fetch_same_origin = create_study_with(&app, ("Sec-Fetch-Site", "same-origin")).await;
    assert_eq!(
        fetch_same_origin.status,
        StatusCode::OK,
        "{}",
        fetch_same_origin.body
    );

    // A command-line client sends neither header.
    let tool = app
        .post_json(
            "/api/studies",
            &json!({ "name": "From a script", "description": "invented" }),
        )
        .await;
    assert_eq!(tool.status, StatusCode::OK, "{}", tool.body);

    let studies = app.get_json("/api/studies").await;
    let count = studies["studies"]
        .as_array()
        .map(Vec::len)
        .unwrap_or_else(|| panic!("studies list: {studies}"));
    assert_eq!(count, 3, "all three studies were made: {studies}");

    let visitor = app.anonymous();
    let signed_in = sign_in_form_with(&visitor, ("Origin", &own)).await;
    assert_eq!(
        signed_in.status,
        StatusCode::SEE_OTHER,
        "{}",
        signed_in.body
    );
    assert_eq!(
        visitor.get("/api/session").await.status,
        StatusCode::OK,
        "signed in from the server's own sign-in page"
    );
}

#[tokio::test]
async fn reading_pages_from_a_link_on_another_site_still_works() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let answer = app
        .send(
            app.request(Method::GET, &format!("/studies/{study}"))
                .header("Sec-Fetch-Site", "cross-site")
                .header("Origin", "http://elsewhere.invalid"),
        )
        .await;
    assert_eq!(answer.status, StatusCode::OK, "{}", answer.body);
}
