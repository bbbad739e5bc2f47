//! Sections of a study: the list with a form to add one by coordinates, the section
//! page (its wells, Airy against flexural subsidence per well, the Te sweep, the
//! deflection chart, the form to change the line, distance and Te), and their JSON twins.

use super::exports;
use super::{ApiResult, AppError, AppState, PageResult};
use crate::services::ServiceError;
use crate::services::accounts::SignedIn;
use crate::services::sections::{self, Section, SectionEdit, SectionView, SectionsView};
use askama::Template;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use axum::{Form, Json, Router};
use serde::Deserialize;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/sections", get(list_page).post(create_form))
        .route(
            "/api/studies/{id}/sections",
            get(list_json).post(create_json),
        )
        .route(
            "/studies/{id}/sections/{section_id}",
            get(section_page).post(update_form),
        )
        .route(
            "/api/studies/{id}/sections/{section_id}",
            get(section_json).put(update_json),
        )
        .route(
            "/studies/{id}/sections/{section_id}/remove",
            post(remove_form),
        )
        .route(
            "/api/studies/{id}/sections/{section_id}/remove",
            post(remove_json),
        )
        .route(
            "/studies/{id}/sections/{section_id}/download/{file}",
            get(download),
        )
}

/// A message at the top of a page after a refused change.
#[derive(Debug, Clone)]
pub struct Refusal {
    pub text: String,
}

#[derive(Template)]
#[template(path = "sections.html")]
pub struct SectionsPage {
    pub view: SectionsView,
    pub message: Option<Refusal>,
    /// What the refused form said, to show it again.
    pub form: SectionForm,
}

#[derive(Template)]
#[template(path = "section.html")]
pub struct SectionPage {
    pub view: SectionView,
    pub message: Option<Refusal>,
}

/// The add and edit forms: the points as typed (`x, y` per line), numbers as text.
#[derive(Debug, Clone, Default, Deserialize)]
pub struct SectionForm {
    #[serde(default)]
    pub name: String,
    #[serde(default)]
    pub points: String,
    #[serde(default)]
    pub max_offset_m: String,
    #[serde(default)]
    pub elastic_thickness_km: String,
    #[serde(default)]
    pub te_state: Option<String>,
    #[serde(default)]
    pub version: Option<i64>,
}

fn number(label: &str, text: &str, default: f64) -> Result<f64, AppError> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(default);
    }
    t.parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| AppError::Rejected(format!("{label}: '{t}' is not a number.")))
}

impl SectionForm {
    fn edit(&self) -> Result<SectionEdit, AppError> {
        Ok(SectionEdit {
            name: self.name.clone(),
            points: sections::points_from_text(&self.points)?,
            max_offset_m: number(
                "Distance from the line (m)",
                &self.max_offset_m,
                sections::DEFAULT_MAX_OFFSET_M,
            )?,
            elastic_thickness_km: number(
                "Elastic thickness Te (km)",
                &self.elastic_thickness_km,
                sections::DEFAULT_TE_KM,
            )?,
            te_state: self
                .te_state
                .clone()
                .unwrap_or_else(|| "proposed".to_string()),
            version: self.version.unwrap_or(0),
        })
    }
}

/// The status and message of a refused form (409 for a stale save or a taken name,
/// 422 for an invalid value), or the error itself when it is not a refusal the page shows.
fn refusal(error: AppError) -> Result<(StatusCode, Refusal), AppError> {
    let status = error.status();
    match error {
        AppError::Rejected(text)
        | AppError::Conflict(text)
        | AppError::Stale { message: text, .. } => Ok((status, Refusal { text })),
        other => Err(other),
    }
}

async fn render_list(
    state: &AppState,
    id: i64,
    message: Option<Refusal>,
    form: SectionForm,
    status: StatusCode,
) -> PageResult<Response> {
    let view = sections::sections_view(&state.db, id).await?;
    let page = SectionsPage {
        view,
        message,
        form,
    };
    Ok((status, Html(page.render()?)).into_response())
}

async fn list_page(State(state): State<AppState>, Path(id): Path<i64>) -> PageResult<Response> {
    render_list(&state, id, None, SectionForm::default(), StatusCode::OK).await
}

async fn list_json(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> ApiResult<Json<SectionsView>> {
    Ok(Json(sections::sections_view(&state.db, id).await?))
}

async fn create_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Form(form): Form<SectionForm>,
) -> PageResult<Response> {
    let outcome = match form.edit() {
        Ok(edit) => sections::create(&state.db, id, &edit, &user.name)
            .await
            .map_err(AppError::from),
        Err(e) => Err(e),
    };
    match outcome {
        Ok(s) => Ok(Redirect::to(&format!("/studies/{id}/sections/{}", s.id)).into_response()),
        Err(e) => {
            let (status, message) = refusal(e)?;
            render_list(&state, id, Some(message), form, status).await
        }
    }
}

async fn create_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Json(edit): Json<SectionEdit>,
) -> ApiResult<(StatusCode, Json<Section>)> {
    let s = sections::create(&state.db, id, &edit, &user.name).await?;
    Ok((StatusCode::CREATED, Json(s)))
}

/// `?age_ma=`: the age the chart and the Te sweep table show.
#[derive(Debug, Default, Deserialize)]
struct AgeQuery {
    #[serde(default)]
    age_ma: Option<f64>,
}

