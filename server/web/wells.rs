//! The well page: the column of surfaces and units, and (with the analysis) the
//! restored column and backstripping results at each age.

use super::exports::{self, ExportMeta};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::services::well_charts::{self, WellCharts};
use crate::services::well_view::{self, FileBody, Trial, WellView};
use askama::Template;
use axum::extract::Query;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::IntoResponse;
use axum::response::{Html, Response};
use axum::routing::get;
use axum::{Json, Router};
use serde::Serialize;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/wells/{well_id}", get(well_page))
        .route("/api/studies/{id}/wells/{well_id}", get(well_json))
        .route(
            "/studies/{id}/wells/{well_id}/download/{file}",
            get(well_download),
        )
}

/// A message at the top of the well page after a refused save.
#[derive(Debug, Clone, Serialize)]
pub struct PageMessage {
    pub problem: bool,
    pub text: String,
}

impl PageMessage {
    pub fn problem(text: String) -> Self {
        PageMessage {
            problem: true,
            text,
        }
    }
}

/// The well page: its view, the charts drawn from its analysis, and a message after a
/// refused save.
#[derive(Template)]
#[template(path = "well.html")]
pub struct WellPage {
    pub view: WellView,
    pub message: Option<PageMessage>,
    pub charts: WellCharts,
}

/// Render the well page with a status and an optional message (used after a refused save).
pub async fn render_well_page(
    state: &AppState,
    study_id: i64,
    well_id: i64,
    trial: Option<&Trial>,
    message: Option<PageMessage>,
    status: StatusCode,
) -> PageResult<Response> {
    let (view, analysis) =
        well_view::view(&state.db, &state.cache, study_id, well_id, trial).await?;
    let charts = match analysis {
        Some(a) => well_charts::draw(view.well.name.clone(), a).await?,
        None => WellCharts::default(),
    };
    let page = WellPage {
        view,
        message,
        charts,
    };
    Ok((status, Html(page.render()?)).into_response())
}

async fn well_page(
    State(state): State<AppState>,
    Path((id, well_id)): Path<(i64, i64)>,
    Query(trial): Query<Trial>,
) -> PageResult<Response> {
    render_well_page(&state, id, well_id, Some(&trial), None, StatusCode::OK).await
}

async fn well_json(
    State(state): State<AppState>,
    Path((id, well_id)): Path<(i64, i64)>,
    Query(trial): Query<Trial>,
) -> ApiResult<Json<WellView>> {
    let (view, _) = well_view::view(&state.db, &state.cache, id, well_id, Some(&trial)).await?;
    Ok(Json(view))
}

/// Downloads of the well page: charts as SVG, tables as CSV, the analysis as JSON.
async fn well_download(
    State(state): State<AppState>,
    Path((id, well_id, file)): Path<(i64, i64, String)>,
) -> ApiResult<Response> {
    let (study, inputs, r) = well_view::for_download(&state.db, &state.cache, id, well_id).await?;
    let meta = ExportMeta::new(&study.name, &inputs);
    let a = r.outcome.as_ref().map(std::sync::Arc::clone).map_err(|e| {
        AppError::Rejected(format!("Well {} could not be analysed: {e}", r.well.name))
    })?;
    // Drawing, rasterising and serialising stay off the async workers.
    tokio::task::spawn_blocking(move || {
        match well_view::well_file(&meta, &r, &a, &file).map(|f| (f.name, f.content_type, f.body)) {
            Some((name, _, FileBody::Png(svg))) => Ok(exports::png_download(&meta, &name, &svg)),
            Some((name, content_type, FileBody::Text(body))) => {
                Ok(exports::download(content_type, &name, body))
            }
            None => Err(AppError::NotFound(format!("download '{file}'"))),
        }
    })
    .await
    .map_err(|e| AppError::Internal(anyhow::anyhow!("download task failed: {e}")))?
}
