//! Accounts and access, without I/O: the roles, what each role may do (one table),
//! password hashing and the random tokens of sessions.
//!
//! The store keeps the rows (`store::users`, `store::sessions`), `services::accounts`
//! runs the operations, and `web::auth` applies the rules to every request.

pub mod password;
pub mod rules;
pub mod token;

pub use rules::{Access, Requirement, required_access};

use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

/// What an account may do. Ordered: each role may do everything the roles before it may.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize, sqlx::Type,
)]
#[serde(rename_all = "lowercase")]
#[sqlx(type_name = "TEXT", rename_all = "lowercase")]
pub enum Role {
    /// Reads studies, wells, results and the activity log.
    Viewer,
    /// Also uploads, picks and comments: every change except the admin ones.
    Interpreter,
    /// Also manages users, studies, model parameters and the lithology catalogue, and deletes.
    Admin,
}

impl Role {
    pub const ALL: [Role; 3] = [Role::Viewer, Role::Interpreter, Role::Admin];

    pub fn as_str(self) -> &'static str {
        match self {
            Role::Viewer => "viewer",
            Role::Interpreter => "interpreter",
            Role::Admin => "admin",
        }
    }

    /// One line for the users page and the command line's help.
    pub fn summary(self) -> &'static str {
        match self {
            Role::Viewer => "reads everything",
            Role::Interpreter => "reads, uploads, picks and comments",
            Role::Admin => {
                "everything, including users, studies, parameters, the catalogue and deletes"
            }
        }
    }
}

impl fmt::Display for Role {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl FromStr for Role {
    type Err = String;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Role::ALL
            .into_iter()
            .find(|r| r.as_str().eq_ignore_ascii_case(s.trim()))
            .ok_or_else(|| format!("'{s}' is not a role: use viewer, interpreter or admin"))
    }
}

/// Sessions end after this long without a request (seconds).
pub const SESSION_IDLE_SECS: i64 = 8 * 60 * 60;
/// Sessions end this long after sign-in, however active (seconds).
pub const SESSION_ABSOLUTE_SECS: i64 = 7 * 24 * 60 * 60;
/// A session's last-seen time is written at most this often, so reading pages does not
/// turn every request into a database write.
pub const SESSION_TOUCH_SECS: i64 = 60;

/// Failed sign-ins allowed per user name, and per client address, within the window.
pub const THROTTLE_MAX_FAILURES: i64 = 5;
/// The sliding window of the sign-in throttle (seconds).
pub const THROTTLE_WINDOW_SECS: i64 = 15 * 60;

/// Seconds since the Unix epoch, the clock of sessions and throttling.
pub fn unix_now() -> i64 {
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| i64::try_from(d.as_secs()).unwrap_or(i64::MAX))
        .unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roles_are_ordered_by_what_they_may_do_and_read_back_from_text() {
        assert!(Role::Viewer < Role::Interpreter && Role::Interpreter < Role::Admin);
        for r in Role::ALL {
            assert_eq!(r.as_str().parse::<Role>(), Ok(r));
        }
        assert_eq!(" Admin ".parse::<Role>(), Ok(Role::Admin));
        assert!("owner".parse::<Role>().unwrap_err().contains("not a role"));
    }
}
