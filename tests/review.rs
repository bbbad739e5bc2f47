//! The team's review of a well: rift picks saved through the API and the form refit
//! the well; a save against an old version is refused naming who changed the pick;
//! agreeing needs an interpreter; comments are shown as text; every change is in the
//! activity log; a second browser hears of each change on the live stream; and a
//! trial timing refits without storing anything.
//!
//! Every study, well and user name here is invented.

mod common;

use common::rift::{TROUGH_WELL, rift_study, stretching};
use common::{ADMIN_NAME, Agent, Answer, TestApp};
use reqwest::{Method, StatusCode};
use sagline::auth::Role;
use sagline_science::tolerance::assert_printed;
use serde_json::{Value, json};
use std::time::Duration;

/// Equilibrium surface heat flow K T1 / a with k = 3.1 W/m/K (the default conductivity):
/// docs/science.md 4.4, check-value table, 33.0584 mW/m².
const EQUILIBRIUM_HEAT_FLOW: f64 = 33.0584;
/// A rift timing at two of the trough well's surface ages, other than the proposal's
/// (the proposal puts the rift end at 145 Ma): onset at the top of the rift sand,
/// end at the top of the chalk.
const PICK: (f64, f64) = (165.3, 66.0);
/// Another timing, as the form sends it (onset at the base of the column).
const FORM_PICK: (f64, f64) = (201.4, 145.0);
/// The longest wait for a live event (generous: the machine is shared).
const LIVE_WAIT: Duration = Duration::from_secs(30);

/// An app holding the rift study, and the trough well's id.
struct Scene {
    app: TestApp,
    study: i64,
    well: i64,
}

impl Scene {
    async fn new() -> Scene {
        let app = TestApp::empty().await;
        let study = rift_study(&app, "Tarn Trough review").await;
        let well = app.well_id(study, TROUGH_WELL).await;
        Scene { app, study, well }
    }

    fn page(&self) -> String {
        format!("/studies/{}/wells/{}", self.study, self.well)
    }

    fn twin(&self) -> String {
        format!("/api/studies/{}/wells/{}", self.study, self.well)
    }

    fn pick_path(&self, event: i64) -> String {
        format!("{}/picks/{event}", self.twin())
    }

    async fn well_json(&self) -> Value {
        self.app.get_json(&self.twin()).await
    }

    /// `PUT` a pick of rift event 1 as `agent`.
    async fn save(
        &self,
        agent: &Agent,
        (onset, end): (f64, f64),
        state: &str,
        version: i64,
    ) -> Answer {
        let body = json!({ "rift_onset_ma": onset, "rift_end_ma": end, "model": "uniform", "state": state, "version": version });
        agent.put_json(&self.pick_path(1), &body).await
    }

    /// The same through the well page's pick form.
    async fn save_form(&self, agent: &Agent, (onset, end): (f64, f64), version: i64) -> Answer {
        let (onset, end, version) = (onset.to_string(), end.to_string(), version.to_string());
        let fields = [
            ("event", "1"),
            ("rift_onset_ma", onset.as_str()),
            ("rift_end_ma", end.as_str()),
            ("model", "uniform"),
            ("state", "draft"),
            ("version", version.as_str()),
            ("action", "save"),
        ];
        agent
            .post_form(&format!("{}/picks", self.page()), &fields)
            .await
    }
}

fn num(v: &Value, what: &str) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("{what} is not a number: {v}"))
}

/// The JSON of a saved pick, checking the save answered 200.
fn saved(answer: &Answer) -> Value {
    assert_eq!(answer.status, StatusCode::OK, "save: {}", answer.body);
    answer.json()
}

