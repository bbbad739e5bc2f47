//! Signing in and passwords: the throttle counts tries per (user name, client address)
//! atomically, so forty guesses at once get five checks; a stranger's guesses from
//! another address never make the real user wait; the wait grows from 30 seconds,
//! doubling up to 15 minutes; an admin clears it; passwords meet the rules wherever
//! they are set; and people change their own password, ending their other sessions.
//!
//! The policy under test (PRODUCT brief and issue 11): five tries in a row, then a wait
//! of 30 s that doubles with each further wrong try, at most 15 minutes; passwords of at
//! least 12 characters, not the user name, not a common one. Every name is invented.

mod common;

use common::{ADMIN_NAME, ADMIN_PASSWORD, Agent, MEMBER_PASSWORD, TestApp};
use futures_util::future::join_all;
use reqwest::StatusCode;
use reqwest::header::RETRY_AFTER;
use sagline::auth::{self, Role};
use sagline::services::accounts::{self, LoginError};
use serde_json::json;
use std::net::{IpAddr, Ipv4Addr};

/// Tries in a row checked before the first wait, as the policy states it.
const FREE_TRIES: usize = 5;
/// Another machine on the office network, as the server sees it (a loopback address).
const STRANGER: IpAddr = IpAddr::V4(Ipv4Addr::new(127, 0, 0, 2));

/// A sign-in by API from `agent`: its status and its message.
async fn try_sign_in(agent: &Agent, name: &str, password: &str) -> (StatusCode, String) {
    let answer = agent
        .post_json("/login", &json!({ "name": name, "password": password }))
        .await;
    let message = if answer.status == StatusCode::OK {
        String::new()
    } else {
        answer.json()["error"]
            .as_str()
            .unwrap_or_default()
            .to_string()
    };
    (answer.status, message)
}

/// How many tries of `name` from `client` the throttle has counted.
async fn counted_tries(app: &TestApp, name: &str, client: &str) -> i64 {
    sqlx::query_scalar("SELECT tries FROM sign_in_throttle WHERE user_name = ? AND client = ?")
        .bind(name)
        .bind(client)
        .fetch_optional(&app.pool)
        .await
        .expect("read the throttle")
        .unwrap_or(0)
}

#[test]
fn the_policy_under_test_is_the_programs() {
    let p = auth::SIGN_IN_THROTTLE;
    assert_eq!(p.free_tries, FREE_TRIES as i64);
    assert_eq!((p.first_wait_secs, p.max_wait_secs), (30, 900));
    assert_eq!(auth::password::MIN_LEN, 12);
}

#[tokio::test]
async fn forty_wrong_guesses_at_once_get_five_checks_and_thirty_five_waits() {
    let app = TestApp::empty().await;
    let guesses =
        join_all(
            (0..40).map(|i| {
                let guesser = app.anonymous();
                async move {
                    try_sign_in(&guesser, ADMIN_NAME, &format!("wrong guess number {i}")).await
                }
            }),
        )
        .await;
    let checked = guesses
        .iter()
        .filter(|(s, _)| *s == StatusCode::UNAUTHORIZED)
        .count();
    let waited = guesses
        .iter()
        .filter(|(s, _)| *s == StatusCode::TOO_MANY_REQUESTS)
        .count();
    assert_eq!(
        (checked, waited),
        (FREE_TRIES, 40 - FREE_TRIES),
        "{guesses:?}"
    );
    for (status, message) in &guesses {
        if *status == StatusCode::TOO_MANY_REQUESTS {
            assert!(message.starts_with("Too many failed sign-ins"), "{message}");
            let secs: i64 = message
                .split("Wait ")
                .nth(1)
                .and_then(|rest| rest.split(' ').next())
                .and_then(|n| n.parse().ok())
                .unwrap_or_else(|| panic!("no wait in {message}"));
            assert!((1..=30).contains(&secs), "{message}");
        }
    }
    // Only the checked tries were counted.
    assert_eq!(
        counted_tries(&app, ADMIN_NAME, "127.0.0.1").await,
        FREE_TRIES as i64
    );
    // Even the right password waits now, from this address; the answer says how long.
    let raw = app
        .anonymous()
        .post_json(
            "/login",
            &json!({ "name": ADMIN_NAME, "password": ADMIN_PASSWORD }),
        )
        .await;
    assert_eq!(raw.status, StatusCode::TOO_MANY_REQUESTS, "{}", raw.body);
    let retry: i64 = raw.header(RETRY_AFTER.as_str()).unwrap().parse().unwrap();
    assert!((1..=30).contains(&retry), "Retry-After {retry}");
}

