//! Signing in and out, and the guard every request passes.
//!
//! The guard (`guard`, layered in `web::router`) finds the session of the request's
//! cookie, applies the access rules of `crate::auth::rules`, checks the CSRF token of
//! every change, and hands the signed-in account to handlers (the `SignedIn`
//! extractor) and to page templates (`signed_in()`, `csrf_token()`), which read it
//! from a task-local value set for the request.

use super::pages::LoginPage;
use super::{AppError, AppState, PageResult};
use crate::auth::{self, Access, Role, token};
use crate::services::accounts::{self, LoginError, SignedIn};
use askama::Template;
use axum::body::Body;
use axum::extract::connect_info::ConnectInfo;
use axum::extract::{FromRequestParts, OptionalFromRequestParts, Query, Request, State};
use axum::http::header::{CONTENT_TYPE, COOKIE, RETRY_AFTER, SET_COOKIE};
use axum::http::request::Parts;
use axum::http::{HeaderMap, HeaderValue, StatusCode, Uri};
use axum::middleware::Next;
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use axum::{Json, Router};
use serde::Deserialize;
use std::convert::Infallible;
use std::future::Future;
use std::net::SocketAddr;

/// The session cookie's name.
pub const SESSION_COOKIE: &str = "sagline_session";
/// The header API clients send the CSRF token in.
pub const CSRF_HEADER: &str = "x-csrf-token";
/// The form field (url-encoded forms) or query parameter (multipart forms) of the CSRF token.
pub const CSRF_FIELD: &str = "csrf_token";
/// Largest url-encoded form the guard reads to find its CSRF token.
const MAX_FORM_BYTES: usize = 1024 * 1024;
/// Largest sign-in request read.
const MAX_LOGIN_BYTES: usize = 16 * 1024;

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/login", get(login_page).post(login))
        .route("/logout", post(logout))
        .route("/logout-everywhere", post(logout_everywhere))
        .route("/api/session", get(session_json))
}

tokio::task_local! {
    static SIGNED_IN: SignedIn;
}

/// The account signed in for the request being handled (for templates).
pub fn signed_in() -> Option<SignedIn> {
    SIGNED_IN.try_with(SignedIn::clone).ok()
}

/// The CSRF token of the request's session, for a form's hidden `csrf_token` field
/// (empty when nobody is signed in).
pub fn csrf_token() -> String {
    SIGNED_IN
        .try_with(|u| u.csrf_token.clone())
        .unwrap_or_default()
}

/// Whether the signed-in account has at least `role` (for showing or hiding forms;
/// the guard enforces the rules whatever a page shows).
pub fn at_least(role: Role) -> bool {
    SIGNED_IN.try_with(|u| u.role >= role).unwrap_or(false)
}

/// Handlers take the signed-in account as an argument; the guard has put it there.
impl<S: Send + Sync> FromRequestParts<S> for SignedIn {
    type Rejection = AppError;

    async fn from_request_parts(parts: &mut Parts, _: &S) -> Result<Self, Self::Rejection> {
        parts
            .extensions
            .get::<SignedIn>()
            .cloned()
            .ok_or_else(|| AppError::Unauthorized("Sign in first.".into()))
    }
}

impl<S: Send + Sync> OptionalFromRequestParts<S> for SignedIn {
    type Rejection = Infallible;

    async fn from_request_parts(parts: &mut Parts, _: &S) -> Result<Option<Self>, Self::Rejection> {
        Ok(parts.extensions.get::<SignedIn>().cloned())
    }
}

/// The address a request came from (the peer's IP; headers naming another are not
/// believed), the key of the sign-in throttle together with the user name.
pub struct ClientAddress(pub String);

fn client_address(parts: &axum::http::Extensions) -> String {
    parts
        .get::<ConnectInfo<SocketAddr>>()
        .map(|c| c.0.ip().to_string())
        .unwrap_or_else(|| "unknown".into())
}

impl<S: Send + Sync> FromRequestParts<S> for ClientAddress {
    type Rejection = Infallible;

    async fn from_request_parts(parts: &mut Parts, _: &S) -> Result<Self, Self::Rejection> {
        Ok(ClientAddress(client_address(&parts.extensions)))
    }
}

fn is_api(path: &str) -> bool {
    path == "/api" || path.starts_with("/api/")
}

fn is_change(method: &str) -> bool {
    !matches!(method, "GET" | "HEAD" | "OPTIONS")
}

/// An error as the client expects it: JSON under `/api/`, a page elsewhere.
fn refuse(api: bool, error: AppError) -> Response {
    if api {
        error.into_response()
    } else {
        error.into_html()
    }
}

/// Run `work` with `user` visible to templates (if any).
async fn as_user(user: Option<SignedIn>, work: impl Future<Output = Response>) -> Response {
    match user {
        Some(u) => SIGNED_IN.scope(u, work).await,
        None => work.await,
    }
}

