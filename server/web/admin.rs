//! Managing accounts (admins only, by the rules of `crate::auth::rules`): list users,
//! add one, change a role, reset a password (shown once), disable or enable, sign
//! a user out everywhere, and clear the sign-in waits of a user. Every change is recorded in the activity log by
//! `services::accounts`.

use super::{ApiResult, AppError, AppState, PageResult};
use crate::auth::{self, Role};
use crate::services::ServiceError;
use crate::services::accounts::{self, SignInWait, SignedIn};
use crate::services::activity::{self as log, ActivityRow, UserRow};
use askama::Template;
use axum::extract::{Path, State};
use axum::http::header::CACHE_CONTROL;
use axum::http::{HeaderValue, StatusCode};
use axum::response::{Html, IntoResponse, Response};
use axum::routing::{get, post, put};
use axum::{Form, Json, Router};
use serde::{Deserialize, Serialize};

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/admin/users", get(users_page).post(add_user_form))
        .route("/api/admin/users", get(users_json).post(add_user_json))
        .route("/admin/users/{id}/role", post(role_form))
        .route("/api/admin/users/{id}/role", put(role_json))
        .route("/admin/users/{id}/password", post(password_form))
        .route("/api/admin/users/{id}/password", post(password_json))
        .route("/admin/users/{id}/disable", post(disable_form))
        .route("/api/admin/users/{id}/disable", post(disable_json))
        .route("/admin/users/{id}/enable", post(enable_form))
        .route("/api/admin/users/{id}/enable", post(enable_json))
        .route("/admin/users/{id}/sign-out", post(sign_out_form))
        .route("/api/admin/users/{id}/sign-out", post(sign_out_json))
        .route("/admin/users/{id}/unlock", post(unlock_form))
        .route("/api/admin/users/{id}/unlock", post(unlock_json))
}

/// A role with what it may do, for the page and the API.
#[derive(Debug, Clone, Serialize)]
pub struct RoleInfo {
    pub role: Role,
    pub summary: &'static str,
}

#[derive(Debug, Serialize)]
pub struct UsersView {
    pub users: Vec<UserRow>,
    pub roles: Vec<RoleInfo>,
    /// Addresses that tried to sign in as an account without success, and their waits.
    pub sign_in_waits: Vec<SignInWait>,
    /// The newest account changes.
    pub changes: Vec<ActivityRow>,
}

/// A password to show once, with the account it belongs to.
#[derive(Debug, Clone, Serialize)]
pub struct IssuedPassword {
    pub user: UserRow,
    pub password: String,
}

async fn users_view(state: &AppState) -> ApiResult<UsersView> {
    Ok(UsersView {
        users: accounts::list_users(&state.db).await?,
        roles: Role::ALL
            .into_iter()
            .map(|role| RoleInfo {
                role,
                summary: role.summary(),
            })
            .collect(),
        sign_in_waits: accounts::sign_in_waits(&state.db, auth::unix_now()).await?,
        changes: log::account_changes(&state.db, 50).await?,
    })
}

/// Answers that carry a password must not be kept by browsers or proxies.
fn no_store(mut response: Response) -> Response {
    response
        .headers_mut()
        .insert(CACHE_CONTROL, HeaderValue::from_static("no-store"));
    response
}

/// The users page after a change: its notice, the password to show once, or what went wrong.
async fn render(
    state: &AppState,
    outcome: Result<(String, Option<IssuedPassword>), ServiceError>,
) -> PageResult<Response> {
    let (status, notice, issued, problems) = match outcome.map_err(AppError::from) {
        Ok((notice, issued)) => (StatusCode::OK, Some(notice), issued, Vec::new()),
        Err(e @ AppError::Database(_)) => return Err(e.into()),
        Err(e) => (e.status(), None, None, vec![e.to_string()]),
    };
    let view = users_view(state).await?;
    let page = UsersPage {
        view,
        notice,
        issued,
        problems,
    };
    Ok(no_store((status, Html(page.render()?)).into_response()))
}

async fn users_page(State(state): State<AppState>) -> PageResult<Response> {
    let view = users_view(&state).await?;
    let page = UsersPage {
        view,
        notice: None,
        issued: None,
        problems: Vec::new(),
    };
    Ok(Html(page.render()?).into_response())
}

async fn users_json(State(state): State<AppState>) -> ApiResult<Json<UsersView>> {
    Ok(Json(users_view(&state).await?))
}

fn parse_role(text: &str) -> Result<Role, ServiceError> {
    text.parse().map_err(ServiceError::Invalid)
}

#[derive(Debug, Deserialize)]
struct NewUserForm {
    name: String,
    role: String,
}

async fn add_user_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Form(form): Form<NewUserForm>,
) -> PageResult<Response> {
    let outcome = async {
        let role = parse_role(&form.role)?;
        let created = accounts::create_user(&state.db, &form.name, role, None, &admin.name).await?;
        let notice = format!(
            "Account '{}' added with the {} role.",
            created.user.name, created.user.role
        );
        let issued = created.generated_password.map(|password| IssuedPassword {
            user: created.user,
            password,
        });
        Ok((notice, issued))
    }
    .await;
    render(&state, outcome).await
}

/// A new account by API. Without `password` the server generates one and answers it, once.
/// No `Debug`: it may hold a password.
#[derive(Deserialize)]
struct NewUserJson {
    name: String,
    role: Role,
    password: Option<String>,
}

