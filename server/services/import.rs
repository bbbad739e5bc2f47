//! Storing an upload: read every file once and validate it (pure, off the async
//! runtime), then store everything in one transaction, with the replacement of
//! existing wells only when the user said so (checked by one query inside the
//! transaction), and an activity-log row for every change.

use super::ServiceError;
use crate::store;
use crate::store::activity::Change;
use crate::store::wells::Location;
use sagline_science::input::{
    self, InputProblem, ParsedTops, ParsedWells, ReadFile, TopsOptions, WellsOptions,
};
use sagline_science::{SeaLevelCurve, WellColumn};
use serde::Serialize;
use sqlx::SqlitePool;

/// One file of an upload: its name as the user sent it, and its bytes.
#[derive(Debug, Clone)]
pub struct NamedFile {
    pub file_name: String,
    pub bytes: Vec<u8>,
}

/// The files of an upload; any may be absent, but not all.
#[derive(Debug, Clone, Default)]
pub struct UploadFiles {
    pub tops: Option<NamedFile>,
    pub wells: Option<NamedFile>,
    pub sea_level: Option<NamedFile>,
}

/// One file of an upload read once as CSV, under its name; any number of previews
/// and checks use this one reading.
#[derive(Debug)]
pub struct ReadUploadFile {
    pub file_name: String,
    pub read: ReadFile,
    /// The size of the file as sent.
    pub size_bytes: usize,
}

impl ReadUploadFile {
    /// Read a file's bytes (CPU-bound for a large file).
    pub fn read(file: &NamedFile) -> ReadUploadFile {
        ReadUploadFile {
            read: ReadFile::read(&file.bytes, &file.file_name),
            file_name: file.file_name.clone(),
            size_bytes: file.bytes.len(),
        }
    }

    /// The header at position `index`, as written.
    pub fn header(&self, index: usize) -> Option<&str> {
        self.read.headers()?.get(index).map(String::as_str)
    }
}

/// The files of an upload, each read once.
#[derive(Debug, Default)]
pub struct ReadUpload {
    pub tops: Option<ReadUploadFile>,
    pub wells: Option<ReadUploadFile>,
    pub sea_level: Option<ReadUploadFile>,
}

impl ReadUpload {
    /// Read every file (CPU-bound: call it from `spawn_blocking` for large files).
    pub fn read(files: &UploadFiles) -> ReadUpload {
        ReadUpload {
            tops: files.tops.as_ref().map(ReadUploadFile::read),
            wells: files.wells.as_ref().map(ReadUploadFile::read),
            sea_level: files.sea_level.as_ref().map(ReadUploadFile::read),
        }
    }

    /// The size of the files as sent.
    pub fn size_bytes(&self) -> usize {
        [&self.tops, &self.wells, &self.sea_level]
            .into_iter()
            .flatten()
            .map(|f| f.size_bytes)
            .sum()
    }
}

/// How to read the files.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct UploadOptions {
    pub tops: TopsOptions,
    pub wells: WellsOptions,
}

/// Every file of an upload, parsed and validated, ready to store.
#[derive(Debug, Clone)]
pub struct ValidatedUpload {
    pub tops: Option<(String, ParsedTops)>,
    pub wells: Option<(String, ParsedWells)>,
    pub sea_level: Option<(String, SeaLevelCurve)>,
}

impl ValidatedUpload {
    /// Names of the wells whose tops this upload carries.
    pub fn well_names(&self) -> Vec<String> {
        self.tops
            .as_ref()
            .map(|(_, t)| t.wells.iter().map(|w| w.name.clone()).collect())
            .unwrap_or_default()
    }

    /// Notes for the user (ignored columns, unit conversions).
    pub fn notes(&self) -> Vec<String> {
        let mut notes = Vec::new();
        if let Some((_, t)) = &self.tops {
            notes.extend(t.notes.iter().cloned());
        }
        if let Some((_, w)) = &self.wells {
            notes.extend(w.notes.iter().cloned());
        }
        notes
    }
}

/// Parse and validate every file; all problems of all files are returned together.
/// `catalogue` holds the study's lithology names. CPU-bound: call it from
/// `spawn_blocking` for large files.
pub fn validate(
    files: &UploadFiles,
    options: &UploadOptions,
    catalogue: &[String],
) -> Result<ValidatedUpload, Vec<InputProblem>> {
    validate_read(&ReadUpload::read(files), options, catalogue)
}

