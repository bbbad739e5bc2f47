//! Speed of importing a large tops file: an invented 100,000-row file (2,000 wells
//! of 50 surfaces) sent through `POST /api/studies/{id}/tops` to a running server,
//! each time into a fresh database. Times the whole request: reading the multipart
//! body, validating every row and storing it in one transaction.
//!
//! The browser's path is timed on a 35-column file (7 mapped columns and 28 ignored
//! remarks; 1,000 wells of 20 surfaces) step by step: holding the file, the preview
//! with a column mapping, and the store, beside the same file through the API.
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

const WIDE_WELLS: usize = 1_000;
const WIDE_SURFACES: usize = 20;
/// Columns of the wide file: 7 that are read and 28 remarks that are ignored.
const WIDE_COLUMNS: usize = 35;
const WIDE_HEADERS: [(&str, &str); 7] = [
    ("Well Name", "well"),
    ("Top", "horizon"),
    ("Depth", "depth_m"),
    ("Age", "age_ma"),
    ("Lith", "lithology"),
    ("WD low", "water_depth_min_m"),
    ("WD high", "water_depth_max_m"),
];

/// The invented wide file: wells `Orrin-0001`… with odd headers that need a mapping.
fn wide_tops() -> Vec<u8> {
    let mut headers: Vec<String> = WIDE_HEADERS.iter().map(|(h, _)| h.to_string()).collect();
    headers.extend((WIDE_HEADERS.len()..WIDE_COLUMNS).map(|i| format!("Remark {i:02}")));
    let mut csv = headers.join(",");
    csv.push('\n');
    for w in 0..WIDE_WELLS {
        let mut depth = 60.0 + (w % 29) as f64 * 4.0;
        for s in 0..WIDE_SURFACES {
            let lithology = if s + 1 == WIDE_SURFACES {
                ""
            } else {
                ["shale", "sandstone", "shale:70;sandstone:30"][(w + s) % 3]
            };
            write!(
                csv,
                "Orrin-{w:04},Unit {s:02},{depth:.1},{:.2},{lithology},5,{}",
                s as f64 * 2.0,
                30 + s
            )
            .expect("write to a String");
            for r in WIDE_HEADERS.len()..WIDE_COLUMNS {
                write!(csv, ",r{r}-{s}").expect("write to a String");
            }
            csv.push('\n');
            depth += 40.0 + ((w * 3 + s * 11) % 53) as f64;
        }
    }
    csv.into_bytes()
}

/// The browser form's mapping of the wide file: one `tops_col_<i>` field per column.
fn wide_form_mapping() -> Vec<(String, String)> {
    (0..WIDE_COLUMNS)
        .map(|i| {
            let column = WIDE_HEADERS.get(i).map_or("", |(_, c)| c);
            (format!("tops_col_{i}"), column.to_string())
        })
        .collect()
}

/// A server on a fresh database with one empty study and a signed-in admin client;
/// dropped after one import.
struct FreshServer {
    base: String,
    study: i64,
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
            base,
            study,
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

    let wide = wide_tops();
    let query = serde_urlencoded::to_string(wide_form_mapping()).expect("form encoding");
    let mut group = c.benchmark_group("import-35-columns");
    group
        .sample_size(10)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(15))
        .throughput(Throughput::Elements((WIDE_WELLS * WIDE_SURFACES) as u64));
    group.bench_function("API", |b| {
        b.iter_custom(|iterations| {
            runtime.block_on(async {
                let mut total = Duration::ZERO;
                for _ in 0..iterations {
                    let server = FreshServer::start().await;
                    // Field names go as written (`map.Well Name`), as a browser sends them.
                    let mut form = Form::new().percent_encode_noop().part(
                        "tops",
                        Part::bytes(wide.clone()).file_name("orrin_tops.csv"),
                    );
                    for (header, column) in WIDE_HEADERS {
                        form = form.text(format!("map.{header}"), column);
                    }
                    let started = Instant::now();
                    let response = server
                        .client
                        .post(&server.url)
                        .header("X-CSRF-Token", &server.csrf)
                        .multipart(form)
                        .send()
                        .await
                        .expect("POST the wide file");
                    let status = response.status();
                    let body = response.text().await.expect("answer");
                    total += started.elapsed();
                    assert!(status.is_success(), "{status}: {body}");
                }
                total
            })
        });
    });
    // Each step of the browser's path, timed alone; the steps before it run untimed.
    for step in [
        "browser: hold the file",
        "browser: preview",
        "browser: store",
    ] {
        group.bench_function(step, |b| {
            b.iter_custom(|iterations| {
                runtime.block_on(async {
                    let mut total = Duration::ZERO;
                    for _ in 0..iterations {
                        let server = FreshServer::start().await;
                        let started = Instant::now();
                        let preview = browser_hold(&server, &wide).await;
                        if step.ends_with("hold the file") {
                            total += started.elapsed();
                            continue;
                        }
                        let started = Instant::now();
                        let response = server
                            .client
                            .get(format!("{}{preview}?{query}", server.base))
                            .send()
                            .await
                            .expect("GET the preview");
                        let status = response.status();
                        let body = response.text().await.expect("preview page");
                        if step.ends_with("preview") {
                            total += started.elapsed();
                        }
                        assert!(status.is_success(), "{status}: {body}");
                        assert!(body.contains("ready to store"), "{body}");
                        if step.ends_with("preview") {
                            continue;
                        }
                        let started = Instant::now();
                        let response = server
                            .client
                            .post(format!("{}{preview}", server.base))
                            .header("X-CSRF-Token", &server.csrf)
                            .header(
                                reqwest::header::CONTENT_TYPE,
                                "application/x-www-form-urlencoded",
                            )
                            .body(query.clone())
                            .send()
                            .await
                            .expect("POST the store form");
                        let status = response.status();
                        total += started.elapsed();
                        assert_eq!(status, reqwest::StatusCode::SEE_OTHER, "store");
                    }
                    total
                })
            });
        });
    }
    group.finish();
}

/// Send the wide file through the browser's upload form; the preview's path.
async fn browser_hold(server: &FreshServer, wide: &[u8]) -> String {
    let form = Form::new()
        .part(
            "tops",
            Part::bytes(wide.to_vec()).file_name("orrin_tops.csv"),
        )
        .text("depth_unit", "");
    let response = server
        .client
        .post(format!("{}/studies/{}/upload", server.base, server.study))
        .header("X-CSRF-Token", &server.csrf)
        .multipart(form)
        .send()
        .await
        .expect("POST the upload form");
    assert_eq!(response.status(), reqwest::StatusCode::SEE_OTHER, "hold");
    response
        .headers()
        .get(reqwest::header::LOCATION)
        .and_then(|l| l.to_str().ok())
        .expect("redirect to the preview")
        .to_string()
}

criterion_group!(benches, import);
criterion_main!(benches);
