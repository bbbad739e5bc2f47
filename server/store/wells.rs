//! Wells and their surfaces (formation tops).

use super::StoreResult;
use sagline_science::{Erosion, LithologyMix, MixSyntaxError, Surface, WaterDepth};
use serde::Serialize;
use sqlx::{FromRow, QueryBuilder, Sqlite, SqliteConnection, SqliteExecutor};

#[derive(Debug, Clone, Serialize, FromRow)]
pub struct WellRow {
    pub id: i64,
    pub study_id: i64,
    pub name: String,
    pub x: Option<f64>,
    pub y: Option<f64>,
    pub lat: Option<f64>,
    pub lon: Option<f64>,
    pub notes: String,
}

/// One row of the study overview's wells table.
#[derive(Debug, Clone, Serialize, FromRow)]
pub struct WellSummary {
    pub id: i64,
    pub name: String,
    pub x: Option<f64>,
    pub y: Option<f64>,
    pub surfaces: i64,
    pub top_depth_m: Option<f64>,
    pub base_depth_m: Option<f64>,
    pub youngest_age_ma: Option<f64>,
    pub oldest_age_ma: Option<f64>,
}

#[derive(Debug, Clone, Serialize, FromRow)]
pub struct SurfaceRow {
    pub id: i64,
    pub well_id: i64,
    pub position: i64,
    pub horizon: String,
    pub depth_m: f64,
    pub age_ma: f64,
    pub lithology: Option<String>,
    pub water_depth_min_m: f64,
    pub water_depth_max_m: f64,
    pub eroded_m: Option<f64>,
    pub eroded_at_ma: Option<f64>,
}

impl SurfaceRow {
    /// Back to the science type. Stored rows were validated on the way in and the
    /// lithology is stored in the mix's own text form, read back with its one parser;
    /// a label that does not read (an edited database) is an error, never a guess.
    pub fn to_surface(&self) -> Result<Surface, MixSyntaxError> {
        Ok(Surface {
            horizon: self.horizon.clone(),
            depth_m: self.depth_m,
            age_ma: self.age_ma,
            lithology_below: self.lithology.as_deref().map(str::parse).transpose()?,
            water_depth: WaterDepth {
                min_m: self.water_depth_min_m,
                max_m: self.water_depth_max_m,
            },
            erosion: match (self.eroded_m, self.eroded_at_ma) {
                (Some(eroded_m), Some(eroded_at_ma)) => Some(Erosion {
                    eroded_m,
                    eroded_at_ma,
                }),
                _ => None,
            },
        })
    }
}

pub async fn summaries(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
) -> StoreResult<Vec<WellSummary>> {
    sqlx::query_as(
        "SELECT w.id, w.name, w.x, w.y, COUNT(f.id) AS surfaces,
                MIN(f.depth_m) AS top_depth_m, MAX(f.depth_m) AS base_depth_m,
                MIN(f.age_ma) AS youngest_age_ma, MAX(f.age_ma) AS oldest_age_ma
         FROM wells w LEFT JOIN surfaces f ON f.well_id = w.id
         WHERE w.study_id = ?
         GROUP BY w.id ORDER BY w.name",
    )
    .bind(study_id)
    .fetch_all(db)
    .await
}

pub async fn get(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    well_id: i64,
) -> StoreResult<Option<WellRow>> {
    sqlx::query_as(
        "SELECT id, study_id, name, x, y, lat, lon, notes FROM wells WHERE study_id = ? AND id = ?",
    )
    .bind(study_id)
    .bind(well_id)
    .fetch_optional(db)
    .await
}

pub async fn find_by_name(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    name: &str,
) -> StoreResult<Option<WellRow>> {
    sqlx::query_as("SELECT id, study_id, name, x, y, lat, lon, notes FROM wells WHERE study_id = ? AND name = ?")
        .bind(study_id)
        .bind(name)
        .fetch_optional(db)
        .await
}

