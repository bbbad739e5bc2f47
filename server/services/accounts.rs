//! Accounts and sessions: creating users and changing them (each change with its
//! activity row, outside any study), signing in with throttling (per user name and
//! client address, `auth::SIGN_IN_THROTTLE`), changing one's own password, and
//! resolving the session of a request.
//!
//! Passwords are hashed off the async runtime and never stored, logged or recorded;
//! a generated password is returned once to the caller that shows it.

use super::ServiceError;
use crate::auth::{self, Role, password, token};
use crate::store;
use crate::store::activity::Change;
use crate::store::sessions::NewSession;
use crate::store::users::UserRow;
use serde::Serialize;
use sqlx::{SqliteConnection, SqlitePool};

/// The name of the account made on first start.
pub const FIRST_ADMIN_NAME: &str = "admin";
/// Who the activity log names for the first-start account.
pub const FIRST_START_ACTOR: &str = "first start";
/// Who the activity log names for accounts added with `sagline user add`.
pub const COMMAND_LINE_ACTOR: &str = "command line";
/// Longest user name accepted.
pub const MAX_NAME_CHARS: usize = 64;

/// The signed-in account of a request, from its session.
#[derive(Debug, Clone)]
pub struct SignedIn {
    pub user_id: i64,
    pub name: String,
    pub role: Role,
    /// The session's token for state-changing requests (header `X-CSRF-Token`, form
    /// field or query parameter `csrf_token`).
    pub csrf_token: String,
    /// The digest the session is stored by.
    pub session_digest: String,
}

/// A new account and, when the server chose it, its password (to show once).
#[derive(Debug, Clone)]
pub struct CreatedUser {
    pub user: UserRow,
    pub generated_password: Option<String>,
}

/// A successful sign-in: the cookie token (known only to the browser from now on) and the account.
#[derive(Debug, Clone)]
pub struct NewLogin {
    pub session_token: String,
    pub user: SignedIn,
}

/// Why a sign-in was refused, in words for the person signing in. None of them says
/// whether the name is an account's (but `Disabled`, which needs the right password).
#[derive(Debug, thiserror::Error)]
pub enum LoginError {
    /// `wait_secs`: how long this client waits before its next try of this name (0: none).
    #[error("Wrong user name or password.{}", next_try_words(*.wait_secs))]
    WrongCredentials { wait_secs: i64 },
    #[error("This account is disabled; ask an admin to enable it.")]
    Disabled,
    /// Too many tries in a row of this name from this address.
    #[error("{}", wait_message(*.wait_secs))]
    Throttled { wait_secs: i64 },
    #[error(transparent)]
    Database(#[from] sqlx::Error),
}

impl LoginError {
    /// Seconds until a throttled sign-in may be tried again.
    pub fn retry_after_secs(&self) -> Option<i64> {
        match self {
            LoginError::Throttled { wait_secs } => Some(*wait_secs),
            _ => None,
        }
    }
}

/// `30 seconds`, `900 seconds (15 minutes)`.
fn seconds_words(secs: i64) -> String {
    if secs >= 120 {
        format!("{secs} seconds ({} minutes)", (secs + 59) / 60)
    } else if secs == 1 {
        "1 second".into()
    } else {
        format!("{secs} seconds")
    }
}

fn next_try_words(wait_secs: i64) -> String {
    if wait_secs > 0 {
        format!(
            " Too many tries in a row: wait {} before the next one.",
            seconds_words(wait_secs)
        )
    } else {
        String::new()
    }
}

fn wait_message(wait_secs: i64) -> String {
    format!(
        "Too many failed sign-ins in a row with this user name from this address. Wait {}, then try again (or ask an admin to clear the wait).",
        seconds_words(wait_secs)
    )
}

/// Hash off the async runtime: Argon2 is deliberately slow.
async fn hash_password(password: String) -> Result<String, ServiceError> {
    tokio::task::spawn_blocking(move || password::hash(&password))
        .await
        .map_err(|e| ServiceError::Invalid(format!("the password could not be hashed: {e}")))?
        .map_err(|e| ServiceError::Invalid(e.to_string()))
}

fn check_name(name: &str) -> Result<&str, ServiceError> {
    let name = name.trim();
    let fine = !name.is_empty()
        && name.chars().count() <= MAX_NAME_CHARS
        && name
            .chars()
            .all(|c| c.is_alphanumeric() || "._-@".contains(c));
    if fine {
        Ok(name)
    } else {
        Err(ServiceError::Invalid(format!(
            "A user name needs 1 to {MAX_NAME_CHARS} letters, digits or . _ - @ (no spaces)."
        )))
    }
}

fn describe(user: &UserRow) -> String {
    format!(
        "role {}{}",
        user.role,
        if user.disabled { ", disabled" } else { "" }
    )
}

async fn load_user(conn: &mut SqliteConnection, user_id: i64) -> Result<UserRow, ServiceError> {
    store::users::get(&mut *conn, user_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("user {user_id}")))
}

