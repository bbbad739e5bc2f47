//! Askama page templates. Each page wraps the view that its JSON twin serialises.

use super::activity::ActivityView;
use super::admin::{IssuedPassword, UsersView};
use super::studies::{StudiesView, StudyView};
use super::upload::{PreviewView, UploadView};
use crate::services::catalogue::CatalogueView;
use askama::Template;

/// The caution shown on every page and export.
pub use crate::services::exports::CAUTION;

#[derive(Template)]
#[template(path = "studies.html")]
pub struct StudiesPage {
    pub view: StudiesView,
}

#[derive(Template)]
#[template(path = "study.html")]
pub struct StudyPage {
    pub view: StudyView,
}

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

#[derive(Template)]
#[template(path = "catalogue.html")]
pub struct CataloguePage {
    pub view: CatalogueView,
    pub problems: Vec<String>,
    pub notice: Option<String>,
}

#[derive(Template)]
#[template(path = "activity.html")]
pub struct ActivityPage {
    pub view: ActivityView,
}

/// The sign-in page; `next` is where to go afterwards (a local path).
#[derive(Template)]
#[template(path = "login.html")]
pub struct LoginPage {
    pub next: String,
    pub name: String,
    pub message: Option<String>,
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

#[derive(Template)]
#[template(path = "error.html")]
pub struct ErrorPage {
    pub status: u16,
    pub message: String,
    pub problems: Vec<String>,
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
