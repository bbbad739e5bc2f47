//! The page templates that have no feature module of their own here (sign-in) and
//! the upload pages; each feature keeps its page struct beside its view.

use super::upload::{PreviewView, UploadView};
use askama::Template;

/// The caution shown on every page and export.
pub use crate::services::exports::CAUTION;

#[derive(Template)]
#[template(path = "upload.html")]
pub struct UploadPage {
    pub view: UploadView,
    pub problems: Vec<String>,
}

#[derive(Template)]
#[template(path = "upload_preview.html")]
pub struct PreviewPage {
    pub view: PreviewView,
}

/// The sign-in page; `next` is where to go afterwards (a local path).
#[derive(Template)]
#[template(path = "login.html")]
pub struct LoginPage {
    pub next: String,
    pub name: String,
    pub message: Option<String>,
}

/// Formatting helpers callable from templates.
pub mod fmt {
    /// Text equality for templates, whatever the levels of reference.
    pub fn same(a: &str, b: &str) -> bool {
        a == b
    }

    /// A number with `d` decimals, or an en dash when absent.
    pub fn num(x: &Option<f64>, d: usize) -> String {
        match x {
            Some(v) => format!("{v:.d$}"),
            None => "–".into(),
        }
    }
}
