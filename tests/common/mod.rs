//! A running Sagline server for integration tests: a fresh SQLite database in a
//! temporary directory, the app served on 127.0.0.1 port 0, and helpers that read
//! like sentences (`app.create_study("…")`, `app.upload_tops(study, csv)`).
//!
//! Each test binary uses only some of these helpers, hence the `dead_code` allowance.
#![allow(dead_code)]

pub mod tops;

use reqwest::header::{CONTENT_TYPE, LOCATION};
use reqwest::multipart::{Form, Part};
use reqwest::{Client, Response, StatusCode, Url};
use serde_json::Value;
use sqlx::{Row, SqlitePool};
use tempfile::TempDir;
use tokio::net::TcpListener;
use tokio::task::JoinHandle;

/// The app on a port of its own, with its database.
pub struct TestApp {
    /// The app's database (the same file the server writes).
    pub pool: SqlitePool,
    /// `http://127.0.0.1:<port>`, without a trailing slash.
    pub base: String,
    /// A client that does not follow redirects, so tests see where they point.
    pub client: Client,
    /// The demo study's id when the app was started with it.
    pub demo_study: Option<i64>,
    server: JoinHandle<std::io::Result<()>>,
    // Dropped last: the database file lives here.
    _dir: TempDir,
}

impl Drop for TestApp {
    fn drop(&mut self) {
        self.server.abort();
    }
}

/// An answer read whole: its status, `Location` header and body text.
#[derive(Debug)]
pub struct Answer {
    pub status: StatusCode,
    pub location: Option<String>,
    pub content_type: String,
    pub body: String,
}

impl Answer {
    async fn read(response: Response) -> Answer {
        let status = response.status();
        let header = |name| {
            response
                .headers()
                .get(name)
                .and_then(|v| v.to_str().ok())
                .map(str::to_string)
        };
        let location = header(LOCATION);
        let content_type = header(CONTENT_TYPE).unwrap_or_default();
        let body = response.text().await.expect("response body");
        Answer {
            status,
            location,
            content_type,
            body,
        }
    }

    /// The body as JSON (panics with the body when it is not).
    pub fn json(&self) -> Value {
        serde_json::from_str(&self.body)
            .unwrap_or_else(|e| panic!("not JSON ({e}); status {}: {}", self.status, self.body))
    }
}

impl TestApp {
    /// The app with an empty database.
    pub async fn empty() -> TestApp {
        TestApp::start(false).await
    }

    /// The app with the demo study seeded (its id in `demo_study`).
    pub async fn with_demo() -> TestApp {
        TestApp::start(true).await
    }

    async fn start(demo: bool) -> TestApp {
        let dir = tempfile::tempdir().expect("temporary directory");
        let pool = sagline::store::open(&dir.path().join("sagline.db"))
            .await
            .expect("open the database");
        let demo_study = if demo {
            Some(
                sagline::demo::seed(&pool)
                    .await
                    .expect("seed the demo study"),
            )
        } else {
            None
        };
        let listener = TcpListener::bind("127.0.0.1:0").await.expect("bind port 0");
        let base = format!("http://{}", listener.local_addr().expect("local address"));
        let state = sagline::web::AppState::new(pool.clone());
        let server = tokio::spawn(sagline::server::serve(
            listener,
            state,
            std::future::pending(),
        ));
        let client = Client::builder()
            .no_proxy()
            .redirect(reqwest::redirect::Policy::none())
            .build()
            .expect("HTTP client");
        TestApp {
            pool,
            base,
            client,
            demo_study,
            server,
            _dir: dir,
        }
    }

    pub fn url(&self, path: &str) -> String {
        format!("{}{path}", self.base)
    }

    /// `GET path`.
    pub async fn get(&self, path: &str) -> Answer {
        Answer::read(self.client.get(self.url(path)).send().await.expect("GET")).await
    }

    /// `GET path`, expecting 200 and JSON.
    pub async fn get_json(&self, path: &str) -> Value {
        let answer = self.get(path).await;
        assert_eq!(answer.status, StatusCode::OK, "GET {path}: {}", answer.body);
        answer.json()
    }

    /// `PUT path` with a JSON body.
    pub async fn put_json(&self, path: &str, body: &Value) -> Answer {
        Answer::read(
            self.client
                .put(self.url(path))
                .json(body)
                .send()
                .await
                .expect("PUT"),
        )
        .await
    }

    /// `POST path` with a form body, as a browser sends it.
    pub async fn post_form(&self, path: &str, fields: &[(&str, &str)]) -> Answer {
        let response = self
            .client
            .post(self.url(path))
            .header(CONTENT_TYPE, "application/x-www-form-urlencoded")
            .body(form_body(fields))
            .send()
            .await
            .expect("POST form");
        Answer::read(response).await
    }

    /// `POST path` with a multipart body.
    pub async fn post_multipart(&self, path: &str, form: Form) -> Answer {
        Answer::read(
            self.client
                .post(self.url(path))
                .multipart(form)
                .send()
                .await
                .expect("POST multipart"),
        )
        .await
    }

