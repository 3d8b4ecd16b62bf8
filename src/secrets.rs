//! Passwords (argon2id), random session ids and tokens, and their stored hashes.

use argon2::password_hash::phc::PasswordHash;
use argon2::password_hash::{PasswordHasher, PasswordVerifier};
use argon2::{Algorithm, Argon2, Params, Version};
use blake2::{Blake2b512, Digest};
use rand::RngExt;

/// argon2id with OWASP's first recommended set: m = 19 MiB, t = 2, p = 1
/// (OWASP Password Storage Cheat Sheet).
fn hasher() -> Argon2<'static> {
    let params = Params::new(19 * 1024, 2, 1, None).expect("OWASP parameters are valid");
    Argon2::new(Algorithm::Argon2id, Version::V0x13, params)
}

/// Hashes a password. Slow on purpose: call it from `spawn_blocking` on a server.
pub fn hash_password(password: &str) -> String {
    let salt: [u8; 16] = rand::rng().random();
    hasher()
        .hash_password_with_salt(password.as_bytes(), &salt)
        .expect("argon2 hashing of a bounded input cannot fail")
        .to_string()
}

/// Checks a password against a stored hash; a malformed hash never verifies.
pub fn verify_password(password: &str, stored_hash: &str) -> bool {
    PasswordHash::new(stored_hash)
        .map(|hash| hasher().verify_password(password.as_bytes(), &hash).is_ok())
        .unwrap_or(false)
}

/// A hash to verify against when the user does not exist, so both cases take as long.
pub fn decoy_hash() -> &'static str {
    static DECOY: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    DECOY.get_or_init(|| hash_password("decoy password for timing"))
}

/// 256 random bits from the operating system's CSPRNG, hex-encoded.
pub fn random_token() -> String {
    let bytes: [u8; 32] = rand::rng().random();
    hex::encode(bytes)
}

/// A readable generated password: 20 characters from an alphabet without look-alikes.
pub fn generate_password() -> String {
    const ALPHABET: &[u8] = b"abcdefghjkmnpqrstuvwxyzACDEFGHJKLMNPQRTUVWXY346789";
    let mut rng = rand::rng();
    (0..20)
        .map(|_| ALPHABET[rng.random_range(0..ALPHABET.len())] as char)
        .collect()
}

/// The stored form of a session id or token: a fast hash is enough for 256-bit random values.
pub fn token_hash(token: &str) -> String {
    hex::encode(Blake2b512::digest(token.as_bytes()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn password_round_trip() {
        let hash = hash_password("correct horse");
        assert!(hash.starts_with("$argon2id$v=19$m=19456,t=2,p=1$"));
        assert!(verify_password("correct horse", &hash));
        assert!(!verify_password("wrong horse", &hash));
        assert!(!verify_password("correct horse", "not a hash"));
    }

    #[test]
    fn tokens_are_random_and_hashed() {
        let a = random_token();
        assert_eq!(a.len(), 64);
        assert_ne!(a, random_token());
        assert_ne!(token_hash(&a), a);
        assert_eq!(token_hash(&a), token_hash(&a));
    }
}
