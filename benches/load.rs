//! A bounded load test of the review workflow, on 127.0.0.1 only.
//!
//! Starts the app in-process on port 0 with a fresh database holding the demo study,
//! makes `SAGLINE_LOAD_CLIENTS` (50) interpreter accounts and signs each in with a
//! cookie jar and CSRF token of its own. For `SAGLINE_LOAD_SECS` (30) seconds each
//! client loops: open a random well's page, read its JSON twin, and every few rounds
//! save the rift-event-1 pick of a random well through the API against the version it
//! last read. A 409 (someone saved first) is expected: the client re-reads and goes
//! on. Anything else that is not 2xx is an error.
//!
//! Then it reports latency percentiles per kind of request, throughput and outcome
//! counts, and checks that nothing acknowledged was lost: for every well, the stored
//! pick's version equals the number of acknowledged saves, the acknowledged versions
//! are exactly 1..=n, the stored values are those of the last acknowledged save, and
//! the activity log has one pick row per acknowledged save. Exits non-zero otherwise.
//!
//! Run with `cargo bench --bench load`; `SAGLINE_LOAD_SECS=5 cargo bench --bench load`
//! for a quick run.

#[path = "../tests/common/mod.rs"]
mod common;

use common::{Agent, MEMBER_PASSWORD, TestApp};
use rand::rngs::StdRng;
use rand::seq::IndexedRandom;
use rand::{RngExt, SeedableRng};
use reqwest::{Method, StatusCode};
use sagline::auth::Role;
use serde_json::{Value, json};
use std::collections::{BTreeMap, HashMap};
use std::process::ExitCode;
use std::time::{Duration, Instant};

/// How long the clients run, unless `SAGLINE_LOAD_SECS` says otherwise.
const DEFAULT_SECS: u64 = 30;
/// How many clients, unless `SAGLINE_LOAD_CLIENTS` says otherwise.
const DEFAULT_CLIENTS: usize = 50;
/// A client saves a pick every this many rounds (a round reads a page and its twin).
const SAVE_EVERY: u64 = 3;
/// The one rift event the clients pick (so every save competes with the others).
const EVENT: i64 = 1;
/// A request taking longer than this counts as an error.
const REQUEST_TIMEOUT: Duration = Duration::from_secs(60);
const STATES: [&str; 3] = ["draft", "agreed", "questioned"];
const MODELS: [&str; 2] = ["uniform", "two-layer"];

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
enum Kind {
    WellPage,
    WellJson,
    SavePick,
}

impl Kind {
    const ALL: [Kind; 3] = [Kind::WellPage, Kind::WellJson, Kind::SavePick];

    fn label(self) -> &'static str {
        match self {
            Kind::WellPage => "GET well page (HTML)",
            Kind::WellJson => "GET well JSON twin",
            Kind::SavePick => "PUT rift pick (API)",
        }
    }
}

/// A demo well with the surface ages a pick may use.
#[derive(Debug, Clone)]
struct Well {
    id: i64,
    name: String,
    ages_ma: Vec<f64>,
}

/// A save the server acknowledged with 200.
#[derive(Debug, Clone)]
struct Ack {
    well_id: i64,
    version: i64,
    onset_ma: f64,
    end_ma: f64,
    model: String,
    state: String,
}

/// What one client saw.
#[derive(Debug, Default)]
struct Tally {
    latencies: HashMap<Kind, Vec<Duration>>,
    ok: HashMap<Kind, u64>,
    stale: u64,
    errors: HashMap<Kind, u64>,
    /// The first few error descriptions, to print.
    error_samples: Vec<String>,
    acks: Vec<Ack>,
}

impl Tally {
    fn merge(&mut self, other: Tally) {
        for (kind, mut l) in other.latencies {
            self.latencies.entry(kind).or_default().append(&mut l);
        }
        for (kind, n) in other.ok {
            *self.ok.entry(kind).or_default() += n;
        }
        for (kind, n) in other.errors {
            *self.errors.entry(kind).or_default() += n;
        }
        self.stale += other.stale;
        self.acks.extend(other.acks);
        for e in other.error_samples {
            if self.error_samples.len() < 10 {
                self.error_samples.push(e);
            }
        }
    }

    fn error(&mut self, kind: Kind, what: String) {
        *self.errors.entry(kind).or_default() += 1;
        if self.error_samples.len() < 10 {
            self.error_samples.push(what);
        }
    }
}

fn env_number<T: std::str::FromStr>(name: &str, default: T) -> T {
    match std::env::var(name) {
        Ok(v) => v
            .trim()
            .parse()
            .unwrap_or_else(|_| panic!("{name}={v:?} is not a number")),
        Err(_) => default,
    }
}

