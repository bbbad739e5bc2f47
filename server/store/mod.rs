//! The store: every SQL statement of the application lives here.
//!
//! Each function takes an executor (`impl SqliteExecutor`) for a single statement,
//! or `&mut SqliteConnection` when it runs several, so callers can compose them in
//! one transaction (`let mut tx = store::write_transaction(&pool).await?; f(&mut tx).await?;`).
//! Every transaction that writes starts with [`write_transaction`](crate::store::write_transaction).

pub mod activity;
pub mod backup;
pub mod comments;
pub mod lithologies;
pub mod picks;
pub mod sea_level;
pub mod sections;
pub mod sessions;
pub mod studies;
pub mod throttle;
pub mod uploads;
pub mod users;
pub mod wells;

use sqlx::sqlite::{
    SqliteConnectOptions, SqliteJournalMode, SqlitePool, SqlitePoolOptions, SqliteSynchronous,
};
use sqlx::{Sqlite, Transaction};
use std::path::Path;
use std::str::FromStr;
use std::time::Duration;

/// The migrations embedded in the binary at compile time.
pub static MIGRATOR: sqlx::migrate::Migrator = sqlx::migrate!("./migrations");

/// Open (creating if missing) the SQLite database at `path` with WAL, foreign keys and
/// a busy timeout, and bring its schema up to date.
pub async fn open(path: &Path) -> Result<SqlitePool, sqlx::Error> {
    open_or_create(path, true).await
}

/// [`open`], creating a missing file only when `create` is true (else the open fails).
pub async fn open_or_create(path: &Path, create: bool) -> Result<SqlitePool, sqlx::Error> {
    let options = SqliteConnectOptions::from_str(&format!("sqlite://{}", path.display()))?
        .create_if_missing(create)
        .journal_mode(SqliteJournalMode::Wal)
        .synchronous(SqliteSynchronous::Normal)
        .foreign_keys(true)
        .busy_timeout(Duration::from_secs(10));
    let pool = SqlitePoolOptions::new()
        .max_connections(8)
        .connect_with(options)
        .await?;
    MIGRATOR.run(&pool).await?;
    Ok(pool)
}

/// Start a transaction that holds the write lock from its first statement
/// (`BEGIN IMMEDIATE`). Every writing transaction starts here.
///
/// With SQLite's default deferred start a transaction first reads under a shared
/// snapshot and asks for the write lock only at its first write; if another writer
/// committed in between, that upgrade fails at once with "database is locked" and
/// the busy timeout cannot help. Taking the lock first makes a second writer wait
/// (up to the busy timeout set in [`open`]) and then run, so concurrent saves queue.
pub async fn write_transaction(pool: &SqlitePool) -> StoreResult<Transaction<'static, Sqlite>> {
    pool.begin_with("BEGIN IMMEDIATE").await
}

/// A human-readable error for the database layer, for logs. Users never see it.
pub type StoreResult<T> = Result<T, sqlx::Error>;
