//! The activity log of a study: every change with who, when, before and after.

use super::pages::ActivityPage;
use super::studies::{StudyInfo, load_study};
use super::{ApiResult, AppState, PageResult};
use crate::store;
use crate::store::activity::ActivityRow;
use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::Html;
use axum::routing::get;
use axum::{Json, Router};
use serde::{Deserialize, Serialize};

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/activity", get(activity_page))
        .route("/api/studies/{id}/activity", get(activity_json))
}

#[derive(Debug, Deserialize, Default)]
pub struct ActivityFilter {
    /// Only entries of this action (e.g. `upload`, `replace well`).
    pub action: Option<String>,
    pub limit: Option<i64>,
}

#[derive(Debug, Serialize)]
pub struct ActivityView {
    pub study: StudyInfo,
    pub action: Option<String>,
    pub entries: Vec<ActivityRow>,
}

async fn activity_view(
    state: &AppState,
    id: i64,
    filter: ActivityFilter,
) -> ApiResult<ActivityView> {
    let study = load_study(state, id).await?;
    let action = filter.action.filter(|a| !a.trim().is_empty());
    let limit = filter.limit.unwrap_or(500).clamp(1, 10_000);
    Ok(ActivityView {
        study: StudyInfo::from(&study),
        entries: store::activity::list(&state.db, id, action.as_deref(), limit).await?,
        action,
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