/// The uniform fit follows the team's timing: its rift onset and end are the pick,
/// the phases are cut there, and the heat flow is at equilibrium before the rift and
/// beta times equilibrium at its end (docs/science.md 4.4, F(0+) = beta K T1 / a; the rift
/// taken as instantaneous at its end is docs/science.md 6, common practice).
fn assert_fitted_to(well: &Value, (onset, end): (f64, f64)) -> f64 {
    let st = stretching(well);
    assert_eq!(st["origin"], "team pick", "{st}");
    assert_eq!(num(&st["rift_onset_ma"], "rift onset"), onset);
    assert_eq!(num(&st["rift_end_ma"], "rift end"), end);
    let beta = num(&st["beta"], "beta");
    assert_eq!(st["rift_events"].as_array().map(Vec::len), Some(1), "{st}");
    assert_eq!(num(&st["rift_events"][0]["beta"], "event beta"), beta);
    let syn = well["analysis"]["phases"]
        .as_array()
        .expect("phases")
        .iter()
        .find(|p| p["phase"] == "syn-rift")
        .unwrap_or_else(|| panic!("no syn-rift phase: {}", well["analysis"]["phases"]));
    assert_eq!(
        (num(&syn["from_ma"], "from"), num(&syn["to_ma"], "to")),
        (onset, end)
    );
    for point in st["heat_flow_mw_m2"].as_array().expect("heat flow") {
        let (age, value) = (
            num(&point["age_ma"], "age"),
            num(&point["value"], "heat flow"),
        );
        if age >= onset {
            assert_printed(value, EQUILIBRIUM_HEAT_FLOW, 4, "pre-rift heat flow");
        }
        if age == end {
            assert_printed(
                value / beta,
                EQUILIBRIUM_HEAT_FLOW,
                4,
                "heat flow at the rift end / beta",
            );
        }
    }
    beta
}

#[tokio::test]
async fn a_pick_saved_through_the_api_refits_the_well() {
    let s = Scene::new().await;
    let before = s.well_json().await;
    let proposed = stretching(&before).clone();
    assert_eq!(proposed["origin"], "proposed");
    assert_ne!(
        num(&proposed["rift_end_ma"], "proposed end"),
        PICK.1,
        "the pick must differ from the proposal"
    );

    let pick = saved(&s.save(&s.app, PICK, "draft", 0).await);
    assert_eq!(pick["version"], 1);
    assert_eq!(pick["updated_by"], ADMIN_NAME);

    let after = s.well_json().await;
    let beta = assert_fitted_to(&after, PICK);
    let proposed_beta = num(&proposed["beta"], "proposed beta");
    assert!(
        (beta - proposed_beta).abs() > 1e-3 * proposed_beta,
        "beta should follow the pick: {beta} against the proposal's {proposed_beta}"
    );
    // The proposal stays on the page beside the team's pick.
    assert_eq!(
        num(&after["proposal"]["beta"], "proposal beta"),
        proposed_beta
    );
    assert_eq!(after["picks"][0]["rift_end_ma"], json!(PICK.1));
    // The overview shows the team's fit too.
    let overview = s.app.get_json(&format!("/api/studies/{}", s.study)).await;
    let row = overview["wells"]
        .as_array()
        .expect("wells")
        .iter()
        .find(|w| w["id"] == s.well)
        .expect("the trough well in the overview")
        .clone();
    assert_eq!(row["origin"], "team pick", "{row}");
    assert_eq!(num(&row["beta"], "overview beta"), beta);

    // Clearing returns the well to the proposal.
    let cleared = s
        .app
        .post_json(
            &format!("{}/clear", s.pick_path(1)),
            &json!({ "version": 1 }),
        )
        .await;
    assert_eq!(cleared.status, StatusCode::OK, "{}", cleared.body);
    let back = stretching(&s.well_json().await).clone();
    assert_eq!(back["origin"], "proposed");
    assert_eq!(num(&back["beta"], "beta"), proposed_beta);
}

#[tokio::test]
async fn a_pick_saved_through_the_form_refits_the_well_and_returns_to_the_review() {
    let s = Scene::new().await;
    let answer = s.save_form(&s.app, FORM_PICK, 0).await;
    assert_eq!(answer.status, StatusCode::SEE_OTHER, "{}", answer.body);
    assert_eq!(answer.location, Some(format!("{}#review", s.page())));
    let well = s.well_json().await;
    assert_fitted_to(&well, FORM_PICK);
    assert_eq!(well["picks"][0]["version"], 1);
    // The page shows the saved pick with its author.
    let page = s.app.get(&s.page()).await;
    assert!(
        page.body.contains(&format!("saved by {ADMIN_NAME}")),
        "{}",
        page.body
    );
}

