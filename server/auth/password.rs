//! Passwords: Argon2id hashing (a memory-hard function, with its own random salt per
//! hash), generated passwords that read clearly, and the rules every password meets.
//!
//! The rules (`check_chosen`): at least `MIN_LEN` characters, at most `MAX_LEN`, at least
//! `MIN_DISTINCT` different characters, not the user name nor containing it, and not one
//! of the common passwords of `common_passwords.txt` (shipped in the binary), also with
//! digits or symbols added at either end or look-alike digits for letters.
//!
//! Hashing takes tens of milliseconds on purpose; call it off the async runtime.

use argon2::Argon2;
use argon2::password_hash::phc::PasswordHash;
use argon2::password_hash::{PasswordHasher, PasswordVerifier};
use rand::RngExt;
use std::collections::HashSet;
use std::sync::LazyLock;

/// Shortest password accepted.
pub const MIN_LEN: usize = 12;
/// Fewest different characters a password has (`aaaaaaaaaaaa` is not a password).
pub const MIN_DISTINCT: usize = 5;
/// A user name this long or longer may not appear anywhere in the password (a shorter
/// one only may not be the whole password: every password contains some letter).
pub const NAME_INSIDE_MIN_CHARS: usize = 3;
/// Longest password accepted: hashing work grows with the input.
pub const MAX_LEN: usize = 256;
/// The rules of [`check_chosen`] in one sentence, for forms and the command line.
pub const RULES: &str = "A password needs at least 12 characters (at least 5 of them different), may not be or contain the user name, and may not be a common password or one built on it (password2026!, p@ssw0rd).";
/// Length of generated passwords.
pub const GENERATED_LEN: usize = 16;
/// Letters and digits that cannot be mistaken for one another (no 0/O, 1/l/I).
const CLEAR_ALPHABET: &[u8] = b"abcdefghijkmnpqrstuvwxyzABCDEFGHJKLMNPQRSTUVWXYZ23456789";

/// The password could not be hashed (the text says why; it never contains the password).
#[derive(Debug, thiserror::Error)]
#[error("cannot hash the password: {0}")]
pub struct HashError(String);

/// The PHC string (`$argon2id$v=19$m=…$salt$hash`) of `password`, with a fresh salt.
pub fn hash(password: &str) -> Result<String, HashError> {
    let hashed: PasswordHash = Argon2::default()
        .hash_password(password.as_bytes())
        .map_err(|e| HashError(e.to_string()))?;
    Ok(hashed.to_string())
}

/// Whether `password` matches the stored PHC string. A malformed string matches nothing.
pub fn verify(password: &str, phc: &str) -> bool {
    match PasswordHash::new(phc) {
        Ok(parsed) => Argon2::default()
            .verify_password(password.as_bytes(), &parsed)
            .is_ok(),
        Err(_) => false,
    }
}

/// Spend the time of one verification without an account, so a sign-in with an unknown
/// name takes as long as one with a wrong password.
pub fn verify_nothing(password: &str) {
    static DECOY: LazyLock<String> =
        LazyLock::new(|| hash("a decoy that no account has").unwrap_or_default());
    let _ = verify(password, &DECOY);
}

/// A new random password of `GENERATED_LEN` clear characters (about 93 bits).
pub fn generate() -> String {
    let mut rng = rand::rng();
    (0..GENERATED_LEN)
        .map(|_| char::from(CLEAR_ALPHABET[rng.random_range(0..CLEAR_ALPHABET.len())]))
        .collect()
}

/// A generated password for the account `user_name` that meets every rule of
/// [`check_chosen`] (a random one fails them almost never; then another is drawn).
pub fn generate_for(user_name: &str) -> String {
    loop {
        let candidate = generate();
        if check_chosen(&candidate, user_name).is_ok() {
            return candidate;
        }
    }
}

/// The common passwords shipped with the program, lower case.
static COMMON: LazyLock<HashSet<&'static str>> = LazyLock::new(|| {
    include_str!("common_passwords.txt")
        .lines()
        .map(str::trim)
        .filter(|l| !l.is_empty() && !l.starts_with('#'))
        .collect()
});

/// The password without the digits, spaces and symbols at either end (`Summer2026!`
/// gives `Summer`).
fn stem(password: &str) -> &str {
    password.trim_matches(|c: char| !c.is_alphabetic())
}

/// Look-alike digits and symbols read as the letters they stand for (`p@ssw0rd`).
fn unleet(text: &str) -> String {
    text.chars()
        .map(|c| match c {
            '@' | '4' => 'a',
            '8' => 'b',
            '3' => 'e',
            '1' | '!' => 'i',
            '0' => 'o',
            '$' | '5' => 's',
            '7' => 't',
            other => other,
        })
        .collect()
}

