//! The sign-in throttle: one row per (user name as typed, client address) with the
//! tries in a row without success, until when that client must wait, and the last try.
//! Times are Unix seconds. `services::accounts` decides the waits.

use super::StoreResult;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

/// A throttle record of an existing account, for the users page.
#[derive(Debug, Clone, Serialize, FromRow)]
pub struct AccountThrottleRow {
    pub user_id: i64,
    /// The account's name (as stored, whatever case was typed).
    pub name: String,
    pub client: String,
    pub tries: i64,
    pub wait_until: i64,
    pub last_try_at: i64,
}

/// Count one more try of `user_name` from `client` at `now`, unless that client must
/// still wait: returns the tries in a row counted so far (this one included), or `None`
/// while `wait_until > now` (nothing is counted then). One statement: two tries at once
/// are counted one after the other, never both as the same number.
pub async fn count_try(
    db: impl SqliteExecutor<'_>,
    user_name: &str,
    client: &str,
    now: i64,
) -> StoreResult<Option<i64>> {
    sqlx::query_scalar(
        "INSERT INTO sign_in_throttle (user_name, client, tries, wait_until, last_try_at)
         VALUES (?, ?, 1, 0, ?)
         ON CONFLICT (user_name, client) DO UPDATE
            SET tries = tries + 1, last_try_at = excluded.last_try_at
            WHERE wait_until <= excluded.last_try_at
         RETURNING tries",
    )
    .bind(user_name)
    .bind(client)
    .bind(now)
    .fetch_optional(db)
    .await
}

/// Make this client wait until `until` before its next try of `user_name`.
pub async fn set_wait_until(
    db: impl SqliteExecutor<'_>,
    user_name: &str,
    client: &str,
    until: i64,
) -> StoreResult<()> {
    sqlx::query("UPDATE sign_in_throttle SET wait_until = ? WHERE user_name = ? AND client = ?")
        .bind(until)
        .bind(user_name)
        .bind(client)
        .execute(db)
        .await?;
    Ok(())
}

/// Until when this client waits before its next try of `user_name` (0 or a past time:
/// no wait), if it has a record.
pub async fn wait_until(
    db: impl SqliteExecutor<'_>,
    user_name: &str,
    client: &str,
) -> StoreResult<Option<i64>> {
    sqlx::query_scalar("SELECT wait_until FROM sign_in_throttle WHERE user_name = ? AND client = ?")
        .bind(user_name)
        .bind(client)
        .fetch_optional(db)
        .await
}

/// Forget the record of `user_name` from `client` (after a successful sign-in).
pub async fn clear(db: impl SqliteExecutor<'_>, user_name: &str, client: &str) -> StoreResult<u64> {
    let done = sqlx::query("DELETE FROM sign_in_throttle WHERE user_name = ? AND client = ?")
        .bind(user_name)
        .bind(client)
        .execute(db)
        .await?;
    Ok(done.rows_affected())
}

/// Forget every record of `user_name`, from every address; returns how many there were.
pub async fn clear_name(db: impl SqliteExecutor<'_>, user_name: &str) -> StoreResult<u64> {
    let done = sqlx::query("DELETE FROM sign_in_throttle WHERE user_name = ?")
        .bind(user_name)
        .execute(db)
        .await?;
    Ok(done.rows_affected())
}

/// Forget records with no try since `before` whose wait is over at `now`.
pub async fn forget_older(db: impl SqliteExecutor<'_>, before: i64, now: i64) -> StoreResult<u64> {
    let done =
        sqlx::query("DELETE FROM sign_in_throttle WHERE last_try_at < ? AND wait_until <= ?")
            .bind(before)
            .bind(now)
            .execute(db)
            .await?;
    Ok(done.rows_affected())
}

/// The records of names that are accounts, by account name and address.
pub async fn for_accounts(db: impl SqliteExecutor<'_>) -> StoreResult<Vec<AccountThrottleRow>> {
    sqlx::query_as(
        "SELECT u.id AS user_id, u.name, t.client, t.tries, t.wait_until, t.last_try_at
         FROM sign_in_throttle t JOIN users u ON u.name = t.user_name
         ORDER BY u.name, t.client",
    )
    .fetch_all(db)
    .await
}
