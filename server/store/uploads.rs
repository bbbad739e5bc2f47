//! The record of stored uploads: file name, when, by whom, rows and outcome.

use super::StoreResult;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

#[derive(Debug, Clone, Serialize, FromRow)]
pub struct UploadRow {
    pub id: i64,
    pub file_name: String,
    pub kind: String,
    pub uploaded_at: String,
    pub uploaded_by: String,
    pub rows: i64,
    pub outcome: String,
}

pub async fn insert(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    file_name: &str,
    kind: &str,
    uploaded_by: &str,
    rows: i64,
    outcome: &str,
) -> StoreResult<i64> {
    sqlx::query_scalar(
        "INSERT INTO uploads (study_id, file_name, kind, uploaded_by, rows, outcome)
         VALUES (?, ?, ?, ?, ?, ?) RETURNING id",
    )
    .bind(study_id)
    .bind(file_name)
    .bind(kind)
    .bind(uploaded_by)
    .bind(rows)
    .bind(outcome)
    .fetch_one(db)
    .await
}

pub async fn list(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<Vec<UploadRow>> {
    sqlx::query_as(
        "SELECT id, file_name, kind, uploaded_at, uploaded_by, rows, outcome
         FROM uploads WHERE study_id = ? ORDER BY id DESC",
    )
    .bind(study_id)
    .fetch_all(db)
    .await
}

/// Set the outcome of an upload once its rows are stored.
pub async fn set_outcome(db: impl SqliteExecutor<'_>, id: i64, outcome: &str) -> StoreResult<()> {
    sqlx::query("UPDATE uploads SET outcome = ? WHERE id = ?")
        .bind(outcome)
        .bind(id)
        .execute(db)
        .await?;
    Ok(())
}