/// The guard: sign-in, role and CSRF checks for every request.
pub async fn guard(State(state): State<AppState>, mut request: Request, next: Next) -> Response {
    let method = request.method().as_str().to_string();
    let path = request.uri().path().to_string();
    let api = is_api(&path);
    let requirement = auth::required_access(&method, &path);
    let user = match session_cookie(request.headers()) {
        Some(t) => match accounts::resolve_session(&state.db, &t, auth::unix_now()).await {
            Ok(user) => user,
            Err(e) => return refuse(api, AppError::Database(e)),
        },
        None => None,
    };
    if let Some(u) = &user {
        request.extensions_mut().insert(u.clone());
    }
    let needed = match requirement.access {
        Access::Public => return as_user(user, next.run(request)).await,
        Access::AtLeast(role) => role,
    };
    let Some(user) = user else {
        return anonymous(api, &method, request.uri());
    };
    if user.role < needed {
        let error = AppError::Forbidden(format!(
            "Your role ({}) may not do this: {} needs the {needed} role. Ask an admin if you need it.",
            user.role, requirement.action
        ));
        return as_user(Some(user), async move { refuse(api, error) }).await;
    }
    if is_change(&method) {
        request = match check_csrf(request, &user.csrf_token).await {
            Ok(r) => r,
            Err(e) => return as_user(Some(user), async move { refuse(api, e) }).await,
        };
    }
    SIGNED_IN.scope(user, next.run(request)).await
}

/// Nobody signed in: API clients get 401; browsers go to the sign-in page, and come
/// back to the page they asked for.
fn anonymous(api: bool, method: &str, uri: &Uri) -> Response {
    if api {
        return AppError::Unauthorized(
            "Sign in first: POST /login with name and password, then send the session cookie (and, on changes, the X-CSRF-Token header from GET /api/session).".into(),
        )
        .into_response();
    }
    if is_change(method) {
        return Redirect::to("/login").into_response();
    }
    let wanted = uri.path_and_query().map(|p| p.as_str()).unwrap_or("/");
    let query = serde_urlencoded::to_string([("next", wanted)]).unwrap_or_default();
    Redirect::to(&format!("/login?{query}")).into_response()
}

fn session_cookie(headers: &HeaderMap) -> Option<String> {
    headers
        .get_all(COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|pair| pair.trim().split_once('='))
        .find(|(name, _)| *name == SESSION_COOKIE)
        .map(|(_, value)| value.to_string())
}

fn csrf_refused() -> AppError {
    AppError::Forbidden(
        "This change was refused: its CSRF token is missing or wrong (the page may be from an earlier session). Reload the page and try again.".into(),
    )
}

fn field(pairs: Vec<(String, String)>, name: &str) -> Option<String> {
    pairs.into_iter().find(|(k, _)| k == name).map(|(_, v)| v)
}