async fn render_section(
    state: &AppState,
    id: i64,
    section_id: i64,
    age_ma: Option<f64>,
    message: Option<Refusal>,
    status: StatusCode,
) -> PageResult<Response> {
    let view = sections::section_view(
        &state.db,
        &state.cache,
        &state.study_memo,
        id,
        section_id,
        age_ma,
        true,
    )
    .await?;
    let page = SectionPage { view, message };
    Ok((status, Html(page.render()?)).into_response())
}

async fn section_page(
    State(state): State<AppState>,
    Path((id, section_id)): Path<(i64, i64)>,
    Query(q): Query<AgeQuery>,
) -> PageResult<Response> {
    render_section(&state, id, section_id, q.age_ma, None, StatusCode::OK).await
}

async fn section_json(
    State(state): State<AppState>,
    Path((id, section_id)): Path<(i64, i64)>,
    Query(q): Query<AgeQuery>,
) -> ApiResult<Json<SectionView>> {
    let view = sections::section_view(
        &state.db,
        &state.cache,
        &state.study_memo,
        id,
        section_id,
        q.age_ma,
        false,
    )
    .await?;
    Ok(Json(view))
}

async fn update_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, section_id)): Path<(i64, i64)>,
    Form(form): Form<SectionForm>,
) -> PageResult<Response> {
    let outcome = match form.edit() {
        Ok(edit) => sections::update(&state.db, id, section_id, &edit, &user.name)
            .await
            .map_err(AppError::from),
        Err(e) => Err(e),
    };
    match outcome {
        Ok(_) => Ok(Redirect::to(&format!("/studies/{id}/sections/{section_id}")).into_response()),
        Err(e) => {
            let (status, message) = refusal(e)?;
            render_section(&state, id, section_id, None, Some(message), status).await
        }
    }
}

/// `PUT /api/studies/{id}/sections/{section_id}` with `{name, points: [{x_m, y_m}, ..],
/// max_offset_m, elastic_thickness_km, te_state, version}`; 409 with the stored section
/// when `version` is not the stored one.
async fn update_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, section_id)): Path<(i64, i64)>,
    Json(edit): Json<SectionEdit>,
) -> ApiResult<Json<Section>> {
    Ok(Json(
        sections::update(&state.db, id, section_id, &edit, &user.name).await?,
    ))
}

#[derive(Debug, Deserialize)]
struct RemoveBody {
    version: i64,
}

async fn remove_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, section_id)): Path<(i64, i64)>,
    Form(body): Form<RemoveBody>,
) -> PageResult<Response> {
    match sections::remove(&state.db, id, section_id, body.version, &user.name).await {
        Ok(_) => Ok(Redirect::to(&format!("/studies/{id}/sections")).into_response()),
        Err(ServiceError::NotFound(what)) => Err(AppError::NotFound(what).into()),
        Err(e) => {
            let (status, message) = refusal(e.into())?;
            render_section(&state, id, section_id, None, Some(message), status).await
        }
    }
}

async fn remove_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, section_id)): Path<(i64, i64)>,
    Json(body): Json<RemoveBody>,
) -> ApiResult<Json<Section>> {
    Ok(Json(
        sections::remove(&state.db, id, section_id, body.version, &user.name).await?,
    ))
}

/// Downloads of the section page: the deflection chart and the restored section at
/// `?age_ma=` (SVG, PNG) and
/// the Airy-against-flexural table (CSV), each saying what it is and with the caution.
async fn download(
    State(state): State<AppState>,
    Path((id, section_id, file)): Path<(i64, i64, String)>,
    Query(q): Query<AgeQuery>,
) -> ApiResult<Response> {
    const FILES: [&str; 5] = [
        "deflection.svg",
        "deflection.png",
        "restored.svg",
        "restored.png",
        "comparison.csv",
    ];
    if !FILES.contains(&file.as_str()) {
        return Err(AppError::NotFound(format!("download '{file}'")));
    }
    let view = sections::section_view(
        &state.db,
        &state.cache,
        &state.study_memo,
        id,
        section_id,
        q.age_ma,
        true,
    )
    .await?;
    if let Some(e) = &view.analysis_error {
        return Err(AppError::Rejected(format!(
            "Section '{}' could not be analysed: {e}",
            view.section.name
        )));
    }
    let base = format!("{}-{}", view.study.name, view.section.name);
    // Rasterising and writing stay off the async workers.
    tokio::task::spawn_blocking(move || match file.as_str() {
        "deflection.svg" => exports::download(
            "image/svg+xml",
            &format!("{base}-deflection.svg"),
            view.export.stamp_svg(&view.chart),
        ),
        "deflection.png" => {
            exports::png_download(&view.export, &format!("{base}-deflection.png"), &view.chart)
        }
        "restored.svg" => exports::download(
            "image/svg+xml",
            &format!("{base}-restored.svg"),
            view.export.stamp_svg(&view.restored_chart),
        ),
        "restored.png" => exports::png_download(
            &view.export,
            &format!("{base}-restored.png"),
            &view.restored_chart,
        ),
        _ => exports::download(
            "text/csv; charset=utf-8",
            &format!("{base}-airy-flexural.csv"),
            exports::csv_text(
                &view.export,
                &format!(
                    "Airy against flexural tectonic subsidence along section {}",
                    view.section.name
                ),
                &sections::COMPARISON_CSV_HEADER,
                &sections::comparison_rows(&view),
            ),
        ),
    })
    .await
    .map_err(|e| AppError::Internal(anyhow::anyhow!("download task failed: {e}")))
}