#[tokio::test]
async fn a_strangers_wrong_guesses_from_another_address_do_not_lock_the_user_out() {
    let app = TestApp::empty().await;
    let stranger = Agent::from_address(&app.base, STRANGER);
    for i in 1..=12 {
        let (status, message) = try_sign_in(&stranger, ADMIN_NAME, "not the password").await;
        let expected = if i <= FREE_TRIES {
            StatusCode::UNAUTHORIZED
        } else {
            StatusCode::TOO_MANY_REQUESTS
        };
        assert_eq!(status, expected, "try {i}: {message}");
    }
    assert_eq!(
        counted_tries(&app, ADMIN_NAME, &STRANGER.to_string()).await,
        FREE_TRIES as i64
    );
    // The admin, at their own machine, signs in at the first try.
    let mut admin = app.anonymous();
    let answer = admin.sign_in(ADMIN_NAME, ADMIN_PASSWORD).await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    // Nor does the stranger's wait for that name hold back their own name.
    app.add_user("storm-petrel", Role::Viewer).await;
    let (status, _) = try_sign_in(&stranger, "storm-petrel", MEMBER_PASSWORD).await;
    assert_eq!(status, StatusCode::OK);
}

#[tokio::test]
async fn the_refusals_read_the_same_for_a_name_that_is_no_account() {
    let app = TestApp::empty().await;
    let mut answers = Vec::new();
    for name in [ADMIN_NAME, "nobody-by-this-name"] {
        let guesser = app.anonymous();
        let mut these = Vec::new();
        for _ in 0..=FREE_TRIES {
            let (status, message) = try_sign_in(&guesser, name, "a wrong password").await;
            // The seconds may tick between the two runs; the words may not differ.
            these.push((status, message.replace(|c: char| c.is_ascii_digit(), "#")));
        }
        answers.push(these);
    }
    assert_eq!(answers[0], answers[1]);
    assert_eq!(
        answers[0][FREE_TRIES - 1].1,
        "Wrong user name or password. Too many tries in a row: wait ## seconds before the next one."
    );
    assert!(
        answers[0][FREE_TRIES]
            .1
            .contains("Wait ## seconds, then try again"),
        "{:?}",
        answers[0]
    );
}

#[tokio::test]
async fn the_wait_grows_from_thirty_seconds_doubling_to_fifteen_minutes() {
    let app = TestApp::empty().await;
    let client = "192.0.2.40";
    let t0 = auth::unix_now();
    let at = |t: i64, password: &'static str| {
        let pool = app.pool.clone();
        async move { accounts::log_in(&pool, ADMIN_NAME, password, client, t).await }
    };
    let wrong_wait = |outcome: Result<accounts::NewLogin, LoginError>| match outcome {
        Err(LoginError::WrongCredentials { wait_secs }) => wait_secs,
        other => panic!("expected a wrong password, got {:?}", other.err()),
    };
    let throttled = |outcome: Result<accounts::NewLogin, LoginError>| match outcome {
        Err(LoginError::Throttled { wait_secs }) => wait_secs,
        other => panic!("expected a wait, got {:?}", other.err()),
    };
    for _ in 1..FREE_TRIES {
        assert_eq!(wrong_wait(at(t0, "a wrong password").await), 0);
    }
    // The fifth wrong try starts the wait; within it nothing is checked, not even the
    // right password.
    assert_eq!(wrong_wait(at(t0, "a wrong password").await), 30);
    assert_eq!(throttled(at(t0 + 10, ADMIN_PASSWORD).await), 20);
    assert_eq!(throttled(at(t0 + 29, "a wrong password").await), 1);
    // Each wrong try after a wait doubles the next wait, up to 15 minutes.
    let mut t = t0 + 30;
    for expected in [60, 120, 240, 480, 900, 900] {
        assert_eq!(wrong_wait(at(t, "a wrong password").await), expected);
        assert_eq!(throttled(at(t + expected - 1, ADMIN_PASSWORD).await), 1);
        t += expected;
    }
    // Waits are refused without being counted: tries in a row are the checked ones.
    assert_eq!(counted_tries(&app, ADMIN_NAME, client).await, 11);
    // The right password after the wait signs in and clears the record.
    assert!(at(t, ADMIN_PASSWORD).await.is_ok());
    assert_eq!(counted_tries(&app, ADMIN_NAME, client).await, 0);
    assert_eq!(wrong_wait(at(t, "a wrong password").await), 0);
}

