//! The discussion thread of each well.

use super::StoreResult;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

#[derive(Debug, Clone, PartialEq, Serialize, FromRow)]
pub struct CommentRow {
    pub id: i64,
    pub well_id: i64,
    pub pick_event: Option<i64>,
    pub author: String,
    pub body: String,
    pub created_at: String,
}

pub async fn for_well(db: impl SqliteExecutor<'_>, well_id: i64) -> StoreResult<Vec<CommentRow>> {
    sqlx::query_as("SELECT id, well_id, pick_event, author, body, created_at FROM comments WHERE well_id = ? ORDER BY id")
        .bind(well_id)
        .fetch_all(db)
        .await
}

pub async fn insert(
    db: impl SqliteExecutor<'_>,
    well_id: i64,
    pick_event: Option<i64>,
    author: &str,
    body: &str,
) -> StoreResult<CommentRow> {
    sqlx::query_as(
        "INSERT INTO comments (well_id, pick_event, author, body) VALUES (?, ?, ?, ?)
         RETURNING id, well_id, pick_event, author, body, created_at",
    )
    .bind(well_id)
    .bind(pick_event)
    .bind(author)
    .bind(body)
    .fetch_one(db)
    .await
}
