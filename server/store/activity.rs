//! The activity log: one row for every change, with who, when, and before -> after.

use super::StoreResult;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

#[derive(Debug, Clone, Serialize, FromRow)]
pub struct ActivityRow {
    pub id: i64,
    pub at: String,
    pub actor: String,
    pub action: String,
    pub subject: String,
    pub before_state: Option<String>,
    pub after_state: Option<String>,
}

/// One change to record. `before` / `after` are short JSON or text snapshots.
#[derive(Debug, Clone)]
pub struct Change<'a> {
    pub actor: &'a str,
    pub action: &'a str,
    pub subject: &'a str,
    pub before: Option<String>,
    pub after: Option<String>,
}

pub async fn record(
    db: impl SqliteExecutor<'_>,
    study_id: Option<i64>,
    c: Change<'_>,
) -> StoreResult<()> {
    sqlx::query(
        "INSERT INTO activity (study_id, actor, action, subject, before_state, after_state)
         VALUES (?, ?, ?, ?, ?, ?)",
    )
    .bind(study_id)
    .bind(c.actor)
    .bind(c.action)
    .bind(c.subject)
    .bind(c.before)
    .bind(c.after)
    .execute(db)
    .await?;
    Ok(())
}

/// The newest `limit` entries of a study, optionally only those of one action and/or
/// one person.
pub async fn list(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    action: Option<&str>,
    actor: Option<&str>,
    limit: i64,
) -> StoreResult<Vec<ActivityRow>> {
    sqlx::query_as(
        "SELECT id, at, actor, action, subject, before_state, after_state FROM activity
         WHERE study_id = ?1 AND (?2 IS NULL OR action = ?2) AND (?3 IS NULL OR actor = ?3)
         ORDER BY id DESC LIMIT ?4",
    )
    .bind(study_id)
    .bind(action)
    .bind(actor)
    .bind(limit)
    .fetch_all(db)
    .await
}

/// The kinds of change and the people that appear in a study's log, for the filters.
pub async fn kinds_and_actors(
    db: &mut sqlx::SqliteConnection,
    study_id: i64,
) -> StoreResult<(Vec<String>, Vec<String>)> {
    let actions = sqlx::query_scalar(
        "SELECT DISTINCT action FROM activity WHERE study_id = ? ORDER BY action",
    )
    .bind(study_id)
    .fetch_all(&mut *db)
    .await?;
    let actors =
        sqlx::query_scalar("SELECT DISTINCT actor FROM activity WHERE study_id = ? ORDER BY actor")
            .bind(study_id)
            .fetch_all(&mut *db)
            .await?;
    Ok((actions, actors))
}

/// The id of the newest activity row of a study (0 if none): every change writes one,
/// so this names the study's current revision.
pub async fn latest_id(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<i64> {
    sqlx::query_scalar("SELECT COALESCE(MAX(id), 0) FROM activity WHERE study_id = ?")
        .bind(study_id)
        .fetch_one(db)
        .await
}
