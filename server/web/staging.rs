//! Uploaded files held between the upload and the user's confirmation of the
//! preview and column mapping. Held in memory for a limited time: nothing is
//! stored in the database until the user confirms.

use rand::RngExt;
use std::collections::HashMap;
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// How long an unconfirmed upload is kept.
pub const STAGING_TTL: Duration = Duration::from_secs(60 * 60);
/// How many unconfirmed uploads are kept at once (oldest dropped first).
pub const MAX_STAGED: usize = 16;

/// One uploaded file.
#[derive(Debug, Clone)]
pub struct StagedFile {
    pub file_name: String,
    pub bytes: Vec<u8>,
}

/// The files of one upload, waiting for confirmation.
#[derive(Debug, Clone)]
pub struct StagedUpload {
    pub study_id: i64,
    pub tops: Option<StagedFile>,
    pub wells: Option<StagedFile>,
    pub sea_level: Option<StagedFile>,
    created: Instant,
}

impl StagedUpload {
    pub fn new(
        study_id: i64,
        tops: Option<StagedFile>,
        wells: Option<StagedFile>,
        sea_level: Option<StagedFile>,
    ) -> Self {
        StagedUpload {
            study_id,
            tops,
            wells,
            sea_level,
            created: Instant::now(),
        }
    }
}

#[derive(Debug, Default)]
pub struct Staging {
    uploads: Mutex<HashMap<String, StagedUpload>>,
}

impl Staging {
    /// Keep an upload and return the token that names it.
    pub fn put(&self, upload: StagedUpload) -> String {
        let token = format!("{:016x}", rand::rng().random::<u64>());
        let mut map = self.uploads.lock().expect("staging lock");
        map.retain(|_, u| u.created.elapsed() < STAGING_TTL);
        while map.len() >= MAX_STAGED {
            let oldest = map
                .iter()
                .min_by_key(|(_, u)| u.created)
                .map(|(k, _)| k.clone());
            match oldest {
                Some(k) => map.remove(&k),
                None => break,
            };
        }
        map.insert(token.clone(), upload);
        token
    }

    /// The upload named by `token`, if it is still held and belongs to `study_id`.
    pub fn get(&self, token: &str, study_id: i64) -> Option<StagedUpload> {
        let map = self.uploads.lock().expect("staging lock");
        map.get(token)
            .filter(|u| u.study_id == study_id && u.created.elapsed() < STAGING_TTL)
            .cloned()
    }

    /// Forget an upload once it is stored.
    pub fn remove(&self, token: &str) {
        self.uploads.lock().expect("staging lock").remove(token);
    }
}
