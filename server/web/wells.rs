//! The well page: the column of surfaces and units, and (with the analysis) the
//! restored column and backstripping results at each age.

use super::exports::{self, ExportMeta};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::services::results::WellResult;
use crate::services::well_charts::{self, WellCharts};
use crate::services::well_view::{self, Trial, WellView, column_rows};
use askama::Template;
use axum::extract::Query;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::IntoResponse;
use axum::response::{Html, Response};
use axum::routing::get;
use axum::{Json, Router};
use sagline_charts::ChartSize;
use sagline_science::analysis::{self, WellAnalysis};
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
    tokio::task::spawn_blocking(move || well_file(&meta, &r, &a, &file))
        .await
        .map_err(|e| AppError::Internal(anyhow::anyhow!("download task failed: {e}")))?
}

/// One download of the well page, built from its analysis.
fn well_file(
    meta: &ExportMeta,
    r: &WellResult,
    a: &WellAnalysis,
    file: &str,
) -> ApiResult<Response> {
    let name = &r.well.name;
    let size = ChartSize::default();
    let svg = |body: String| {
        exports::download(
            "image/svg+xml",
            &format!("{name}-{file}"),
            meta.stamp_svg(&body),
        )
    };
    let csv = |what: &str, header: &[&str], rows: Vec<Vec<String>>| {
        exports::download(
            "text/csv; charset=utf-8",
            &format!("{name}-{file}"),
            exports::csv_text(&meta, what, header, &rows),
        )
    };
    Ok(match file {
        "subsidence.svg" => svg(sagline_charts::subsidence_chart(
            &well_charts::subsidence_data(name, a),
            size,
        )),
        "burial.svg" => svg(sagline_charts::burial_chart(
            &well_charts::burial_data(name, a),
            size,
        )),
        "heat-flow.svg" => svg(sagline_charts::heat_flow_chart(
            &well_charts::heat_flow_data(name, a),
            size,
        )),
        "subsidence.png" => {
            let chart =
                sagline_charts::subsidence_chart(&well_charts::subsidence_data(name, a), size);
            exports::png_download(&meta, &format!("{name}-{file}"), &chart)
        }
        "burial.png" => {
            let chart = sagline_charts::burial_chart(&well_charts::burial_data(name, a), size);
            exports::png_download(&meta, &format!("{name}-{file}"), &chart)
        }
        "heat-flow.png" => {
            let chart =
                sagline_charts::heat_flow_chart(&well_charts::heat_flow_data(name, a), size);
            exports::png_download(&meta, &format!("{name}-{file}"), &chart)
        }
        "history.csv" => {
            let out = analysis::well_out(a);
            csv(
                &format!("Backstripping history of well {name}"),
                &analysis::CSV_HEADER,
                analysis::csv_rows(&out),
            )
        }
        "heat-flow.csv" => {
            let rows = a
                .interpretation
                .as_ref()
                .map(|i| {
                    i.heat_flow_grid
                        .iter()
                        .map(|p| {
                            vec![
                                name.clone(),
                                format!("{:.3}", p.age_ma),
                                format!("{:.3}", p.value),
                            ]
                        })
                        .collect()
                })
                .unwrap_or_default();
            csv(
                &format!(
                    "Basal (mantle) heat flow of the fitted model, no radiogenic heat, well {name}"
                ),
                &["well", "age_ma", "heat_flow_mw_m2"],
                rows,
            )
        }
        "column.csv" => {
            let rows = column_rows(&r.surfaces)
                .into_iter()
                .map(|c| {
                    vec![
                        name.clone(),
                        c.horizon,
                        c.depth_m.to_string(),
                        c.age_ma.to_string(),
                        c.unit_lithology.unwrap_or_default(),
                        c.water_depth_min_m.to_string(),
                        c.water_depth_max_m.to_string(),
                        c.eroded_m.map(|x| x.to_string()).unwrap_or_default(),
                        c.eroded_at_ma.map(|x| x.to_string()).unwrap_or_default(),
                    ]
                })
                .collect();
            csv(
                &format!("Column of well {name}"),
                &[
                    "well",
                    "horizon",
                    "depth_m",
                    "age_ma",
                    "lithology",
                    "water_depth_min_m",
                    "water_depth_max_m",
                    "eroded_m",
                    "eroded_at_ma",
                ],
                rows,
            )
        }
        "analysis.json" => {
            let body = serde_json::json!({ "export": meta, "wells": [analysis::well_out(a)] });
            exports::download(
                "application/json",
                &format!("{name}-analysis.json"),
                serde_json::to_string_pretty(&body).unwrap_or_default(),
            )
        }
        other => return Err(AppError::NotFound(format!("download '{other}'"))),
    })
}
