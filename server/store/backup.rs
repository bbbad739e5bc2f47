//! Copies of a database while it is in use: a read-only connection that neither
//! creates nor migrates the file, and `VACUUM INTO`.

use super::StoreResult;
use sqlx::sqlite::{SqliteConnectOptions, SqliteConnection};
use sqlx::{ConnectOptions, SqliteExecutor};
use std::path::Path;
use std::time::Duration;

/// A read-only connection to the existing database at `path`: never created, never
/// migrated, waiting (up to 10 s) while a writer holds a lock.
pub async fn connect_existing(path: &Path) -> StoreResult<SqliteConnection> {
    SqliteConnectOptions::new()
        .filename(path)
        .create_if_missing(false)
        .read_only(true)
        .busy_timeout(Duration::from_secs(10))
        .connect()
        .await
}

/// Whether the connected database holds Sagline's schema (its migrations table).
pub async fn has_schema(conn: impl SqliteExecutor<'_>) -> StoreResult<bool> {
    let tables: i64 = sqlx::query_scalar(
        "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = '_sqlx_migrations'",
    )
    .fetch_one(conn)
    .await?;
    Ok(tables == 1)
}

/// Write a consistent copy of the connected database (one read transaction, so
/// writes committed meanwhile are either all in it or not) to `target`, which must not
/// exist or be an empty file.
pub async fn vacuum_into(conn: impl SqliteExecutor<'_>, target: &str) -> StoreResult<()> {
    sqlx::query("VACUUM INTO ?")
        .bind(target)
        .execute(conn)
        .await?;
    Ok(())
}

/// SQLite's `PRAGMA quick_check`: "ok" for a sound file, else the problems found.
pub async fn quick_check(conn: impl SqliteExecutor<'_>) -> StoreResult<String> {
    let lines: Vec<String> = sqlx::query_scalar("PRAGMA quick_check")
        .fetch_all(conn)
        .await?;
    Ok(lines.join("; "))
}