#[tokio::test]
async fn a_save_against_an_old_version_is_refused_naming_who_changed_the_pick() {
    let s = Scene::new().await;
    let interpreter = s.app.sign_in_as(Role::Interpreter).await;
    saved(&s.save(&s.app, PICK, "draft", 0).await);
    // The interpreter moves the rift end while the admin's page still shows version 1.
    let theirs = saved(&s.save(&interpreter, (PICK.0, 56.0), "draft", 1).await);
    assert_eq!(theirs["version"], 2);
    let stored = s.app.database_content().await;

    let refused = s.save(&s.app, (PICK.0, 23.03), "agreed", 1).await;
    assert_eq!(refused.status, StatusCode::CONFLICT, "{}", refused.body);
    let body = refused.json();
    let message = body["error"].as_str().expect("error message");
    for needed in ["member-interpreter", "version 1", "version 2", "Not saved"] {
        assert!(
            message.contains(needed),
            "'{needed}' missing from: {message}"
        );
    }
    let current = &body["current"];
    assert_eq!(current["version"], 2, "{body}");
    assert_eq!(current["updated_by"], "member-interpreter");
    assert_eq!(current["rift_end_ma"], json!(56.0));

    // The form says the same on the well page, escaped as text.
    let form = s.save_form(&s.app, (PICK.0, 23.03), 1).await;
    assert_eq!(form.status, StatusCode::CONFLICT, "{}", form.body);
    assert!(
        form.body.contains("was changed by member-interpreter"),
        "{}",
        form.body
    );
    assert!(form.body.contains("role=\"alert\""));

    // A stale clear is refused too, and says what was tried in words.
    let clear = s
        .app
        .post_json(
            &format!("{}/clear", s.pick_path(1)),
            &json!({ "version": 1 }),
        )
        .await;
    assert_eq!(clear.status, StatusCode::CONFLICT, "{}", clear.body);
    let message = clear.json()["error"]
        .as_str()
        .unwrap_or_default()
        .to_string();
    assert!(message.contains("member-interpreter"), "{message}");
    assert!(!message.contains("NaN"), "{message}");

    assert_eq!(
        s.app.database_content().await,
        stored,
        "refused saves change nothing"
    );
    assert_fitted_to(&s.well_json().await, (PICK.0, 56.0));
}

#[tokio::test]
async fn two_saves_of_the_same_version_at_once_give_one_save_and_one_refusal() {
    let s = Scene::new().await;
    let interpreter = s.app.sign_in_as(Role::Interpreter).await;
    saved(&s.save(&s.app, PICK, "draft", 0).await);
    let (a, b) = tokio::join!(
        s.save(&s.app, (PICK.0, 56.0), "draft", 1),
        s.save(&interpreter, (PICK.0, 23.03), "draft", 1)
    );
    let mut statuses = [a.status, b.status];
    statuses.sort();
    assert_eq!(
        statuses,
        [StatusCode::OK, StatusCode::CONFLICT],
        "first: {}\nsecond: {}",
        a.body,
        b.body
    );
    let winner = if a.status == StatusCode::OK { &a } else { &b };
    let picks = s.well_json().await["picks"].clone();
    assert_eq!(picks[0]["version"], 2);
    assert_eq!(picks[0]["rift_end_ma"], winner.json()["rift_end_ma"]);
}

