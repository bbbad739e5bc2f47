//! Writers wait for each other: an upload sent while colleagues save picks and post
//! comments is stored, every save and comment is answered without a server error, and
//! every write the server acknowledged is in the database afterwards.
//!
//! Every study, well, horizon and user name here is invented.

mod common;

use common::rift::{TROUGH_WELL, rift_study};
use common::tops::HEADER;
use common::{Agent, Answer, TestApp};
use futures_util::future::join_all;
use reqwest::StatusCode;
use sagline::auth::Role;
use serde_json::{Value, json};
use sqlx::Row;

/// Pick saves and comment posts sent alongside the uploads.
const PICK_TASKS: usize = 20;
const COMMENT_TASKS: usize = 20;
/// Wells in each big upload, four surfaces each: enough that its transaction is long.
const UPLOAD_WELLS: usize = 150;
/// How often one pick task tries again after being told the pick moved on (409).
const MAX_TRIES: usize = 200;

/// An invented tops file of `wells` wells named `<prefix>-<n>`.
fn big_tops(prefix: &str, wells: usize) -> String {
    let mut csv = format!("{HEADER}\n");
    for n in 1..=wells {
        let shift = (n % 17) as f64 * 5.0;
        csv.push_str(&format!(
            "{prefix}-{n},Sea floor,{},0,shale,,,,\n\
             {prefix}-{n},Top Clay,{},20,shale,0,50,,\n\
             {prefix}-{n},Top Sand,{},60,sandstone,0,20,,\n\
             {prefix}-{n},Top Basement,{},120,,,,,\n",
            80.0 + shift,
            700.0 + shift,
            1500.0 + shift,
            2600.0 + shift,
        ));
    }
    csv
}

/// Save rift event 1 of `well` until the save is acknowledged, starting from version 0
/// and taking the stored version from each refusal. Returns the acknowledged answer's
/// JSON; panics on any answer other than 200 or 409.
async fn save_until_acknowledged(agent: &Agent, path: &str, task: usize) -> Value {
    // Two rift ends at surface ages of the trough well (tests/common/rift.rs).
    let end = if task.is_multiple_of(2) { 66.0 } else { 56.0 };
    let mut version = 0;
    for _ in 0..MAX_TRIES {
        let body = json!({ "rift_onset_ma": 165.3, "rift_end_ma": end, "model": "uniform", "state": "draft", "version": version });
        let answer: Answer = agent.put_json(path, &body).await;
        match answer.status {
            StatusCode::OK => return answer.json(),
            StatusCode::CONFLICT => {
                version = answer.json()["current"]["version"]
                    .as_i64()
                    .unwrap_or_else(|| {
                        panic!("a refusal names the stored version: {}", answer.body)
                    });
            }
            other => panic!("pick save {task} answered {other}: {}", answer.body),
        }
    }
    panic!("pick save {task} was refused {MAX_TRIES} times");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 4)]
