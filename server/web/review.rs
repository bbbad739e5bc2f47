//! Picks, their states and the discussion thread of a well; each saved change is
//! pushed to the study's live stream.

use super::live::{self, LiveEvent};
use super::wells::{PageMessage, render_well_page};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::services::ServiceError;
use crate::services::accounts::SignedIn;
use crate::services::review::{self, CommentRow, PickEdit, PickRow, SavedPick, WellRow};
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::{get, post, put};
use axum::{Form, Json, Router};
use serde::{Deserialize, Serialize};

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/wells/{well_id}/picks", post(pick_form))
        .route("/studies/{id}/wells/{well_id}/comments", post(comment_form))
        .route("/api/studies/{id}/wells/{well_id}/review", get(review_json))
        .route(
            "/api/studies/{id}/wells/{well_id}/picks/{event}",
            put(pick_json),
        )
        .route(
            "/api/studies/{id}/wells/{well_id}/picks/{event}/clear",
            post(clear_json),
        )
        .route(
            "/api/studies/{id}/wells/{well_id}/comments",
            post(comment_json),
        )
        .route("/api/studies/{id}/events", get(live::study_events))
}

async fn load_well(state: &AppState, study_id: i64, well_id: i64) -> Result<WellRow, AppError> {
    Ok(review::well(&state.db, study_id, well_id).await?)
}

/// Tell the study's open pages about a change.
fn announce(state: &AppState, well: &WellRow, kind: &'static str, by: &str, summary: String) {
    state.events.publish(
        well.study_id,
        LiveEvent {
            kind,
            well_id: well.id,
            well: well.name.clone(),
            by: by.to_string(),
            summary,
        },
    );
}

fn announce_saved(state: &AppState, well: &WellRow, saved: &SavedPick, by: &str) {
    let p = &saved.pick;
    let summary = format!(
        "{by} saved rift event {} on {}: {} → {} Ma, {}",
        p.event, well.name, p.rift_onset_ma, p.rift_end_ma, p.state
    );
    announce(state, well, saved.kind, by, summary);
}

fn announce_cleared(state: &AppState, well: &WellRow, event: i64, by: &str) {
    let summary = format!(
        "{by} cleared the pick of rift event {event} on {}",
        well.name
    );
    announce(state, well, "delete pick", by, summary);
}

fn announce_comment(state: &AppState, well: &WellRow, c: &CommentRow) {
    let summary = format!(
        "{} commented on {}: {}",
        c.author,
        well.name,
        shorten(&c.body)
    );
    announce(state, well, "comment", &c.author, summary);
}

/// A refused change from a page form: the well page again, with the reason on top
/// (409 for a stale version, 422 for an invalid value).
async fn refused_on_page(
    state: &AppState,
    well: &WellRow,
    error: ServiceError,
) -> PageResult<Response> {
    let (status, message) = match error {
        ServiceError::Stale { message, .. } => (StatusCode::CONFLICT, message),
        ServiceError::Invalid(message) => (StatusCode::UNPROCESSABLE_ENTITY, message),
        other => return Err(AppError::from(other).into()),
    };
    render_well_page(
        state,
        well.study_id,
        well.id,
        None,
        Some(PageMessage::problem(message)),
        status,
    )
    .await
}

/// The pick form of the well page: `action` is `save` (default) or `clear`.
#[derive(Debug, Deserialize)]
struct PickForm {
    event: i64,
    #[serde(default)]
    rift_onset_ma: Option<f64>,
    #[serde(default)]
    rift_end_ma: Option<f64>,
    #[serde(default = "default_model")]
    model: String,
    #[serde(default = "default_state")]
    state: String,
    version: i64,
    #[serde(default)]
    action: Option<String>,
}

fn default_model() -> String {
    "uniform".into()
}
fn default_state() -> String {
    "draft".into()
}

async fn pick_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, well_id)): Path<(i64, i64)>,
    Form(form): Form<PickForm>,
) -> PageResult<Response> {
    let well = load_well(&state, id, well_id).await?;
    let outcome = if form.action.as_deref() == Some("clear") {
        review::delete_pick(&state.db, &well, form.event, form.version, &user.name)
            .await
            .map(|p| announce_cleared(&state, &well, p.event, &user.name))
    } else {
        let edit = PickEdit {
            event: form.event,
            rift_onset_ma: form.rift_onset_ma.unwrap_or(f64::NAN),
            rift_end_ma: form.rift_end_ma.unwrap_or(f64::NAN),
            model: form.model,
            state: form.state,
            version: form.version,
        };
        review::save_pick(&state.db, &well, &edit, &user.name)
            .await
            .map(|saved| announce_saved(&state, &well, &saved, &user.name))
    };
    match outcome {
        Ok(()) => {
            Ok(Redirect::to(&format!("/studies/{id}/wells/{well_id}#review")).into_response())
        }
        Err(e) => refused_on_page(&state, &well, e).await,
    }
}