/// Check the request's CSRF token: the header, else (multipart) the query parameter,
/// else (url-encoded form) the form field. The form is read and handed on unchanged.
async fn check_csrf(request: Request, expected: &str) -> Result<Request, AppError> {
    let content_type = request
        .headers()
        .get(CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or_default()
        .to_ascii_lowercase();
    let (sent, request) = if let Some(header) = request.headers().get(CSRF_HEADER) {
        (header.to_str().ok().map(str::to_string), request)
    } else if content_type.starts_with("multipart/form-data") {
        let query = request.uri().query().unwrap_or_default();
        (
            field(
                serde_urlencoded::from_str(query).unwrap_or_default(),
                CSRF_FIELD,
            ),
            request,
        )
    } else if content_type.starts_with("application/x-www-form-urlencoded") {
        let (parts, body) = request.into_parts();
        let bytes = axum::body::to_bytes(body, MAX_FORM_BYTES)
            .await
            .map_err(|_| {
                AppError::TooLarge(format!(
                    "A form may have at most {} KiB.",
                    MAX_FORM_BYTES / 1024
                ))
            })?;
        let sent = field(
            serde_urlencoded::from_bytes(&bytes).unwrap_or_default(),
            CSRF_FIELD,
        );
        (sent, Request::from_parts(parts, Body::from(bytes)))
    } else {
        (None, request)
    };
    match sent {
        Some(t) if token::same(&t, expected) => Ok(request),
        _ => Err(csrf_refused()),
    }
}

/// Where to go after signing in: only a path on this server.
fn local_path(next: Option<&str>) -> String {
    match next {
        Some(n)
            if n.starts_with('/')
                && !n.starts_with("//")
                && !n.contains('\\')
                && !n.chars().any(char::is_control)
                && !n.starts_with("/login") =>
        {
            n.to_string()
        }
        _ => "/studies".to_string(),
    }
}

fn session_cookie_header(token: &str, max_age: i64) -> HeaderValue {
    let value =
        format!("{SESSION_COOKIE}={token}; HttpOnly; SameSite=Strict; Path=/; Max-Age={max_age}");
    HeaderValue::from_str(&value)
        .unwrap_or_else(|_| HeaderValue::from_static("sagline_session=; Max-Age=0"))
}

#[derive(Debug, Deserialize)]
struct NextQuery {
    next: Option<String>,
}

async fn login_page(user: Option<SignedIn>, Query(q): Query<NextQuery>) -> PageResult<Response> {
    let next = local_path(q.next.as_deref());
    if user.is_some() {
        return Ok(Redirect::to(&next).into_response());
    }
    let page = LoginPage {
        next,
        name: String::new(),
        message: None,
    };
    Ok(Html(page.render()?).into_response())
}

/// A sign-in as sent by the form or an API client. No `Debug`: it holds a password.
#[derive(Deserialize)]
struct SignInForm {
    #[serde(default)]
    name: String,
    #[serde(default)]
    password: String,
    #[serde(default)]
    next: Option<String>,
}

/// `POST /login`: a url-encoded form (answers with a redirect or the page again) or
/// JSON `{"name", "password"}` (answers with the account and its CSRF token).
async fn login(State(state): State<AppState>, request: Request) -> Response {
    let client = client_address(request.extensions());
    let json = request
        .headers()
        .get(CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.starts_with("application/json"));
    let credentials = match axum::body::to_bytes(request.into_body(), MAX_LOGIN_BYTES).await {
        Ok(bytes) if json => serde_json::from_slice::<SignInForm>(&bytes).ok(),
        Ok(bytes) => serde_urlencoded::from_bytes::<SignInForm>(&bytes).ok(),
        Err(_) => None,
    };
    let Some(c) = credentials else {
        let error = AppError::BadRequest("Send a user name and a password.".into());
        return refuse(json, error);
    };
    let next = local_path(c.next.as_deref());
    match accounts::log_in(&state.db, &c.name, &c.password, &client, auth::unix_now()).await {
        Ok(login) => {
            let cookie = session_cookie_header(&login.session_token, auth::SESSION_ABSOLUTE_SECS);
            let mut response = if json {
                Json(session_body(&login.user)).into_response()
            } else {
                Redirect::to(&next).into_response()
            };
            response.headers_mut().insert(SET_COOKIE, cookie);
            response
        }
        Err(LoginError::Database(e)) => refuse(json, AppError::Database(e)),
        Err(e) => {
            let status = match e {
                LoginError::Throttled { .. } => StatusCode::TOO_MANY_REQUESTS,
                LoginError::Disabled => StatusCode::FORBIDDEN,
                _ => StatusCode::UNAUTHORIZED,
            };
            let mut response = if json {
                (status, Json(serde_json::json!({ "error": e.to_string() }))).into_response()
            } else {
                let page = LoginPage {
                    next,
                    name: c.name.trim().to_string(),
                    message: Some(e.to_string()),
                };
                match page.render() {
                    Ok(body) => (status, Html(body)).into_response(),
                    Err(err) => return AppError::from(err).into_html(),
                }
            };
            if let Some(secs) = e.retry_after_secs() {
                response
                    .headers_mut()
                    .insert(RETRY_AFTER, HeaderValue::from(secs));
            }
            response
        }
    }
}

fn signed_out() -> Response {
    let mut response = Redirect::to("/login").into_response();
    response
        .headers_mut()
        .insert(SET_COOKIE, session_cookie_header("", 0));
    response
}

/// `POST /logout`: end this session.
async fn logout(State(state): State<AppState>, user: SignedIn) -> Result<Response, AppError> {
    accounts::log_out(&state.db, &user.session_digest).await?;
    state.events.end_session(&user.session_digest);
    tracing::info!(user = %user.name, "signed out");
    Ok(signed_out())
}

/// `POST /logout-everywhere`: end every session of the signed-in account.
async fn logout_everywhere(
    State(state): State<AppState>,
    user: SignedIn,
) -> Result<Response, AppError> {
    let ended = accounts::sign_out_everywhere(&state.db, user.user_id, &user.name).await?;
    state.events.end_user_sessions(user.user_id, None);
    tracing::info!(user = %user.name, sessions = ended, "signed out everywhere");
    Ok(signed_out())
}

fn session_body(user: &SignedIn) -> serde_json::Value {
    serde_json::json!({
        "name": user.name,
        "role": user.role,
        "csrf_token": user.csrf_token,
        "csrf_header": "X-CSRF-Token",
    })
}

/// `GET /api/session`: who is signed in, and the CSRF token to send on changes.
async fn session_json(user: SignedIn) -> Json<serde_json::Value> {
    Json(session_body(&user))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_local_paths_are_followed_after_sign_in() {
        assert_eq!(
            local_path(Some("/studies/3?tab=wells")),
            "/studies/3?tab=wells"
        );
        for bad in [
            "https://elsewhere.invalid/",
            "//elsewhere.invalid/",
            "/\\elsewhere.invalid",
            "studies",
            "/login?next=/x",
            "/a\nb",
        ] {
            assert_eq!(local_path(Some(bad)), "/studies", "{bad:?}");
        }
        assert_eq!(local_path(None), "/studies");
    }

    #[test]
    fn the_session_cookie_is_found_among_others() {
        let mut headers = HeaderMap::new();
        headers.insert(
            COOKIE,
            HeaderValue::from_static("theme=dark; sagline_session=abc123; x=y"),
        );
        assert_eq!(session_cookie(&headers).as_deref(), Some("abc123"));
        assert_eq!(session_cookie(&HeaderMap::new()), None);
    }
}
