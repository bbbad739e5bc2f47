//! The per-study lithology catalogue.

use super::StoreResult;
use sagline_science::LithologyMix;
use serde::{Deserialize, Serialize};
use sqlx::{FromRow, SqliteConnection, SqliteExecutor};

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, FromRow)]
pub struct LithologyRow {
    pub id: i64,
    pub name: String,
    pub surface_porosity: f64,
    pub compaction_per_km: f64,
    pub grain_density_kg_m3: f64,
    pub source: String,
}

pub async fn list(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<Vec<LithologyRow>> {
    sqlx::query_as(
        "SELECT id, name, surface_porosity, compaction_per_km, grain_density_kg_m3, source
         FROM lithologies WHERE study_id = ? ORDER BY name",
    )
    .bind(study_id)
    .fetch_all(db)
    .await
}

pub async fn get(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    id: i64,
) -> StoreResult<Option<LithologyRow>> {
    sqlx::query_as(
        "SELECT id, name, surface_porosity, compaction_per_km, grain_density_kg_m3, source
         FROM lithologies WHERE study_id = ? AND id = ?",
    )
    .bind(study_id)
    .bind(id)
    .fetch_optional(db)
    .await
}

/// Insert or replace (by name) one lithology of a study.
pub async fn upsert(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    name: &str,
    surface_porosity: f64,
    compaction_per_km: f64,
    grain_density_kg_m3: f64,
    source: &str,
) -> StoreResult<i64> {
    sqlx::query_scalar(
        "INSERT INTO lithologies (study_id, name, surface_porosity, compaction_per_km, grain_density_kg_m3, source)
         VALUES (?, ?, ?, ?, ?, ?)
         ON CONFLICT (study_id, name) DO UPDATE SET
            surface_porosity = excluded.surface_porosity,
            compaction_per_km = excluded.compaction_per_km,
            grain_density_kg_m3 = excluded.grain_density_kg_m3,
            source = excluded.source
         RETURNING id",
    )
    .bind(study_id)
    .bind(name)
    .bind(surface_porosity)
    .bind(compaction_per_km)
    .bind(grain_density_kg_m3)
    .bind(source)
    .fetch_one(db)
    .await
}

/// How many surfaces of the study name this lithology (alone or in a mix).
pub async fn usage_count(
    conn: &mut SqliteConnection,
    study_id: i64,
    name: &str,
) -> StoreResult<i64> {
    let labels: Vec<String> = sqlx::query_scalar(
        "SELECT f.lithology FROM surfaces f JOIN wells w ON w.id = f.well_id
         WHERE w.study_id = ? AND f.lithology IS NOT NULL",
    )
    .bind(study_id)
    .fetch_all(conn)
    .await?;
    let n = labels
        .iter()
        .filter(|label| {
            // A label that does not read is counted as a use: refusing a deletion is
            // the safe side.
            label
                .parse::<LithologyMix>()
                .map(|mix| {
                    mix.parts
                        .iter()
                        .any(|p| p.lithology.eq_ignore_ascii_case(name))
                })
                .unwrap_or(true)
        })
        .count();
    Ok(n as i64)
}

pub async fn delete(db: impl SqliteExecutor<'_>, study_id: i64, id: i64) -> StoreResult<()> {
    sqlx::query("DELETE FROM lithologies WHERE study_id = ? AND id = ?")
        .bind(study_id)
        .bind(id)
        .execute(db)
        .await?;
    Ok(())
}
