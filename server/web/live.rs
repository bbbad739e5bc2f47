//! Live updates: a server-sent-events stream per study, so a pick, state or comment
//! saved by one person appears on the others' open pages without a reload.
//!
//! A stream belongs to the session that opened it: it ends when that session is signed
//! out (here, everywhere, by an admin, by a password change or reset) or its account is
//! disabled, at once when this server did it and within `SESSION_RECHECK` otherwise
//! (expiry). A session holds at most `MAX_STREAMS_PER_SESSION` streams at once.

use super::{ApiResult, AppError, AppState};
use crate::services::accounts::{self, SignedIn};
use axum::extract::{Path, State};
use axum::response::sse::{Event, KeepAlive, Sse};
use serde::Serialize;
use std::collections::HashMap;
use std::convert::Infallible;
use std::sync::{Arc, Mutex};
use std::time::Duration;
use tokio::sync::{broadcast, watch};
use tokio_stream::StreamExt;
use tokio_stream::wrappers::BroadcastStream;

/// Events kept for a slow reader before it starts missing some (it then reloads).
const BACKLOG: usize = 256;
/// Live streams one session may hold open at once (each open study page holds one).
pub const MAX_STREAMS_PER_SESSION: usize = 8;
/// How often an open stream checks that its session is still open (it may have expired).
const SESSION_RECHECK: Duration = Duration::from_secs(60);

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
/// And the open streams of each session, so they can be counted and ended.
#[derive(Debug)]
pub struct EventHub {
    channels: Mutex<HashMap<i64, broadcast::Sender<LiveEvent>>>,
    closing: watch::Sender<bool>,
    /// By session digest.
    sessions: Mutex<HashMap<String, SessionStreams>>,
}

/// The open streams of one session.
#[derive(Debug)]
struct SessionStreams {
    user_id: i64,
    open: usize,
    /// Set when the session ends: its streams finish.
    ended: watch::Sender<bool>,
}

/// One open stream's place among its session's; given back when the stream is dropped.
pub struct StreamPlace {
    hub: Arc<EventHub>,
    session_digest: String,
    ended: watch::Receiver<bool>,
}

impl Drop for StreamPlace {
    fn drop(&mut self) {
        let mut sessions = self.hub.sessions.lock().expect("event hub lock");
        if let Some(s) = sessions.get_mut(&self.session_digest) {
            s.open = s.open.saturating_sub(1);
            if s.open == 0 {
                sessions.remove(&self.session_digest);
            }
        }
    }
}

impl Default for EventHub {
    fn default() -> Self {
        EventHub {
            channels: Mutex::new(HashMap::new()),
            closing: watch::channel(false).0,
            sessions: Mutex::new(HashMap::new()),
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

    /// A place for one more stream of this session, unless it holds
    /// `MAX_STREAMS_PER_SESSION` already.
    pub fn open_stream(self: &Arc<Self>, user: &SignedIn) -> Option<StreamPlace> {
        let mut sessions = self.sessions.lock().expect("event hub lock");
        let entry = sessions
            .entry(user.session_digest.clone())
            .or_insert_with(|| SessionStreams {
                user_id: user.user_id,
                open: 0,
                ended: watch::channel(false).0,
            });
        if entry.open >= MAX_STREAMS_PER_SESSION {
            return None;
        }
        entry.open += 1;
        Some(StreamPlace {
            hub: self.clone(),
            session_digest: user.session_digest.clone(),
            ended: entry.ended.subscribe(),
        })
    }

    /// End the streams of one session (it was signed out).
    pub fn end_session(&self, session_digest: &str) {
        let sessions = self.sessions.lock().expect("event hub lock");
        if let Some(s) = sessions.get(session_digest) {
            s.ended.send_replace(true);
        }
    }

    /// End the streams of every session of an account (but `keep`, the session that
    /// changed its own password): it was signed out everywhere, disabled or given a new
    /// password.
    pub fn end_user_sessions(&self, user_id: i64, keep: Option<&str>) {
        let sessions = self.sessions.lock().expect("event hub lock");
        for (digest, s) in sessions.iter() {
            if s.user_id == user_id && Some(digest.as_str()) != keep {
                s.ended.send_replace(true);
            }
        }
    }

    /// Streams open now, over every session.
    pub fn open_streams(&self) -> usize {
        let sessions = self.sessions.lock().expect("event hub lock");
        sessions.values().map(|s| s.open).sum()
    }
}

/// Completes when the stream's session has ended: told by [`EventHub::end_session`] or
/// [`EventHub::end_user_sessions`], or found closed in the database (checked at once,
/// in case it ended while the stream was opening, then every `SESSION_RECHECK`).
async fn session_ended(db: sqlx::SqlitePool, session_digest: String, ended: watch::Receiver<bool>) {
    let mut told = ended;
    loop {
        match accounts::session_is_open(&db, &session_digest, crate::auth::unix_now()).await {
            Ok(true) => {}
            Ok(false) => return,
            // Keep the stream; the next check may see the database again.
            Err(e) => tracing::warn!(error = %e, "cannot check a live stream's session"),
        }
        tokio::select! {
            _ = told.wait_for(|ended| *ended) => return,
            () = tokio::time::sleep(SESSION_RECHECK) => {}
        }
    }
}

/// `GET /api/studies/{id}/events`: the study's change stream (`text/event-stream`).
/// It ends when the server stops or the session ends; a session may hold
/// `MAX_STREAMS_PER_SESSION` at once (429 beyond).
pub async fn study_events(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
) -> ApiResult<Sse<impl tokio_stream::Stream<Item = Result<Event, Infallible>>>> {
    super::studies::load_study(&state, id).await?;
    let place = state.events.open_stream(&user).ok_or_else(|| {
        AppError::TooManyRequests(format!(
            "This session has {MAX_STREAMS_PER_SESSION} live streams open already (one per open study page); close some Sagline tabs, then reload this page."
        ))
    })?;
    let closed = state.events.closed();
    let ended = session_ended(
        state.db.clone(),
        user.session_digest.clone(),
        place.ended.clone(),
    );
    let end = async move {
        tokio::select! {
            () = closed => {}
            () = ended => {}
        }
    };
    let stream = BroadcastStream::new(state.events.subscribe(id)).map(move |item| {
        // The stream holds its place until it is dropped.
        let _held = &place;
        Ok(match item {
            Ok(e) => Event::default()
                .event("change")
                .json_data(&e)
                .unwrap_or_else(|_| Event::default().comment("unencodable")),
            // The reader fell behind and missed events: tell the page to reload.
            Err(_) => Event::default().event("missed").data("reload"),
        })
    });
    let stream = futures_util::StreamExt::take_until(stream, Box::pin(end));
    Ok(Sse::new(stream).keep_alive(KeepAlive::new().interval(Duration::from_secs(15))))
}
