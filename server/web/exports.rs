//! Download responses: a file name, its type, and charts rasterised to PNG. What a
//! file says about itself (study, parameters, date, caution) is `services::exports`.

pub use crate::services::exports::{ExportMeta, csv_text};
use axum::http::header;
use axum::response::{IntoResponse, Response};

/// A chart as a PNG download (rasterised at twice its size, with the caption strip).
pub fn png_download(meta: &ExportMeta, file_name: &str, svg: &str) -> Response {
    match sagline_charts::svg_to_png(&meta.captioned_svg(svg), 2.0) {
        Ok(png) => (
            [
                (header::CONTENT_TYPE, "image/png".to_string()),
                (
                    header::CONTENT_DISPOSITION,
                    format!("attachment; filename=\"{}\"", safe_name(file_name)),
                ),
            ],
            png,
        )
            .into_response(),
        Err(e) => {
            tracing::error!(error = %e, "chart could not be rasterised");
            (
                axum::http::StatusCode::INTERNAL_SERVER_ERROR,
                "The chart could not be turned into a PNG; the SVG download works.",
            )
                .into_response()
        }
    }
}

fn safe_name(file_name: &str) -> String {
    file_name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || ".-_".contains(c) {
                c
            } else {
                '_'
            }
        })
        .collect()
}

/// A download response with a file name.
pub fn download(content_type: &'static str, file_name: &str, body: String) -> Response {
    let safe = safe_name(file_name);
    (
        [
            (header::CONTENT_TYPE, content_type.to_string()),
            (
                header::CONTENT_DISPOSITION,
                format!("attachment; filename=\"{safe}\""),
            ),
        ],
        body,
    )
        .into_response()
}