#[tokio::test]
async fn agreeing_a_pick_needs_an_interpreter() {
    let s = Scene::new().await;
    saved(&s.save(&s.app, PICK, "draft", 0).await);
    let viewer = s.app.sign_in_as(Role::Viewer).await;
    let stored = s.app.database_content().await;

    let api = s.save(&viewer, PICK, "agreed", 1).await;
    assert_eq!(api.status, StatusCode::FORBIDDEN, "{}", api.body);
    assert!(
        api.body.contains("Your role (viewer) may not do this"),
        "{}",
        api.body
    );
    let form = s.save_form(&viewer, PICK, 1).await;
    assert_eq!(form.status, StatusCode::FORBIDDEN, "{}", form.body);
    assert_eq!(
        s.app.database_content().await,
        stored,
        "the viewer changed nothing"
    );
    // A viewer's page offers no pick form.
    let page = viewer.get(&s.page()).await;
    assert!(
        !page.body.contains("class=\"stack pick-form\""),
        "{}",
        page.body
    );

    let interpreter = s.app.sign_in_as(Role::Interpreter).await;
    let agreed = saved(&s.save(&interpreter, PICK, "agreed", 1).await);
    assert_eq!(agreed["state"], "agreed");
    assert_eq!(agreed["version"], 2);
    assert_eq!(agreed["updated_by"], "member-interpreter");
}

/// Markup in a comment, sent through the API and the form.
const SCRIPT: &str = "<script>alert(1)</script> the rift end looks late";
const BOLD: &str = "I read it as <b>66 Ma</b> & \"agreed\"";

/// Whether `html` holds `text` escaped as text, with the numeric entities the
/// templates write or the named ones.
fn shown_as_text(html: &str, text: &str) -> bool {
    // `&` first, so the entities' own ampersands stay.
    let escaped = |[amp, lt, gt, quot]: [&str; 4]| {
        text.replace('&', amp)
            .replace('<', lt)
            .replace('>', gt)
            .replace('"', quot)
    };
    html.contains(&escaped(["&#38;", "&#60;", "&#62;", "&#34;"]))
        || html.contains(&escaped(["&amp;", "&lt;", "&gt;", "&quot;"]))
}

#[tokio::test]
async fn a_comment_with_markup_is_shown_as_text() {
    let s = Scene::new().await;
    let interpreter = s.app.sign_in_as(Role::Interpreter).await;
    let api = interpreter
        .post_json(
            &format!("{}/comments", s.twin()),
            &json!({ "body": SCRIPT, "pick_event": 1 }),
        )
        .await;
    assert_eq!(api.status, StatusCode::CREATED, "{}", api.body);
    assert_eq!(api.json()["body"], SCRIPT, "stored as written");
    let form = interpreter
        .post_form(
            &format!("{}/comments", s.page()),
            &[("body", BOLD), ("pick_event", "")],
        )
        .await;
    assert_eq!(form.status, StatusCode::SEE_OTHER, "{}", form.body);

    for page in [s.page(), format!("/studies/{}/activity", s.study)] {
        let html = s.app.get(&page).await;
        assert_eq!(html.status, StatusCode::OK, "{page}");
        for raw in ["<script>alert(1)", "<b>66 Ma</b>"] {
            assert!(!html.body.contains(raw), "{page} shows raw markup {raw}");
        }
        for text in [SCRIPT, BOLD] {
            assert!(
                shown_as_text(&html.body, text),
                "{page} does not show {text}: {}",
                html.body
            );
        }
    }
    let comments = s.well_json().await["comments"].clone();
    assert_eq!(comments[0]["body"], SCRIPT);
    assert_eq!(comments[0]["pick_event"], 1);
    assert_eq!(comments[1]["body"], BOLD);
    assert_eq!(comments[1]["author"], "member-interpreter");
}

/// A before/after snapshot of the activity log, as JSON (null when empty).
fn snapshot(entry: &Value, side: &str) -> Value {
    match entry[side].as_str() {
        Some(text) => {
            serde_json::from_str(text).unwrap_or_else(|_| Value::String(text.to_string()))
        }
        None => Value::Null,
    }
}

