//! The study's eustatic sea-level curve.

use super::StoreResult;
use sagline_science::SeaLevelPoint;
use sqlx::{SqliteConnection, SqliteExecutor};

pub async fn points(db: impl SqliteExecutor<'_>, study_id: i64) -> StoreResult<Vec<SeaLevelPoint>> {
    let rows: Vec<(f64, f64)> = sqlx::query_as(
        "SELECT age_ma, sea_level_m FROM sea_level_points WHERE study_id = ? ORDER BY age_ma",
    )
    .bind(study_id)
    .fetch_all(db)
    .await?;
    Ok(rows
        .into_iter()
        .map(|(age_ma, sea_level_m)| SeaLevelPoint {
            age_ma,
            sea_level_m,
        })
        .collect())
}

/// Replace the whole curve of a study.
pub async fn replace(
    conn: &mut SqliteConnection,
    study_id: i64,
    points: &[SeaLevelPoint],
) -> StoreResult<()> {
    sqlx::query("DELETE FROM sea_level_points WHERE study_id = ?")
        .bind(study_id)
        .execute(&mut *conn)
        .await?;
    for p in points {
        sqlx::query(
            "INSERT INTO sea_level_points (study_id, age_ma, sea_level_m) VALUES (?, ?, ?)",
        )
        .bind(study_id)
        .bind(p.age_ma)
        .bind(p.sea_level_m)
        .execute(&mut *conn)
        .await?;
    }
    Ok(())
}
