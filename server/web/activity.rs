//! The activity log of a study: every change with who, when, before and after.

use super::exports::{self, ExportMeta};
use super::studies::{StudyInfo, load_study};
use super::{ApiResult, AppState, PageResult};
use crate::services;
use crate::services::activity::{self as log, ActivityRow};
use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::Html;
use axum::response::Response;
use axum::routing::get;
use axum::{Json, Router};
use serde::{Deserialize, Serialize};

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/activity", get(activity_page))
        .route("/api/studies/{id}/activity", get(activity_json))
        .route("/studies/{id}/activity/download", get(activity_csv))
}

#[derive(Debug, Deserialize, Default, Serialize, Clone)]
pub struct ActivityFilter {
    /// Only entries of this action (e.g. `upload`, `replace well`, `pick`).
    pub action: Option<String>,
    /// Only entries by this person.
    pub actor: Option<String>,
    pub limit: Option<i64>,
}

#[derive(Debug, Serialize)]
pub struct ActivityView {
    pub study: StudyInfo,
    pub action: Option<String>,
    pub actor: Option<String>,
    /// Every kind of change and every person in this study's log (for the filters).
    pub actions: Vec<String>,
    pub actors: Vec<String>,
    pub entries: Vec<ActivityRow>,
}

impl ActivityView {
    /// The query string of the current filter, for the CSV download link.
    pub fn filter_query(&self) -> String {
        let pairs: Vec<(&str, &str)> = [("action", &self.action), ("actor", &self.actor)]
            .into_iter()
            .filter_map(|(k, v)| v.as_deref().map(|v| (k, v)))
            .collect();
        serde_urlencoded::to_string(pairs).unwrap_or_default()
    }
}

async fn activity_view(
    state: &AppState,
    id: i64,
    filter: ActivityFilter,
) -> ApiResult<ActivityView> {
    let study = load_study(state, id).await?;
    let action = filter.action.filter(|a| !a.trim().is_empty());
    let actor = filter.actor.filter(|a| !a.trim().is_empty());
    let limit = filter.limit.unwrap_or(500).clamp(1, 100_000);
    let found = log::study_log(&state.db, id, action.as_deref(), actor.as_deref(), limit).await?;
    Ok(ActivityView {
        study: StudyInfo::from(&study),
        entries: found.entries,
        action,
        actor,
        actions: found.actions,
        actors: found.actors,
    })
}

async fn activity_page(
    State(state): State<AppState>,
    Path(id): Path<i64>,
    Query(filter): Query<ActivityFilter>,
) -> PageResult<Html<String>> {
    let view = activity_view(&state, id, filter).await?;
    Ok(Html(ActivityPage { view }.render()?))
}

async fn activity_json(
    State(state): State<AppState>,
    Path(id): Path<i64>,
    Query(filter): Query<ActivityFilter>,
) -> ApiResult<Json<ActivityView>> {
    Ok(Json(activity_view(&state, id, filter).await?))
}

/// The filtered log as CSV, with the usual export preamble.
async fn activity_csv(
    State(state): State<AppState>,
    Path(id): Path<i64>,
    Query(filter): Query<ActivityFilter>,
) -> ApiResult<Response> {
    let filter = ActivityFilter {
        limit: Some(filter.limit.unwrap_or(100_000)),
        ..filter
    };
    let view = activity_view(&state, id, filter).await?;
    let inputs = services::study_inputs(&state.db, id).await?;
    let meta = ExportMeta::new(&view.study.name, &inputs);
    let rows: Vec<Vec<String>> = view
        .entries
        .iter()
        .map(|e| {
            vec![
                e.at.clone(),
                e.actor.clone(),
                e.action.clone(),
                e.subject.clone(),
                e.before_state.clone().unwrap_or_default(),
                e.after_state.clone().unwrap_or_default(),
            ]
        })
        .collect();
    let what = format!("Activity of study {}", view.study.name);
    let body = exports::csv_text(
        &meta,
        &what,
        &["at_utc", "who", "change", "what", "before", "after"],
        &rows,
    );
    Ok(exports::download(
        "text/csv; charset=utf-8",
        &format!("{}-activity.csv", view.study.name),
        body,
    ))
}

#[derive(Template)]
#[template(path = "activity.html")]
pub struct ActivityPage {
    pub view: ActivityView,
}
