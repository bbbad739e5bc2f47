//! Random tokens for sessions and CSRF protection, and the digest a session is stored by.

use rand::RngExt;
use sha2::{Digest, Sha256};
use std::fmt::Write;

/// A new random token: 32 bytes as 64 lowercase hex digits.
pub fn new_token() -> String {
    let mut bytes = [0u8; 32];
    rand::rng().fill(&mut bytes);
    hex(&bytes)
}

/// The SHA-256 of a token, as hex: what the sessions table keeps instead of the token,
/// so a copy of the database signs nobody in.
pub fn digest(token: &str) -> String {
    hex(&Sha256::digest(token.as_bytes()))
}

/// Compare two tokens in time that does not depend on where they differ.
pub fn same(a: &str, b: &str) -> bool {
    a.len() == b.len()
        && a.bytes()
            .zip(b.bytes())
            .fold(0u8, |acc, (x, y)| acc | (x ^ y))
            == 0
}

fn hex(bytes: &[u8]) -> String {
    bytes
        .iter()
        .fold(String::with_capacity(bytes.len() * 2), |mut s, b| {
            let _ = write!(s, "{b:02x}");
            s
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tokens_are_random_hex_and_digests_are_sha256() {
        let t = new_token();
        assert_eq!(t.len(), 64);
        assert!(t.bytes().all(|b| b.is_ascii_hexdigit()));
        assert_ne!(t, new_token());
        // FIPS 180-2 test vector: SHA-256("abc").
        assert_eq!(
            digest("abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert!(same(&t, &t.clone()));
        assert!(!same(&t, &new_token()));
        assert!(!same("abc", "abcd"));
    }
}