#[tokio::test]
async fn an_admin_clears_a_users_waits_and_the_change_is_recorded() {
    let app = TestApp::empty().await;
    app.add_user("skylark", Role::Viewer).await;
    for _ in 0..FREE_TRIES {
        try_sign_in(&app.anonymous(), "skylark", "not skylark's password").await;
    }
    let (status, _) = try_sign_in(&app.anonymous(), "skylark", MEMBER_PASSWORD).await;
    assert_eq!(status, StatusCode::TOO_MANY_REQUESTS);

    // The users page shows who waits, from where.
    let page = app.get("/admin/users").await;
    assert_eq!(page.status, StatusCode::OK);
    let waits = page
        .body
        .split("class=\"data sign-in-waits\"")
        .nth(1)
        .expect("the failed sign-ins table");
    assert!(
        waits.contains("skylark") && waits.contains("127.0.0.1"),
        "{waits}"
    );
    let listed = app.get_json("/api/admin/users").await;
    let wait = &listed["sign_in_waits"][0];
    assert_eq!(wait["name"], "skylark");
    assert_eq!(wait["tries"], FREE_TRIES as i64);
    let id = wait["user_id"].as_i64().unwrap();

    // Without the CSRF token, nothing is cleared.
    let forged = app
        .without_csrf()
        .post_form(&format!("/admin/users/{id}/unlock"), &[])
        .await;
    assert_eq!(forged.status, StatusCode::FORBIDDEN);
    assert_eq!(counted_tries(&app, "skylark", "127.0.0.1").await, 5);

    let cleared = app
        .post_form(&format!("/admin/users/{id}/unlock"), &[])
        .await;
    assert_eq!(cleared.status, StatusCode::OK, "{}", cleared.body);
    assert!(
        cleared
            .body
            .contains("may sign in again from every address without waiting"),
        "{}",
        cleared.body
    );
    let mut skylark = app.anonymous();
    assert_eq!(
        skylark.sign_in("skylark", MEMBER_PASSWORD).await.status,
        StatusCode::SEE_OTHER
    );
    let changes = app.get_json("/api/admin/users").await["changes"].clone();
    let entry = changes
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["action"] == "clear sign-in waits")
        .expect("the clearing is in the activity record");
    assert_eq!(entry["actor"], ADMIN_NAME);
    assert_eq!(entry["subject"], "skylark");
    assert_eq!(entry["after_state"], "1 address(es) cleared");
}

