//! The signed-in person's own account: `GET /account` (and its twin `/api/account`)
//! and changing one's own password (`POST /account/password`, `POST
//! /api/account/password`). Every role may do this; the guard checks the CSRF token.

use super::auth::ClientAddress;
use super::{ApiResult, AppError, AppState, PageResult};
use crate::auth::{self, Role, password};
use crate::services::ServiceError;
use crate::services::accounts::{self, SignedIn};
use askama::Template;
use axum::extract::State;
use axum::http::StatusCode;
use axum::response::{Html, IntoResponse, Response};
use axum::routing::{get, post};
use axum::{Form, Json, Router};
use serde::{Deserialize, Serialize};

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/account", get(account_page))
        .route("/api/account", get(account_json))
        .route("/account/password", post(password_form))
        .route("/api/account/password", post(password_json))
}

#[derive(Debug, Serialize)]
pub struct AccountView {
    pub name: String,
    pub role: Role,
    /// What a new password needs, in one sentence.
    pub password_rules: &'static str,
}

fn account_view(user: &SignedIn) -> AccountView {
    AccountView {
        name: user.name.clone(),
        role: user.role,
        password_rules: password::RULES,
    }
}

#[derive(Template)]
#[template(path = "account.html")]
pub struct AccountPage {
    pub view: AccountView,
    pub notice: Option<String>,
    pub problems: Vec<String>,
}

async fn account_page(user: SignedIn) -> PageResult<Response> {
    let page = AccountPage {
        view: account_view(&user),
        notice: None,
        problems: Vec::new(),
    };
    Ok(Html(page.render()?).into_response())
}

async fn account_json(user: SignedIn) -> Json<AccountView> {
    Json(account_view(&user))
}

/// The browser's form. No `Debug`: it holds passwords.
#[derive(Deserialize)]
struct PasswordForm {
    #[serde(default)]
    current_password: String,
    #[serde(default)]
    new_password: String,
    #[serde(default)]
    repeat_password: String,
}

fn ended_notice(ended: u64) -> String {
    format!("Your password is changed. {ended} other session(s) of your account were signed out.")
}

async fn password_form(
    State(state): State<AppState>,
    user: SignedIn,
    ClientAddress(client): ClientAddress,
    Form(form): Form<PasswordForm>,
) -> PageResult<Response> {
    let outcome = if form.new_password != form.repeat_password {
        Err(ServiceError::Invalid(
            "The new password and its repetition differ; type the same new password twice.".into(),
        ))
    } else {
        change_own_password(
            &state,
            &user,
            &form.current_password,
            &form.new_password,
            &client,
        )
        .await
    };
    let (status, notice, problems) = match outcome.map_err(AppError::from) {
        Ok(ended) => (StatusCode::OK, Some(ended_notice(ended)), Vec::new()),
        Err(e @ AppError::Database(_)) => return Err(e.into()),
        Err(e) => (e.status(), None, vec![e.to_string()]),
    };
    let page = AccountPage {
        view: account_view(&user),
        notice,
        problems,
    };
    Ok((status, Html(page.render()?)).into_response())
}

/// Change the password; the account's other sessions end, and their live streams too.
async fn change_own_password(
    state: &AppState,
    user: &SignedIn,
    current: &str,
    new: &str,
    client: &str,
) -> Result<u64, ServiceError> {
    let ended =
        accounts::change_own_password(&state.db, user, current, new, client, auth::unix_now())
            .await?;
    state
        .events
        .end_user_sessions(user.user_id, Some(&user.session_digest));
    Ok(ended)
}

/// An API client's change. No `Debug`: it holds passwords.
#[derive(Deserialize)]
struct PasswordJson {
    current_password: String,
    new_password: String,
}

async fn password_json(
    State(state): State<AppState>,
    user: SignedIn,
    ClientAddress(client): ClientAddress,
    Json(body): Json<PasswordJson>,
) -> ApiResult<Json<serde_json::Value>> {
    let ended = change_own_password(
        &state,
        &user,
        &body.current_password,
        &body.new_password,
        &client,
    )
    .await?;
    Ok(Json(serde_json::json!({ "other_sessions_ended": ended })))
}