fn main() -> ExitCode {
    let seconds = env_number("SAGLINE_LOAD_SECS", DEFAULT_SECS);
    let clients = env_number("SAGLINE_LOAD_CLIENTS", DEFAULT_CLIENTS);
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .expect("tokio runtime");
    if runtime.block_on(run(clients, Duration::from_secs(seconds))) {
        ExitCode::SUCCESS
    } else {
        ExitCode::FAILURE
    }
}

/// The whole test; true when nothing acknowledged was lost.
async fn run(clients: usize, duration: Duration) -> bool {
    let app = TestApp::with_demo().await;
    let study = app.demo_study.expect("demo study");
    let wells = demo_wells(&app.admin, study).await;
    println!(
        "load test: {clients} clients for {} s against {} ({} demo wells)",
        duration.as_secs(),
        app.base,
        wells.len()
    );

    let mut agents = Vec::with_capacity(clients);
    for i in 0..clients {
        let name = format!("load-interpreter-{i:02}");
        app.add_user(&name, Role::Interpreter).await;
        let mut agent = Agent::new(&app.base);
        let answer = agent.sign_in(&name, MEMBER_PASSWORD).await;
        assert_eq!(answer.status, StatusCode::SEE_OTHER, "sign in {name}");
        agents.push(agent);
    }

    let started = Instant::now();
    let deadline = started + duration;
    let tasks: Vec<_> = agents
        .into_iter()
        .enumerate()
        .map(|(i, agent)| {
            let wells = wells.clone();
            tokio::spawn(client_loop(i as u64, agent, study, wells, deadline))
        })
        .collect();
    let mut tally = Tally::default();
    for task in tasks {
        tally.merge(task.await.expect("client task"));
    }
    let elapsed = started.elapsed();

    report(&tally, elapsed);
    verify(&app, &wells, &tally.acks).await
}

async fn demo_wells(admin: &Agent, study: i64) -> Vec<Well> {
    let overview = admin.get_json(&format!("/api/studies/{study}")).await;
    let mut wells = Vec::new();
    for w in overview["wells"].as_array().expect("wells") {
        let id = w["id"].as_i64().expect("well id");
        let view = admin
            .get_json(&format!("/api/studies/{study}/wells/{id}"))
            .await;
        let ages_ma = view["column"]
            .as_array()
            .expect("column")
            .iter()
            .map(|r| r["age_ma"].as_f64().expect("age"))
            .collect();
        wells.push(Well {
            id,
            name: w["name"].as_str().expect("well name").to_string(),
            ages_ma,
        });
    }
    assert!(!wells.is_empty(), "the demo study has wells");
    wells
}

/// The version of rift event 1 in a well's JSON twin (0 when there is no pick).
fn pick_version(view: &Value) -> i64 {
    view["picks"]
        .as_array()
        .into_iter()
        .flatten()
        .find(|p| p["event"] == EVENT)
        .and_then(|p| p["version"].as_i64())
        .unwrap_or(0)
}

/// One timed request: its status and body, or why it failed.
async fn timed(
    agent: &Agent,
    method: Method,
    path: &str,
    body: Option<&Value>,
) -> (Duration, Result<(StatusCode, String), String>) {
    let start = Instant::now();
    let mut request = agent.request(method, path).timeout(REQUEST_TIMEOUT);
    if let Some(b) = body {
        request = request.json(b);
    }
    let outcome = match request.send().await {
        Ok(response) => {
            let status = response.status();
            response
                .text()
                .await
                .map(|text| (status, text))
                .map_err(|e| format!("{path}: reading the body: {e}"))
        }
        Err(e) => Err(format!("{path}: {e}")),
    };
    (start.elapsed(), outcome)
}

async fn client_loop(
    index: u64,
    agent: Agent,
    study: i64,
    wells: Vec<Well>,
    deadline: Instant,
) -> Tally {
    let mut rng = StdRng::seed_from_u64(0x5a61_0000 + index);
    let mut tally = Tally::default();
    // The version of each well's pick as this client last read it.
    let mut seen: HashMap<i64, i64> = HashMap::new();
    let mut round: u64 = rng.random_range(0..SAVE_EVERY);
    while Instant::now() < deadline {
        round += 1;
        let well = wells.choose(&mut rng).expect("a well");
        let page = format!("/studies/{study}/wells/{}", well.id);
        let (took, outcome) = timed(&agent, Method::GET, &page, None).await;
        match outcome {
            Ok((status, body)) if status == StatusCode::OK && body.contains("Team pick") => {
                tally
                    .latencies
                    .entry(Kind::WellPage)
                    .or_default()
                    .push(took);
                *tally.ok.entry(Kind::WellPage).or_default() += 1;
            }
            Ok((status, _)) => tally.error(Kind::WellPage, format!("GET {page}: {status}")),
            Err(e) => tally.error(Kind::WellPage, e),
        }
        read_twin(&agent, study, well, &mut seen, &mut tally).await;

        if round.is_multiple_of(SAVE_EVERY) && Instant::now() < deadline {
            let well = wells.choose(&mut rng).expect("a well");
            save_pick(&agent, study, well, &mut seen, &mut tally, &mut rng).await;
        }
    }
    tally
}

