//! The lithology catalogue, model parameters and sea-level curve of a study: view and edit.

use super::auth::CSRF_FIELD;
use super::pages::CataloguePage;
use super::studies::{StudyInfo, load_study};
use super::{ApiResult, AppError, AppState, HtmlError, PageResult};
use crate::services::accounts::SignedIn;
use crate::services::{self, LithologyEdit, ServiceError};
use crate::store;
use crate::store::lithologies::LithologyRow;
use askama::Template;
use axum::extract::{Path, State};
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post, put};
use axum::{Form, Json, Router};
use sagline_science::params::PARAMETER_RANGES;
use sagline_science::{ModelParameters, SeaLevelPoint};
use serde::Serialize;
use std::collections::HashMap;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/catalogue", get(catalogue_page))
        .route("/api/studies/{id}/catalogue", get(catalogue_json))
        .route("/studies/{id}/parameters", post(parameters_form))
        .route("/api/studies/{id}/parameters", put(parameters_json))
        .route("/studies/{id}/lithologies", post(lithology_form))
        .route("/api/studies/{id}/lithologies", put(lithology_json))
        .route(
            "/studies/{id}/lithologies/{lithology_id}/delete",
            post(delete_lithology_form),
        )
}

/// One model parameter with its unit and admissible range, for the form and the API.
#[derive(Debug, Clone, Serialize)]
pub struct ParameterEntry {
    pub name: &'static str,
    pub label: &'static str,
    pub unit: &'static str,
    pub value: f64,
    pub min: f64,
    pub max: f64,
}

#[derive(Debug, Serialize)]
pub struct CatalogueView {
    pub study: StudyInfo,
    pub parameters: Vec<ParameterEntry>,
    pub thermal_time_constant_myr: f64,
    pub lithologies: Vec<LithologyRow>,
    pub sea_level: Vec<SeaLevelPoint>,
}

async fn catalogue_view(state: &AppState, id: i64) -> ApiResult<CatalogueView> {
    let study = load_study(state, id).await?;
    let params = study.parameters();
    Ok(CatalogueView {
        study: StudyInfo::from(&study),
        parameters: params
            .entries()
            .into_iter()
            .map(|(r, value)| ParameterEntry {
                name: r.name,
                label: r.label,
                unit: r.unit,
                value,
                min: r.min,
                max: r.max,
            })
            .collect(),
        thermal_time_constant_myr: params.thermal_time_constant_myr(),
        lithologies: store::lithologies::list(&state.db, id).await?,
        sea_level: store::sea_level::points(&state.db, id).await?,
    })
}

async fn render(
    state: &AppState,
    id: i64,
    problems: Vec<String>,
    notice: Option<String>,
) -> PageResult<Response> {
    let view = catalogue_view(state, id).await?;
    let status = if problems.is_empty() {
        axum::http::StatusCode::OK
    } else {
        axum::http::StatusCode::UNPROCESSABLE_ENTITY
    };
    let page = CataloguePage {
        view,
        problems,
        notice,
    };
    Ok((status, Html(page.render()?)).into_response())
}

async fn catalogue_page(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> PageResult<Response> {
    render(&state, id, Vec::new(), None).await
}

async fn catalogue_json(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> ApiResult<Json<CatalogueView>> {
    Ok(Json(catalogue_view(&state, id).await?))
}

/// Apply named values to a study's parameters; every unknown name, unparsable value
/// or out-of-range value is reported.
fn parse_parameters(
    base: ModelParameters,
    fields: &HashMap<String, String>,
) -> Result<ModelParameters, Vec<String>> {
    let mut p = base;
    let mut problems = Vec::new();
    for (name, raw) in fields {
        if !PARAMETER_RANGES.iter().any(|r| r.name == name) {
            problems.push(format!("unknown parameter '{name}'"));
            continue;
        }
        match raw.trim().parse::<f64>() {
            Ok(v) if v.is_finite() => {
                p.set(name, v);
            }
            _ => problems.push(format!("{name}: '{raw}' is not a number")),
        }
    }
    if let Err(errs) = p.validate() {
        problems.extend(errs.iter().map(|e| e.to_string()));
    }
    if problems.is_empty() {
        Ok(p)
    } else {
        Err(problems)
    }
}

async fn parameters_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Form(mut fields): Form<HashMap<String, String>>,
) -> PageResult<Response> {
    // The guard has checked the form's CSRF token; it is no parameter.
    fields.remove(CSRF_FIELD);
    let study = load_study(&state, id).await?;
    match parse_parameters(study.parameters(), &fields) {
        Ok(p) => {
            services::update_parameters(&state.db, id, &p, &user.name).await?;
            render(
                &state,
                id,
                Vec::new(),
                Some("Model parameters saved.".into()),
            )
            .await
        }
        Err(problems) => render(&state, id, problems, None).await,
    }
}

async fn parameters_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Json(fields): Json<HashMap<String, f64>>,
) -> ApiResult<Json<CatalogueView>> {
    let study = load_study(&state, id).await?;
    let text: HashMap<String, String> = fields
        .into_iter()
        .map(|(k, v)| (k, v.to_string()))
        .collect();
    let p = parse_parameters(study.parameters(), &text)
        .map_err(|problems| AppError::Rejected(problems.join("; ")))?;
    services::update_parameters(&state.db, id, &p, &user.name).await?;
    Ok(Json(catalogue_view(&state, id).await?))
}

async fn lithology_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Form(edit): Form<LithologyEdit>,
) -> PageResult<Response> {
    load_study(&state, id).await?;
    match services::save_lithology(&state.db, id, &edit, &user.name).await {
        Ok(()) => {
            render(
                &state,
                id,
                Vec::new(),
                Some(format!("Lithology '{}' saved.", edit.name.trim())),
            )
            .await
        }
        Err(ServiceError::Invalid(msg)) => render(&state, id, vec![msg], None).await,
        Err(e) => Err(HtmlError(e.into())),
    }
}

async fn lithology_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Json(edit): Json<LithologyEdit>,
) -> ApiResult<Json<CatalogueView>> {
    load_study(&state, id).await?;
    services::save_lithology(&state.db, id, &edit, &user.name).await?;
    Ok(Json(catalogue_view(&state, id).await?))
}

async fn delete_lithology_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, lithology_id)): Path<(i64, i64)>,
) -> PageResult<Response> {
    load_study(&state, id).await?;
    match services::delete_lithology(&state.db, id, lithology_id, &user.name).await {
        Ok(()) => Ok(Redirect::to(&format!("/studies/{id}/catalogue")).into_response()),
        Err(ServiceError::Conflict(msg)) => render(&state, id, vec![msg], None).await,
        Err(e) => Err(HtmlError(e.into())),
    }
}
