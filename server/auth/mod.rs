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

/// The sign-in throttle, kept per (user name, client address): so a stranger's guesses
/// from elsewhere never make the real user wait. Each try is counted before its password
/// is checked (atomically, in one statement), and a successful sign-in from that address
/// clears the count; so however many guesses arrive at once, at most `free_tries` are
/// checked before the first wait.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ThrottlePolicy {
    /// Tries in a row without a wait.
    pub free_tries: i64,
    /// The wait after the last free try (seconds); it doubles with each further try.
    pub first_wait_secs: i64,
    /// The longest wait (seconds).
    pub max_wait_secs: i64,
    /// A record with no try for this long is forgotten (seconds).
    pub forget_after_secs: i64,
}

impl ThrottlePolicy {
    /// How long the client waits after its `tries`-th try in a row without success.
    pub fn wait_after(&self, tries: i64) -> i64 {
        if tries < self.free_tries {
            return 0;
        }
        let doublings = u32::try_from(tries - self.free_tries)
            .unwrap_or(u32::MAX)
            .min(30);
        (self.first_wait_secs << doublings).min(self.max_wait_secs)
    }
}

/// Five tries, then 30 s, 60 s, 120 s … up to 15 minutes between tries; forgotten after
/// a day without a try.
pub const SIGN_IN_THROTTLE: ThrottlePolicy = ThrottlePolicy {
    free_tries: 5,
    first_wait_secs: 30,
    max_wait_secs: 15 * 60,
    forget_after_secs: 24 * 60 * 60,
};

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

    #[test]
    fn the_sign_in_wait_starts_after_the_free_tries_and_doubles_up_to_the_cap() {
        let p = SIGN_IN_THROTTLE;
        // Five free tries; the fifth wrong one starts a 30 s wait.
        let waits: Vec<i64> = (1..=12).map(|t| p.wait_after(t)).collect();
        assert_eq!(waits, [0, 0, 0, 0, 30, 60, 120, 240, 480, 900, 900, 900]);
        assert_eq!(p.wait_after(i64::MAX), 900);
    }
}