#[tokio::test]
async fn passwords_that_break_the_rules_are_refused_with_the_reason_and_nothing_is_added() {
    let app = TestApp::empty().await;
    let before = app.database_content().await;
    for (password, reason) in [
        ("eleven char", "at least 12 characters"),
        ("petrel-and-more", "may not be the user name or contain it"),
        (
            "PeTrEl-of-the-reef",
            "may not be the user name or contain it",
        ),
        ("zzzzzzzzzzzzzzzz", "at least 5 different characters"),
        ("Password2026!", "too common"),
        ("qwertyuiop123", "too common"),
        ("P@ssw0rd-1234", "too common"),
    ] {
        let answer = app
            .post_json(
                "/api/admin/users",
                &json!({ "name": "petrel", "role": "viewer", "password": password }),
            )
            .await;
        assert_eq!(
            answer.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{password}: {}",
            answer.body
        );
        assert!(answer.body.contains(reason), "{password}: {}", answer.body);
        assert!(!answer.body.contains(password), "{}", answer.body);
    }
    assert_eq!(app.database_content().await, before);

    // The command line refuses the same way, exit 1 and the reason on stderr.
    let db = app.pool.connect_options().get_filename().to_path_buf();
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_sagline"))
        .args([
            "user",
            "add",
            "petrel",
            "--role",
            "viewer",
            "--password-stdin",
        ])
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
        .write_all(b"sunshine123456\n")
        .unwrap();
    let output = child.wait_with_output().unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(
        String::from_utf8_lossy(&output.stderr).contains("too common"),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert_eq!(app.database_content().await, before);

    // Passwords the server chooses meet the rules: on first start and for a new account.
    let first = tempfile::tempdir().unwrap();
    let pool = sagline::store::open(&first.path().join("first.db"))
        .await
        .unwrap();
    let generated = accounts::ensure_first_admin(&pool).await.unwrap().unwrap();
    assert_eq!(
        auth::password::check_chosen(&generated, accounts::FIRST_ADMIN_NAME),
        Ok(())
    );
    let added = app
        .post_json(
            "/api/admin/users",
            &json!({ "name": "petrel", "role": "viewer" }),
        )
        .await;
    let generated = added.json()["password"].as_str().unwrap().to_string();
    assert_eq!(auth::password::check_chosen(&generated, "petrel"), Ok(()));
}

#[tokio::test]
async fn a_person_changes_their_own_password_and_the_old_one_stops_working() {
    let app = TestApp::empty().await;
    let shearwater = app.sign_in_as(Role::Viewer).await;
    let name = "member-viewer";
    let mut elsewhere = app.anonymous();
    assert_eq!(
        elsewhere.sign_in(name, MEMBER_PASSWORD).await.status,
        StatusCode::SEE_OTHER
    );
    let new_password = "kelp-lantern-drifts-east";

    let page = shearwater.get("/account").await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(page.body.contains("action=\"/account/password\""));
    assert!(page.body.contains("name=\"csrf_token\""));

    let change = |current: &'static str, new: &'static str, repeat: &'static str| {
        let agent = shearwater.clone();
        async move {
            agent
                .post_form(
                    "/account/password",
                    &[
                        ("current_password", current),
                        ("new_password", new),
                        ("repeat_password", repeat),
                    ],
                )
                .await
        }
    };
    // Refusals, each with its reason, and the password unchanged.
    let wrong = change("not my password at all", new_password, new_password).await;
    assert_eq!(wrong.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        wrong.body.contains("The current password is wrong"),
        "{}",
        wrong.body
    );
    let differ = change(MEMBER_PASSWORD, new_password, "kelp-lantern-drifts-west").await;
    assert_eq!(differ.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(differ.body.contains("differ"), "{}", differ.body);
    let weak = change(MEMBER_PASSWORD, "member-viewer-2", "member-viewer-2").await;
    assert_eq!(weak.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(weak.body.contains("user name"), "{}", weak.body);
    let forged = shearwater
        .without_csrf()
        .post_form(
            "/account/password",
            &[
                ("current_password", MEMBER_PASSWORD),
                ("new_password", new_password),
                ("repeat_password", new_password),
            ],
        )
        .await;
    assert_eq!(forged.status, StatusCode::FORBIDDEN);
    assert_eq!(
        try_sign_in(&app.anonymous(), name, MEMBER_PASSWORD).await.0,
        StatusCode::OK
    );

    // The change: this session stays, the other one ends.
    let done = change(MEMBER_PASSWORD, new_password, new_password).await;
    assert_eq!(done.status, StatusCode::OK, "{}", done.body);
    assert!(
        done.body
            .contains("Your password is changed. 2 other session(s)"),
        "{}",
        done.body
    );
    assert_eq!(shearwater.get("/api/session").await.status, StatusCode::OK);
    assert_eq!(
        elsewhere.get("/api/session").await.status,
        StatusCode::UNAUTHORIZED
    );
    let (old, _) = try_sign_in(&app.anonymous(), name, MEMBER_PASSWORD).await;
    assert_eq!(old, StatusCode::UNAUTHORIZED);
    let (new, _) = try_sign_in(&app.anonymous(), name, new_password).await;
    assert_eq!(new, StatusCode::OK);

    // By API too; and the record names the change, never the password.
    let by_api = shearwater
        .post_json(
            "/api/account/password",
            &json!({ "current_password": new_password, "new_password": "tidal-quartz-heron-66" }),
        )
        .await;
    assert_eq!(by_api.status, StatusCode::OK, "{}", by_api.body);
    assert_eq!(by_api.json()["other_sessions_ended"], 1);
    let changes = app.get_json("/api/admin/users").await["changes"].clone();
    let own: Vec<_> = changes
        .as_array()
        .unwrap()
        .iter()
        .filter(|c| c["action"] == "change own password")
        .collect();
    assert_eq!(own.len(), 2, "{changes}");
    assert!(
        own.iter()
            .all(|c| c["actor"] == name && c["subject"] == name)
    );
    let text = changes.to_string();
    assert!(!text.contains(new_password) && !text.contains("tidal-quartz-heron-66"));
}