async fn record(
    conn: &mut SqliteConnection,
    actor: &str,
    action: &str,
    subject: &str,
    before: Option<String>,
    after: Option<String>,
) -> Result<(), sqlx::Error> {
    store::activity::record(
        conn,
        None,
        Change {
            actor,
            action,
            subject,
            before,
            after,
        },
    )
    .await
}

/// Add an account. Without `password` the server generates one and returns it.
pub async fn create_user(
    db: &SqlitePool,
    name: &str,
    role: Role,
    password: Option<&str>,
    actor: &str,
) -> Result<CreatedUser, ServiceError> {
    let name = check_name(name)?;
    if let Some(p) = password {
        password::check_chosen(p, name).map_err(ServiceError::Invalid)?;
    }
    if store::users::find_by_name(db, name).await?.is_some() {
        return Err(ServiceError::Conflict(format!(
            "An account named '{name}' already exists; choose another name."
        )));
    }
    let generated_password = password.is_none().then(|| password::generate_for(name));
    let chosen = password
        .map(str::to_string)
        .or_else(|| generated_password.clone())
        .unwrap_or_default();
    let hash = hash_password(chosen).await?;
    let mut tx = store::write_transaction(db).await?;
    let id = match store::users::insert(&mut *tx, name, role, &hash).await {
        Ok(id) => id,
        // Added by someone else since the check above.
        Err(sqlx::Error::Database(e)) if e.is_unique_violation() => {
            return Err(ServiceError::Conflict(format!(
                "An account named '{name}' already exists; choose another name."
            )));
        }
        Err(e) => return Err(e.into()),
    };
    let user = load_user(&mut tx, id).await?;
    record(
        &mut tx,
        actor,
        "add user",
        name,
        None,
        Some(describe(&user)),
    )
    .await?;
    tx.commit().await?;
    tracing::info!(user = %name, role = %role, actor, "account added");
    Ok(CreatedUser {
        user,
        generated_password,
    })
}

/// On first start (no account at all), create `admin` with a generated password and
/// return that password, to print once. Later starts return `None`.
pub async fn ensure_first_admin(db: &SqlitePool) -> Result<Option<String>, ServiceError> {
    if store::users::count(db).await? > 0 {
        return Ok(None);
    }
    let created = create_user(db, FIRST_ADMIN_NAME, Role::Admin, None, FIRST_START_ACTOR).await?;
    Ok(created.generated_password)
}

/// Refuse a change that would leave no admin able to sign in.
async fn keep_an_admin(
    conn: &mut SqliteConnection,
    user: &UserRow,
    what: &str,
) -> Result<(), ServiceError> {
    if user.role == Role::Admin
        && !user.disabled
        && store::users::count_enabled_admins(&mut *conn).await? <= 1
    {
        return Err(ServiceError::Conflict(format!(
            "'{}' is the last admin who can sign in; {what} would leave nobody to manage accounts. Make another account admin first.",
            user.name
        )));
    }
    Ok(())
}