#[tokio::test]
async fn every_review_change_is_recorded_with_who_and_before_and_after() {
    let s = Scene::new().await;
    let interpreter = s.app.sign_in_as(Role::Interpreter).await;
    saved(&s.save(&s.app, PICK, "draft", 0).await);
    saved(&s.save(&interpreter, PICK, "questioned", 1).await);
    saved(&s.save(&interpreter, (PICK.0, 56.0), "questioned", 2).await);
    let clear = s
        .app
        .post_json(
            &format!("{}/clear", s.pick_path(1)),
            &json!({ "version": 3 }),
        )
        .await;
    assert_eq!(clear.status, StatusCode::OK, "{}", clear.body);
    let comment = interpreter
        .post_json(
            &format!("{}/comments", s.twin()),
            &json!({ "body": "Back to the proposal." }),
        )
        .await;
    assert_eq!(comment.status, StatusCode::CREATED, "{}", comment.body);

    let log = s.app.activity(s.study).await;
    let review: Vec<&Value> = log.iter().take(5).collect();
    let actions: Vec<&str> = review
        .iter()
        .rev()
        .map(|e| e["action"].as_str().unwrap_or_default())
        .collect();
    assert_eq!(
        actions,
        ["pick", "pick state", "pick", "delete pick", "comment"],
        "{log:?}"
    );
    let actors: Vec<&str> = review
        .iter()
        .rev()
        .map(|e| e["actor"].as_str().unwrap_or_default())
        .collect();
    assert_eq!(
        actors,
        [
            ADMIN_NAME,
            "member-interpreter",
            "member-interpreter",
            ADMIN_NAME,
            "member-interpreter"
        ]
    );
    for entry in &review {
        assert!(
            entry["subject"]
                .as_str()
                .unwrap_or_default()
                .contains(TROUGH_WELL),
            "{entry}"
        );
    }
    let [comment, clear, moved, state, first] =
        [review[0], review[1], review[2], review[3], review[4]];
    // New pick: nothing before, the pick after.
    assert_eq!(snapshot(first, "before_state"), Value::Null);
    assert_eq!(snapshot(first, "after_state")["rift_end_ma"], json!(PICK.1));
    // State change: draft -> questioned, same ages.
    assert_eq!(snapshot(state, "before_state")["state"], "draft");
    assert_eq!(snapshot(state, "after_state")["state"], "questioned");
    assert_eq!(snapshot(state, "after_state")["rift_end_ma"], json!(PICK.1));
    // Moved rift end: 66 -> 56 Ma.
    assert_eq!(
        snapshot(moved, "before_state")["rift_end_ma"],
        json!(PICK.1)
    );
    assert_eq!(snapshot(moved, "after_state")["rift_end_ma"], json!(56.0));
    assert_eq!(snapshot(moved, "after_state")["version"], 3);
    // Clear: the pick before, nothing after.
    assert_eq!(snapshot(clear, "before_state")["version"], 3);
    assert_eq!(snapshot(clear, "after_state"), Value::Null);
    // Comment: its text after.
    assert_eq!(
        snapshot(comment, "after_state"),
        json!("Back to the proposal.")
    );
}

/// A client's view of a study's live stream, read chunk by chunk.
struct LiveStream {
    response: reqwest::Response,
    pending: String,
}

impl LiveStream {
    async fn open(agent: &Agent, study: i64) -> LiveStream {
        let response = agent
            .request(Method::GET, &format!("/api/studies/{study}/events"))
            .send()
            .await
            .expect("open the live stream");
        assert_eq!(response.status(), StatusCode::OK);
        let kind = response
            .headers()
            .get(reqwest::header::CONTENT_TYPE)
            .and_then(|v| v.to_str().ok())
            .unwrap_or_default();
        assert!(kind.starts_with("text/event-stream"), "{kind}");
        LiveStream {
            response,
            pending: String::new(),
        }
    }

    /// The data of the next `change` event, failing after `LIVE_WAIT`.
    async fn next_change(&mut self) -> Value {
        let wait = tokio::time::timeout(LIVE_WAIT, async {
            loop {
                // Events end with a blank line; comments (keep-alives) have no event name.
                while let Some(end) = self.pending.find("\n\n") {
                    let event: String = self.pending.drain(..end + 2).collect();
                    let field = |name: &str| {
                        event
                            .lines()
                            .find_map(|l| l.strip_prefix(name))
                            .map(|v| v.trim_start().to_string())
                    };
                    if field("event:").as_deref() == Some("change") {
                        let data = field("data:").expect("a change event has data");
                        return serde_json::from_str::<Value>(&data).expect("event data is JSON");
                    }
                }
                let chunk = self
                    .response
                    .chunk()
                    .await
                    .expect("read the live stream")
                    .expect("the live stream ended");
                self.pending.push_str(&String::from_utf8_lossy(&chunk));
            }
        });
        wait.await.expect("no change event arrived in time")
    }
}