/// [`validate`] on files read before: no bytes are read again.
pub fn validate_read(
    files: &ReadUpload,
    options: &UploadOptions,
    catalogue: &[String],
) -> Result<ValidatedUpload, Vec<InputProblem>> {
    if files.tops.is_none() && files.wells.is_none() && files.sea_level.is_none() {
        return Err(vec![InputProblem {
            file: "upload".into(),
            line: None,
            column: None,
            reason: "no file was sent: choose a tops, wells or sea-level CSV file".into(),
        }]);
    }
    let mut problems = Vec::new();
    let mut out = ValidatedUpload {
        tops: None,
        wells: None,
        sea_level: None,
    };
    if let Some(f) = &files.tops {
        let spelling = |name: &str| {
            catalogue
                .iter()
                .find(|c| c.eq_ignore_ascii_case(name))
                .cloned()
        };
        match input::parse_tops_read(&f.read, &options.tops, &spelling) {
            Ok(t) => out.tops = Some((f.file_name.clone(), t)),
            Err(p) => problems.extend(p),
        }
    }
    if let Some(f) = &files.wells {
        match input::parse_wells_read(&f.read, &options.wells) {
            Ok(w) => out.wells = Some((f.file_name.clone(), w)),
            Err(p) => problems.extend(p),
        }
    }
    if let Some(f) = &files.sea_level {
        match input::parse_sea_level_read(&f.read) {
            Ok(c) => out.sea_level = Some((f.file_name.clone(), c)),
            Err(p) => problems.extend(p),
        }
    }
    if problems.is_empty() {
        Ok(out)
    } else {
        Err(problems)
    }
}

/// What an upload stored.
#[derive(Debug, Clone, Default, Serialize)]
pub struct ImportOutcome {
    pub wells_added: Vec<String>,
    pub wells_replaced: Vec<String>,
    pub surfaces_stored: usize,
    pub locations_set: usize,
    pub sea_level_points: Option<usize>,
    pub notes: Vec<String>,
}

/// Which of the upload's wells the study already holds.
pub async fn existing_wells(
    db: &SqlitePool,
    study_id: i64,
    upload: &ValidatedUpload,
) -> Result<Vec<String>, ServiceError> {
    let mut conn = db.acquire().await?;
    Ok(store::wells::existing_names(&mut conn, study_id, &upload.well_names()).await?)
}

fn column_summary(w: &WellColumn) -> String {
    format!(
        "{} surfaces, {:.1}–{:.1} m, {:.2}–{:.2} Ma",
        w.surfaces.len(),
        w.top().depth_m,
        w.base().depth_m,
        w.top().age_ma,
        w.base().age_ma
    )
}

/// What storing an upload did.
#[derive(Debug, Clone)]
pub enum Stored {
    /// Stored, in one transaction.
    Done(ImportOutcome),
    /// Nothing stored: these wells exist and replacing them was not confirmed.
    WellsExist(Vec<String>),
}

/// Store a validated upload in one transaction. Wells that already exist are
/// replaced only when `replace` is true; otherwise nothing is stored and the
/// conflict names them.
pub async fn store_upload(
    db: &SqlitePool,
    study_id: i64,
    upload: &ValidatedUpload,
    replace: bool,
    actor: &str,
) -> Result<ImportOutcome, ServiceError> {
    match store_checked(db, study_id, upload, replace, actor).await? {
        Stored::Done(outcome) => Ok(outcome),
        Stored::WellsExist(existing) => Err(ServiceError::Conflict(format!(
            "{} well(s) of this upload already exist in the study: {}. Confirm that they should be replaced (replace=true), or remove them from the file.",
            existing.len(),
            existing.join(", ")
        ))),
    }
}

