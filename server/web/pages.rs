//! What every page shares: the caution and the formatting helpers templates call,
//! and the sign-in page; each feature keeps its page struct beside its view.

use askama::Template;

/// The caution shown on every page and export.
pub use crate::services::exports::CAUTION;

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
