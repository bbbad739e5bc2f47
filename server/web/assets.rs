//! Static files, embedded in the binary so the server runs from anywhere.

use axum::Router;
use axum::http::header;
use axum::response::IntoResponse;
use axum::routing::get;

const STYLE_CSS: &str = include_str!("../../static/style.css");
const APP_JS: &str = include_str!("../../static/app.js");
const ICON_SVG: &str = include_str!("../../static/icon.svg");

pub fn routes() -> Router<super::AppState> {
    Router::new()
        .route(
            "/static/style.css",
            get(|| async { asset("text/css; charset=utf-8", STYLE_CSS) }),
        )
        .route(
            "/static/app.js",
            get(|| async { asset("text/javascript; charset=utf-8", APP_JS) }),
        )
        // The tab icon; browsers also ask for /favicon.ico on their own.
        .route(
            "/static/icon.svg",
            get(|| async { asset("image/svg+xml", ICON_SVG) }),
        )
        .route(
            "/favicon.ico",
            get(|| async { asset("image/svg+xml", ICON_SVG) }),
        )
}

fn asset(content_type: &'static str, body: &'static str) -> impl IntoResponse {
    (
        [
            (header::CONTENT_TYPE, content_type),
            (header::CACHE_CONTROL, "public, max-age=3600"),
        ],
        body,
    )
}
