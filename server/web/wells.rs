//! The well page: the column of surfaces and units, and (with the analysis) the
//! restored column and backstripping results at each age.

use super::pages::WellPage;
use super::studies::{StudyInfo, load_study};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::store;
use crate::store::wells::{SurfaceRow, WellRow};
use askama::Template;
use axum::extract::{Path, State};
use axum::response::Html;
use axum::routing::get;
use axum::{Json, Router};
use serde::Serialize;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/wells/{well_id}", get(well_page))
        .route("/api/studies/{id}/wells/{well_id}", get(well_json))
}

/// One row of the column table: a surface and the unit below it.
#[derive(Debug, Clone, Serialize)]
pub struct ColumnRow {
    pub horizon: String,
    pub depth_m: f64,
    pub age_ma: f64,
    /// Lithology of the unit below this surface (None on the deepest surface).
    pub unit_lithology: Option<String>,
    /// Present thickness of the unit below (m).
    pub unit_thickness_m: Option<f64>,
    pub water_depth_min_m: f64,
    pub water_depth_max_m: f64,
    pub eroded_m: Option<f64>,
    pub eroded_at_ma: Option<f64>,
}

fn column_rows(surfaces: &[SurfaceRow]) -> Vec<ColumnRow> {
    surfaces
        .iter()
        .enumerate()
        .map(|(i, s)| ColumnRow {
            horizon: s.horizon.clone(),
            depth_m: s.depth_m,
            age_ma: s.age_ma,
            unit_lithology: s.lithology.clone(),
            unit_thickness_m: surfaces.get(i + 1).map(|below| below.depth_m - s.depth_m),
            water_depth_min_m: s.water_depth_min_m,
            water_depth_max_m: s.water_depth_max_m,
            eroded_m: s.eroded_m,
            eroded_at_ma: s.eroded_at_ma,
        })
        .collect()
}

#[derive(Debug, Serialize)]
pub struct WellView {
    pub study: StudyInfo,
    pub well: WellRow,
    pub column: Vec<ColumnRow>,
}

async fn well_view(state: &AppState, study_id: i64, well_id: i64) -> ApiResult<WellView> {
    let study = load_study(state, study_id).await?;
    let well = store::wells::get(&state.db, study_id, well_id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("well {well_id} in study {study_id}")))?;
    let surfaces = store::wells::surfaces(&state.db, well_id).await?;
    Ok(WellView {
        study: StudyInfo::from(&study),
        well,
        column: column_rows(&surfaces),
    })
}

async fn well_page(
    State(state): State<AppState>,
    Path((id, well_id)): Path<(i64, i64)>,
) -> PageResult<Html<String>> {
    let view = well_view(&state, id, well_id).await?;
    Ok(Html(WellPage { view }.render()?))
}

async fn well_json(
    State(state): State<AppState>,
    Path((id, well_id)): Path<(i64, i64)>,
) -> ApiResult<Json<WellView>> {
    Ok(Json(well_view(&state, id, well_id).await?))
}
