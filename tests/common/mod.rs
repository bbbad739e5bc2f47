//! A running Sagline server for integration tests: a fresh SQLite database in a
//! temporary directory, the app served on 127.0.0.1 port 0, and helpers that read
//! like sentences (`app.create_study("…")`, `app.upload_tops(study, csv)`).
//!
//! A `TestApp` is signed in as an admin (`ADMIN_NAME`) and sends its session's CSRF
//! token on every change; `app.sign_in_as(Role::Viewer)` and `app.anonymous()` give
//! other clients, each with a cookie jar of its own.
//!
//! Each test binary uses only some of these helpers, hence the `dead_code` allowance.
#![allow(dead_code)]

pub mod rift;
pub mod tops;

use reqwest::header::{CONTENT_TYPE, LOCATION};
use reqwest::multipart::{Form, Part};
use reqwest::{Client, Method, RequestBuilder, Response, StatusCode, Url};
use sagline::auth::Role;
use serde_json::Value;
use sqlx::{Row, SqlitePool};
use std::ops::Deref;
use tempfile::TempDir;
use tokio::net::TcpListener;
use tokio::task::JoinHandle;

/// The admin every `TestApp` is signed in as (an invented name).
pub const ADMIN_NAME: &str = "test-admin";
/// Its password (invented; long enough for the password rules).
pub const ADMIN_PASSWORD: &str = "slate-quarry-42-admin";
/// The password of the accounts `sign_in_as` makes.
pub const MEMBER_PASSWORD: &str = "slate-quarry-42-member";
/// The header the CSRF token travels in.
pub const CSRF_HEADER: &str = "X-CSRF-Token";
/// Tables of sign-in bookkeeping, which change as requests come and go.
pub const SESSION_TABLES: [&str; 2] = ["sessions", "sign_in_throttle"];

/// The app on a port of its own, with its database, and an admin signed in.
pub struct TestApp {
    /// The app's database (the same file the server writes).
    pub pool: SqlitePool,
    /// The signed-in admin's client; `TestApp` dereferences to it.
    pub admin: Agent,
    /// The demo study's id when the app was started with it.
    pub demo_study: Option<i64>,
    /// The state the server runs with (a clone: the same database, cache and live
    /// streams), so tests can read e.g. `state.cache.stats()`.
    pub state: sagline::web::AppState,
    server: JoinHandle<std::io::Result<()>>,
    // Dropped last: the database file lives here.
    _dir: TempDir,
}

impl Drop for TestApp {
    fn drop(&mut self) {
        self.server.abort();
    }
}

impl Deref for TestApp {
    type Target = Agent;

    fn deref(&self) -> &Agent {
        &self.admin
    }
}

/// A client of the app with a cookie jar of its own: anonymous, or signed in and then
/// sending its session's CSRF token on every change.
#[derive(Clone)]
pub struct Agent {
    /// `http://127.0.0.1:<port>`, without a trailing slash.
    pub base: String,
    /// A client that does not follow redirects, so tests see where they point.
    pub client: Client,
    /// Sent as `X-CSRF-Token` on POST, PUT, PATCH and DELETE (nothing when `None`).
    pub csrf: Option<String>,
}

/// An answer read whole: its status, `Location` header and body text.
#[derive(Debug)]
pub struct Answer {
    pub status: StatusCode,
    pub location: Option<String>,
    pub content_type: String,
    pub body: String,
    pub headers: reqwest::header::HeaderMap,
}

impl Answer {
    /// A response header as text, if present.
    pub fn header(&self, name: &str) -> Option<String> {
        self.headers
            .get(name)
            .and_then(|v| v.to_str().ok())
            .map(str::to_string)
    }

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
        let headers = response.headers().clone();
        let body = response.text().await.expect("response body");
        Answer {
            status,
            location,
            content_type,
            body,
            headers,
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
        TestApp::start(false, sagline::server::ConnectionSettings::default()).await
    }

