//! The web layer: one router per feature, merged at the root. Handlers are thin:
//! they parse input, call the store or a service, and render a page or JSON.
//! Every page has a JSON twin under `/api/`.

pub mod account;
pub mod activity;
pub mod admin;
pub mod assets;
pub mod auth;
pub mod catalogue;
pub mod error;
pub mod exports;
pub mod live;
pub mod origin;
pub mod pages;
pub mod review;
pub mod sections;
pub mod staging;
pub mod studies;
pub mod upload;
pub mod wells;

use axum::Router;
use axum::http::{HeaderName, HeaderValue};
use axum::response::Redirect;
use axum::routing::get;
use sqlx::SqlitePool;
use std::sync::Arc;
use tower_http::set_header::SetResponseHeaderLayer;
use tower_http::trace::TraceLayer;

pub use error::{ApiResult, AppError, HtmlError, PageResult};

/// Largest request body accepted (uploads included): the tops limit plus room for the
/// wells and sea-level files and the form fields.
pub const MAX_BODY_BYTES: usize = crate::services::MAX_FILE_BYTES * 2 + 1024 * 1024;

/// What every handler can reach.
#[derive(Clone)]
pub struct AppState {
    pub db: SqlitePool,
    /// Uploaded files waiting for the user to check the preview and confirm.
    pub staging: Arc<staging::Staging>,
    /// Well analyses keyed by the content of their inputs.
    pub cache: Arc<crate::services::cache::AnalysisCache>,
    /// Whole-study results per study revision, for repeated overviews.
    pub study_memo: Arc<crate::services::results::StudyMemo>,
    /// Live change streams, one per study.
    pub events: Arc<live::EventHub>,
}

impl AppState {
    pub fn new(db: SqlitePool) -> Self {
        AppState {
            db,
            staging: Arc::new(staging::Staging::default()),
            cache: Arc::new(crate::services::cache::AnalysisCache::default()),
            events: Arc::new(live::EventHub::default()),
            study_memo: Arc::new(crate::services::results::StudyMemo::default()),
        }
    }
}

/// What every answer tells the browser: load scripts, styles, images and streams only
/// from this server (inline styles allowed: the charts carry them), never inside another
/// site's frame, no content-type guessing, no referrer to other sites.
const CONTENT_SECURITY_POLICY: &str = "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; connect-src 'self'; frame-ancestors 'none'; form-action 'self'; base-uri 'none'; object-src 'none'";

fn header(name: &'static str, value: &'static str) -> SetResponseHeaderLayer<HeaderValue> {
    SetResponseHeaderLayer::if_not_present(
        HeaderName::from_static(name),
        HeaderValue::from_static(value),
    )
}

/// The whole application.
pub fn router(state: AppState) -> Router {
    Router::new()
        .route("/", get(|| async { Redirect::to("/studies") }))
        .merge(studies::routes())
        .merge(wells::routes())
        .merge(review::routes())
        .merge(sections::routes())
        .merge(upload::routes())
        .merge(catalogue::routes())
        .merge(activity::routes())
        .merge(assets::routes())
        .merge(auth::routes())
        .merge(admin::routes())
        .merge(account::routes())
        // Every route merged above passes the guard (sign-in, role, CSRF): merge new
        // routers above this line, never below.
        .layer(axum::middleware::from_fn_with_state(
            state.clone(),
            auth::guard,
        ))
        // Before the guard reads anything: a change sent from another site's page is
        // refused, the sign-in form included.
        .layer(axum::middleware::from_fn(origin::same_origin))
        .layer(axum::extract::DefaultBodyLimit::max(MAX_BODY_BYTES))
        .layer(header("content-security-policy", CONTENT_SECURITY_POLICY))
        .layer(header("x-content-type-options", "nosniff"))
        .layer(header("x-frame-options", "DENY"))
        .layer(header("referrer-policy", "same-origin"))
        .layer(TraceLayer::new_for_http())
        .with_state(state)
}
