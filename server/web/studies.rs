//! The studies list and the study overview.

use super::pages::{StudiesPage, StudyPage};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::store;
use crate::store::studies::{StudyRow, StudySummary};
use crate::store::uploads::UploadRow;
use crate::store::wells::WellSummary;
use askama::Template;
use axum::extract::{Path, State};
use axum::response::{Html, Redirect};
use axum::routing::get;
use axum::{Form, Json, Router};
use serde::{Deserialize, Serialize};

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies", get(studies_page).post(create_study_form))
        .route("/api/studies", get(studies_json).post(create_study_json))
        .route("/studies/{id}", get(study_page))
        .route("/api/studies/{id}", get(study_json))
}

/// The study header shown on every page of a study.
#[derive(Debug, Clone, Serialize)]
pub struct StudyInfo {
    pub id: i64,
    pub name: String,
    pub description: String,
    pub created_at: String,
}

impl From<&StudyRow> for StudyInfo {
    fn from(s: &StudyRow) -> Self {
        StudyInfo {
            id: s.id,
            name: s.name.clone(),
            description: s.description.clone(),
            created_at: s.created_at.clone(),
        }
    }
}

/// Load a study or answer 404 naming it.
pub async fn load_study(state: &AppState, id: i64) -> Result<StudyRow, AppError> {
    store::studies::get(&state.db, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("study {id}")))
}

#[derive(Debug, Serialize)]
pub struct StudiesView {
    pub studies: Vec<StudySummary>,
}

async fn studies_view(state: &AppState) -> ApiResult<StudiesView> {
    Ok(StudiesView {
        studies: store::studies::list(&state.db).await?,
    })
}

async fn studies_page(State(state): State<AppState>) -> PageResult<Html<String>> {
    let view = studies_view(&state).await?;
    Ok(Html(StudiesPage { view }.render()?))
}

async fn studies_json(State(state): State<AppState>) -> ApiResult<Json<StudiesView>> {
    Ok(Json(studies_view(&state).await?))
}

#[derive(Debug, Deserialize)]
pub struct NewStudy {
    pub name: String,
    #[serde(default)]
    pub description: String,
}

async fn create_study(state: &AppState, new: NewStudy) -> ApiResult<i64> {
    let name = new.name.trim();
    if name.is_empty() || name.chars().count() > 120 {
        return Err(AppError::BadRequest(
            "A study needs a name of 1 to 120 characters.".into(),
        ));
    }
    if store::studies::find_by_name(&state.db, name).await?.is_some() {
        return Err(AppError::Conflict(format!(
            "A study named '{name}' already exists; choose another name."
        )));
    }
    crate::services::create_study(&state.db, name, new.description.trim(), super::LOCAL_ACTOR)
        .await
        .map_err(AppError::from)
}

async fn create_study_form(
    State(state): State<AppState>,
    Form(new): Form<NewStudy>,
) -> PageResult<Redirect> {
    let id = create_study(&state, new).await?;
    Ok(Redirect::to(&format!("/studies/{id}")))
}

async fn create_study_json(
    State(state): State<AppState>,
    Json(new): Json<NewStudy>,
) -> ApiResult<Json<serde_json::Value>> {
    let id = create_study(&state, new).await?;
    Ok(Json(serde_json::json!({ "id": id })))
}

#[derive(Debug, Serialize)]
pub struct StudyView {
    pub study: StudyInfo,
    pub wells: Vec<WellSummary>,
    pub uploads: Vec<UploadRow>,
    pub sea_level_points: usize,
}

async fn study_view(state: &AppState, id: i64) -> ApiResult<StudyView> {
    let study = load_study(state, id).await?;
    Ok(StudyView {
        study: StudyInfo::from(&study),
        wells: store::wells::summaries(&state.db, id).await?,
        uploads: store::uploads::list(&state.db, id).await?,
        sea_level_points: store::sea_level::points(&state.db, id).await?.len(),
    })
}

async fn study_page(State(state): State<AppState>, Path(id): Path<i64>) -> PageResult<Html<String>> {
    let view = study_view(&state, id).await?;
    Ok(Html(StudyPage { view }.render()?))
}

async fn study_json(State(state): State<AppState>, Path(id): Path<i64>) -> ApiResult<Json<StudyView>> {
    Ok(Json(study_view(&state, id).await?))
}