pub async fn list(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<Vec<WellRow>> {
    sqlx::query_as("SELECT id, study_id, name, x, y, lat, lon, notes FROM wells WHERE study_id = ? ORDER BY name")
        .bind(study_id)
        .fetch_all(db)
        .await
}

pub async fn surfaces(db: impl SqliteExecutor<'_>, well_id: i64) -> StoreResult<Vec<SurfaceRow>> {
    sqlx::query_as("SELECT * FROM surfaces WHERE well_id = ? ORDER BY position")
        .bind(well_id)
        .fetch_all(db)
        .await
}

/// Every surface of a study, ordered by well then position: one query for batch analysis.
pub async fn all_surfaces(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
) -> StoreResult<Vec<SurfaceRow>> {
    sqlx::query_as(
        "SELECT f.* FROM surfaces f JOIN wells w ON w.id = f.well_id
         WHERE w.study_id = ? ORDER BY f.well_id, f.position",
    )
    .bind(study_id)
    .fetch_all(db)
    .await
}

/// Names of the given wells that already exist in the study, in the order given;
/// one statement however many names.
pub async fn existing_names(
    conn: &mut SqliteConnection,
    study_id: i64,
    names: &[String],
) -> StoreResult<Vec<String>> {
    if names.is_empty() {
        return Ok(Vec::new());
    }
    let list = serde_json::to_string(names).map_err(|e| sqlx::Error::Encode(Box::new(e)))?;
    let found: Vec<String> = sqlx::query_scalar(
        "SELECT name FROM wells
         WHERE study_id = ? AND name IN (SELECT value FROM json_each(?))",
    )
    .bind(study_id)
    .bind(list)
    .fetch_all(&mut *conn)
    .await?;
    let found: std::collections::HashSet<String> = found.into_iter().collect();
    Ok(names
        .iter()
        .filter(|n| found.contains(*n))
        .cloned()
        .collect())
}

pub async fn delete_by_name(
    conn: &mut SqliteConnection,
    study_id: i64,
    name: &str,
) -> StoreResult<()> {
    sqlx::query("DELETE FROM wells WHERE study_id = ? AND name = ?")
        .bind(study_id)
        .bind(name)
        .execute(conn)
        .await?;
    Ok(())
}

/// Insert a well row (no surfaces yet) and return its id.
pub async fn insert(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    name: &str,
    upload_id: Option<i64>,
) -> StoreResult<i64> {
    sqlx::query_scalar(
        "INSERT INTO wells (study_id, name, upload_id) VALUES (?, ?, ?) RETURNING id",
    )
    .bind(study_id)
    .bind(name)
    .bind(upload_id)
    .fetch_one(db)
    .await
}

/// Set a well's location and notes (from a wells file). Returns false if the well is unknown.
pub async fn set_location(
    db: impl SqliteExecutor<'_>,
    study_id: i64,
    name: &str,
    loc: &Location,
) -> StoreResult<bool> {
    let done = sqlx::query("UPDATE wells SET x = ?, y = ?, lat = ?, lon = ?, notes = ? WHERE study_id = ? AND name = ?")
        .bind(loc.x)
        .bind(loc.y)
        .bind(loc.lat)
        .bind(loc.lon)
        .bind(&loc.notes)
        .bind(study_id)
        .bind(name)
        .execute(db)
        .await?;
    Ok(done.rows_affected() > 0)
}

/// A well's position and notes as stored.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Location {
    pub x: Option<f64>,
    pub y: Option<f64>,
    pub lat: Option<f64>,
    pub lon: Option<f64>,
    pub notes: String,
}

/// Rows per multi-row INSERT: 10 values a row stays far below SQLite's variable limit.
const SURFACE_ROWS_PER_INSERT: usize = 500;

/// Insert the surfaces of a well, shallowest first, in multi-row statements.
pub async fn insert_surfaces(
    conn: &mut SqliteConnection,
    well_id: i64,
    surfaces: &[Surface],
) -> StoreResult<()> {
    for (chunk_no, chunk) in surfaces.chunks(SURFACE_ROWS_PER_INSERT).enumerate() {
        let mut q = QueryBuilder::<Sqlite>::new(
            "INSERT INTO surfaces (well_id, position, horizon, depth_m, age_ma, lithology,
                water_depth_min_m, water_depth_max_m, eroded_m, eroded_at_ma) ",
        );
        q.push_values(chunk.iter().enumerate(), |mut row, (i, s)| {
            row.push_bind(well_id)
                .push_bind((chunk_no * SURFACE_ROWS_PER_INSERT + i) as i64)
                .push_bind(s.horizon.clone())
                .push_bind(s.depth_m)
                .push_bind(s.age_ma)
                .push_bind(s.lithology_below.as_ref().map(LithologyMix::label))
                .push_bind(s.water_depth.min_m)
                .push_bind(s.water_depth.max_m)
                .push_bind(s.erosion.map(|e| e.eroded_m))
                .push_bind(s.erosion.map(|e| e.eroded_at_ma));
        });
        q.build().execute(&mut *conn).await?;
    }
    Ok(())
}
