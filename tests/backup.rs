//! `sagline backup` run as an administrator runs it: the real binary, copying the
//! database of a running app while the team writes to it. The copy, restored the way
//! the README says (copied over the database file and opened by the server), holds
//! every write the server acknowledged before the backup began; a missing database and
//! an existing target are refused, and nothing is created or replaced.
//!
//! Every study, well and user name here is invented.

mod common;

use common::TestApp;
use common::rift::{TROUGH_WELL, rift_study};
use reqwest::StatusCode;
use sagline::auth::Role;
use serde_json::json;
use sqlx::{Row, SqlitePool};
use std::path::Path;
use std::process::{Command, Output};

/// The tables every acknowledged write of this test lands in.
const DATA_TABLES: [&str; 5] = ["wells", "surfaces", "picks", "comments", "activity"];

fn sagline(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sagline"))
        .args(args)
        .output()
        .expect("run the sagline binary")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn path_str(path: &Path) -> &str {
    path.to_str().expect("a UTF-8 temporary path")
}

/// Every row of `table`, each column `quote()`d, in rowid order.
async fn rows(pool: &SqlitePool, table: &str) -> Vec<String> {
    let columns: Vec<String> =
        sqlx::query_scalar("SELECT name FROM pragma_table_info(?) ORDER BY cid")
            .bind(table)
            .fetch_all(pool)
            .await
            .expect("table columns");
    assert!(!columns.is_empty(), "no table {table}");
    let row_text = columns
        .iter()
        .map(|c| format!("quote(\"{c}\")"))
        .collect::<Vec<_>>()
        .join(" || ',' || ");
    sqlx::query(&format!(
        "SELECT {row_text} FROM \"{table}\" ORDER BY rowid"
    ))
    .fetch_all(pool)
    .await
    .expect("table rows")
    .iter()
    .map(|r| r.get::<String, _>(0))
    .collect()
}

/// "Restore" as the README says: copy the backup over a database file and open it as
/// the server does (`store::open`).
async fn restore(backup: &Path, database: &Path) -> SqlitePool {
    std::fs::copy(backup, database).expect("copy the backup over the database file");
    sagline::store::open(database)
        .await
        .expect("open the restored database")
}

#[tokio::test(flavor = "multi_thread", worker_threads = 4)]
async fn a_backup_taken_while_the_team_writes_restores_every_acknowledged_write() {
    let app = TestApp::empty().await;
    let study = rift_study(&app, "Tarn Trough archive").await;
    let well = app.well_id(study, TROUGH_WELL).await;
    let interpreter = app.sign_in_as(Role::Interpreter).await;
    let twin = format!("/api/studies/{study}/wells/{well}");

    // Acknowledged before the backup: a pick, its update and three comments.
    let pick = json!({ "rift_onset_ma": 165.3, "rift_end_ma": 66.0, "model": "uniform", "state": "draft", "version": 0 });
    let saved = interpreter
        .put_json(&format!("{twin}/picks/1"), &pick)
        .await;
    assert_eq!(saved.status, StatusCode::OK, "{}", saved.body);
    let moved = json!({ "rift_onset_ma": 165.3, "rift_end_ma": 56.0, "model": "uniform", "state": "draft", "version": 1 });
    let saved = app.put_json(&format!("{twin}/picks/1"), &moved).await;
    assert_eq!(saved.status, StatusCode::OK, "{}", saved.body);
    for n in 0..3 {
        let posted = interpreter
            .post_json(
                &format!("{twin}/comments"),
                &json!({ "body": format!("archive note {n}") }),
            )
            .await;
        assert_eq!(posted.status, StatusCode::CREATED, "{}", posted.body);
    }
    let mut before = Vec::new();
    for table in DATA_TABLES {
        before.push(rows(&app.pool, table).await);
    }

    // The backup runs while more comments are being posted.
    let dir = tempfile::tempdir().expect("temporary directory");
    let backup = dir.path().join("archive.db");
    let db = app.pool.connect_options().get_filename().to_path_buf();
    let (db_arg, out_arg) = (path_str(&db).to_string(), path_str(&backup).to_string());
    let run = tokio::task::spawn_blocking(move || {
        sagline(&["backup", "--db", &db_arg, "--out", &out_arg])
    });
    let during = futures_util::future::join_all((0..10).map(|n| {
        let path = format!("{twin}/comments");
        let interpreter = &interpreter;
        async move {
            let body = json!({ "body": format!("late note {n}") });
            interpreter.post_json(&path, &body).await.status
        }
    }))
    .await;
    let out = run.await.expect("the backup task");
    assert!(out.status.success(), "backup failed: {}", text(&out.stderr));
    assert!(
        text(&out.stdout).contains("archive.db"),
        "names the copy: {}",
        text(&out.stdout)
    );
    assert!(
        during.iter().all(|s| *s == StatusCode::CREATED),
        "posts during the backup: {during:?}"
    );
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .expect("list the backup directory")
        .map(|e| e.expect("entry").file_name())
        .collect();
    assert_eq!(
        leftovers,
        ["archive.db"],
        "only the copy, no temporary file"
    );

    let restored = restore(&backup, &dir.path().join("restored.db")).await;
    for (table, rows_before) in DATA_TABLES.iter().zip(&before) {
        let copied = rows(&restored, table).await;
        let live = rows(&app.pool, table).await;
        // Everything acknowledged before the backup began is in the copy, as stored.
        assert!(
            copied.len() >= rows_before.len() && copied[..rows_before.len()] == rows_before[..],
            "{table}: the copy lost acknowledged rows\nbefore: {rows_before:#?}\ncopy: {copied:#?}"
        );
        // The copy is one moment of the live database: each of its rows is there as is.
        assert_eq!(
            copied[..],
            live[..copied.len()],
            "{table}: not a copy of the live rows"
        );
    }
    let stored_pick: f64 =
        sqlx::query_scalar("SELECT rift_end_ma FROM picks WHERE well_id = ? AND event = 1")
            .bind(well)
            .fetch_one(&restored)
            .await
            .expect("the restored pick");
    assert_eq!(stored_pick, 56.0, "the pick's last acknowledged save");
    restored.close().await;
}

#[test]
fn a_missing_database_is_refused_and_not_created() {
    let dir = tempfile::tempdir().expect("temporary directory");
    let missing = dir.path().join("mistyped.db");
    let target = dir.path().join("copy.db");
    let out = sagline(&[
        "backup",
        "--db",
        path_str(&missing),
        "--out",
        path_str(&target),
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains("no database at") && stderr.contains("mistyped.db"),
        "{stderr}"
    );
    assert!(out.stdout.is_empty(), "{}", text(&out.stdout));
    assert!(!missing.exists(), "the source must not be created");
    assert!(!target.exists(), "no copy without a source");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn an_existing_target_is_kept_unless_forced() {
    let app = TestApp::empty().await;
    app.create_study("Orrin Shelf archive").await;
    let dir = tempfile::tempdir().expect("temporary directory");
    let target = dir.path().join("earlier.db");
    std::fs::write(&target, b"an earlier backup").expect("write the target");
    let db = app.pool.connect_options().get_filename().to_path_buf();
    let args = ["backup", "--db", path_str(&db), "--out", path_str(&target)];

    let refused = sagline(&args);
    assert_eq!(refused.status.code(), Some(1), "{}", text(&refused.stderr));
    let stderr = text(&refused.stderr);
    assert!(
        stderr.contains("already exists") && stderr.contains("--force"),
        "{stderr}"
    );
    assert_eq!(
        std::fs::read(&target).expect("read the target"),
        b"an earlier backup"
    );

    let forced = sagline(&[&args[..], &["--force"]].concat());
    assert!(forced.status.success(), "{}", text(&forced.stderr));
    let restored = restore(&target, &dir.path().join("restored.db")).await;
    let names: Vec<String> = sqlx::query_scalar("SELECT name FROM studies")
        .fetch_all(&restored)
        .await
        .expect("studies of the copy");
    assert_eq!(names, ["Orrin Shelf archive"]);
    restored.close().await;
}

#[test]
fn a_file_that_is_not_a_database_is_refused() {
    let dir = tempfile::tempdir().expect("temporary directory");
    let notes = dir.path().join("notes.txt");
    std::fs::write(
        &notes,
        "not a database, just some invented notes\n".repeat(200),
    )
    .expect("write the file");
    let target = dir.path().join("copy.db");
    let out = sagline(&[
        "backup",
        "--db",
        path_str(&notes),
        "--out",
        path_str(&target),
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("is not a Sagline database"),
        "{}",
        text(&out.stderr)
    );
    assert!(!target.exists());
}

#[tokio::test]
async fn the_database_itself_is_not_a_target() {
    let app = TestApp::empty().await;
    let db = app.pool.connect_options().get_filename().to_path_buf();
    let out = sagline(&[
        "backup",
        "--db",
        path_str(&db),
        "--out",
        path_str(&db),
        "--force",
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("the database itself"),
        "{}",
        text(&out.stderr)
    );
    assert_eq!(app.get("/api/studies").await.status, StatusCode::OK);
}
