//! Uploading tops, wells and sea-level files: the upload form, a preview with
//! column mapping and units, and the store step; plus the one-shot API
//! `POST /api/studies/{id}/tops`.
//!
//! Nothing is stored until every file validates; a valid upload is one transaction.

use super::studies::{StudyInfo, load_study};
use super::{ApiResult, AppError, AppState, HtmlError, PageResult};
use crate::services::ServiceError;
use crate::services::accounts::SignedIn;
use crate::services::import::{
    self, ImportOutcome, NamedFile, ReadUploadFile, Stored, UploadFiles, UploadOptions,
};
use crate::services::upload::{self as staging, StagedUpload};
use crate::store;
use crate::store::uploads::UploadRow;
use askama::Template;
use axum::extract::{Multipart, Path, Query, State};
use axum::http::StatusCode;
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use axum::{Form, Json, Router};
use sagline_science::input::{
    self, ColumnMapping, DepthUnit, FileKind, InputProblem, Preview, PreviewOptions, TopsOptions,
    WellsOptions,
};
use serde::Serialize;
use std::collections::HashMap;

/// The upload form page.
#[derive(Template)]
#[template(path = "upload.html")]
pub struct UploadPage {
    pub view: UploadView,
    pub problems: Vec<String>,
}

/// The preview of a held upload, before it is stored.
#[derive(Template)]
#[template(path = "upload_preview.html")]
pub struct PreviewPage {
    pub view: PreviewView,
}

pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/studies/{id}/upload", get(upload_page).post(upload_form))
        .route("/api/studies/{id}/upload", get(upload_json))
        .route(
            "/studies/{id}/upload/{token}",
            get(preview_page).post(store_form),
        )
        .route("/api/studies/{id}/upload/{token}", get(preview_json))
        .route("/api/studies/{id}/tops", post(tops_api))
}

/// The file parts a form or API call may carry, by field name.
const FILE_FIELDS: [(&str, FileKind); 3] = [
    ("tops", FileKind::Tops),
    ("wells", FileKind::Wells),
    ("sea_level", FileKind::SeaLevel),
];

#[derive(Debug, Serialize)]
pub struct UploadView {
    pub study: StudyInfo,
    pub uploads: Vec<UploadRow>,
    pub max_file_mib: usize,
    pub tops_columns: &'static [&'static str],
    pub wells_columns: &'static [&'static str],
    pub sea_level_columns: &'static [&'static str],
}

async fn upload_view(state: &AppState, id: i64) -> ApiResult<UploadView> {
    let study = load_study(state, id).await?;
    Ok(UploadView {
        study: StudyInfo::from(&study),
        uploads: store::uploads::list(&state.db, id).await?,
        max_file_mib: input::MAX_FILE_BYTES / (1024 * 1024),
        tops_columns: FileKind::Tops.columns(),
        wells_columns: FileKind::Wells.columns(),
        sea_level_columns: FileKind::SeaLevel.columns(),
    })
}

