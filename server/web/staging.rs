//! Uploaded files held between the upload and the user's confirmation of the
//! preview and column mapping. Held in memory for a limited time and size: nothing
//! is stored in the database until the user confirms.

use crate::services::upload::StagedUpload;
use rand::RngExt;
use std::sync::Arc;
use std::time::Duration;

/// How long an unconfirmed upload is kept.
pub const STAGING_TTL: Duration = Duration::from_secs(60 * 60);
/// How much of the held files' size is kept at once, in KiB (256 MiB: four of the
/// largest files accepted); the least recently used upload is dropped first.
pub const MAX_STAGED_KIB: u64 = 256 * 1024;

#[derive(Debug)]
pub struct Staging {
    uploads: moka::sync::Cache<String, Arc<StagedUpload>>,
}

impl Default for Staging {
    fn default() -> Self {
        Staging::new(MAX_STAGED_KIB, STAGING_TTL)
    }
}

impl Staging {
    /// Hold at most `max_kib` of files, each upload for at most `ttl`.
    pub fn new(max_kib: u64, ttl: Duration) -> Self {
        Staging {
            uploads: moka::sync::Cache::builder()
                .max_capacity(max_kib)
                .weigher(|_, u: &Arc<StagedUpload>| {
                    u32::try_from(u.size_bytes() / 1024 + 1).unwrap_or(u32::MAX)
                })
                .eviction_policy(moka::policy::EvictionPolicy::lru())
                .time_to_live(ttl)
                .build(),
        }
    }

    /// Keep an upload and return the token that names it.
    pub fn put(&self, upload: StagedUpload) -> String {
        let token = format!("{:016x}", rand::rng().random::<u64>());
        self.uploads.insert(token.clone(), Arc::new(upload));
        token
    }

    /// The upload named by `token`, if it is still held and belongs to `study_id`
    /// (shared, not copied).
    pub fn get(&self, token: &str, study_id: i64) -> Option<Arc<StagedUpload>> {
        self.uploads.get(token).filter(|u| u.study_id == study_id)
    }

    /// Forget an upload once it is stored.
    pub fn remove(&self, token: &str) {
        self.uploads.invalidate(token);
    }

    /// The size held once pending evictions have run, in KiB.
    pub fn held_kib(&self) -> u64 {
        self.uploads.run_pending_tasks();
        self.uploads.weighted_size()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::services::import::{NamedFile, ReadUpload, UploadFiles};

    fn upload(study_id: i64, kib: usize) -> StagedUpload {
        let mut csv = String::from("well,horizon\n");
        while csv.len() < kib * 1024 {
            csv.push_str("Pell-1,Unit\n");
        }
        let files = UploadFiles {
            tops: Some(NamedFile {
                file_name: "pell.csv".into(),
                bytes: csv.into_bytes(),
            }),
            ..Default::default()
        };
        StagedUpload::new(study_id, ReadUpload::read(&files))
    }

    #[test]
    fn held_uploads_stay_within_the_size_bound_and_the_newest_is_held() {
        let staging = Staging::new(100, STAGING_TTL);
        let tokens: Vec<String> = (0..10).map(|_| staging.put(upload(3, 30))).collect();
        assert!(staging.held_kib() <= 100, "{}", staging.held_kib());
        let last = tokens.last().expect("ten tokens");
        assert!(staging.get(last, 3).is_some(), "the newest upload is held");
        assert!(staging.get(last, 4).is_none(), "only for its own study");
        let held = tokens
            .iter()
            .filter(|t| staging.get(t, 3).is_some())
            .count();
        assert!((1..=3).contains(&held), "{held} of 10 held");
    }

    #[test]
    fn a_held_upload_expires() {
        let staging = Staging::new(100, Duration::from_millis(50));
        let token = staging.put(upload(3, 1));
        std::thread::sleep(Duration::from_millis(120));
        assert!(staging.get(&token, 3).is_none());
    }

    #[test]
    fn a_stored_upload_is_forgotten_and_a_get_shares_it() {
        let staging = Staging::default();
        let token = staging.put(upload(3, 1));
        let (a, b) = (staging.get(&token, 3), staging.get(&token, 3));
        assert!(Arc::ptr_eq(&a.expect("held"), &b.expect("held")));
        staging.remove(&token);
        assert!(staging.get(&token, 3).is_none());
    }
}