/// Give an account another role.
pub async fn change_role(
    db: &SqlitePool,
    user_id: i64,
    role: Role,
    actor: &str,
) -> Result<UserRow, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let before = load_user(&mut tx, user_id).await?;
    if before.role == role {
        return Ok(before);
    }
    if role != Role::Admin {
        keep_an_admin(&mut tx, &before, "taking the admin role away").await?;
    }
    store::users::set_role(&mut *tx, user_id, role).await?;
    let after = load_user(&mut tx, user_id).await?;
    record(
        &mut tx,
        actor,
        "change role",
        &after.name,
        Some(describe(&before)),
        Some(describe(&after)),
    )
    .await?;
    tx.commit().await?;
    Ok(after)
}

/// Give an account a new generated password (returned, to show once) and end its sessions.
pub async fn reset_password(
    db: &SqlitePool,
    user_id: i64,
    actor: &str,
) -> Result<(UserRow, String), ServiceError> {
    let user = store::users::get(db, user_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("user {user_id}")))?;
    let new_password = password::generate_for(&user.name);
    let hash = hash_password(new_password.clone()).await?;
    let mut tx = store::write_transaction(db).await?;
    load_user(&mut tx, user_id).await?;
    store::users::set_password_hash(&mut *tx, user_id, &hash).await?;
    let ended = store::sessions::delete_for_user(&mut *tx, user_id).await?;
    record(
        &mut tx,
        actor,
        "reset password",
        &user.name,
        None,
        Some(format!("new password issued; {ended} session(s) ended")),
    )
    .await?;
    tx.commit().await?;
    Ok((user, new_password))
}

/// Disable an account (its sessions end at once) or enable it again.
pub async fn set_disabled(
    db: &SqlitePool,
    user_id: i64,
    disabled: bool,
    actor: &str,
) -> Result<UserRow, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let before = load_user(&mut tx, user_id).await?;
    if before.disabled == disabled {
        return Ok(before);
    }
    if disabled {
        keep_an_admin(&mut tx, &before, "disabling it").await?;
        store::sessions::delete_for_user(&mut *tx, user_id).await?;
    }
    store::users::set_disabled(&mut *tx, user_id, disabled).await?;
    let after = load_user(&mut tx, user_id).await?;
    let action = if disabled {
        "disable user"
    } else {
        "enable user"
    };
    record(
        &mut tx,
        actor,
        action,
        &after.name,
        Some(describe(&before)),
        Some(describe(&after)),
    )
    .await?;
    tx.commit().await?;
    Ok(after)
}

/// End every session of an account; returns how many ended.
pub async fn sign_out_everywhere(
    db: &SqlitePool,
    user_id: i64,
    actor: &str,
) -> Result<u64, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let user = load_user(&mut tx, user_id).await?;
    let ended = store::sessions::delete_for_user(&mut *tx, user_id).await?;
    record(
        &mut tx,
        actor,
        "sign out everywhere",
        &user.name,
        None,
        Some(format!("{ended} session(s) ended")),
    )
    .await?;
    tx.commit().await?;
    Ok(ended)
}

/// Every account, by name.
pub async fn list_users(db: &SqlitePool) -> Result<Vec<UserRow>, ServiceError> {
    Ok(store::users::list(db).await?)
}

/// One try of a name from a client, as the throttle counted it.
enum Try {
    /// Check the password; `wait_secs` is the wait before the next try if this one fails.
    Check { wait_secs: i64 },
    /// Do not check: the client waits this long first.
    Wait { wait_secs: i64 },
}

/// Count a try of `name` from `client` before its password is checked, in one writing
/// transaction: however many tries arrive at once, each is counted in turn, and those
/// past the free ones find the wait already set and are not checked.
async fn count_try(
    db: &SqlitePool,
    name: &str,
    client: &str,
    now: i64,
) -> Result<Try, sqlx::Error> {
    let policy = auth::SIGN_IN_THROTTLE;
    let mut tx = store::write_transaction(db).await?;
    store::throttle::forget_older(&mut *tx, now - policy.forget_after_secs, now).await?;
    let outcome = match store::throttle::count_try(&mut *tx, name, client, now).await? {
        Some(tries) => {
            let wait_secs = policy.wait_after(tries);
            if wait_secs > 0 {
                store::throttle::set_wait_until(&mut *tx, name, client, now + wait_secs).await?;
            }
            Try::Check { wait_secs }
        }
        None => {
            let until = store::throttle::wait_until(&mut *tx, name, client)
                .await?
                .unwrap_or(now);
            Try::Wait {
                wait_secs: (until - now).max(1),
            }
        }
    };
    tx.commit().await?;
    Ok(outcome)
}

