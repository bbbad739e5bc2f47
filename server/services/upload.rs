//! The browser's upload between sending the files and storing them. Each file is
//! read once when it arrives and held behind an `Arc` (never copied per request);
//! a preview or check under a new column mapping works from that one reading, and
//! the last check is kept, so storing what the preview showed checks nothing again.

use super::ServiceError;
use super::import::{self, ReadUpload, UploadFiles, UploadOptions, ValidatedUpload};
use crate::store;
use sagline_science::input::InputProblem;
use sqlx::SqlitePool;
use std::sync::{Arc, Mutex};

/// The result of checking an upload: ready to store, or every problem.
pub type Checked = Result<Arc<ValidatedUpload>, Vec<InputProblem>>;

/// The files of one upload, read, waiting for the user's confirmation.
#[derive(Debug)]
pub struct StagedUpload {
    pub study_id: i64,
    pub files: ReadUpload,
    /// The last check: its options, the catalogue it was made against, and its result.
    last_check: Mutex<Option<(UploadOptions, Vec<String>, Checked)>>,
}

impl StagedUpload {
    pub fn new(study_id: i64, files: ReadUpload) -> Self {
        StagedUpload {
            study_id,
            files,
            last_check: Mutex::new(None),
        }
    }

    /// The size of the held files as sent.
    pub fn size_bytes(&self) -> usize {
        self.files.size_bytes()
    }

    /// Check the files with `options` against the catalogue names, or give the last
    /// check when it was made with the same options and catalogue. CPU-bound on a
    /// new mapping: call it from `spawn_blocking`.
    pub fn check(&self, options: &UploadOptions, catalogue: &[String]) -> Checked {
        if let Some((o, c, checked)) = &*self.last_check.lock().expect("check lock")
            && o == options
            && c == catalogue
        {
            return checked.clone();
        }
        let checked = import::validate_read(&self.files, options, catalogue).map(Arc::new);
        *self.last_check.lock().expect("check lock") =
            Some((options.clone(), catalogue.to_vec(), checked.clone()));
        checked
    }
}

/// The study's lithology names, which a tops file's lithologies are checked against.
async fn catalogue_names(db: &SqlitePool, study_id: i64) -> Result<Vec<String>, ServiceError> {
    Ok(store::lithologies::list(db, study_id)
        .await?
        .into_iter()
        .map(|l| l.name)
        .collect())
}

fn task_failed(e: tokio::task::JoinError) -> ServiceError {
    ServiceError::Internal(format!("the upload task failed: {e}"))
}

/// Read the files of an upload once, off the async runtime, to hold them.
pub async fn stage(study_id: i64, files: UploadFiles) -> Result<StagedUpload, ServiceError> {
    tokio::task::spawn_blocking(move || StagedUpload::new(study_id, ReadUpload::read(&files)))
        .await
        .map_err(task_failed)
}

/// Check a held upload with `options`, off the async runtime.
pub async fn check_staged(
    db: &SqlitePool,
    staged: &Arc<StagedUpload>,
    options: &UploadOptions,
) -> Result<Checked, ServiceError> {
    let catalogue = catalogue_names(db, staged.study_id).await?;
    let staged = Arc::clone(staged);
    let options = options.clone();
    tokio::task::spawn_blocking(move || staged.check(&options, &catalogue))
        .await
        .map_err(task_failed)
}

/// Read and check files sent in one request (the API), off the async runtime.
pub async fn check_files(
    db: &SqlitePool,
    study_id: i64,
    files: UploadFiles,
    options: UploadOptions,
) -> Result<Checked, ServiceError> {
    let catalogue = catalogue_names(db, study_id).await?;
    tokio::task::spawn_blocking(move || {
        import::validate_read(&ReadUpload::read(&files), &options, &catalogue).map(Arc::new)
    })
    .await
    .map_err(task_failed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::services::import::NamedFile;
    use sagline_science::input::ColumnMapping;

    /// An invented two-well file whose depth header needs a mapping.
    const ODD: &str = "well,horizon,Depth,age_ma,lithology\n\
        Quill-1,Sea floor,100,0,shale\n\
        Quill-1,Base,900,30,\n\
        Quill-2,Sea floor,80,0,shale\n\
        Quill-2,Base,700,25,\n";

    fn staged() -> StagedUpload {
        let files = UploadFiles {
            tops: Some(NamedFile {
                file_name: "quill.csv".into(),
                bytes: ODD.as_bytes().to_vec(),
            }),
            ..Default::default()
        };
        StagedUpload::new(1, ReadUpload::read(&files))
    }

    fn with_depth(mapping: ColumnMapping) -> UploadOptions {
        let mut options = UploadOptions::default();
        options.tops.mapping = mapping;
        options
    }

    #[test]
    fn a_new_mapping_is_checked_from_the_one_reading_and_a_repeat_is_not_checked_again() {
        let staged = staged();
        let catalogue = vec!["shale".to_string()];
        let unmapped = staged.check(&UploadOptions::default(), &catalogue);
        let problems = unmapped.expect_err("Depth is not one of our columns");
        assert!(
            problems.iter().any(|p| p.file == "quill.csv"),
            "{problems:?}"
        );
        let options = with_depth(ColumnMapping::new().with("Depth", "depth_m"));
        let first = staged.check(&options, &catalogue).expect("mapped");
        assert_eq!(first.well_names(), ["Quill-1", "Quill-2"]);
        let again = staged.check(&options, &catalogue).expect("mapped");
        assert!(Arc::ptr_eq(&first, &again), "the repeat reuses the check");
        // Another catalogue is another check.
        let other = staged.check(&options, &["shale".to_string(), "chalk".to_string()]);
        assert!(!Arc::ptr_eq(&first, &other.expect("mapped")));
    }

    #[test]
    fn the_held_file_gives_its_headers_by_position() {
        let staged = staged();
        let tops = staged.files.tops.as_ref().expect("a tops file");
        assert_eq!(tops.header(2), Some("Depth"));
        assert_eq!(tops.header(5), None);
    }
}