    /// Create a study through the API and return its id.
    pub async fn create_study(&self, name: &str) -> i64 {
        let response = self
            .client
            .post(self.url("/api/studies"))
            .json(
                &serde_json::json!({ "name": name, "description": "an invented study for a test" }),
            )
            .send()
            .await
            .expect("POST /api/studies");
        let answer = Answer::read(response).await;
        assert_eq!(
            answer.status,
            StatusCode::OK,
            "create study: {}",
            answer.body
        );
        answer.json()["id"].as_i64().expect("study id")
    }

    /// Upload a tops file (as `tops.csv`) through `POST /api/studies/{id}/tops`.
    pub async fn upload_tops(&self, study: i64, csv: &str) -> Answer {
        self.upload_tops_with(study, csv.as_bytes().to_vec(), &[])
            .await
    }

    /// Upload tops bytes with extra form fields (`replace`, `depth_unit`, `map.<header>`…).
    pub async fn upload_tops_with(
        &self,
        study: i64,
        bytes: Vec<u8>,
        fields: &[(&str, &str)],
    ) -> Answer {
        // Field names go as written (`map.Well Name`), as a browser sends them.
        let mut form = Form::new()
            .percent_encode_noop()
            .part("tops", csv_part(bytes, "tops.csv"));
        for &(name, value) in fields {
            form = form.text(name.to_string(), value.to_string());
        }
        self.post_multipart(&format!("/api/studies/{study}/tops"), form)
            .await
    }

    /// The id of a study's well, found through the study's JSON twin.
    pub async fn well_id(&self, study: i64, name: &str) -> i64 {
        let overview = self.get_json(&format!("/api/studies/{study}")).await;
        overview["wells"]
            .as_array()
            .expect("wells array")
            .iter()
            .find(|w| w["name"] == name)
            .unwrap_or_else(|| panic!("no well {name} in study {study}: {overview}"))["id"]
            .as_i64()
            .expect("well id")
    }

    /// The well's JSON twin, found by name.
    pub async fn well_json(&self, study: i64, name: &str) -> Value {
        let id = self.well_id(study, name).await;
        self.get_json(&format!("/api/studies/{study}/wells/{id}"))
            .await
    }

    /// A study's activity log, newest first.
    pub async fn activity(&self, study: i64) -> Vec<Value> {
        let log = self
            .get_json(&format!("/api/studies/{study}/activity"))
            .await;
        log["entries"].as_array().expect("entries array").clone()
    }

    /// Every row of every table (but the migrations' own), each column `quote()`d,
    /// ordered by table name and rowid: two equal dumps mean an unchanged database.
    pub async fn database_content(&self) -> String {
        let tables: Vec<String> = sqlx::query_scalar(
            "SELECT name FROM sqlite_master WHERE type = 'table'
             AND name NOT LIKE 'sqlite_%' AND name <> '_sqlx_migrations' ORDER BY name",
        )
        .fetch_all(&self.pool)
        .await
        .expect("list tables");
        let mut dump = String::new();
        for table in tables {
            let columns: Vec<String> =
                sqlx::query_scalar("SELECT name FROM pragma_table_info(?) ORDER BY cid")
                    .bind(&table)
                    .fetch_all(&self.pool)
                    .await
                    .expect("table columns");
            let row_text = columns
                .iter()
                .map(|c| format!("quote(\"{c}\")"))
                .collect::<Vec<_>>()
                .join(" || ',' || ");
            let rows = sqlx::query(&format!(
                "SELECT {row_text} FROM \"{table}\" ORDER BY rowid"
            ))
            .fetch_all(&self.pool)
            .await
            .expect("table rows");
            dump.push_str(&format!("[{table}] {}\n", columns.join(",")));
            for row in rows {
                dump.push_str(&row.get::<String, _>(0));
                dump.push('\n');
            }
        }
        dump
    }
}

/// A file part as a browser sends it.
pub fn csv_part(bytes: Vec<u8>, file_name: &str) -> Part {
    Part::bytes(bytes)
        .file_name(file_name.to_string())
        .mime_str("text/csv")
        .expect("CSV mime type")
}

/// `a=1&b=two+words`: fields encoded as a browser encodes a form.
pub fn form_body(fields: &[(&str, &str)]) -> String {
    let mut url = Url::parse("http://form.invalid/").expect("placeholder URL");
    url.query_pairs_mut().extend_pairs(fields);
    url.query().unwrap_or_default().to_string()
}

/// The one problem of a refused upload's JSON answer, checking there is exactly one.
pub fn only_problem(answer: &Answer) -> Value {
    assert_eq!(
        answer.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "{}",
        answer.body
    );
    let body = answer.json();
    let problems = body["problems"].as_array().expect("problems array");
    assert_eq!(problems.len(), 1, "expected one problem: {body}");
    problems[0].clone()
}