async fn upload_page(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> PageResult<Html<String>> {
    let view = upload_view(&state, id).await?;
    Ok(Html(
        UploadPage {
            view,
            problems: Vec::new(),
        }
        .render()?,
    ))
}

async fn upload_json(
    State(state): State<AppState>,
    Path(id): Path<i64>,
) -> ApiResult<Json<UploadView>> {
    Ok(Json(upload_view(&state, id).await?))
}

/// The files and text fields of a multipart request.
struct MultipartUpload {
    files: UploadFiles,
    fields: HashMap<String, String>,
}

/// Read a multipart body, refusing any file over the size limit with the limit named.
async fn read_multipart(mut multipart: Multipart) -> Result<MultipartUpload, AppError> {
    let limit = input::MAX_FILE_BYTES;
    let too_large = || {
        AppError::TooLarge(format!(
            "A file is larger than the limit of {} MiB; split the well set into several files.",
            limit / (1024 * 1024)
        ))
    };
    let mut files = UploadFiles::default();
    let mut fields = HashMap::new();
    while let Some(field) = multipart.next_field().await.map_err(|e| {
        if e.status() == StatusCode::PAYLOAD_TOO_LARGE {
            too_large()
        } else {
            AppError::BadRequest(format!("The upload could not be read: {}", e.body_text()))
        }
    })? {
        let name = field.name().unwrap_or_default().to_string();
        if let Some((_, _)) = FILE_FIELDS.iter().find(|(f, _)| *f == name) {
            let file_name = field
                .file_name()
                .map(str::to_string)
                .filter(|n| !n.is_empty());
            let bytes = field.bytes().await.map_err(|e| {
                if e.status() == StatusCode::PAYLOAD_TOO_LARGE {
                    too_large()
                } else {
                    AppError::BadRequest(format!(
                        "The file '{name}' could not be read: {}",
                        e.body_text()
                    ))
                }
            })?;
            if bytes.len() > limit {
                return Err(too_large());
            }
            // A browser sends an empty part for a file input left blank.
            if bytes.is_empty() && file_name.is_none() {
                continue;
            }
            let file = NamedFile {
                file_name: file_name.unwrap_or_else(|| format!("{name}.csv")),
                bytes: bytes.to_vec(),
            };
            match name.as_str() {
                "tops" => files.tops = Some(file),
                "wells" => files.wells = Some(file),
                _ => files.sea_level = Some(file),
            }
        } else {
            let text = field.text().await.map_err(|e| {
                AppError::BadRequest(format!(
                    "The field '{name}' could not be read: {}",
                    e.body_text()
                ))
            })?;
            fields.insert(name, text);
        }
    }
    Ok(MultipartUpload { files, fields })
}

fn parse_unit(value: Option<&String>, what: &str) -> Result<Option<DepthUnit>, AppError> {
    match value.map(|v| v.trim().to_ascii_lowercase()).as_deref() {
        None | Some("") | Some("auto") => Ok(None),
        Some("m") | Some("metres") | Some("meters") => Ok(Some(DepthUnit::Metres)),
        Some("ft") | Some("feet") => Ok(Some(DepthUnit::Feet)),
        Some(other) => Err(AppError::BadRequest(format!(
            "{what} '{other}' is not a unit: use metres or feet."
        ))),
    }
}

/// Build the reading options from form fields. Two forms of mapping are accepted:
/// `map.<header>=<column>` (API) and `<file>_col_<index>=<column>` (the preview form,
/// by header position in the staged file).
fn upload_options(
    fields: &HashMap<String, String>,
    staged: Option<&StagedUpload>,
) -> Result<UploadOptions, AppError> {
    let mut tops_map = ColumnMapping::new();
    let mut wells_map = ColumnMapping::new();
    for (key, column) in fields {
        let column = column.trim();
        if let Some(header) = key.strip_prefix("map.") {
            tops_map = tops_map.with(header, column);
        } else if let Some(header) = key.strip_prefix("wells_map.") {
            wells_map = wells_map.with(header, column);
        } else if let (Some(index), Some(s)) = (key.strip_prefix("tops_col_"), staged) {
            if let Some(header) = staged_header(s.files.tops.as_ref(), index) {
                tops_map = tops_map.with(header, column);
            }
        } else if let (Some(index), Some(s)) = (key.strip_prefix("wells_col_"), staged)
            && let Some(header) = staged_header(s.files.wells.as_ref(), index)
        {
            wells_map = wells_map.with(header, column);
        }
    }
    Ok(UploadOptions {
        tops: TopsOptions {
            mapping: tops_map,
            depth_unit: parse_unit(fields.get("depth_unit"), "depth_unit")?,
            water_depth_unit: parse_unit(fields.get("water_depth_unit"), "water_depth_unit")?
                .unwrap_or_default(),
            file_name: None,
        },
        wells: WellsOptions {
            mapping: wells_map,
            file_name: None,
        },
    })
}

/// The header at a form's column index, from the file as read when it was held.
fn staged_header<'f>(file: Option<&'f ReadUploadFile>, index: &str) -> Option<&'f str> {
    file?.header(index.parse().ok()?)
}

