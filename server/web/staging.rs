//! Uploaded files held between the upload and the user's confirmation of the
//! preview and column mapping. Held in memory for a limited time: nothing is
//! stored in the database until the user confirms.

use crate::services::upload::StagedUpload;
use rand::RngExt;
use std::collections::HashMap;
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// How long an unconfirmed upload is kept.
pub const STAGING_TTL: Duration = Duration::from_secs(60 * 60);
/// How many unconfirmed uploads are kept at once (oldest dropped first).
pub const MAX_STAGED: usize = 16;

#[derive(Debug, Default)]
pub struct Staging {
    uploads: Mutex<HashMap<String, (Instant, Arc<StagedUpload>)>>,
}

impl Staging {
    /// Keep an upload and return the token that names it.
    pub fn put(&self, upload: StagedUpload) -> String {
        let token = format!("{:016x}", rand::rng().random::<u64>());
        let mut map = self.uploads.lock().expect("staging lock");
        map.retain(|_, (created, _)| created.elapsed() < STAGING_TTL);
        while map.len() >= MAX_STAGED {
            let oldest = map
                .iter()
                .min_by_key(|(_, (created, _))| *created)
                .map(|(k, _)| k.clone());
            match oldest {
                Some(k) => map.remove(&k),
                None => break,
            };
        }
        map.insert(token.clone(), (Instant::now(), Arc::new(upload)));
        token
    }

    /// The upload named by `token`, if it is still held and belongs to `study_id`
    /// (shared, not copied).
    pub fn get(&self, token: &str, study_id: i64) -> Option<Arc<StagedUpload>> {
        let map = self.uploads.lock().expect("staging lock");
        map.get(token)
            .filter(|(created, u)| u.study_id == study_id && created.elapsed() < STAGING_TTL)
            .map(|(_, u)| Arc::clone(u))
    }

    /// Forget an upload once it is stored.
    pub fn remove(&self, token: &str) {
        self.uploads.lock().expect("staging lock").remove(token);
    }
}