#[tokio::test]
async fn a_second_client_hears_each_change_on_the_live_stream() {
    let s = Scene::new().await;
    let other_study = rift_study(&s.app, "Tarn Trough elsewhere").await;
    let other_well = s.app.well_id(other_study, TROUGH_WELL).await;
    let viewer = s.app.sign_in_as(Role::Viewer).await;
    let mut live = LiveStream::open(&viewer, s.study).await;

    // A change in another study is not this study's news.
    let elsewhere = s
        .app
        .put_json(
            &format!("/api/studies/{other_study}/wells/{other_well}/picks/1"),
            &json!({ "rift_onset_ma": PICK.0, "rift_end_ma": PICK.1, "version": 0 }),
        )
        .await;
    assert_eq!(elsewhere.status, StatusCode::OK, "{}", elsewhere.body);

    saved(&s.save(&s.app, PICK, "draft", 0).await);
    let event = live.next_change().await;
    assert_eq!(event["kind"], "pick", "{event}");
    assert_eq!(event["well_id"], s.well);
    assert_eq!(event["well"], TROUGH_WELL);
    assert_eq!(event["by"], ADMIN_NAME);
    let summary = event["summary"].as_str().unwrap_or_default();
    assert!(
        summary.contains(TROUGH_WELL) && summary.contains("66"),
        "{summary}"
    );

    saved(&s.save(&s.app, PICK, "agreed", 1).await);
    let event = live.next_change().await;
    assert_eq!(event["kind"], "pick state", "{event}");

    let comment = s
        .app
        .post_json(
            &format!("{}/comments", s.twin()),
            &json!({ "body": "Agreed in the meeting." }),
        )
        .await;
    assert_eq!(comment.status, StatusCode::CREATED);
    let event = live.next_change().await;
    assert_eq!(event["kind"], "comment", "{event}");
    assert!(
        event["summary"]
            .as_str()
            .unwrap_or_default()
            .contains("Agreed in the meeting.")
    );
}

#[tokio::test]
async fn a_trial_timing_refits_without_storing_anything() {
    let s = Scene::new().await;
    let proposed_beta = num(&stretching(&s.well_json().await)["beta"], "proposed beta");
    let stored = s.app.database_content().await;
    let query = format!("?trial_onset_ma={}&trial_end_ma={}", PICK.0, PICK.1);

    let trial = s.app.get_json(&format!("{}{query}", s.twin())).await;
    let trial_beta = assert_fitted_to(&trial, PICK);
    assert_ne!(trial_beta, proposed_beta);
    assert_eq!(trial["trial"]["trial_onset_ma"], json!(PICK.0));
    assert_eq!(trial["picks"], json!([]));
    let page = s.app.get(&format!("{}{query}", s.page())).await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(
        page.body
            .contains("Showing a trial timing that is not saved"),
        "{}",
        page.body
    );
    // The event-1 form starts with the timing being looked at, so "Save" keeps it.
    for (field, value) in [("rift_onset_ma", PICK.0), ("rift_end_ma", PICK.1)] {
        let wanted =
            format!("name=\"{field}\" type=\"number\" step=\"any\" min=\"0\" value=\"{value}\"");
        assert!(page.body.contains(&wanted), "{wanted} in {}", page.body);
    }
    assert_eq!(
        s.app.database_content().await,
        stored,
        "a trial stores nothing"
    );
    assert_eq!(
        num(&stretching(&s.well_json().await)["beta"], "beta"),
        proposed_beta
    );

    // Saving that timing gives the fit the trial showed.
    saved(&s.save(&s.app, PICK, "draft", 0).await);
    assert_eq!(assert_fitted_to(&s.well_json().await, PICK), trial_beta);
}
