//! Speed of the study overview and well pages of a large study: an invented basin of
//! 1,000 forward-modelled wells of 60 surfaces, uploaded once through the tops API into
//! a fresh database, then served by the app as a signed-in admin sees it.
//!
//! - First render: a fresh server on the same database (an empty analysis cache), so
//!   the page pays for the analysis of what it shows (every well for the overview, one
//!   well for the well page). The overview's first render takes seconds, so it is timed
//!   a few times by hand and printed, not sampled by criterion.
//! - Cached: the same page again on a server that has rendered it once.
//!
//! Targets once cached: well page under 50 ms, overview under 300 ms.

mod common;

use common::{
    ADMIN_NAME, SURFACES_PER_WELL, WELLS, create_admin, invented_basin_tops, signed_in_admin,
};
use criterion::{Criterion, SamplingMode, criterion_group, criterion_main};
use reqwest::multipart::{Form, Part};
use reqwest::{Client, StatusCode};
use sqlx::SqlitePool;
use std::time::{Duration, Instant};
use tokio::runtime::Runtime;

/// The benchmark's admin (invented name and password).
/// How many first renders of the overview are timed.
const COLD_OVERVIEW_RUNS: usize = 3;

/// The app on a port of its own with a new `AppState` (so a new analysis cache) over
/// the study's database; stopped when dropped.
struct Server {
    base: String,
    handle: tokio::task::JoinHandle<std::io::Result<()>>,
}

impl Server {
    async fn start(pool: &SqlitePool) -> Server {
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind port 0");
        let base = format!("http://{}", listener.local_addr().expect("address"));
        let state = sagline::web::AppState::new(pool.clone());
        let handle = tokio::spawn(sagline::server::serve(
            listener,
            state,
            std::future::pending(),
        ));
        Server { base, handle }
    }

    /// GET a page and read it whole, expecting 200.
    async fn page(&self, client: &Client, path: &str) -> usize {
        let response = client
            .get(format!("{}{path}", self.base))
            .send()
            .await
            .expect("GET the page");
        let status = response.status();
        let body = response.text().await.expect("page body");
        assert_eq!(status, StatusCode::OK, "GET {path}: {body}");
        body.len()
    }
}

impl Drop for Server {
    fn drop(&mut self) {
        self.handle.abort();
    }
}

/// The uploaded study: its database, the signed-in admin's client, and the pages to time.
struct Study {
    pool: SqlitePool,
    client: Client,
    overview: String,
    well_page: String,
    _dir: tempfile::TempDir,
}

/// Create the database and the admin, sign in, upload the tops file through the API
/// (with the session's CSRF token) and find a well in the middle of the file.
async fn upload_study(tops: Vec<u8>) -> Study {
    let dir = tempfile::tempdir().expect("temporary directory");
    let pool = sagline::store::open(&dir.path().join("bench.db"))
        .await
        .expect("open the database");
    create_admin(&pool).await;
    let study = sagline::services::create_study(&pool, "Tarrow Basin (bench)", "", ADMIN_NAME)
        .await
        .expect("create the study");
    let server = Server::start(&pool).await;
    let (client, csrf) = signed_in_admin(&server.base).await;

    let part = Part::bytes(tops)
        .file_name("tarrow_tops.csv")
        .mime_str("text/csv")
        .expect("CSV mime type");
    let response = client
        .post(format!("{}/api/studies/{study}/tops", server.base))
        .header("X-CSRF-Token", csrf)
        .multipart(Form::new().part("tops", part))
        .send()
        .await
        .expect("POST the tops file");
    let status = response.status();
    let body: serde_json::Value = response.json().await.expect("JSON answer");
    assert!(status.is_success(), "{status}: {body}");
    assert_eq!(
        body["outcome"]["surfaces_stored"].as_u64(),
        Some((WELLS * SURFACES_PER_WELL) as u64),
        "{body}"
    );

    let wells: Vec<(i64, String)> = sqlx::query_as("SELECT id, name FROM wells ORDER BY name")
        .fetch_all(&pool)
        .await
        .expect("list the wells");
    assert_eq!(wells.len(), WELLS);
    let (well_id, _) = &wells[WELLS / 2];
    Study {
        overview: format!("/studies/{study}"),
        well_page: format!("/studies/{study}/wells/{well_id}"),
        pool,
        client,
        _dir: dir,
    }
}

/// Time `runs` first renders of `path`, each on a fresh server; (min, median, max).
fn first_renders(runtime: &Runtime, study: &Study, path: &str, runs: usize) -> [Duration; 3] {
    let mut times: Vec<Duration> = (0..runs)
        .map(|_| {
            runtime.block_on(async {
                let server = Server::start(&study.pool).await;
                let started = Instant::now();
                server.page(&study.client, path).await;
                started.elapsed()
            })
        })
        .collect();
    times.sort();
    [times[0], times[times.len() / 2], times[times.len() - 1]]
}

fn pages(c: &mut Criterion) {
    let runtime = Runtime::new().expect("tokio runtime");
    let study = runtime.block_on(upload_study(invented_basin_tops(WELLS).into_bytes()));

    let [min, median, max] = first_renders(&runtime, &study, &study.overview, COLD_OVERVIEW_RUNS);
    eprintln!(
        "pages/overview first render, fresh server ({COLD_OVERVIEW_RUNS} runs): \
         median {median:.2?} (min {min:.2?}, max {max:.2?})"
    );

    let mut group = c.benchmark_group("pages");
    group
        .sample_size(20)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(10));

    group.bench_function("well page, first render (fresh server)", |b| {
        b.iter_custom(|iterations| {
            runtime.block_on(async {
                let mut total = Duration::ZERO;
                for _ in 0..iterations {
                    let server = Server::start(&study.pool).await;
                    let started = Instant::now();
                    server.page(&study.client, &study.well_page).await;
                    total += started.elapsed();
                }
                total
            })
        })
    });

    let server = runtime.block_on(Server::start(&study.pool));
    for (name, path) in [
        ("overview, cached", &study.overview),
        ("well page, cached", &study.well_page),
    ] {
        runtime.block_on(server.page(&study.client, path));
        group.bench_function(name, |b| {
            b.iter(|| runtime.block_on(server.page(&study.client, path)))
        });
    }
    group.finish();
}

criterion_group!(benches, pages);
criterion_main!(benches);