async fn read_twin(
    agent: &Agent,
    study: i64,
    well: &Well,
    seen: &mut HashMap<i64, i64>,
    tally: &mut Tally,
) {
    let twin = format!("/api/studies/{study}/wells/{}", well.id);
    let (took, outcome) = timed(agent, Method::GET, &twin, None).await;
    match outcome {
        Ok((StatusCode::OK, body)) => match serde_json::from_str::<Value>(&body) {
            Ok(view) => {
                seen.insert(well.id, pick_version(&view));
                tally
                    .latencies
                    .entry(Kind::WellJson)
                    .or_default()
                    .push(took);
                *tally.ok.entry(Kind::WellJson).or_default() += 1;
            }
            Err(e) => tally.error(Kind::WellJson, format!("GET {twin}: not JSON: {e}")),
        },
        Ok((status, _)) => tally.error(Kind::WellJson, format!("GET {twin}: {status}")),
        Err(e) => tally.error(Kind::WellJson, e),
    }
}

/// Save rift event 1 with two surface ages of the well, against the last version read.
async fn save_pick(
    agent: &Agent,
    study: i64,
    well: &Well,
    seen: &mut HashMap<i64, i64>,
    tally: &mut Tally,
    rng: &mut StdRng,
) {
    let n = well.ages_ma.len();
    let (a, b) = (rng.random_range(0..n - 1), rng.random_range(0..n - 1));
    let (young, old) = (a.min(b), a.max(b) + 1);
    let (end_ma, onset_ma) = (well.ages_ma[young], well.ages_ma[old]);
    let model = *MODELS.choose(rng).expect("a model");
    let state = *STATES.choose(rng).expect("a state");
    let version = seen.get(&well.id).copied().unwrap_or(0);
    let body = json!({
        "rift_onset_ma": onset_ma,
        "rift_end_ma": end_ma,
        "model": model,
        "state": state,
        "version": version,
    });
    let path = format!("/api/studies/{study}/wells/{}/picks/{EVENT}", well.id);
    let (took, outcome) = timed(agent, Method::PUT, &path, Some(&body)).await;
    tally
        .latencies
        .entry(Kind::SavePick)
        .or_default()
        .push(took);
    match outcome {
        Ok((StatusCode::OK, text)) => {
            let stored: Value = serde_json::from_str(&text).unwrap_or_default();
            match stored["version"].as_i64() {
                Some(v) => {
                    seen.insert(well.id, v);
                    *tally.ok.entry(Kind::SavePick).or_default() += 1;
                    tally.acks.push(Ack {
                        well_id: well.id,
                        version: v,
                        onset_ma,
                        end_ma,
                        model: model.to_string(),
                        state: state.to_string(),
                    });
                }
                None => tally.error(Kind::SavePick, format!("PUT {path}: 200 without a version")),
            }
        }
        Ok((StatusCode::CONFLICT, _)) => {
            tally.stale += 1;
            read_twin(agent, study, well, seen, tally).await;
        }
        Ok((status, text)) => tally.error(
            Kind::SavePick,
            format!("PUT {path} (version {version}): {status}: {text}"),
        ),
        Err(e) => tally.error(Kind::SavePick, e),
    }
}

fn percentile(sorted: &[Duration], p: f64) -> Duration {
    if sorted.is_empty() {
        return Duration::ZERO;
    }
    // Nearest rank.
    let rank = ((p / 100.0) * sorted.len() as f64).ceil() as usize;
    sorted[rank.clamp(1, sorted.len()) - 1]
}

fn ms(d: Duration) -> String {
    format!("{:.1}", d.as_secs_f64() * 1000.0)
}

