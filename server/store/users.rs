//! User accounts and the account part of the activity log.

use super::StoreResult;
use super::activity::ActivityRow;
use crate::auth::Role;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

/// An account as shown to admins: never its password hash.
#[derive(Debug, Clone, Serialize, FromRow)]
pub struct UserRow {
    pub id: i64,
    pub name: String,
    pub role: Role,
    pub disabled: bool,
    pub created_at: String,
}

/// What signing in needs to know about an account.
#[derive(Clone, FromRow)]
pub struct Credentials {
    pub id: i64,
    pub name: String,
    pub role: Role,
    pub disabled: bool,
    pub password_hash: String,
}

pub async fn insert(
    db: impl SqliteExecutor<'_>,
    name: &str,
    role: Role,
    password_hash: &str,
) -> StoreResult<i64> {
    let row = sqlx::query("INSERT INTO users (name, role, password_hash) VALUES (?, ?, ?)")
        .bind(name)
        .bind(role)
        .bind(password_hash)
        .execute(db)
        .await?;
    Ok(row.last_insert_rowid())
}

pub async fn get(db: impl SqliteExecutor<'_>, id: i64) -> StoreResult<Option<UserRow>> {
    sqlx::query_as("SELECT id, name, role, disabled, created_at FROM users WHERE id = ?")
        .bind(id)
        .fetch_optional(db)
        .await
}

/// The account of this name, in any letter case.
pub async fn find_by_name(db: impl SqliteExecutor<'_>, name: &str) -> StoreResult<Option<UserRow>> {
    sqlx::query_as("SELECT id, name, role, disabled, created_at FROM users WHERE name = ?")
        .bind(name)
        .fetch_optional(db)
        .await
}

pub async fn credentials(
    db: impl SqliteExecutor<'_>,
    name: &str,
) -> StoreResult<Option<Credentials>> {
    sqlx::query_as("SELECT id, name, role, disabled, password_hash FROM users WHERE name = ?")
        .bind(name)
        .fetch_optional(db)
        .await
}

/// Every account, by name.
pub async fn list(db: impl SqliteExecutor<'_>) -> StoreResult<Vec<UserRow>> {
    sqlx::query_as("SELECT id, name, role, disabled, created_at FROM users ORDER BY name")
        .fetch_all(db)
        .await
}

pub async fn count(db: impl SqliteExecutor<'_>) -> StoreResult<i64> {
    sqlx::query_scalar("SELECT COUNT(*) FROM users")
        .fetch_one(db)
        .await
}

/// Admin accounts that can sign in.
pub async fn count_enabled_admins(db: impl SqliteExecutor<'_>) -> StoreResult<i64> {
    sqlx::query_scalar("SELECT COUNT(*) FROM users WHERE role = 'admin' AND disabled = 0")
        .fetch_one(db)
        .await
}

pub async fn set_role(db: impl SqliteExecutor<'_>, id: i64, role: Role) -> StoreResult<()> {
    sqlx::query("UPDATE users SET role = ? WHERE id = ?")
        .bind(role)
        .bind(id)
        .execute(db)
        .await?;
    Ok(())
}

pub async fn set_password_hash(
    db: impl SqliteExecutor<'_>,
    id: i64,
    password_hash: &str,
) -> StoreResult<()> {
    sqlx::query("UPDATE users SET password_hash = ? WHERE id = ?")
        .bind(password_hash)
        .bind(id)
        .execute(db)
        .await?;
    Ok(())
}

pub async fn set_disabled(db: impl SqliteExecutor<'_>, id: i64, disabled: bool) -> StoreResult<()> {
    sqlx::query("UPDATE users SET disabled = ? WHERE id = ?")
        .bind(disabled)
        .bind(id)
        .execute(db)
        .await?;
    Ok(())
}

/// The newest `limit` account changes (activity rows outside any study).
pub async fn account_activity(
    db: impl SqliteExecutor<'_>,
    limit: i64,
) -> StoreResult<Vec<ActivityRow>> {
    sqlx::query_as(
        "SELECT id, at, actor, action, subject, before_state, after_state FROM activity
         WHERE study_id IS NULL ORDER BY id DESC LIMIT ?",
    )
    .bind(limit)
    .fetch_all(db)
    .await
}
