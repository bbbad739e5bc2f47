//! What one well page costs: the SQL statements it runs (sign-in check included) and
//! the analyses it computes, for a well with a saved pick.
//!
//! Statements are counted from sqlx's own log: every statement sqlx runs emits an
//! event with target `sqlx::query`, inside the span of the request that ran it (the
//! SQLite worker enters the caller's span). A tracing layer installed for this test
//! binary alone counts those events per request path, leaving out the PRAGMA batch
//! with which the pool sets up a connection it opens. Analyses are counted by the
//! cache's work counters.
//!
//! This binary holds one test, so nothing else writes to the global subscriber.
//! Every study and well name here is invented.

mod common;

use common::TestApp;
use common::rift::{TROUGH_WELL, rift_study};
use reqwest::StatusCode;
use serde_json::json;
use std::collections::HashMap;
use std::sync::{Arc, Mutex};
use tracing::Subscriber;
use tracing::field::{Field, Visit};
use tracing::span::{Attributes, Id};
use tracing_subscriber::layer::{Context, Layer, SubscriberExt};
use tracing_subscriber::registry::LookupSpan;

/// Statements seen, by the path of the request whose span they ran in.
#[derive(Clone, Default)]
struct StatementCounter {
    by_path: Arc<Mutex<HashMap<String, usize>>>,
}

impl StatementCounter {
    fn count(&self, path: &str) -> usize {
        self.by_path
            .lock()
            .expect("counter lock")
            .get(path)
            .copied()
            .unwrap_or(0)
    }

    fn reset(&self) {
        self.by_path.lock().expect("counter lock").clear();
    }
}

/// The `uri` field of a request span.
struct RequestUri(String);

struct UriVisitor(Option<String>);

/// The `summary` field of a statement event (its first words).
struct Summary(String);

impl Visit for Summary {
    fn record_str(&mut self, field: &Field, value: &str) {
        if field.name() == "summary" {
            self.0 = value.to_string();
        }
    }

    fn record_debug(&mut self, field: &Field, value: &dyn std::fmt::Debug) {
        if field.name() == "summary" {
            self.0 = format!("{value:?}").trim_matches('"').to_string();
        }
    }
}

impl Visit for UriVisitor {
    fn record_debug(&mut self, field: &Field, value: &dyn std::fmt::Debug) {
        if field.name() == "uri" {
            self.0 = Some(format!("{value:?}"));
        }
    }
}

impl<S: Subscriber + for<'a> LookupSpan<'a>> Layer<S> for StatementCounter {
    fn on_new_span(&self, attrs: &Attributes<'_>, id: &Id, ctx: Context<'_, S>) {
        if attrs.metadata().name() != "request" {
            return;
        }
        let mut visitor = UriVisitor(None);
        attrs.record(&mut visitor);
        if let (Some(uri), Some(span)) = (visitor.0, ctx.span(id)) {
            span.extensions_mut().insert(RequestUri(uri));
        }
    }

    fn on_event(&self, event: &tracing::Event<'_>, ctx: Context<'_, S>) {
        if event.metadata().target() != "sqlx::query" {
            return;
        }
        let Some(scope) = ctx.event_scope(event) else {
            return;
        };
        for span in scope {
            if let Some(uri) = span.extensions().get::<RequestUri>() {
                let mut sql = Summary(String::new());
                event.record(&mut sql);
                // The pool opening a connection sets it up with one PRAGMA batch; that
                // is the pool's cost, not a statement of the page.
                if sql.0.starts_with("PRAGMA") {
                    return;
                }
                *self
                    .by_path
                    .lock()
                    .expect("counter lock")
                    .entry(uri.0.clone())
                    .or_default() += 1;
                return;
            }
        }
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_well_page_with_a_saved_pick_runs_at_most_eight_statements_and_one_analysis() {
    let counter = StatementCounter::default();
    tracing::subscriber::set_global_default(tracing_subscriber::registry().with(counter.clone()))
        .expect("the only subscriber of this test binary");

    let app = TestApp::empty().await;
    let study = rift_study(&app, "Tarn Trough cost").await;
    let well = app.well_id(study, TROUGH_WELL).await;
    let saved = app
        .put_json(
            &format!("/api/studies/{study}/wells/{well}/picks/1"),
            &json!({ "rift_onset_ma": 165.3, "rift_end_ma": 66.0, "version": 0 }),
        )
        .await;
    assert_eq!(saved.status, StatusCode::OK, "{}", saved.body);

    let path = format!("/studies/{study}/wells/{well}");
    // The first showing computes.
    let before = app.state.cache.stats();
    counter.reset();
    let page = app.get(&path).await;
    assert_eq!(page.status, StatusCode::OK, "{}", page.body);
    let after = app.state.cache.stats();
    assert_eq!(
        after.backstrips - before.backstrips,
        1,
        "the column is backstripped once for the pick and the proposal"
    );
    // The pick's fit is new; the proposal beside it may already be cached by the
    // upload. Each missing one is fitted once, from the one backstripped column.
    let misses = after.misses - before.misses;
    assert!(
        (1..=2).contains(&misses),
        "the pick's analysis is not cached yet: {misses} misses"
    );
    assert_eq!(
        after.interpretations - before.interpretations,
        misses,
        "one fit per missing analysis (pick, proposal)"
    );
    assert!(
        page.body.contains("Automatic proposal")
            && !page
                .body
                .contains("No proposal (the well could not be analysed)"),
        "the proposal is shown beside the pick"
    );
    assert!(
        page.body.contains("with the team's rift timing"),
        "the fit shown uses the saved pick"
    );

    // Shown again: the same statements, nothing computed.
    counter.reset();
    let before = app.state.cache.stats();
    let again = app.get(&path).await;
    assert_eq!(again.status, StatusCode::OK, "{}", again.body);
    let after = app.state.cache.stats();
    let statements = counter.count(&path);
    assert!(
        statements > 0,
        "the counter sees the page's statements (else it counts nothing)"
    );
    assert!(
        statements <= 8,
        "a well page with a saved pick ran {statements} SQL statements"
    );
    assert_eq!(after.backstrips, before.backstrips, "nothing recomputed");
    assert_eq!(after.interpretations, before.interpretations);
    println!("well page with a saved pick: {statements} SQL statements");

    // The JSON twin reads no more.
    let json_path = format!("/api/studies/{study}/wells/{well}");
    counter.reset();
    let twin = app.get(&json_path).await;
    assert_eq!(twin.status, StatusCode::OK, "{}", twin.body);
    let twin_statements = counter.count(&json_path);
    assert!(
        twin_statements <= 8,
        "the JSON twin ran {twin_statements} SQL statements"
    );
    assert!(
        !twin.body.contains("<svg"),
        "the JSON twin carries no chart"
    );
}
