//! The team's rift picks, with optimistic versioning: a save names the version it
//! was made against and succeeds only if that is still the stored one.

use super::StoreResult;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

#[derive(Debug, Clone, PartialEq, Serialize, FromRow)]
pub struct PickRow {
    pub id: i64,
    pub well_id: i64,
    pub event: i64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub model: String,
    pub state: String,
    pub version: i64,
    pub updated_by: String,
    pub updated_at: String,
}

/// A pick as saved by someone (without the bookkeeping columns).
#[derive(Debug, Clone, PartialEq)]
pub struct PickValues<'a> {
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub model: &'a str,
    pub state: &'a str,
}

macro_rules! select_picks {
    ($rest:literal) => {
        concat!(
            "SELECT p.id, p.well_id, p.event, p.rift_onset_ma, p.rift_end_ma, p.model, p.state, p.version, ",
            "p.updated_by, p.updated_at FROM picks p ",
            $rest
        )
    };
}

pub async fn for_well(db: impl SqliteExecutor<'_>, well_id: i64) -> StoreResult<Vec<PickRow>> {
    sqlx::query_as(select_picks!("WHERE p.well_id = ? ORDER BY p.event"))
        .bind(well_id)
        .fetch_all(db)
        .await
}

/// Every pick of a study, by well then event.
pub async fn for_study(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<Vec<PickRow>> {
    sqlx::query_as(select_picks!(
        "JOIN wells w ON w.id = p.well_id WHERE w.study_id = ? ORDER BY p.well_id, p.event"
    ))
    .bind(study_id)
    .fetch_all(db)
    .await
}

pub async fn get(
    db: impl SqliteExecutor<'_>,
    well_id: i64,
    event: i64,
) -> StoreResult<Option<PickRow>> {
    sqlx::query_as(select_picks!("WHERE p.well_id = ? AND p.event = ?"))
        .bind(well_id)
        .bind(event)
        .fetch_optional(db)
        .await
}

/// Create a pick (version 1). Returns false if one exists already for this well and event.
pub async fn insert(
    db: impl SqliteExecutor<'_>,
    well_id: i64,
    event: i64,
    v: &PickValues<'_>,
    by: &str,
) -> StoreResult<bool> {
    let done = sqlx::query(
        "INSERT INTO picks (well_id, event, rift_onset_ma, rift_end_ma, model, state, version, updated_by)
         VALUES (?, ?, ?, ?, ?, ?, 1, ?) ON CONFLICT (well_id, event) DO NOTHING",
    )
    .bind(well_id)
    .bind(event)
    .bind(v.rift_onset_ma)
    .bind(v.rift_end_ma)
    .bind(v.model)
    .bind(v.state)
    .bind(by)
    .execute(db)
    .await?;
    Ok(done.rows_affected() == 1)
}

/// Save over version `expected`. Returns false (and changes nothing) if the stored
/// version is another one: somebody saved in between.
pub async fn update(
    db: impl SqliteExecutor<'_>,
    well_id: i64,
    event: i64,
    expected: i64,
    v: &PickValues<'_>,
    by: &str,
) -> StoreResult<bool> {
    let done = sqlx::query(
        "UPDATE picks SET rift_onset_ma = ?, rift_end_ma = ?, model = ?, state = ?, version = version + 1,
            updated_by = ?, updated_at = strftime('%Y-%m-%dT%H:%M:%SZ', 'now')
         WHERE well_id = ? AND event = ? AND version = ?",
    )
    .bind(v.rift_onset_ma)
    .bind(v.rift_end_ma)
    .bind(v.model)
    .bind(v.state)
    .bind(by)
    .bind(well_id)
    .bind(event)
    .bind(expected)
    .execute(db)
    .await?;
    Ok(done.rows_affected() == 1)
}

/// Remove a pick made against version `expected` (back to the proposal).
pub async fn delete(
    db: impl SqliteExecutor<'_>,
    well_id: i64,
    event: i64,
    expected: i64,
) -> StoreResult<bool> {
    let done = sqlx::query("DELETE FROM picks WHERE well_id = ? AND event = ? AND version = ?")
        .bind(well_id)
        .bind(event)
        .bind(expected)
        .execute(db)
        .await?;
    Ok(done.rows_affected() == 1)
}