#[derive(Debug, Deserialize)]
struct CommentForm {
    body: String,
    #[serde(default)]
    pick_event: Option<String>,
}

fn parse_event(raw: Option<&str>) -> Result<Option<i64>, AppError> {
    match raw.map(str::trim) {
        None | Some("") => Ok(None),
        Some(v) => v
            .parse()
            .map(Some)
            .map_err(|_| AppError::Rejected(format!("'{v}' is not a rift event number."))),
    }
}

async fn comment_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, well_id)): Path<(i64, i64)>,
    Form(form): Form<CommentForm>,
) -> PageResult<Response> {
    let well = load_well(&state, id, well_id).await?;
    let event = parse_event(form.pick_event.as_deref())?;
    match review::add_comment(&state.db, &well, event, &form.body, &user.name).await {
        Ok(c) => {
            announce_comment(&state, &well, &c);
            Ok(Redirect::to(&format!("/studies/{id}/wells/{well_id}#discussion")).into_response())
        }
        Err(e) => refused_on_page(&state, &well, e).await,
    }
}

fn shorten(text: &str) -> String {
    const MAX: usize = 80;
    if text.chars().count() <= MAX {
        text.to_string()
    } else {
        format!("{}…", text.chars().take(MAX).collect::<String>())
    }
}

/// The review part of a well: picks and comments.
#[derive(Debug, Serialize)]
pub struct ReviewView {
    pub picks: Vec<PickRow>,
    pub comments: Vec<CommentRow>,
}

async fn review_json(
    State(state): State<AppState>,
    Path((id, well_id)): Path<(i64, i64)>,
) -> ApiResult<Json<ReviewView>> {
    let well = load_well(&state, id, well_id).await?;
    let (picks, comments) = review::thread(&state.db, well.id).await?;
    Ok(Json(ReviewView { picks, comments }))
}

/// `PUT /api/studies/{id}/wells/{well_id}/picks/{event}` with
/// `{rift_onset_ma, rift_end_ma, model, state, version}`; 409 with the stored pick
/// when `version` is not the stored one.
#[derive(Debug, Deserialize)]
struct PickBody {
    rift_onset_ma: f64,
    rift_end_ma: f64,
    #[serde(default = "default_model")]
    model: String,
    #[serde(default = "default_state")]
    state: String,
    version: i64,
}

async fn pick_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, well_id, event)): Path<(i64, i64, i64)>,
    Json(body): Json<PickBody>,
) -> ApiResult<Json<PickRow>> {
    let well = load_well(&state, id, well_id).await?;
    let edit = PickEdit {
        event,
        rift_onset_ma: body.rift_onset_ma,
        rift_end_ma: body.rift_end_ma,
        model: body.model,
        state: body.state,
        version: body.version,
    };
    // A stale version answers 409 with the stored pick in `current` (AppError::Stale).
    let saved = review::save_pick(&state.db, &well, &edit, &user.name).await?;
    announce_saved(&state, &well, &saved, &user.name);
    Ok(Json(saved.pick))
}

#[derive(Debug, Deserialize)]
struct ClearBody {
    version: i64,
}

async fn clear_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, well_id, event)): Path<(i64, i64, i64)>,
    Json(body): Json<ClearBody>,
) -> ApiResult<Json<PickRow>> {
    let well = load_well(&state, id, well_id).await?;
    let removed = review::delete_pick(&state.db, &well, event, body.version, &user.name).await?;
    announce_cleared(&state, &well, event, &user.name);
    Ok(Json(removed))
}

#[derive(Debug, Deserialize)]
struct CommentBody {
    body: String,
    #[serde(default)]
    pick_event: Option<i64>,
}

async fn comment_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, well_id)): Path<(i64, i64)>,
    Json(body): Json<CommentBody>,
) -> ApiResult<(StatusCode, Json<CommentRow>)> {
    let well = load_well(&state, id, well_id).await?;
    let c = review::add_comment(&state.db, &well, body.pick_event, &body.body, &user.name).await?;
    announce_comment(&state, &well, &c);
    Ok((StatusCode::CREATED, Json(c)))
}
