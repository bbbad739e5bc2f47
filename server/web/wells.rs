//! The well page: the column of surfaces and units, and (with the analysis) the
//! restored column and backstripping results at each age.

use super::pages::WellPage;
use super::studies::{StudyInfo, load_study};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::analysis::{self, WellAnalysis, contract::WellOut};
use crate::services::{self, ServiceError};
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

/// One unit of the column restored to its position at an age.
#[derive(Debug, Clone, Serialize)]
pub struct RestoredUnitView {
    pub top_horizon: String,
    pub base_horizon: String,
    pub lithology: String,
    pub top_m: f64,
    pub base_m: f64,
    pub thickness_m: f64,
    pub mean_porosity: f64,
    pub density_kg_m3: f64,
}

/// The restored column at one age.
#[derive(Debug, Clone, Serialize)]
pub struct RestoredStepView {
    pub age_ma: f64,
    pub depositional_horizon: String,
    pub units: Vec<RestoredUnitView>,
}

#[derive(Debug, Serialize)]
pub struct WellView {
    pub study: StudyInfo,
    pub well: WellRow,
    pub column: Vec<ColumnRow>,
    /// The analysis in the shape of the batch JSON contract (None if it failed).
    pub analysis: Option<WellOut>,
    /// The restored column at every age, youngest first.
    pub restored: Vec<RestoredStepView>,
    /// Why the well could not be analysed, in words a user can act on.
    pub analysis_error: Option<String>,
}

fn restored_steps(a: &WellAnalysis) -> Vec<RestoredStepView> {
    let h = &a.history;
    h.steps
        .iter()
        .rev()
        .map(|s| RestoredStepView {
            age_ma: s.age_ma,
            depositional_horizon: s.depositional_horizon.clone(),
            units: s
                .units
                .iter()
                .map(|u| RestoredUnitView {
                    top_horizon: h.top_horizon(u).map(str::to_string).unwrap_or_else(|| format!("eroded section on {}", h.base_horizon(u))),
                    base_horizon: h.base_horizon(u).to_string(),
                    lithology: h.lithology(u).to_string(),
                    top_m: u.top_m,
                    base_m: u.base_m,
                    thickness_m: u.base_m - u.top_m,
                    mean_porosity: u.mean_porosity,
                    density_kg_m3: u.density_kg_m3,
                })
                .collect(),
        })
        .collect()
}

/// Analyse a stored well off the async runtime.
async fn analyse(state: &AppState, study_id: i64, well: &WellRow, surfaces: &[SurfaceRow]) -> Result<Result<WellAnalysis, String>, AppError> {
    let inputs = match services::study_inputs(&state.db, study_id).await {
        Ok(i) => i,
        Err(ServiceError::Invalid(msg)) => return Ok(Err(msg)),
        Err(e) => return Err(e.into()),
    };
    let column = match services::well_column(&well.name, surfaces) {
        Ok(c) => c,
        Err(e) => return Ok(Err(e.to_string())),
    };
    tokio::task::spawn_blocking(move || analysis::analyse_well(&column, &inputs, None).map_err(|e| e.to_string()))
        .await
        .map_err(|e| AppError::Internal(anyhow::anyhow!("analysis task failed: {e}")))
}

async fn well_view(state: &AppState, study_id: i64, well_id: i64) -> ApiResult<WellView> {
    let study = load_study(state, study_id).await?;
    let well = store::wells::get(&state.db, study_id, well_id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("well {well_id} in study {study_id}")))?;
    let surfaces = store::wells::surfaces(&state.db, well_id).await?;
    let (analysis, restored, analysis_error) = match analyse(state, study_id, &well, &surfaces).await? {
        Ok(a) => (Some(analysis::well_out(&a)), restored_steps(&a), None),
        Err(e) => (None, Vec::new(), Some(e)),
    };
    Ok(WellView {
        study: StudyInfo::from(&study),
        well,
        column: column_rows(&surfaces),
        analysis,
        restored,
        analysis_error,
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
