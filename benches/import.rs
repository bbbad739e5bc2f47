//! Speed of importing a large tops file: an invented 100,000-row file (2,000 wells
//! of 50 surfaces) sent through `POST /api/studies/{id}/tops` to a running server,
//! each time into a fresh database. Times the whole request: reading the multipart
//! body, validating every row and storing it in one transaction.
//!
//! Few samples, since one import takes seconds.

mod common;

use common::{create_admin, signed_in_admin};
use criterion::{Criterion, SamplingMode, Throughput, criterion_group, criterion_main};
use reqwest::multipart::{Form, Part};
use std::fmt::Write;
use std::time::{Duration, Instant};

const WELLS: usize = 2_000;
const SURFACES_PER_WELL: usize = 50;
const ROWS: usize = WELLS * SURFACES_PER_WELL;

/// The invented file: wells `Tamsin-0001`… with surfaces 25–95 m apart and 1.5 Myr
/// apart, lithologies cycling through a name, a mix and another case of a name,
/// water-depth ranges on every other surface.
fn invented_tops() -> Vec<u8> {
    let lithologies = [
        "shale",
        "sandstone",
        "shale:60;sandstone:40",
        "Chalk",
        "shaly sandstone",
    ];
    let mut csv =
        String::from("well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m\n");
    for w in 0..WELLS {
        let mut depth = 80.0 + (w % 37) as f64 * 3.0;
        for s in 0..SURFACES_PER_WELL {
            let lithology = if s + 1 == SURFACES_PER_WELL {
                ""
            } else {
                lithologies[(w + s) % lithologies.len()]
            };
            let (min, max) = if s % 2 == 1 {
                ("10".to_string(), format!("{}", 40 + s))
            } else {
                (String::new(), String::new())
            };
            writeln!(
                csv,
                "Tamsin-{w:04},Horizon {s:02},{depth:.1},{:.2},{lithology},{min},{max}",
                s as f64 * 1.5
            )
            .expect("write to a String");
            depth += 25.0 + ((w * 7 + s * 13) % 71) as f64;
        }
    }
    csv.into_bytes()
}

/// A server on a fresh database with one empty study and a signed-in admin client;
/// dropped after one import.
struct FreshServer {
    url: String,
    client: reqwest::Client,
    csrf: String,
    server: tokio::task::JoinHandle<std::io::Result<()>>,
    _dir: tempfile::TempDir,
}

impl FreshServer {
    async fn start() -> FreshServer {
        let dir = tempfile::tempdir().expect("temporary directory");
        let pool = sagline::store::open(&dir.path().join("bench.db"))
            .await
            .expect("open the database");
        create_admin(&pool).await;
        let study = sagline::services::create_study(&pool, "Tamsin Basin (bench)", "", "bench")
            .await
            .expect("create the study");
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind port 0");
        let base = format!("http://{}", listener.local_addr().expect("address"));
        let url = format!("{base}/api/studies/{study}/tops");
        let state = sagline::web::AppState::new(pool);
        let server = tokio::spawn(sagline::server::serve(
            listener,
            state,
            std::future::pending(),
        ));
        // Sign in outside the timed part: the session cookie and its CSRF token.
        let (client, csrf) = signed_in_admin(&base).await;
        FreshServer {
            url,
            client,
            csrf,
            server,
            _dir: dir,
        }
    }
}

impl Drop for FreshServer {
    fn drop(&mut self) {
        self.server.abort();
    }
}

fn import(c: &mut Criterion) {
    let tops = invented_tops();
    let runtime = tokio::runtime::Runtime::new().expect("tokio runtime");

    let mut group = c.benchmark_group("import");
    group
        .sample_size(10)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(30))
        .throughput(Throughput::Elements(ROWS as u64));
    group.bench_function("100k-row tops file through the upload API", |b| {
        b.iter_custom(|iterations| {
            runtime.block_on(async {
                let mut total = Duration::ZERO;
                for _ in 0..iterations {
                    let server = FreshServer::start().await;
                    let part = Part::bytes(tops.clone()).file_name("tamsin_tops.csv");
                    let started = Instant::now();
                    let response = server
                        .client
                        .post(&server.url)
                        .header("X-CSRF-Token", &server.csrf)
                        .multipart(Form::new().part("tops", part))
                        .send()
                        .await
                        .expect("POST the tops file");
                    let status = response.status();
                    let body: serde_json::Value = response.json().await.expect("JSON answer");
                    total += started.elapsed();
                    assert!(status.is_success(), "{status}: {body}");
                    assert_eq!(
                        body["outcome"]["surfaces_stored"].as_u64(),
                        Some(ROWS as u64),
                        "{body}"
                    );
                }
                total
            })
        });
    });
    group.finish();
}

criterion_group!(benches, import);
criterion_main!(benches);