fn truthy(v: Option<&String>) -> bool {
    matches!(
        v.map(|s| s.trim().to_ascii_lowercase()).as_deref(),
        Some("1" | "true" | "yes" | "on")
    )
}

/// The API's answer to a stored or checked upload.
#[derive(Debug, Serialize)]
struct TopsApiAnswer {
    stored: bool,
    wells: Vec<String>,
    existing_wells: Vec<String>,
    notes: Vec<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    outcome: Option<ImportOutcome>,
}

/// `POST /api/studies/{id}/tops` (multipart: `tops`, `wells`, `sea_level` files;
/// fields `depth_unit`, `water_depth_unit`, `map.<header>=<column>`, `replace`, `dry_run`).
/// 200 with what was stored (or would be, with `dry_run`); 422 with every problem;
/// 409 when wells exist and `replace` was not given.
async fn tops_api(
    State(state): State<AppState>,
    user: SignedIn,
    Path(id): Path<i64>,
    multipart: Multipart,
) -> ApiResult<Response> {
    load_study(&state, id).await?;
    let MultipartUpload { files, fields } = read_multipart(multipart).await?;
    let options = upload_options(&fields, None)?;
    let upload = staging::check_files(&state.db, id, files, options)
        .await?
        .map_err(AppError::Invalid)?;
    let wells = upload.well_names();
    if truthy(fields.get("dry_run")) {
        let answer = TopsApiAnswer {
            stored: false,
            wells,
            existing_wells: import::existing_wells(&state.db, id, &upload).await?,
            notes: upload.notes(),
            outcome: None,
        };
        return Ok(Json(answer).into_response());
    }
    let replace = truthy(fields.get("replace"));
    // Which wells exist is asked inside the store's transaction: a well added by
    // another upload meanwhile is refused, not silently replaced.
    match import::store_checked(&state.db, id, &upload, replace, &user.name).await? {
        Stored::WellsExist(existing) => {
            let body = serde_json::json!({
                "error": format!("{} well(s) already exist in this study; send replace=true to replace them.", existing.len()),
                "existing_wells": existing,
            });
            Ok((StatusCode::CONFLICT, Json(body)).into_response())
        }
        Stored::Done(outcome) => {
            let answer = TopsApiAnswer {
                stored: true,
                wells,
                existing_wells: outcome.wells_replaced.clone(),
                notes: outcome.notes.clone(),
                outcome: Some(outcome),
            };
            Ok(Json(answer).into_response())
        }
    }
}

/// Browser step 1: hold the files and show the preview.
async fn upload_form(
    State(state): State<AppState>,
    Path(id): Path<i64>,
    multipart: Multipart,
) -> PageResult<Response> {
    load_study(&state, id).await?;
    let MultipartUpload { files, fields } = read_multipart(multipart).await?;
    if files.tops.is_none() && files.wells.is_none() && files.sea_level.is_none() {
        let view = upload_view(&state, id).await?;
        let page = UploadPage {
            view,
            problems: vec!["Choose at least one file to upload.".into()],
        };
        return Ok((StatusCode::UNPROCESSABLE_ENTITY, Html(page.render()?)).into_response());
    }
    // Refuse a bad unit word before reading the files.
    let depth_unit = parse_unit(fields.get("depth_unit"), "depth_unit")?;
    let token = state.staging.put(staging::stage(id, files).await?);
    let mut query = String::new();
    // Only the known unit words travel in the URL; anything else was refused above.
    if let Some(unit) = depth_unit {
        query = format!(
            "?depth_unit={}",
            if unit == DepthUnit::Feet {
                "feet"
            } else {
                "metres"
            }
        );
    }
    Ok(Redirect::to(&format!("/studies/{id}/upload/{token}{query}")).into_response())
}