/// [`store_upload`], answering existing wells that were not to be replaced with
/// their names instead of an error. Which wells exist is asked once, inside the
/// transaction, so a well added by another upload meanwhile is never replaced
/// unasked.
pub async fn store_checked(
    db: &SqlitePool,
    study_id: i64,
    upload: &ValidatedUpload,
    replace: bool,
    actor: &str,
) -> Result<Stored, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let mut outcome = ImportOutcome {
        notes: upload.notes(),
        ..Default::default()
    };
    let existing = store::wells::existing_names(&mut tx, study_id, &upload.well_names()).await?;
    if !existing.is_empty() && !replace {
        return Ok(Stored::WellsExist(existing));
    }

    if let Some((file_name, tops)) = &upload.tops {
        let upload_id = store::uploads::insert(
            &mut *tx,
            study_id,
            file_name,
            "tops",
            actor,
            tops.rows as i64,
            "stored",
        )
        .await?;
        for well in &tops.wells {
            let replaced = existing.contains(&well.name);
            let before = if replaced {
                let old = match store::wells::find_by_name(&mut *tx, study_id, &well.name).await? {
                    Some(w) => store::wells::surfaces(&mut *tx, w.id).await?,
                    None => Vec::new(),
                };
                store::wells::delete_by_name(&mut tx, study_id, &well.name).await?;
                Some(old_summary(&old))
            } else {
                None
            };
            let well_id =
                store::wells::insert(&mut *tx, study_id, &well.name, Some(upload_id)).await?;
            store::wells::insert_surfaces(&mut tx, well_id, &well.surfaces).await?;
            outcome.surfaces_stored += well.surfaces.len();
            store::activity::record(
                &mut *tx,
                Some(study_id),
                Change {
                    actor,
                    action: if replaced { "replace well" } else { "add well" },
                    subject: &well.name,
                    before,
                    after: Some(format!("{} (from {file_name})", column_summary(well))),
                },
            )
            .await?;
            if replaced {
                outcome.wells_replaced.push(well.name.clone());
            } else {
                outcome.wells_added.push(well.name.clone());
            }
        }
        let text = format!(
            "stored: {} well(s) added, {} replaced, {} surfaces",
            outcome.wells_added.len(),
            outcome.wells_replaced.len(),
            outcome.surfaces_stored
        );
        store::uploads::set_outcome(&mut *tx, upload_id, &text).await?;
        store::activity::record(
            &mut *tx,
            Some(study_id),
            Change {
                actor,
                action: "upload",
                subject: file_name,
                before: None,
                after: Some(format!("{} rows; {text}", tops.rows)),
            },
        )
        .await?;
    }

    if let Some((file_name, wells)) = &upload.wells {
        let mut unknown = Vec::new();
        for w in &wells.wells {
            let loc = Location {
                x: w.x,
                y: w.y,
                lat: w.lat,
                lon: w.lon,
                notes: w.notes.clone(),
            };
            if store::wells::set_location(&mut *tx, study_id, &w.name, &loc).await? {
                outcome.locations_set += 1;
            } else {
                unknown.push(w.name.clone());
            }
        }
        if !unknown.is_empty() {
            return Err(ServiceError::Problems(vec![InputProblem {
                file: file_name.clone(),
                line: None,
                column: Some("well".into()),
                reason: format!(
                    "these wells have no tops in this study: {}; upload their tops file with this wells file",
                    unknown.join(", ")
                ),
            }]));
        }
        let text = format!("stored: {} well location(s)", outcome.locations_set);
        store::uploads::insert(
            &mut *tx,
            study_id,
            file_name,
            "wells",
            actor,
            wells.rows as i64,
            &text,
        )
        .await?;
        store::activity::record(
            &mut *tx,
            Some(study_id),
            Change {
                actor,
                action: "upload",
                subject: file_name,
                before: None,
                after: Some(text),
            },
        )
        .await?;
    }

    if let Some((file_name, curve)) = &upload.sea_level {
        let before = store::sea_level::points(&mut *tx, study_id).await?;
        store::sea_level::replace(&mut tx, study_id, curve.points()).await?;
        let n = curve.points().len();
        outcome.sea_level_points = Some(n);
        let text = format!("stored: sea-level curve of {n} point(s)");
        store::uploads::insert(
            &mut *tx,
            study_id,
            file_name,
            "sea level",
            actor,
            n as i64,
            &text,
        )
        .await?;
        store::activity::record(
            &mut *tx,
            Some(study_id),
            Change {
                actor,
                action: "sea level",
                subject: file_name,
                before: Some(format!("{} point(s)", before.len())),
                after: Some(format!("{n} point(s)")),
            },
        )
        .await?;
    }

    tx.commit().await?;
    Ok(Stored::Done(outcome))
}

fn old_summary(rows: &[store::wells::SurfaceRow]) -> String {
    match (rows.first(), rows.last()) {
        (Some(a), Some(b)) => format!(
            "{} surfaces, {:.1}–{:.1} m, {:.2}–{:.2} Ma",
            rows.len(),
            a.depth_m,
            b.depth_m,
            a.age_ma,
            b.age_ma
        ),
        _ => "no surfaces".into(),
    }
}
