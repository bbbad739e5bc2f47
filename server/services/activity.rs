//! Reading the activity log: a study's changes, filtered, and the newest account changes.

use super::ServiceError;
use crate::store;
pub use crate::store::activity::ActivityRow;
pub use crate::store::users::UserRow;
use sqlx::SqlitePool;

/// A study's log filtered by action and actor, with every action and actor it has.
#[derive(Debug)]
pub struct ActivityLog {
    pub actions: Vec<String>,
    pub actors: Vec<String>,
    pub entries: Vec<ActivityRow>,
}

/// The newest `limit` entries of a study's log matching the filters.
pub async fn study_log(
    db: &SqlitePool,
    study_id: i64,
    action: Option<&str>,
    actor: Option<&str>,
    limit: i64,
) -> Result<ActivityLog, ServiceError> {
    let mut conn = db.acquire().await?;
    let (actions, actors) = store::activity::kinds_and_actors(&mut conn, study_id).await?;
    let entries = store::activity::list(&mut *conn, study_id, action, actor, limit).await?;
    Ok(ActivityLog {
        actions,
        actors,
        entries,
    })
}

/// The newest `limit` account changes.
pub async fn account_changes(
    db: &SqlitePool,
    limit: i64,
) -> Result<Vec<ActivityRow>, ServiceError> {
    Ok(store::users::account_activity(db, limit).await?)
}
