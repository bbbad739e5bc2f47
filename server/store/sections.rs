//! A study's sections, with optimistic versioning as the picks: a change names the
//! version it was made against and succeeds only if that is still the stored one.

use super::StoreResult;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

#[derive(Debug, Clone, PartialEq, Serialize, FromRow)]
pub struct SectionRow {
    pub id: i64,
    pub study_id: i64,
    pub name: String,
    /// The line's points as JSON (`[{"x_m": .., "y_m": ..}, ..]`), in order.
    pub points: String,
    pub max_offset_m: f64,
    pub elastic_thickness_km: f64,
    pub te_state: String,
    pub version: i64,
    pub updated_by: String,
    pub updated_at: String,
}

/// A section as saved by someone (without the bookkeeping columns).
#[derive(Debug, Clone, PartialEq)]
pub struct SectionValues<'a> {
    pub name: &'a str,
    pub points: &'a str,
    pub max_offset_m: f64,
    pub elastic_thickness_km: f64,
    pub te_state: &'a str,
}

macro_rules! select_sections {
    ($rest:literal) => {
        concat!(
            "SELECT id, study_id, name, points, max_offset_m, elastic_thickness_km, te_state, ",
            "version, updated_by, updated_at FROM sections ",
            $rest
        )
    };
}

/// Every section of a study, by name.
pub async fn list(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<Vec<SectionRow>> {
    sqlx::query_as(select_sections!("WHERE study_id = ? ORDER BY name, id"))
        .bind(study_id)
        .fetch_all(db)
        .await
}

pub async fn get(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    section_id: i64,
) -> StoreResult<Option<SectionRow>> {
    sqlx::query_as(select_sections!("WHERE study_id = ? AND id = ?"))
        .bind(study_id)
        .bind(section_id)
        .fetch_optional(db)
        .await
}

/// Create a section (version 1) and return its id. A name the study already uses is a
/// unique violation (the caller turns it into a conflict).
pub async fn insert(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    v: &SectionValues<'_>,
    by: &str,
) -> StoreResult<i64> {
    sqlx::query_scalar(
        "INSERT INTO sections (study_id, name, points, max_offset_m, elastic_thickness_km, te_state, version, updated_by)
         VALUES (?, ?, ?, ?, ?, ?, 1, ?) RETURNING id",
    )
    .bind(study_id)
    .bind(v.name)
    .bind(v.points)
    .bind(v.max_offset_m)
    .bind(v.elastic_thickness_km)
    .bind(v.te_state)
    .bind(by)
    .fetch_one(db)
    .await
}

/// Save over version `expected`. Returns false (and changes nothing) if the stored
/// version is another one: somebody saved in between.
pub async fn update(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    section_id: i64,
    expected: i64,
    v: &SectionValues<'_>,
    by: &str,
) -> StoreResult<bool> {
    let done = sqlx::query(
        "UPDATE sections SET name = ?, points = ?, max_offset_m = ?, elastic_thickness_km = ?, te_state = ?,
            version = version + 1, updated_by = ?, updated_at = strftime('%Y-%m-%dT%H:%M:%SZ', 'now')
         WHERE study_id = ? AND id = ? AND version = ?",
    )
    .bind(v.name)
    .bind(v.points)
    .bind(v.max_offset_m)
    .bind(v.elastic_thickness_km)
    .bind(v.te_state)
    .bind(by)
    .bind(study_id)
    .bind(section_id)
    .bind(expected)
    .execute(db)
    .await?;
    Ok(done.rows_affected() == 1)
}

/// Remove a section as of version `expected`; false if the stored version is another.
pub async fn delete(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    section_id: i64,
    expected: i64,
) -> StoreResult<bool> {
    let done = sqlx::query("DELETE FROM sections WHERE study_id = ? AND id = ? AND version = ?")
        .bind(study_id)
        .bind(section_id)
        .bind(expected)
        .execute(db)
        .await?;
    Ok(done.rows_affected() == 1)
}
