//! Passwords: Argon2id hashing (a memory-hard function, with its own random salt per
//! hash) and generated passwords that read clearly.
//!
//! Hashing takes tens of milliseconds on purpose; call it off the async runtime.

use argon2::Argon2;
use argon2::password_hash::phc::PasswordHash;
use argon2::password_hash::{PasswordHasher, PasswordVerifier};
use rand::RngExt;
use std::sync::LazyLock;

/// Shortest password accepted when a person chooses one.
pub const MIN_LEN: usize = 10;
/// Longest password accepted: hashing work grows with the input.
pub const MAX_LEN: usize = 256;
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

/// Check a password a person chose; the message says what to change.
pub fn check_chosen(password: &str) -> Result<(), String> {
    let chars = password.chars().count();
    if chars < MIN_LEN {
        Err(format!("A password needs at least {MIN_LEN} characters."))
    } else if chars > MAX_LEN {
        Err(format!("A password may have at most {MAX_LEN} characters."))
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
        assert!(check_chosen(&a).is_ok());
        assert!(check_chosen("short").unwrap_err().contains("at least"));
    }
}