async fn add_user_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Json(new): Json<NewUserJson>,
) -> ApiResult<Response> {
    let created = accounts::create_user(
        &state.db,
        &new.name,
        new.role,
        new.password.as_deref(),
        &admin.name,
    )
    .await?;
    let body = serde_json::json!({ "user": created.user, "password": created.generated_password });
    Ok(no_store(Json(body).into_response()))
}

#[derive(Debug, Deserialize)]
struct RoleForm {
    role: String,
}

async fn role_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
    Form(form): Form<RoleForm>,
) -> PageResult<Response> {
    let outcome = async {
        let user =
            accounts::change_role(&state.db, id, parse_role(&form.role)?, &admin.name).await?;
        Ok((
            format!("'{}' now has the {} role.", user.name, user.role),
            None,
        ))
    }
    .await;
    render(&state, outcome).await
}

#[derive(Debug, Deserialize)]
struct RoleJson {
    role: Role,
}

async fn role_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
    Json(body): Json<RoleJson>,
) -> ApiResult<Json<UserRow>> {
    Ok(Json(
        accounts::change_role(&state.db, id, body.role, &admin.name).await?,
    ))
}

// Each change that ends an account's sessions also ends their live streams.

async fn reset_password(
    state: &AppState,
    id: i64,
    actor: &str,
) -> Result<(UserRow, String), ServiceError> {
    let issued = accounts::reset_password(&state.db, id, actor).await?;
    state.events.end_user_sessions(id, None);
    Ok(issued)
}

async fn disable(
    state: &AppState,
    id: i64,
    disabled: bool,
    actor: &str,
) -> Result<UserRow, ServiceError> {
    let user = accounts::set_disabled(&state.db, id, disabled, actor).await?;
    if disabled {
        state.events.end_user_sessions(id, None);
    }
    Ok(user)
}

async fn sign_out_everywhere(state: &AppState, id: i64, actor: &str) -> Result<u64, ServiceError> {
    let ended = accounts::sign_out_everywhere(&state.db, id, actor).await?;
    state.events.end_user_sessions(id, None);
    Ok(ended)
}

async fn password_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> PageResult<Response> {
    let outcome = reset_password(&state, id, &admin.name)
        .await
        .map(|(user, password)| {
            let notice = format!(
                "'{}' has a new password and was signed out everywhere.",
                user.name
            );
            (notice, Some(IssuedPassword { user, password }))
        });
    render(&state, outcome).await
}

async fn password_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> ApiResult<Response> {
    let (user, password) = reset_password(&state, id, &admin.name).await?;
    Ok(no_store(
        Json(IssuedPassword { user, password }).into_response(),
    ))
}

async fn set_disabled(
    state: &AppState,
    admin: &SignedIn,
    id: i64,
    disabled: bool,
) -> Result<(String, Option<IssuedPassword>), ServiceError> {
    let user = disable(state, id, disabled, &admin.name).await?;
    let notice = if disabled {
        format!("'{}' is disabled and signed out everywhere.", user.name)
    } else {
        format!("'{}' may sign in again.", user.name)
    };
    Ok((notice, None))
}

async fn disable_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> PageResult<Response> {
    render(&state, set_disabled(&state, &admin, id, true).await).await
}

async fn enable_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> PageResult<Response> {
    render(&state, set_disabled(&state, &admin, id, false).await).await
}

async fn disable_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> ApiResult<Json<UserRow>> {
    Ok(Json(disable(&state, id, true, &admin.name).await?))
}

async fn enable_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> ApiResult<Json<UserRow>> {
    Ok(Json(disable(&state, id, false, &admin.name).await?))
}

async fn sign_out_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> PageResult<Response> {
    let outcome = sign_out_everywhere(&state, id, &admin.name)
        .await
        .map(|ended| (format!("{ended} session(s) ended."), None));
    render(&state, outcome).await
}

async fn sign_out_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> ApiResult<Json<serde_json::Value>> {
    let ended = sign_out_everywhere(&state, id, &admin.name).await?;
    Ok(Json(serde_json::json!({ "sessions_ended": ended })))
}

fn unlocked_notice(user: &UserRow, cleared: u64) -> String {
    format!(
        "'{}' may sign in again from every address without waiting ({cleared} address(es) cleared).",
        user.name
    )
}

async fn unlock_form(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> PageResult<Response> {
    let outcome = accounts::clear_sign_in_waits(&state.db, id, &admin.name)
        .await
        .map(|(user, cleared)| (unlocked_notice(&user, cleared), None));
    render(&state, outcome).await
}

async fn unlock_json(
    State(state): State<AppState>,
    admin: SignedIn,
    Path(id): Path<i64>,
) -> ApiResult<Json<serde_json::Value>> {
    let (user, cleared) = accounts::clear_sign_in_waits(&state.db, id, &admin.name).await?;
    Ok(Json(
        serde_json::json!({ "user": user, "addresses_cleared": cleared }),
    ))
}

#[derive(Template)]
#[template(path = "users.html")]
pub struct UsersPage {
    pub view: UsersView,
    pub notice: Option<String>,
    /// A password to show this once (a new account or a reset).
    pub issued: Option<IssuedPassword>,
    pub problems: Vec<String>,
}