/// Whether `password` is the one of the account `name` (false for no such account,
/// after as long as a check takes).
async fn password_matches(account: Option<&store::users::Credentials>, password: &str) -> bool {
    let stored = account.map(|a| a.password_hash.clone());
    let typed = password
        .chars()
        .take(password::MAX_LEN + 1)
        .collect::<String>();
    tokio::task::spawn_blocking(move || match stored {
        Some(hash) => password::verify(&typed, &hash),
        None => {
            password::verify_nothing(&typed);
            false
        }
    })
    .await
    .unwrap_or(false)
}

/// Sign in: count the try (refused while this client waits for this name), check the
/// password, clear the count and open a session. `client` is the address the request
/// came from.
pub async fn log_in(
    db: &SqlitePool,
    name: &str,
    password: &str,
    client: &str,
    now: i64,
) -> Result<NewLogin, LoginError> {
    let name: String = name.trim().chars().take(MAX_NAME_CHARS * 2).collect();
    let wait_secs = match count_try(db, &name, client, now).await? {
        Try::Wait { wait_secs } => {
            tracing::warn!(user = %name, client, wait_secs, "sign-in refused: throttled");
            return Err(LoginError::Throttled { wait_secs });
        }
        Try::Check { wait_secs } => wait_secs,
    };
    let account = store::users::credentials(db, &name).await?;
    let matches = password_matches(account.as_ref(), password).await;
    let account = match account {
        Some(a) if matches => a,
        _ => {
            tracing::warn!(user = %name, client, "sign-in failed");
            return Err(LoginError::WrongCredentials { wait_secs });
        }
    };
    store::throttle::clear(db, &name, client).await?;
    if account.disabled {
        tracing::warn!(user = %account.name, client, "sign-in refused: account disabled");
        return Err(LoginError::Disabled);
    }
    store::sessions::delete_expired(db, now, now - auth::SESSION_IDLE_SECS).await?;
    let session_token = token::new_token();
    let csrf_token = token::new_token();
    let session_digest = token::digest(&session_token);
    store::sessions::insert(
        db,
        NewSession {
            token_hash: &session_digest,
            user_id: account.id,
            csrf_token: &csrf_token,
            now,
            expires_at: now + auth::SESSION_ABSOLUTE_SECS,
        },
    )
    .await?;
    tracing::info!(user = %account.name, client, "signed in");
    Ok(NewLogin {
        session_token,
        user: SignedIn {
            user_id: account.id,
            name: account.name,
            role: account.role,
            csrf_token,
            session_digest,
        },
    })
}

/// A client that waits (or has tried and failed) before signing in as an account, for
/// the users page.
#[derive(Debug, Clone, Serialize)]
pub struct SignInWait {
    pub user_id: i64,
    pub name: String,
    /// The address the tries came from.
    pub client: String,
    /// Tries in a row without success.
    pub tries: i64,
    /// Seconds this client still waits before its next try (0: none).
    pub wait_secs: i64,
}

/// Every throttle record of an account, with the wait left at `now`.
pub async fn sign_in_waits(db: &SqlitePool, now: i64) -> Result<Vec<SignInWait>, ServiceError> {
    Ok(store::throttle::for_accounts(db)
        .await?
        .into_iter()
        .filter(|r| r.last_try_at >= now - auth::SIGN_IN_THROTTLE.forget_after_secs)
        .map(|r| SignInWait {
            user_id: r.user_id,
            name: r.name,
            client: r.client,
            tries: r.tries,
            wait_secs: (r.wait_until - now).max(0),
        })
        .collect())
}

