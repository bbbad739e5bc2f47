//! The one error type at the HTTP edge. Internals are logged, never shown.

use crate::services::InputProblem;
use axum::Json;
use axum::http::StatusCode;
use axum::response::{Html, IntoResponse, Response};
use serde_json::json;

#[derive(Debug, thiserror::Error)]
pub enum AppError {
    /// The thing asked for does not exist; the text names it.
    #[error("{0} not found")]
    NotFound(String),
    /// The request is malformed; the text says what to fix.
    #[error("{0}")]
    BadRequest(String),
    /// A well-formed request whose values fail validation; the text says which and why.
    #[error("{0}")]
    Rejected(String),
    /// An input file or form failed validation; every problem is listed.
    #[error("the input has {} problem(s)", .0.len())]
    Invalid(Vec<InputProblem>),
    /// The request conflicts with stored data; the text says what to do.
    #[error("{0}")]
    Conflict(String),
    /// A save made against an old version of the thing; `current` is what is stored now.
    #[error("{message}")]
    Stale {
        message: String,
        current: Option<serde_json::Value>,
    },
    /// The upload is larger than the server accepts.
    #[error("{0}")]
    TooLarge(String),
    /// Nobody is signed in; the text says how to.
    #[error("{0}")]
    Unauthorized(String),
    /// The signed-in role may not do this, or the CSRF token is missing or wrong; the text says which.
    #[error("{0}")]
    Forbidden(String),
    /// Too many attempts (sign-in throttling); the text says when to try again.
    #[error("{0}")]
    TooManyRequests(String),
    #[error(transparent)]
    Database(#[from] sqlx::Error),
    #[error(transparent)]
    Template(#[from] askama::Error),
    #[error(transparent)]
    Internal(#[from] anyhow::Error),
}

impl From<crate::services::ServiceError> for AppError {
    fn from(e: crate::services::ServiceError) -> Self {
        use crate::services::ServiceError as S;
        match e {
            S::NotFound(what) => AppError::NotFound(what),
            S::Invalid(msg) => AppError::Rejected(msg),
            S::Problems(p) => AppError::Invalid(p),
            S::Conflict(msg) => AppError::Conflict(msg),
            S::TooManyTries(msg) => AppError::TooManyRequests(msg),
            S::Stale { message, current } => AppError::Stale { message, current },
            S::Database(e) => AppError::Database(e),
            S::Internal(e) => AppError::Internal(anyhow::anyhow!(e)),
        }
    }
}

impl AppError {
    pub fn status(&self) -> StatusCode {
        match self {
            AppError::NotFound(_) => StatusCode::NOT_FOUND,
            AppError::BadRequest(_) => StatusCode::BAD_REQUEST,
            AppError::Invalid(_) | AppError::Rejected(_) => StatusCode::UNPROCESSABLE_ENTITY,
            AppError::Conflict(_) | AppError::Stale { .. } => StatusCode::CONFLICT,
            AppError::TooLarge(_) => StatusCode::PAYLOAD_TOO_LARGE,
            AppError::Unauthorized(_) => StatusCode::UNAUTHORIZED,
            AppError::Forbidden(_) => StatusCode::FORBIDDEN,
            AppError::TooManyRequests(_) => StatusCode::TOO_MANY_REQUESTS,
            AppError::Database(_) | AppError::Template(_) | AppError::Internal(_) => {
                StatusCode::INTERNAL_SERVER_ERROR
            }
        }
    }

    /// What a user may see: internals are replaced by a plain sentence.
    fn public_message(&self) -> String {
        match self {
            AppError::Database(_) | AppError::Template(_) | AppError::Internal(_) => {
                "Something went wrong on the server. The details are in the server log; nothing was changed.".into()
            }
            other => other.to_string(),
        }
    }

    fn log(&self) {
        match self {
            AppError::Database(e) => tracing::error!(error = %e, "database error"),
            AppError::Template(e) => tracing::error!(error = %e, "template error"),
            AppError::Internal(e) => tracing::error!(error = ?e, "internal error"),
            _ => {}
        }
    }

    /// The JSON body of this error: `{"error": "...", "problems": [...]}`.
    pub fn json_body(&self) -> serde_json::Value {
        match self {
            AppError::Invalid(problems) => {
                json!({ "error": self.public_message(), "problems": problems })
            }
            AppError::Stale { current, .. } => {
                json!({ "error": self.public_message(), "current": current })
            }
            _ => json!({ "error": self.public_message() }),
        }
    }

    /// An HTML page for this error, for the browser routes.
    pub fn into_html(self) -> Response {
        self.log();
        let status = self.status();
        let problems = match &self {
            AppError::Invalid(p) => p.iter().map(|p| p.to_string()).collect(),
            _ => Vec::new(),
        };
        let page = ErrorPage {
            status: status.as_u16(),
            message: self.public_message(),
            problems,
        };
        match askama::Template::render(&page) {
            Ok(body) => (status, Html(body)).into_response(),
            Err(e) => {
                tracing::error!(error = %e, "error page failed to render");
                (status, self.public_message()).into_response()
            }
        }
    }
}

/// API routes answer JSON.
impl IntoResponse for AppError {
    fn into_response(self) -> Response {
        self.log();
        (self.status(), Json(self.json_body())).into_response()
    }
}

/// A result for browser routes: errors render as an HTML page.
pub struct HtmlError(pub AppError);

impl<E: Into<AppError>> From<E> for HtmlError {
    fn from(e: E) -> Self {
        HtmlError(e.into())
    }
}

impl IntoResponse for HtmlError {
    fn into_response(self) -> Response {
        self.0.into_html()
    }
}

pub type ApiResult<T> = Result<T, AppError>;
pub type PageResult<T> = Result<T, HtmlError>;

/// The page of an error answered to a browser.
#[derive(askama::Template)]
#[template(path = "error.html")]
pub struct ErrorPage {
    pub status: u16,
    pub message: String,
    pub problems: Vec<String>,
}