    /// The app with an empty database, served with these connection settings
    /// (shortened timeouts, a small cap).
    pub async fn with_connections(settings: sagline::server::ConnectionSettings) -> TestApp {
        TestApp::start(false, settings).await
    }

    /// The app with the demo study seeded (its id in `demo_study`).
    pub async fn with_demo() -> TestApp {
        TestApp::start(true, sagline::server::ConnectionSettings::default()).await
    }

    async fn start(demo: bool, settings: sagline::server::ConnectionSettings) -> TestApp {
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
        sagline::services::accounts::create_user(
            &pool,
            ADMIN_NAME,
            Role::Admin,
            Some(ADMIN_PASSWORD),
            "test setup",
        )
        .await
        .expect("create the test admin");
        let listener = TcpListener::bind("127.0.0.1:0").await.expect("bind port 0");
        let base = format!("http://{}", listener.local_addr().expect("local address"));
        let state = sagline::web::AppState::new(pool.clone());
        let server = tokio::spawn(sagline::server::serve_with(
            listener,
            state.clone(),
            settings,
            std::future::pending(),
        ));
        let mut admin = Agent::new(&base);
        let answer = admin.sign_in(ADMIN_NAME, ADMIN_PASSWORD).await;
        assert_eq!(
            answer.status,
            StatusCode::SEE_OTHER,
            "sign in: {}",
            answer.body
        );
        TestApp {
            pool,
            admin,
            demo_study,
            state,
            server,
            _dir: dir,
        }
    }

    /// A client with no session.
    pub fn anonymous(&self) -> Agent {
        Agent::new(&self.base)
    }

    /// Make an account with `MEMBER_PASSWORD` (straight through the service).
    pub async fn add_user(&self, name: &str, role: Role) {
        sagline::services::accounts::create_user(
            &self.pool,
            name,
            role,
            Some(MEMBER_PASSWORD),
            "test setup",
        )
        .await
        .expect("create a test account");
    }

    /// A new client signed in with an account of this role (`member-<role>`, made on
    /// first use).
    pub async fn sign_in_as(&self, role: Role) -> Agent {
        let name = format!("member-{role}");
        if sagline::store::users::find_by_name(&self.pool, &name)
            .await
            .expect("look up a test account")
            .is_none()
        {
            self.add_user(&name, role).await;
        }
        let mut agent = self.anonymous();
        let answer = agent.sign_in(&name, MEMBER_PASSWORD).await;
        assert_eq!(
            answer.status,
            StatusCode::SEE_OTHER,
            "sign in as {name}: {}",
            answer.body
        );
        agent
    }

    /// Every row of every table (but the migrations' own and the sign-in bookkeeping of
    /// `SESSION_TABLES`), each column `quote()`d, ordered by table name and rowid: two
    /// equal dumps mean unchanged data.
    pub async fn database_content(&self) -> String {
        self.dump(&SESSION_TABLES).await
    }

    /// Every row of every table, sessions and sign-in failures included.
    pub async fn full_dump(&self) -> String {
        self.dump(&[]).await
    }