/// One file of the preview page.
#[derive(Debug, Serialize)]
pub struct FilePreview {
    pub field: &'static str,
    pub label: &'static str,
    pub file_name: String,
    pub columns: &'static [&'static str],
    pub preview: Option<Preview>,
    /// Per header: our column it is read as ("" = ignored).
    pub chosen: Vec<String>,
}

#[derive(Debug, Serialize)]
pub struct PreviewView {
    pub study: StudyInfo,
    pub token: String,
    pub files: Vec<FilePreview>,
    pub depth_unit: String,
    pub water_depth_unit: String,
    /// Every problem the files have with the current mapping (nothing is stored while any remain).
    pub problems: Vec<InputProblem>,
    pub wells_in_upload: Vec<String>,
    pub existing_wells: Vec<String>,
    pub notes: Vec<String>,
    pub ready: bool,
    /// Set when the user tried to store without confirming the replacement.
    pub needs_replace_confirmation: bool,
}

async fn preview_view(
    state: &AppState,
    id: i64,
    token: &str,
    fields: &HashMap<String, String>,
) -> ApiResult<PreviewView> {
    let study = load_study(state, id).await?;
    let staged = state
        .staging
        .get(token, id)
        // Read as "this upload not found": held uploads expire after an hour (staging.rs).
        .ok_or_else(|| AppError::NotFound("this upload".into()))?;
    // On the first view, offer a mapping guessed from the header names; the user sees
    // it in the "read as" row and nothing is stored until they confirm.
    let (fields, guessed) = with_guessed_mapping(fields, &staged);
    let options = upload_options(&fields, Some(&staged))?;
    let mut files = Vec::new();
    for (field, kind) in FILE_FIELDS {
        let (file, mapping, label) = match kind {
            FileKind::Tops => (
                staged.files.tops.as_ref(),
                options.tops.mapping.clone(),
                "Tops",
            ),
            FileKind::Wells => (
                staged.files.wells.as_ref(),
                options.wells.mapping.clone(),
                "Wells",
            ),
            _ => (
                staged.files.sea_level.as_ref(),
                ColumnMapping::new(),
                "Sea level",
            ),
        };
        let Some(file) = file else { continue };
        let opts = PreviewOptions {
            mapping,
            ..PreviewOptions::new(kind)
        };
        let preview = input::preview_read(&file.read, &opts).ok();
        let chosen = preview
            .as_ref()
            .map(|p| {
                p.headers
                    .iter()
                    .map(|h| {
                        p.matched
                            .iter()
                            .find(|m| &m.header == h)
                            .map(|m| m.column.clone())
                            .unwrap_or_default()
                    })
                    .collect()
            })
            .unwrap_or_default();
        files.push(FilePreview {
            field,
            label,
            file_name: file.file_name.clone(),
            columns: kind.columns(),
            preview,
            chosen,
        });
    }
    let unit_text = |u: Option<DepthUnit>| match u {
        None => "auto",
        Some(DepthUnit::Metres) => "metres",
        Some(DepthUnit::Feet) => "feet",
    };
    let (problems, wells_in_upload, existing_wells, notes) =
        match staging::check_staged(&state.db, &staged, &options).await? {
            Ok(upload) => {
                let existing = import::existing_wells(&state.db, id, &upload).await?;
                (Vec::new(), upload.well_names(), existing, upload.notes())
            }
            Err(problems) => (problems, Vec::new(), Vec::new(), Vec::new()),
        };
    let mut notes = notes;
    if guessed {
        notes.insert(
            0,
            "Some columns were matched by a guess from their names: check the \"read as\" row before storing.".into(),
        );
    }
    Ok(PreviewView {
        study: StudyInfo::from(&study),
        token: token.to_string(),
        files,
        depth_unit: unit_text(options.tops.depth_unit).into(),
        water_depth_unit: unit_text(Some(options.tops.water_depth_unit)).into(),
        ready: problems.is_empty(),
        problems,
        wells_in_upload,
        existing_wells,
        notes,
        needs_replace_confirmation: false,
    })
}