fn report(tally: &Tally, elapsed: Duration) {
    println!();
    println!(
        "{:<24} {:>8} {:>9} {:>9} {:>9} {:>9} {:>9}",
        "request", "count", "p50 ms", "p90 ms", "p99 ms", "max ms", "req/s"
    );
    let mut total = 0usize;
    for kind in Kind::ALL {
        let mut l = tally.latencies.get(&kind).cloned().unwrap_or_default();
        l.sort();
        total += l.len();
        println!(
            "{:<24} {:>8} {:>9} {:>9} {:>9} {:>9} {:>9.1}",
            kind.label(),
            l.len(),
            ms(percentile(&l, 50.0)),
            ms(percentile(&l, 90.0)),
            ms(percentile(&l, 99.0)),
            ms(l.last().copied().unwrap_or_default()),
            l.len() as f64 / elapsed.as_secs_f64()
        );
    }
    println!(
        "{:<24} {:>8} {:>49.1}",
        "all timed requests",
        total,
        total as f64 / elapsed.as_secs_f64()
    );
    println!();
    println!(
        "{:<24} {:>8} {:>8} {:>8}",
        "outcome", "2xx", "409", "errors"
    );
    for kind in Kind::ALL {
        println!(
            "{:<24} {:>8} {:>8} {:>8}",
            kind.label(),
            tally.ok.get(&kind).copied().unwrap_or(0),
            if kind == Kind::SavePick {
                tally.stale
            } else {
                0
            },
            tally.errors.get(&kind).copied().unwrap_or(0)
        );
    }
    println!("(over {:.1} s)", elapsed.as_secs_f64());
    if !tally.error_samples.is_empty() {
        println!("first errors:");
        for e in &tally.error_samples {
            println!("  {e}");
        }
    }
}

/// Check every acknowledged save against the database and the activity log; print a
/// table per well. True when nothing was lost.
async fn verify(app: &TestApp, wells: &[Well], acks: &[Ack]) -> bool {
    let mut by_well: BTreeMap<i64, Vec<&Ack>> = BTreeMap::new();
    for a in acks {
        by_well.entry(a.well_id).or_default().push(a);
    }
    println!();
    println!(
        "{:<8} {:>6} {:>8} {:>10} {:>13} {:>14}  verdict",
        "well", "acks", "stored", "versions", "last values", "activity rows"
    );
    let mut all_kept = true;
    for well in wells {
        let mut acked = by_well.remove(&well.id).unwrap_or_default();
        acked.sort_by_key(|a| a.version);
        let versions: Vec<i64> = acked.iter().map(|a| a.version).collect();
        let versions_ok = versions.iter().copied().eq(1..=acked.len() as i64);
        let stored: Option<(f64, f64, String, String, i64)> = sqlx::query_as(
            "SELECT rift_onset_ma, rift_end_ma, model, state, version FROM picks
             WHERE well_id = ? AND event = ?",
        )
        .bind(well.id)
        .bind(EVENT)
        .fetch_optional(&app.pool)
        .await
        .expect("read the stored pick");
        let stored_version = stored.as_ref().map(|s| s.4).unwrap_or(0);
        let values_ok = match (acked.last(), &stored) {
            (Some(last), Some((onset, end, model, state, _))) => {
                last.onset_ma == *onset
                    && last.end_ma == *end
                    && &last.model == model
                    && &last.state == state
            }
            (None, None) => true,
            _ => false,
        };
        let subject = format!("{} rift event {EVENT}", well.name);
        let logged: Vec<String> = sqlx::query_scalar(
            "SELECT after_state FROM activity
             WHERE subject = ? AND action IN ('pick', 'pick state') ORDER BY id",
        )
        .bind(&subject)
        .fetch_all(&app.pool)
        .await
        .expect("read the activity log");
        let logged_versions: Vec<i64> = logged
            .iter()
            .map(|s| {
                serde_json::from_str::<Value>(s)
                    .ok()
                    .and_then(|v| v["version"].as_i64())
                    .unwrap_or(-1)
            })
            .collect();
        let log_ok = logged_versions == versions;
        let kept = versions_ok && stored_version == acked.len() as i64 && values_ok && log_ok;
        all_kept &= kept;
        println!(
            "{:<8} {:>6} {:>8} {:>10} {:>13} {:>14}  {}",
            well.name,
            acked.len(),
            stored_version,
            if versions_ok { "1..=n" } else { "GAPS/DUPS" },
            if values_ok { "match" } else { "DIFFER" },
            logged.len(),
            if kept {
                "nothing lost"
            } else {
                "LOST OR EXTRA"
            }
        );
    }
    let unknown = by_well.values().map(Vec::len).sum::<usize>();
    if unknown > 0 {
        println!("{unknown} acknowledged save(s) name a well that is not in the demo study");
        all_kept = false;
    }
    println!();
    println!(
        "{}",
        if all_kept {
            "RESULT: every acknowledged save is stored and logged"
        } else {
            "RESULT: FAILED, acknowledged saves were lost or do not match"
        }
    );
    all_kept
}