async fn uploads_during_pick_saves_and_comments_all_succeed_and_nothing_acknowledged_is_lost() {
    let app = TestApp::empty().await;
    let review_study = rift_study(&app, "Tarn Trough busy day").await;
    let well = app.well_id(review_study, TROUGH_WELL).await;
    let upload_study = app.create_study("Orrin Shelf busy day").await;
    let interpreter = app.sign_in_as(Role::Interpreter).await;
    let pick_path = format!("/api/studies/{review_study}/wells/{well}/picks/1");
    let comment_path = format!("/api/studies/{review_study}/wells/{well}/comments");

    let uploads = async {
        let first = big_tops("Orrin", UPLOAD_WELLS);
        let second = big_tops("Pellam", UPLOAD_WELLS);
        tokio::join!(
            app.upload_tops(upload_study, &first),
            interpreter.upload_tops(upload_study, &second)
        )
    };
    let picks = join_all((0..PICK_TASKS).map(|task| {
        let agent = if task.is_multiple_of(2) {
            &*app
        } else {
            &interpreter
        };
        save_until_acknowledged(agent, &pick_path, task)
    }));
    let comments = join_all((0..COMMENT_TASKS).map(|task| {
        let agent = if task.is_multiple_of(2) {
            &*app
        } else {
            &interpreter
        };
        let path = comment_path.clone();
        async move {
            let body = format!("busy-day note {task}");
            let answer = agent.post_json(&path, &json!({ "body": body })).await;
            (body, answer)
        }
    }));
    let ((first_upload, second_upload), saved_picks, posted) =
        tokio::join!(uploads, picks, comments);

    // The uploads: both stored, every well in the database.
    for (name, answer) in [("first", &first_upload), ("second", &second_upload)] {
        assert_eq!(
            answer.status,
            StatusCode::OK,
            "{name} upload: {}",
            answer.body
        );
    }
    let stored_wells: i64 = sqlx::query_scalar("SELECT count(*) FROM wells WHERE study_id = ?")
        .bind(upload_study)
        .fetch_one(&app.pool)
        .await
        .expect("count wells");
    assert_eq!(stored_wells, 2 * UPLOAD_WELLS as i64);
    let stored_surfaces: i64 = sqlx::query_scalar(
        "SELECT count(*) FROM surfaces JOIN wells ON wells.id = surfaces.well_id
         WHERE wells.study_id = ?",
    )
    .bind(upload_study)
    .fetch_one(&app.pool)
    .await
    .expect("count surfaces");
    assert_eq!(stored_surfaces, 2 * 4 * UPLOAD_WELLS as i64);

    // The pick saves: each acknowledged save made its own version, 1 to PICK_TASKS,
    // and the stored pick is the last of them.
    let mut versions: Vec<i64> = saved_picks
        .iter()
        .map(|p| p["version"].as_i64().expect("saved version"))
        .collect();
    versions.sort_unstable();
    assert_eq!(versions, (1..=PICK_TASKS as i64).collect::<Vec<_>>());
    let stored =
        sqlx::query("SELECT version, rift_end_ma FROM picks WHERE well_id = ? AND event = 1")
            .bind(well)
            .fetch_one(&app.pool)
            .await
            .expect("the stored pick");
    assert_eq!(stored.get::<i64, _>("version"), PICK_TASKS as i64);
    let last = saved_picks
        .iter()
        .find(|p| p["version"] == PICK_TASKS as i64)
        .expect("the last save");
    assert_eq!(
        stored.get::<f64, _>("rift_end_ma"),
        last["rift_end_ma"].as_f64().expect("rift end")
    );
    let logged_saves: i64 = sqlx::query_scalar(
        "SELECT count(*) FROM activity WHERE study_id = ? AND action IN ('pick', 'pick state')",
    )
    .bind(review_study)
    .fetch_one(&app.pool)
    .await
    .expect("count logged saves");
    assert_eq!(
        logged_saves, PICK_TASKS as i64,
        "one log entry per acknowledged save"
    );

    // The comments: every post answered 201 and stored under the id it was given.
    for (body, answer) in &posted {
        assert_eq!(
            answer.status,
            StatusCode::CREATED,
            "comment {body}: {}",
            answer.body
        );
        let id = answer.json()["id"].as_i64().expect("comment id");
        let stored: String = sqlx::query_scalar("SELECT body FROM comments WHERE id = ?")
            .bind(id)
            .fetch_one(&app.pool)
            .await
            .unwrap_or_else(|e| panic!("comment {id} ({body}) is not stored: {e}"));
        assert_eq!(&stored, body);
    }
    let stored_comments: i64 =
        sqlx::query_scalar("SELECT count(*) FROM comments WHERE well_id = ?")
            .bind(well)
            .fetch_one(&app.pool)
            .await
            .expect("count comments");
    assert_eq!(stored_comments, COMMENT_TASKS as i64);
}

/// Two people creating a study of the same name at the same moment: one gets the study,
/// every other answer is 409 with a message naming the clash, never a server error, and
/// one study of that name exists afterwards.
#[tokio::test]
async fn creating_the_same_study_name_at_once_is_one_study_and_conflicts() {
    let app = TestApp::empty().await;
    let second_admin = app.sign_in_as(Role::Admin).await;
    let name = "Quell Basin twin start";
    let body = json!({ "name": name, "description": "an invented study" });
    let answers: Vec<Answer> = join_all((0..12).map(|i| {
        let agent = if i % 2 == 0 { &*app } else { &second_admin };
        agent.post_json("/api/studies", &body)
    }))
    .await;
    let created = answers
        .iter()
        .filter(|a| a.status == StatusCode::OK)
        .count();
    assert_eq!(
        created,
        1,
        "{:?}",
        answers.iter().map(|a| a.status).collect::<Vec<_>>()
    );
    for a in answers.iter().filter(|a| a.status != StatusCode::OK) {
        assert_eq!(a.status, StatusCode::CONFLICT, "{}", a.body);
        assert!(a.body.contains("already exists"), "{}", a.body);
    }
    let list = app.get_json("/api/studies").await;
    let same = list["studies"]
        .as_array()
        .expect("a list of studies")
        .iter()
        .filter(|s| s["name"] == name)
        .count();
    assert_eq!(same, 1, "{list}");
}