async fn preview_page(
    State(state): State<AppState>,
    Path((id, token)): Path<(i64, String)>,
    Query(fields): Query<HashMap<String, String>>,
) -> PageResult<Response> {
    let view = preview_view(&state, id, &token, &fields).await?;
    let status = if view.ready {
        StatusCode::OK
    } else {
        StatusCode::UNPROCESSABLE_ENTITY
    };
    Ok((status, Html(PreviewPage { view }.render()?)).into_response())
}

async fn preview_json(
    State(state): State<AppState>,
    Path((id, token)): Path<(i64, String)>,
    Query(fields): Query<HashMap<String, String>>,
) -> ApiResult<Json<PreviewView>> {
    Ok(Json(preview_view(&state, id, &token, &fields).await?))
}

/// The form fields with a guessed `<file>_col_<index>` mapping added, when the user has
/// not chosen one yet; and whether anything was guessed.
fn with_guessed_mapping(
    fields: &HashMap<String, String>,
    staged: &StagedUpload,
) -> (HashMap<String, String>, bool) {
    let mut fields = fields.clone();
    if fields.keys().any(|k| k.contains("_col_")) {
        return (fields, false);
    }
    let mut guessed = false;
    for (prefix, kind, file) in [
        ("tops", FileKind::Tops, staged.files.tops.as_ref()),
        ("wells", FileKind::Wells, staged.files.wells.as_ref()),
    ] {
        let Some(headers) = file.and_then(|f| f.read.headers()) else {
            continue;
        };
        for (header, column) in input::guess_mapping(kind, headers) {
            if let Some(i) = headers.iter().position(|h| *h == header) {
                fields.insert(format!("{prefix}_col_{i}"), column);
                guessed = true;
            }
        }
    }
    (fields, guessed)
}

/// Whether header `index` is read as `column` (for the preview's selects).
pub fn is_chosen(chosen: &[String], index: &usize, column: &str) -> bool {
    chosen.get(*index).is_some_and(|c| c == column)
}

/// Browser step 2: store the held files with the chosen mapping, or show why not.
/// The check the preview made with this mapping is reused, not made again.
async fn store_form(
    State(state): State<AppState>,
    user: SignedIn,
    Path((id, token)): Path<(i64, String)>,
    Form(fields): Form<HashMap<String, String>>,
) -> PageResult<Response> {
    load_study(&state, id).await?;
    let staged = state
        .staging
        .get(&token, id)
        .ok_or_else(|| AppError::NotFound("this upload".into()))?;
    let options = upload_options(&fields, Some(&staged))?;
    let upload = match staging::check_staged(&state.db, &staged, &options).await? {
        Ok(upload) => upload,
        // The preview page shows the problems (and answers 422).
        Err(_) => return preview_page(State(state), Path((id, token)), Query(fields)).await,
    };
    let replace = truthy(fields.get("replace"));
    match import::store_checked(&state.db, id, &upload, replace, &user.name).await {
        Ok(Stored::Done(_)) => {
            state.staging.remove(&token);
            Ok(Redirect::to(&format!("/studies/{id}")).into_response())
        }
        Ok(Stored::WellsExist(_)) => {
            let mut view = preview_view(&state, id, &token, &fields).await?;
            view.needs_replace_confirmation = true;
            Ok((StatusCode::CONFLICT, Html(PreviewPage { view }.render()?)).into_response())
        }
        Err(ServiceError::Problems(problems)) => {
            let mut view = preview_view(&state, id, &token, &fields).await?;
            view.problems = problems;
            view.ready = false;
            Ok((
                StatusCode::UNPROCESSABLE_ENTITY,
                Html(PreviewPage { view }.render()?),
            )
                .into_response())
        }
        Err(e) => Err(HtmlError(e.into())),
    }
}