/// Clear the sign-in waits of an account from every address (an admin's unlock);
/// returns the account and how many addresses had a record.
pub async fn clear_sign_in_waits(
    db: &SqlitePool,
    user_id: i64,
    actor: &str,
) -> Result<(UserRow, u64), ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let user = load_user(&mut tx, user_id).await?;
    let cleared = store::throttle::clear_name(&mut *tx, &user.name).await?;
    record(
        &mut tx,
        actor,
        "clear sign-in waits",
        &user.name,
        None,
        Some(format!("{cleared} address(es) cleared")),
    )
    .await?;
    tx.commit().await?;
    tracing::info!(user = %user.name, actor, cleared, "sign-in waits cleared");
    Ok((user, cleared))
}

/// A signed-in person changes their own password: the current one is checked (a try
/// the throttle counts, like a sign-in), the new one must meet the rules, and every
/// other session of the account ends. Returns how many sessions ended.
pub async fn change_own_password(
    db: &SqlitePool,
    user: &SignedIn,
    current: &str,
    new: &str,
    client: &str,
    now: i64,
) -> Result<u64, ServiceError> {
    password::check_chosen(new, &user.name).map_err(ServiceError::Invalid)?;
    if new == current {
        return Err(ServiceError::Invalid(
            "The new password is the same as the current one; choose another.".into(),
        ));
    }
    let wait_secs = match count_try(db, &user.name, client, now).await? {
        Try::Wait { wait_secs } => {
            return Err(ServiceError::TooManyTries(wait_message(wait_secs)));
        }
        Try::Check { wait_secs } => wait_secs,
    };
    let account = store::users::credentials(db, &user.name).await?;
    if account.as_ref().map(|a| a.id) != Some(user.user_id)
        || !password_matches(account.as_ref(), current).await
    {
        tracing::warn!(user = %user.name, client, "password change refused: wrong current password");
        return Err(ServiceError::Invalid(format!(
            "The current password is wrong; nothing was changed.{}",
            next_try_words(wait_secs)
        )));
    }
    store::throttle::clear(db, &user.name, client).await?;
    let hash = hash_password(new.to_string()).await?;
    let mut tx = store::write_transaction(db).await?;
    store::users::set_password_hash(&mut *tx, user.user_id, &hash).await?;
    let ended =
        store::sessions::delete_for_user_except(&mut *tx, user.user_id, &user.session_digest)
            .await?;
    record(
        &mut tx,
        &user.name,
        "change own password",
        &user.name,
        None,
        Some(format!("new password set; {ended} other session(s) ended")),
    )
    .await?;
    tx.commit().await?;
    tracing::info!(user = %user.name, sessions_ended = ended, "password changed");
    Ok(ended)
}

/// The account a session cookie belongs to, if the session is still open at `now`.
/// An expired session (idle or absolute) or one of a disabled account is removed.
pub async fn resolve_session(
    db: &SqlitePool,
    session_token: &str,
    now: i64,
) -> Result<Option<SignedIn>, sqlx::Error> {
    if session_token.len() != 64 || !session_token.bytes().all(|b| b.is_ascii_hexdigit()) {
        return Ok(None);
    }
    let digest = token::digest(session_token);
    let Some(row) = store::sessions::find(db, &digest).await? else {
        return Ok(None);
    };
    if row.disabled || now >= row.expires_at || now - row.last_seen_at > auth::SESSION_IDLE_SECS {
        store::sessions::delete(db, &digest).await?;
        return Ok(None);
    }
    if now - row.last_seen_at >= auth::SESSION_TOUCH_SECS {
        store::sessions::touch(db, &digest, now).await?;
    }
    Ok(Some(SignedIn {
        user_id: row.user_id,
        name: row.name,
        role: row.role,
        csrf_token: row.csrf_token,
        session_digest: digest,
    }))
}

/// Whether a session is still open at `now` (not ended, expired or of a disabled
/// account), without counting this as the person's activity.
pub async fn session_is_open(
    db: &SqlitePool,
    session_digest: &str,
    now: i64,
) -> Result<bool, sqlx::Error> {
    Ok(store::sessions::find(db, session_digest)
        .await?
        .is_some_and(|row| {
            !row.disabled
                && now < row.expires_at
                && now - row.last_seen_at <= auth::SESSION_IDLE_SECS
        }))
}

/// End one session.
pub async fn log_out(db: &SqlitePool, session_digest: &str) -> Result<(), sqlx::Error> {
    store::sessions::delete(db, session_digest).await
}
