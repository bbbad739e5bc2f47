//! Reading studies: one study by id, with the header every page of it shows.

use super::ServiceError;
use crate::store;
pub use crate::store::studies::StudyRow;
use serde::Serialize;
use sqlx::SqlitePool;

/// The study header shown on every page of a study.
#[derive(Debug, Clone, Serialize)]
pub struct StudyInfo {
    pub id: i64,
    pub name: String,
    pub description: String,
    pub created_at: String,
}

impl From<&StudyRow> for StudyInfo {
    fn from(s: &StudyRow) -> Self {
        StudyInfo {
            id: s.id,
            name: s.name.clone(),
            description: s.description.clone(),
            created_at: s.created_at.clone(),
        }
    }
}

/// A study, or not found naming it.
pub async fn load(db: &SqlitePool, id: i64) -> Result<StudyRow, ServiceError> {
    store::studies::get(db, id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("study {id}")))
}
