//! The studies list and the study overview.

use super::exports::{self, ExportMeta};
use super::{ApiResult, AppError, AppState, PageResult};
use crate::services::results::{self, WellResult};
use crate::services::studies::StudyRow;
use crate::store;
use crate::store::picks::PickRow;
use crate::store::studies::StudySummary;
use crate::store::uploads::UploadRow;
use crate::store::wells::WellSummary;
use askama::Template;
use axum::extract::{Path, State};
use axum::response::{Html, Redirect, Response};
use axum::routing::get;
use axum::{Form, Json, Router};
use sagline_charts::{ChartSize, MapSection, MapWell, RiftTimingData, RiftTimingWell, WellMapData};
use sagline_science::analysis::contract::RiftEventOut;
use sagline_science::analysis::{self, StudyInputs};
use serde::{Deserialize, Serialize};
use std::collections::HashMap;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies", get(studies_page).post(create_study_form))
        .route("/api/studies", get(studies_json).post(create_study_json))
        .route("/studies/{id}", get(study_page))
        .route("/api/studies/{id}", get(study_json))
        .route("/studies/{id}/download/{file}", get(study_download))
}

pub use crate::services::studies::StudyInfo;

/// Load a study or answer 404 naming it.
pub async fn load_study(state: &AppState, id: i64) -> Result<StudyRow, AppError> {
    Ok(crate::services::studies::load(&state.db, id).await?)
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

async fn create_study(state: &AppState, new: NewStudy, actor: &str) -> ApiResult<i64> {
    let name = new.name.trim();
    if name.is_empty() || name.chars().count() > 120 {
        return Err(AppError::BadRequest(
            "A study needs a name of 1 to 120 characters.".into(),
        ));
    }
    if store::studies::find_by_name(&state.db, name)
        .await?
        .is_some()
    {
        return Err(AppError::Conflict(format!(
            "A study named '{name}' already exists; choose another name."
        )));
    }
    crate::services::create_study(&state.db, name, new.description.trim(), actor)
        .await
        .map_err(AppError::from)
}

async fn create_study_form(
    State(state): State<AppState>,
    user: crate::services::accounts::SignedIn,
    Form(new): Form<NewStudy>,
) -> PageResult<Redirect> {
    let id = create_study(&state, new, &user.name).await?;
    Ok(Redirect::to(&format!("/studies/{id}")))
}

async fn create_study_json(
    State(state): State<AppState>,
    user: crate::services::accounts::SignedIn,
    Json(new): Json<NewStudy>,
) -> ApiResult<Json<serde_json::Value>> {
    let id = create_study(&state, new, &user.name).await?;
    Ok(Json(serde_json::json!({ "id": id })))
}

/// One row of the overview's wells table: the column's extent and the fit.
#[derive(Debug, Clone, Serialize)]
pub struct OverviewRow {
    pub id: i64,
    pub name: String,
    pub x: Option<f64>,
    pub y: Option<f64>,
    pub surfaces: i64,
    pub base_depth_m: Option<f64>,
    pub oldest_age_ma: Option<f64>,
    pub rift_onset_ma: Option<f64>,
    pub rift_end_ma: Option<f64>,
    pub beta: Option<f64>,
    pub beta_min: Option<f64>,
    pub beta_max: Option<f64>,
    pub delta: Option<f64>,
    pub rms_misfit_m: Option<f64>,
    /// "proposed" or "team pick" when there is a fit.
    pub origin: Option<String>,
    /// Each rift event of the fit (one or two).
    pub rift_events: Vec<RiftEventOut>,
    /// The team's pick state (of rift event 1, or "draft/agreed/questioned" per event), if any.
    pub pick_state: Option<String>,
    /// Why there is no fit, or why the well could not be analysed.
    pub note: Option<String>,
}

/// The overview's charts as inline SVG (left out of the JSON twin).
#[derive(Debug, Default)]
pub struct OverviewCharts {
    pub map: String,
    pub rift_timing: String,
}

#[derive(Debug, Serialize)]
pub struct StudyView {
    pub study: StudyInfo,
    pub wells: Vec<OverviewRow>,
    pub uploads: Vec<UploadRow>,
    pub sea_level_points: usize,
    #[serde(skip)]
    pub charts: OverviewCharts,
}

fn overview_row(summary: &WellSummary, r: &WellResult, picks: &[&PickRow]) -> OverviewRow {
    // Only the fit is needed here: skip building the full history of the contract.
    let stretching = r
        .outcome
        .as_ref()
        .ok()
        .and_then(|a| a.interpretation.as_ref().ok())
        .and_then(analysis::stretching_out);
    let st = stretching.as_ref();
    OverviewRow {
        id: summary.id,
        name: summary.name.clone(),
        x: summary.x,
        y: summary.y,
        surfaces: summary.surfaces,
        base_depth_m: summary.base_depth_m,
        oldest_age_ma: summary.oldest_age_ma,
        rift_onset_ma: st.map(|s| s.rift_onset_ma),
        rift_end_ma: st.map(|s| s.rift_end_ma),
        beta: st.map(|s| s.beta),
        beta_min: st.map(|s| s.beta_min),
        beta_max: st.map(|s| s.beta_max),
        delta: st.and_then(|s| s.two_layer.as_ref()).map(|t| t.delta),
        rms_misfit_m: st.map(|s| s.rms_misfit_m),
        origin: st.map(|s| s.origin.to_string()),
        rift_events: st.map(|s| s.rift_events.clone()).unwrap_or_default(),
        pick_state: match picks {
            [] => None,
            [one] => Some(one.state.clone()),
            many => Some(
                many.iter()
                    .map(|p| format!("event {}: {}", p.event, p.state))
                    .collect::<Vec<_>>()
                    .join(", "),
            ),
        },
        note: match &r.outcome {
            Err(e) => Some(format!("not analysed: {e}")),
            Ok(a) => analysis::fit_note(a),
        },
    }
}

/// The analysis of every well, in the order of the well summaries (by name).
async fn overview_rows(
    state: &AppState,
    id: i64,
    summaries: &[WellSummary],
) -> ApiResult<(StudyInputs, Vec<OverviewRow>)> {
    let picks = store::picks::for_study(&state.db, id).await?;
    let mut picks_by_well: HashMap<i64, Vec<&PickRow>> = HashMap::new();
    for p in &picks {
        picks_by_well.entry(p.well_id).or_default().push(p);
    }
    let memo = results::study_results_memo(&state.db, &state.cache, &state.study_memo, id).await?;
    let (inputs, results) = &*memo;
    let by_id: HashMap<i64, &WellResult> = results.iter().map(|r| (r.well.id, r)).collect();
    let rows = summaries
        .iter()
        .filter_map(|s| {
            let mine = picks_by_well
                .get(&s.id)
                .map(Vec::as_slice)
                .unwrap_or_default();
            by_id.get(&s.id).map(|r| overview_row(s, r, mine))
        })
        .collect();
    Ok((inputs.clone(), rows))
}

fn overview_charts(study: &str, rows: &[OverviewRow], sections: &[MapSection]) -> OverviewCharts {
    let size = ChartSize::default();
    OverviewCharts {
        map: sagline_charts::well_map_chart(&map_data(study, rows, sections), size),
        rift_timing: sagline_charts::rift_timing_chart(
            &rift_timing_data(study, rows),
            ChartSize {
                width: 900,
                height: rift_chart_height(rows.len()),
            },
        ),
    }
}

/// Taller for many wells, so every bar stays visible.
fn rift_chart_height(wells: usize) -> u32 {
    (160 + 14 * wells as u32).clamp(320, 1400)
}

/// The study's section lines for the map.
async fn map_sections(state: &AppState, id: i64) -> ApiResult<Vec<MapSection>> {
    Ok(crate::services::sections::list(&state.db, id)
        .await?
        .into_iter()
        .map(|s| MapSection {
            name: s.name,
            points: s.points.iter().map(|p| (p.x_m, p.y_m)).collect(),
        })
        .collect())
}

fn map_data(study: &str, rows: &[OverviewRow], sections: &[MapSection]) -> WellMapData {
    WellMapData {
        title: format!("Wells of {study} by stretching factor β"),
        wells: rows
            .iter()
            .map(|r| MapWell {
                name: r.name.clone(),
                x_m: r.x.unwrap_or(f64::NAN),
                y_m: r.y.unwrap_or(f64::NAN),
                beta: r.beta,
            })
            .collect(),
        sections: sections.to_vec(),
    }
}

fn rift_timing_data(study: &str, rows: &[OverviewRow]) -> RiftTimingData {
    RiftTimingData {
        title: format!("Rift timing across the wells of {study}"),
        wells: rows
            .iter()
            .filter_map(|r| {
                let (first, later) = r.rift_events.split_first()?;
                Some(RiftTimingWell {
                    name: r.name.clone(),
                    rift_onset_ma: first.rift_onset_ma,
                    rift_end_ma: first.rift_end_ma,
                    later_events: later
                        .iter()
                        .map(|e| (e.rift_onset_ma, e.rift_end_ma))
                        .collect(),
                })
            })
            .collect(),
        wells_without_fit: rows
            .iter()
            .filter(|r| r.beta.is_none())
            .map(|r| r.name.clone())
            .collect(),
    }
}

/// The overview; `draw` its charts only for the page that shows them.
async fn study_view(state: &AppState, id: i64, draw: bool) -> ApiResult<StudyView> {
    let study = load_study(state, id).await?;
    let summaries = store::wells::summaries(&state.db, id).await?;
    let (_, wells) = overview_rows(state, id, &summaries).await?;
    let (wells, charts) = if draw {
        let name = study.name.clone();
        let sections = map_sections(state, id).await?;
        tokio::task::spawn_blocking(move || {
            let charts = overview_charts(&name, &wells, &sections);
            (wells, charts)
        })
        .await
        .map_err(|e| AppError::Internal(anyhow::anyhow!("chart task failed: {e}")))?
    } else {
        (wells, OverviewCharts::default())
    };
    Ok(StudyView {
        study: StudyInfo::from(&study),
        wells,
        uploads: store::uploads::list(&state.db, id).await?,
        sea_level_points: store::sea_level::points(&state.db, id).await?.len(),
        charts,
    })
}

/// Downloads of the overview: the wells table (CSV), the map and rift-timing charts
/// (SVG), and the full analysis of every well (JSON).
async fn study_download(
    State(state): State<AppState>,
    Path((id, file)): Path<(i64, String)>,
) -> ApiResult<Response> {
    let study = load_study(&state, id).await?;
    let summaries = store::wells::summaries(&state.db, id).await?;
    let (inputs, rows) = overview_rows(&state, id, &summaries).await?;
    let meta = ExportMeta::new(&study.name, &inputs);
    let memo = if file == "analysis.json" {
        Some(results::study_results_memo(&state.db, &state.cache, &state.study_memo, id).await?)
    } else {
        None
    };
    let base = study.name.clone();
    let sections = map_sections(&state, id).await?;
    // Drawing, rasterising and serialising stay off the async workers.
    tokio::task::spawn_blocking(move || {
        study_file(&meta, &base, &rows, &sections, memo.as_deref(), &file)
    })
    .await
    .map_err(|e| AppError::Internal(anyhow::anyhow!("download task failed: {e}")))?
}

/// One download of the overview.
fn study_file(
    meta: &ExportMeta,
    base: &str,
    rows: &[OverviewRow],
    sections: &[MapSection],
    memo: Option<&results::StudyResults>,
    file: &str,
) -> ApiResult<Response> {
    let meta = meta.clone();
    let base = base.to_string();
    Ok(match file {
        "wells.csv" => {
            let num = |x: Option<f64>, d: usize| x.map(|v| format!("{v:.d$}")).unwrap_or_default();
            let table: Vec<Vec<String>> = rows
                .iter()
                .map(|r| {
                    vec![
                        r.name.clone(),
                        num(r.x, 1),
                        num(r.y, 1),
                        r.surfaces.to_string(),
                        num(r.rift_onset_ma, 3),
                        num(r.rift_end_ma, 3),
                        num(r.beta, 4),
                        num(r.beta_min, 4),
                        num(r.beta_max, 4),
                        num(r.delta, 4),
                        num(r.rms_misfit_m, 2),
                        r.origin.clone().unwrap_or_default(),
                        r.pick_state.clone().unwrap_or_default(),
                        r.note.clone().unwrap_or_default(),
                    ]
                })
                .collect();
            let header = [
                "well",
                "x_m",
                "y_m",
                "surfaces",
                "rift_onset_ma",
                "rift_end_ma",
                "beta",
                "beta_min",
                "beta_max",
                "delta",
                "rms_misfit_m",
                "timing",
                "pick_state",
                "note",
            ];
            exports::download(
                "text/csv; charset=utf-8",
                &format!("{base}-wells.csv"),
                exports::csv_text(&meta, &format!("Wells of study {base}"), &header, &table),
            )
        }
        "map.svg" => exports::download(
            "image/svg+xml",
            &format!("{base}-map.svg"),
            meta.stamp_svg(&sagline_charts::well_map_chart(
                &map_data(&base, rows, sections),
                ChartSize::default(),
            )),
        ),
        "rift-timing.svg" => {
            let size = ChartSize {
                width: 900,
                height: rift_chart_height(rows.len()),
            };
            exports::download(
                "image/svg+xml",
                &format!("{base}-rift-timing.svg"),
                meta.stamp_svg(&sagline_charts::rift_timing_chart(
                    &rift_timing_data(&base, rows),
                    size,
                )),
            )
        }
        "map.png" => {
            let chart = sagline_charts::well_map_chart(
                &map_data(&base, rows, sections),
                ChartSize::default(),
            );
            exports::png_download(&meta, &format!("{base}-map.png"), &chart)
        }
        "rift-timing.png" => {
            let size = ChartSize {
                width: 900,
                height: rift_chart_height(rows.len()),
            };
            let chart = sagline_charts::rift_timing_chart(&rift_timing_data(&base, rows), size);
            exports::png_download(&meta, &format!("{base}-rift-timing.png"), &chart)
        }
        "analysis.json" => {
            let Some((inputs, results)) = memo else {
                return Err(AppError::Internal(anyhow::anyhow!(
                    "the study's results were not loaded"
                )));
            };
            let wells: Vec<_> = results
                .iter()
                .map(|r| match &r.outcome {
                    Ok(a) => analysis::well_out(a),
                    Err(e) => analysis::failed_well_out(
                        &r.well.name,
                        &sagline_science::ScienceError::InvalidColumn {
                            well: r.well.name.clone(),
                            reason: e.clone(),
                        },
                    ),
                })
                .collect();
            let body = serde_json::json!({ "export": meta, "parameters": analysis::parameters_out(inputs), "wells": wells });
            exports::download(
                "application/json",
                &format!("{base}-analysis.json"),
                serde_json::to_string_pretty(&body).unwrap_or_default(),
            )
        }
        other => return Err(AppError::NotFound(format!("download '{other}'"))),
    })
}

async fn study_page(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> PageResult<Html<String>> {
    let view = study_view(&state, id, true).await?;
    Ok(Html(StudyPage { view }.render()?))
}

async fn study_json(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> ApiResult<Json<StudyView>> {
    Ok(Json(study_view(&state, id, false).await?))
}

#[derive(Template)]
#[template(path = "studies.html")]
pub struct StudiesPage {
    pub view: StudiesView,
}

#[derive(Template)]
#[template(path = "study.html")]
pub struct StudyPage {
    pub view: StudyView,
}
