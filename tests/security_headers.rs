//! Every answer (pages, JSON, downloads, static files, refusals) tells the browser to load
//! nothing from other sites, never to show the app inside another site's frame, and not
//! to guess content types.

mod common;

use common::TestApp;

#[tokio::test]
async fn every_kind_of_answer_carries_the_security_headers() {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let anonymous = app.anonymous();
    for (who, path) in [
        ("admin", "/studies".to_string()),
        ("admin", format!("/studies/{study}")),
        ("admin", format!("/api/studies/{study}")),
        ("admin", "/static/app.js".to_string()),
        ("admin", "/no/such/page".to_string()),
        ("anonymous", "/studies".to_string()),
        ("anonymous", "/login".to_string()),
    ] {
        let answer = if who == "admin" {
            app.get(&path).await
        } else {
            anonymous.get(&path).await
        };
        let h = |name: &str| answer.header(name).unwrap_or_default();
        let what = format!("{who} GET {path} ({})", answer.status);
        let csp = h("content-security-policy");
        assert!(csp.contains("default-src 'self'"), "{what}: {csp:?}");
        assert!(csp.contains("frame-ancestors 'none'"), "{what}: {csp:?}");
        assert_eq!(h("x-content-type-options"), "nosniff", "{what}");
        assert_eq!(h("x-frame-options"), "DENY", "{what}");
        assert_eq!(h("referrer-policy"), "same-origin", "{what}");
    }
}