/// Whether the password is a common one, or one built on a common one.
pub fn is_common(password: &str) -> bool {
    let lower = password.to_lowercase();
    let stem = stem(&lower);
    [
        lower.clone(),
        stem.to_string(),
        unleet(&lower),
        unleet(stem),
        stem.chars().filter(|c| c.is_alphabetic()).collect(),
    ]
    .iter()
    .any(|candidate| !candidate.is_empty() && COMMON.contains(candidate.as_str()))
}

/// Check a password for the account `user_name` against every rule; the message says
/// what to change and never repeats the password.
pub fn check_chosen(password: &str, user_name: &str) -> Result<(), String> {
    let chars = password.chars().count();
    let lower = password.to_lowercase();
    let name = user_name.trim().to_lowercase();
    let distinct = password.chars().collect::<HashSet<_>>().len();
    if chars < MIN_LEN {
        Err(format!("A password needs at least {MIN_LEN} characters."))
    } else if chars > MAX_LEN {
        Err(format!("A password may have at most {MAX_LEN} characters."))
    } else if !name.is_empty()
        && (lower == name
            || (name.chars().count() >= NAME_INSIDE_MIN_CHARS && lower.contains(&name)))
    {
        Err("A password may not be the user name or contain it.".into())
    } else if distinct < MIN_DISTINCT {
        Err(format!(
            "A password needs at least {MIN_DISTINCT} different characters."
        ))
    } else if is_common(password) {
        Err("This password is too common: it is, or is built on, one of the list of common passwords shipped with Sagline. Choose one that is harder to guess, such as a few unrelated words.".into())
    } else {
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_hash_verifies_its_password_only_and_never_contains_it() {
        let h = hash("correct horse staple").unwrap();
        assert!(h.starts_with("$argon2id$"), "{h}");
        assert!(!h.contains("correct horse staple"));
        assert!(verify("correct horse staple", &h));
        assert!(!verify("correct horse stapler", &h));
        assert!(!verify("correct horse staple", "not a hash"));
        // A fresh salt each time: the same password never hashes the same twice.
        assert_ne!(hash("correct horse staple").unwrap(), h);
    }

    #[test]
    fn generated_passwords_are_long_clear_and_different() {
        let a = generate();
        assert_eq!(a.chars().count(), GENERATED_LEN);
        assert!(a.bytes().all(|b| CLEAR_ALPHABET.contains(&b)), "{a}");
        assert_ne!(a, generate());
        assert!(check_chosen(&a, "admin").is_ok());
        assert!(check_chosen(&generate_for("admin"), "admin").is_ok());
    }

    #[test]
    fn the_rules_refuse_short_named_repetitive_and_common_passwords_with_a_reason() {
        let refused = |p: &str, name: &str| check_chosen(p, name).unwrap_err();
        assert!(refused("eleven char", "ana").contains("at least 12 characters"));
        assert!(refused(&"x".repeat(MAX_LEN + 1), "ana").contains("at most"));
        assert!(refused("Petrel-Ledger", "petrel-ledger").contains("user name"));
        assert!(refused("my name is petrel, hi", "Petrel").contains("user name"));
        assert!(refused("abababababab", "ana").contains("5 different characters"));
        // On the list, and built on entries of the list.
        for common in [
            "password1234",
            "Qwertyuiop123",
            "Sunshine2026!!",
            "P@ssw0rd-2024",
            "123456789012",
            "Welcome 2026 !",
        ] {
            assert!(refused(common, "ana").contains("too common"), "{common}");
        }
        // A short name may appear inside a password; it may not be the whole of it.
        assert!(check_chosen("banana bread at noon", "an").is_ok());
        assert!(refused("an", "an").contains("at least"));
        assert!(check_chosen("tern-drifts-over-9-reefs", "ana").is_ok());
        assert!(check_chosen("x".repeat(MAX_LEN).as_str(), "ana").is_err());
    }

    #[test]
    fn the_rules_sentence_names_the_limits() {
        assert!(RULES.contains(&format!("{MIN_LEN} characters")));
        assert!(RULES.contains(&format!("{MIN_DISTINCT} of them")));
    }

    #[test]
    fn the_common_list_is_read_whole_and_in_lower_case() {
        assert!(COMMON.len() >= 300, "{}", COMMON.len());
        assert!(COMMON.contains("password") && COMMON.contains("123456789012"));
        assert!(COMMON.iter().all(|p| *p == p.to_lowercase()));
    }
}
