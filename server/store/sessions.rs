//! Sessions, stored by the digest of their token. Times are Unix seconds.
//! (The sign-in throttle's records are in `store::throttle`.)

use super::StoreResult;
use crate::auth::Role;
use sqlx::{FromRow, SqliteExecutor};

/// A session with the account it belongs to.
#[derive(Debug, Clone, FromRow)]
pub struct SessionRow {
    pub token_hash: String,
    pub csrf_token: String,
    pub last_seen_at: i64,
    pub expires_at: i64,
    pub user_id: i64,
    pub name: String,
    pub role: Role,
    pub disabled: bool,
}

/// A new session for a user.
#[derive(Debug, Clone)]
pub struct NewSession<'a> {
    pub token_hash: &'a str,
    pub user_id: i64,
    pub csrf_token: &'a str,
    pub now: i64,
    pub expires_at: i64,
}

pub async fn insert(db: impl SqliteExecutor<'_>, s: NewSession<'_>) -> StoreResult<()> {
    sqlx::query(
        "INSERT INTO sessions (token_hash, user_id, csrf_token, created_at, last_seen_at, expires_at)
         VALUES (?, ?, ?, ?, ?, ?)",
    )
    .bind(s.token_hash)
    .bind(s.user_id)
    .bind(s.csrf_token)
    .bind(s.now)
    .bind(s.now)
    .bind(s.expires_at)
    .execute(db)
    .await?;
    Ok(())
}

pub async fn find(
    db: impl SqliteExecutor<'_>,
    token_hash: &str,
) -> StoreResult<Option<SessionRow>> {
    sqlx::query_as(
        "SELECT s.token_hash, s.csrf_token, s.last_seen_at, s.expires_at,
                u.id AS user_id, u.name, u.role, u.disabled
         FROM sessions s JOIN users u ON u.id = s.user_id WHERE s.token_hash = ?",
    )
    .bind(token_hash)
    .fetch_optional(db)
    .await
}

pub async fn touch(db: impl SqliteExecutor<'_>, token_hash: &str, now: i64) -> StoreResult<()> {
    sqlx::query("UPDATE sessions SET last_seen_at = ? WHERE token_hash = ?")
        .bind(now)
        .bind(token_hash)
        .execute(db)
        .await?;
    Ok(())
}

pub async fn delete(db: impl SqliteExecutor<'_>, token_hash: &str) -> StoreResult<()> {
    sqlx::query("DELETE FROM sessions WHERE token_hash = ?")
        .bind(token_hash)
        .execute(db)
        .await?;
    Ok(())
}

/// End every session of a user; returns how many there were.
pub async fn delete_for_user(db: impl SqliteExecutor<'_>, user_id: i64) -> StoreResult<u64> {
    let done = sqlx::query("DELETE FROM sessions WHERE user_id = ?")
        .bind(user_id)
        .execute(db)
        .await?;
    Ok(done.rows_affected())
}

/// End every session of a user but the one stored as `keep` (after a password change
/// made in that session); returns how many ended.
pub async fn delete_for_user_except(
    db: impl SqliteExecutor<'_>,
    user_id: i64,
    keep: &str,
) -> StoreResult<u64> {
    let done = sqlx::query("DELETE FROM sessions WHERE user_id = ? AND token_hash <> ?")
        .bind(user_id)
        .bind(keep)
        .execute(db)
        .await?;
    Ok(done.rows_affected())
}

/// Forget sessions past their absolute expiry or idle since before `idle_since`.
pub async fn delete_expired(
    db: impl SqliteExecutor<'_>,
    now: i64,
    idle_since: i64,
) -> StoreResult<()> {
    sqlx::query("DELETE FROM sessions WHERE expires_at <= ? OR last_seen_at < ?")
        .bind(now)
        .bind(idle_since)
        .execute(db)
        .await?;
    Ok(())
}

pub async fn count_for_user(db: impl SqliteExecutor<'_>, user_id: i64) -> StoreResult<i64> {
    sqlx::query_scalar("SELECT COUNT(*) FROM sessions WHERE user_id = ?")
        .bind(user_id)
        .fetch_one(db)
        .await
}
