//! Live updates: a server-sent-events stream per study, so a pick, state or comment
//! saved by one person appears on the others' open pages without a reload.

use super::{ApiResult, AppState};
use axum::extract::{Path, State};
use axum::response::sse::{Event, KeepAlive, Sse};
use serde::Serialize;
use std::collections::HashMap;
use std::convert::Infallible;
use std::sync::Mutex;
use std::time::Duration;
use tokio::sync::broadcast;
use tokio_stream::StreamExt;
use tokio_stream::wrappers::BroadcastStream;

/// Events kept for a slow reader before it starts missing some (it then reloads).
const BACKLOG: usize = 256;

/// One change, as the pages receive it.
#[derive(Debug, Clone, Serialize)]
pub struct LiveEvent {
    /// `pick`, `pick state`, `delete pick` or `comment`.
    pub kind: &'static str,
    pub well_id: i64,
    pub well: String,
    pub by: String,
    /// One line for a notice on the page.
    pub summary: String,
}

/// The per-study broadcast channels, and a signal that ends every stream when the
/// server stops (an open page must not hold the shutdown up).
#[derive(Debug)]
pub struct EventHub {
    channels: Mutex<HashMap<i64, broadcast::Sender<LiveEvent>>>,
    closing: tokio::sync::watch::Sender<bool>,
}

impl Default for EventHub {
    fn default() -> Self {
        EventHub {
            channels: Mutex::new(HashMap::new()),
            closing: tokio::sync::watch::channel(false).0,
        }
    }
}

impl EventHub {
    /// End every open stream (called when the server shuts down).
    pub fn close(&self) {
        self.closing.send_replace(true);
    }

    /// Completes once [`EventHub::close`] has been called.
    fn closed(&self) -> impl std::future::Future<Output = ()> + Send + use<> {
        let mut rx = self.closing.subscribe();
        async move {
            // An error means the hub is gone: nothing more will come either way.
            let _ = rx.wait_for(|closing| *closing).await;
        }
    }

    fn sender(&self, study_id: i64) -> broadcast::Sender<LiveEvent> {
        let mut map = self.channels.lock().expect("event hub lock");
        map.entry(study_id)
            .or_insert_with(|| broadcast::channel(BACKLOG).0)
            .clone()
    }

    /// Tell every open page of the study. Nobody listening is fine.
    pub fn publish(&self, study_id: i64, event: LiveEvent) {
        let _ = self.sender(study_id).send(event);
    }

    pub fn subscribe(&self, study_id: i64) -> broadcast::Receiver<LiveEvent> {
        self.sender(study_id).subscribe()
    }
}

/// `GET /api/studies/{id}/events`: the study's change stream (`text/event-stream`).
pub async fn study_events(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> ApiResult<Sse<impl tokio_stream::Stream<Item = Result<Event, Infallible>>>> {
    super::studies::load_study(&state, id).await?;
    let closed = state.events.closed();
    let stream = BroadcastStream::new(state.events.subscribe(id)).map(|item| {
        Ok(match item {
            Ok(e) => Event::default()
                .event("change")
                .json_data(&e)
                .unwrap_or_else(|_| Event::default().comment("unencodable")),
            // The reader fell behind and missed events: tell the page to reload.
            Err(_) => Event::default().event("missed").data("reload"),
        })
    });
    let stream = futures_util::StreamExt::take_until(stream, closed);
    Ok(Sse::new(stream).keep_alive(KeepAlive::new().interval(Duration::from_secs(15))))
}