    async fn dump(&self, leave_out: &[&str]) -> String {
        let tables: Vec<String> = sqlx::query_scalar(
            "SELECT name FROM sqlite_master WHERE type = 'table'
             AND name NOT LIKE 'sqlite_%' AND name <> '_sqlx_migrations' ORDER BY name",
        )
        .fetch_all(&self.pool)
        .await
        .expect("list tables");
        let mut dump = String::new();
        for table in tables.iter().filter(|t| !leave_out.contains(&t.as_str())) {
            let columns: Vec<String> =
                sqlx::query_scalar("SELECT name FROM pragma_table_info(?) ORDER BY cid")
                    .bind(table)
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

impl Agent {
    /// An anonymous client of the app at `base`.
    pub fn new(base: &str) -> Agent {
        let client = Client::builder()
            .no_proxy()
            .cookie_store(true)
            .redirect(reqwest::redirect::Policy::none())
            .build()
            .expect("HTTP client");
        Agent {
            base: base.to_string(),
            client,
            csrf: None,
        }
    }

    /// An anonymous client of the app at `base` whose connections come from `address`
    /// (another loopback address, e.g. `127.0.0.2`: a second machine, as the server sees it).
    pub fn from_address(base: &str, address: std::net::IpAddr) -> Agent {
        let client = Client::builder()
            .no_proxy()
            .cookie_store(true)
            .redirect(reqwest::redirect::Policy::none())
            .local_address(address)
            .build()
            .expect("HTTP client");
        Agent {
            base: base.to_string(),
            client,
            csrf: None,
        }
    }

    /// The same session (cookie jar shared) sending no CSRF token.
    pub fn without_csrf(&self) -> Agent {
        Agent {
            csrf: None,
            ..self.clone()
        }
    }

    /// The same session sending `token` as its CSRF token.
    pub fn with_csrf(&self, token: &str) -> Agent {
        Agent {
            csrf: Some(token.to_string()),
            ..self.clone()
        }
    }

    /// Sign in through the form (`POST /login`); on success, keep the session cookie
    /// and read the CSRF token from `GET /api/session`. Returns the sign-in's answer.
    pub async fn sign_in(&mut self, name: &str, password: &str) -> Answer {
        let answer = self
            .post_form("/login", &[("name", name), ("password", password)])
            .await;
        if answer.status == StatusCode::SEE_OTHER {
            let session = self.get_json("/api/session").await;
            self.csrf = Some(
                session["csrf_token"]
                    .as_str()
                    .expect("csrf_token")
                    .to_string(),
            );
        }
        answer
    }

    pub fn url(&self, path: &str) -> String {
        format!("{}{path}", self.base)
    }

    /// A request, carrying the CSRF token when it changes something.
    pub fn request(&self, method: Method, path: &str) -> RequestBuilder {
        let changes = !matches!(method, Method::GET | Method::HEAD | Method::OPTIONS);
        let request = self.client.request(method, self.url(path));
        match &self.csrf {
            Some(token) if changes => request.header(CSRF_HEADER, token),
            _ => request,
        }
    }

    /// Send a request and read the answer whole.
    pub async fn send(&self, request: RequestBuilder) -> Answer {
        Answer::read(request.send().await.expect("send the request")).await
    }

    /// `GET path`.
    pub async fn get(&self, path: &str) -> Answer {
        self.send(self.request(Method::GET, path)).await
    }

    /// `GET path`, expecting 200 and JSON.
    pub async fn get_json(&self, path: &str) -> Value {
        let answer = self.get(path).await;
        assert_eq!(answer.status, StatusCode::OK, "GET {path}: {}", answer.body);
        answer.json()
    }

    /// `PUT path` with a JSON body.
    pub async fn put_json(&self, path: &str, body: &Value) -> Answer {
        self.send(self.request(Method::PUT, path).json(body)).await
    }

    /// `POST path` with a JSON body.
    pub async fn post_json(&self, path: &str, body: &Value) -> Answer {
        self.send(self.request(Method::POST, path).json(body)).await
    }

    /// `POST path` with a form body, as a browser sends it.
    pub async fn post_form(&self, path: &str, fields: &[(&str, &str)]) -> Answer {
        let request = self
            .request(Method::POST, path)
            .header(CONTENT_TYPE, "application/x-www-form-urlencoded")
            .body(form_body(fields));
        self.send(request).await
    }

    /// `POST path` with a multipart body.
    pub async fn post_multipart(&self, path: &str, form: Form) -> Answer {
        self.send(self.request(Method::POST, path).multipart(form))
            .await
    }

    /// Create a study through the API and return its id.
    pub async fn create_study(&self, name: &str) -> i64 {
        let answer = self
            .post_json(
                "/api/studies",
                &serde_json::json!({ "name": name, "description": "an invented study for a test" }),
            )
            .await;
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
