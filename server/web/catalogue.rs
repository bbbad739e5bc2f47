//! The lithology catalogue, model parameters and sea-level curve of a study: view and edit.

use super::auth::CSRF_FIELD;
use super::studies::load_study;
use super::{ApiResult, AppError, AppState, HtmlError, PageResult};
use crate::services::accounts::SignedIn;
use crate::services::catalogue::{self, CatalogueView};
use crate::services::{self, LithologyEdit, ServiceError};
use askama::Template;
use axum::extract::{Path, State};
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post, put};
use axum::{Form, Json, Router};
use sagline_science::analysis::thermal::ThermalChoices;
use std::collections::HashMap;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/catalogue", get(catalogue_page))
        .route("/api/studies/{id}/catalogue", get(catalogue_json))
        .route("/studies/{id}/parameters", post(parameters_form))
        .route("/api/studies/{id}/parameters", put(parameters_json))
        .route("/studies/{id}/thermal", post(thermal_form))
        .route("/api/studies/{id}/thermal", put(thermal_json))
        .route("/studies/{id}/lithologies", post(lithology_form))
        .route("/api/studies/{id}/lithologies", put(lithology_json))
        .route(
            "/studies/{id}/lithologies/{lithology_id}/delete",
            post(delete_lithology_form),
        )
}

async fn catalogue_view(state: &AppState, id: i64) -> ApiResult<CatalogueView> {
    Ok(catalogue::view(&state.db, id).await?)
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

async fn parameters_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Form(mut fields): Form<HashMap<String, String>>,
) -> PageResult<Response> {
    // The guard has checked the form's CSRF token; it is no parameter.
    fields.remove(CSRF_FIELD);
    match catalogue::edited_parameters(&state.db, id, &fields).await? {
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
    let text: HashMap<String, String> = fields
        .into_iter()
        .map(|(k, v)| (k, v.to_string()))
        .collect();
    let p = catalogue::edited_parameters(&state.db, id, &text)
        .await?
        .map_err(|problems| AppError::Rejected(problems.join("; ")))?;
    services::update_parameters(&state.db, id, &p, &user.name).await?;
    Ok(Json(catalogue_view(&state, id).await?))
}

/// The thermal-settings form: each field a number, or empty for the default.
async fn thermal_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Form(fields): Form<HashMap<String, String>>,
) -> PageResult<Response> {
    load_study(&state, id).await?;
    let mut problems = Vec::new();
    let mut read = |name: &str, what: &str| -> Option<f64> {
        let raw = fields.get(name).map(|s| s.trim()).unwrap_or("");
        if raw.is_empty() {
            return None;
        }
        match raw.parse::<f64>() {
            Ok(v) if v.is_finite() => Some(v),
            _ => {
                problems.push(format!("{what}: '{raw}' is not a number"));
                None
            }
        }
    };
    let choices = ThermalChoices {
        surface_temperature_c: read("surface_temperature_c", "surface temperature"),
        crust_heat_production_uw_m3: read("crust_heat_production_uw_m3", "crustal heat production"),
        crust_heat_production_decay_km: read("crust_heat_production_decay_km", "decay depth"),
    };
    if !problems.is_empty() {
        return render(&state, id, problems, None).await;
    }
    match services::update_thermal(&state.db, id, &choices, &user.name).await {
        Ok(()) => {
            render(
                &state,
                id,
                Vec::new(),
                Some("Thermal settings saved.".into()),
            )
            .await
        }
        Err(ServiceError::Invalid(msg)) => render(&state, id, vec![msg], None).await,
        Err(e) => Err(HtmlError(e.into())),
    }
}

async fn thermal_json(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    Json(choices): Json<ThermalChoices>,
) -> ApiResult<Json<CatalogueView>> {
    load_study(&state, id).await?;
    services::update_thermal(&state.db, id, &choices, &user.name).await?;
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

#[derive(Template)]
#[template(path = "catalogue.html")]
pub struct CataloguePage {
    pub view: CatalogueView,
    pub problems: Vec<String>,
    pub notice: Option<String>,
}
