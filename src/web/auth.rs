//! Who is asking: passwords (Argon2id, the crate's default parameters), session and
//! anti-forgery tokens (random, from the operating system), cookies, and the login throttle.
//! The store keeps only the password's PHC string and the session token's BLAKE2s hash.

use super::error::WebError;
use argon2::password_hash::{PasswordHasher, PasswordVerifier};
use axum::http::{HeaderMap, HeaderValue, header};
use blake2::{Blake2s256, Digest};
use std::collections::HashMap;
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// The session cookie's name.
pub const SESSION_COOKIE: &str = "onhand_session";
/// The cookie that carries the login form's anti-forgery token before there is a session.
pub const LOGIN_COOKIE: &str = "onhand_login";
/// Shortest password accepted (common practice for a shared, low-stakes account).
pub const MIN_PASSWORD: usize = 8;
/// Longest password accepted (Argon2 hashes anything, but a bound keeps requests small).
pub const MAX_PASSWORD: usize = 1024;

/// Why a password cannot be set.
#[derive(Debug, thiserror::Error)]
pub enum PasswordError {
    /// Too short or too long.
    #[error("a password must be {MIN_PASSWORD} to {MAX_PASSWORD} characters long")]
    Length,
    /// The hasher failed (no randomness from the system, …).
    #[error("cannot hash the password: {0}")]
    Hash(String),
}

/// The Argon2id PHC string of `password`, with a fresh random salt.
pub fn hash_password(password: &str) -> Result<String, PasswordError> {
    let n = password.chars().count();
    if !(MIN_PASSWORD..=MAX_PASSWORD).contains(&n) {
        return Err(PasswordError::Length);
    }
    argon2::Argon2::default()
        .hash_password(password.as_bytes())
        .map(|h| h.to_string())
        .map_err(|e| PasswordError::Hash(e.to_string()))
}

/// Whether `password` matches the PHC string. A malformed string never matches.
pub fn verify_password(password: &str, phc: &str) -> bool {
    argon2::Argon2::default()
        .verify_password(password.as_bytes(), phc)
        .is_ok()
}

/// Spend the same time as a real check when there is no account, so the answer's timing does
/// not tell which names exist.
pub fn verify_nothing(password: &str) {
    static DUMMY: std::sync::OnceLock<Option<String>> = std::sync::OnceLock::new();
    if let Some(phc) = DUMMY.get_or_init(|| hash_password("not a real password").ok()) {
        let _ = verify_password(password, phc);
    }
}

/// 32 random bytes from the operating system, as 64 hex digits.
pub fn new_token() -> Result<String, WebError> {
    let mut bytes = [0u8; 32];
    getrandom::fill(&mut bytes)
        .map_err(|e| WebError::Internal(format!("no randomness from the system: {e}")))?;
    Ok(hex(&bytes))
}

/// The hash under which a session token is stored (BLAKE2s-256, hex).
pub fn token_hash(token: &str) -> String {
    hex(&Blake2s256::digest(token.as_bytes()))
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Compare two tokens in time that does not depend on where they differ.
pub fn same_token(a: &str, b: &str) -> bool {
    let (a, b) = (a.as_bytes(), b.as_bytes());
    a.len() == b.len()
        && !a.is_empty()
        && a.iter().zip(b).fold(0u8, |acc, (x, y)| acc | (x ^ y)) == 0
}

/// The value of cookie `name` in the request, if sent.
pub fn cookie(headers: &HeaderMap, name: &str) -> Option<String> {
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|kv| kv.trim().split_once('='))
        .find(|(k, _)| *k == name)
        .map(|(_, v)| v.to_string())
}

/// A `Set-Cookie` value: HttpOnly, SameSite=Strict, Path=/, Secure when served over TLS.
/// `max_age` 0 deletes the cookie.
pub fn set_cookie(name: &str, value: &str, max_age: i64, secure: bool) -> HeaderValue {
    let secure = if secure { "; Secure" } else { "" };
    let text =
        format!("{name}={value}; Max-Age={max_age}; Path=/; HttpOnly; SameSite=Strict{secure}");
    HeaderValue::from_str(&text).unwrap_or_else(|_| HeaderValue::from_static("invalid=1"))
}

/// Failed logins per key (a member name, a client address): after [`Throttle::FREE`] failures
/// each further try must wait, doubling from one second up to five minutes. A success clears
/// the key; keys idle for fifteen minutes are forgotten.
#[derive(Debug, Default)]
pub struct Throttle {
    failures: Mutex<HashMap<String, (u32, Instant)>>,
}

impl Throttle {
    /// Failures allowed before waits begin.
    pub const FREE: u32 = 5;
    const FORGET: Duration = Duration::from_secs(15 * 60);
    const LONGEST: u64 = 300;

    /// `Err(seconds)` when `key` must still wait.
    pub fn check(&self, key: &str) -> Result<(), u64> {
        let Ok(map) = self.failures.lock() else {
            return Ok(());
        };
        let Some(&(n, last)) = map.get(key) else {
            return Ok(());
        };
        if n < Self::FREE {
            return Ok(());
        }
        let wait = Self::wait_after(n);
        let since = last.elapsed().as_secs();
        if since < wait {
            Err(wait - since)
        } else {
            Ok(())
        }
    }

    fn wait_after(n: u32) -> u64 {
        let extra = n.saturating_sub(Self::FREE).min(16);
        (1u64 << extra).min(Self::LONGEST)
    }

    /// Count a failure for `key`.
    pub fn fail(&self, key: &str) {
        if let Ok(mut map) = self.failures.lock() {
            if map.len() > 10_000 {
                map.retain(|_, (_, t)| t.elapsed() < Self::FORGET);
            }
            let e = map.entry(key.to_string()).or_insert((0, Instant::now()));
            if e.1.elapsed() >= Self::FORGET {
                e.0 = 0;
            }
            e.0 = e.0.saturating_add(1);
            e.1 = Instant::now();
        }
    }

    /// Forget `key`'s failures (after a successful login).
    pub fn clear(&self, key: &str) {
        if let Ok(mut map) = self.failures.lock() {
            map.remove(key);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn passwords_hash_to_argon2id_and_verify() {
        let phc = hash_password("correct horse").expect("hash");
        assert!(phc.starts_with("$argon2id$"), "{phc}");
        assert!(verify_password("correct horse", &phc));
        assert!(!verify_password("correct hors", &phc));
        assert!(!verify_password("x", "not a phc string"));
        assert!(matches!(hash_password("short"), Err(PasswordError::Length)));
        // Two hashes of one password differ (random salt).
        assert_ne!(phc, hash_password("correct horse").expect("hash"));
    }

    #[test]
    fn tokens_are_random_hex_and_compare_exactly() {
        let a = new_token().expect("token");
        let b = new_token().expect("token");
        assert_eq!(a.len(), 64);
        assert_ne!(a, b);
        assert!(same_token(&a, &a.clone()));
        assert!(!same_token(&a, &b));
        assert!(!same_token("", ""));
        assert_eq!(token_hash(&a).len(), 64);
        assert_ne!(token_hash(&a), a);
    }

    #[test]
    fn cookies_are_read_and_set_strictly() {
        let mut h = HeaderMap::new();
        h.insert(
            header::COOKIE,
            HeaderValue::from_static("a=1; onhand_session=xyz; b=2"),
        );
        assert_eq!(cookie(&h, SESSION_COOKIE).as_deref(), Some("xyz"));
        assert_eq!(cookie(&h, "c"), None);
        let v = set_cookie(SESSION_COOKIE, "t", 60, true);
        let v = v.to_str().expect("ascii");
        assert!(v.contains("HttpOnly") && v.contains("SameSite=Strict") && v.contains("Secure"));
        let plain = set_cookie(SESSION_COOKIE, "t", 60, false);
        assert!(!plain.to_str().expect("ascii").contains("Secure"));
    }

    #[test]
    fn throttle_waits_after_five_failures_and_clears_on_success() {
        let t = Throttle::default();
        for _ in 0..Throttle::FREE {
            assert_eq!(t.check("alice"), Ok(()));
            t.fail("alice");
        }
        assert!(t.check("alice").is_err());
        assert_eq!(t.check("bob"), Ok(()));
        t.clear("alice");
        assert_eq!(t.check("alice"), Ok(()));
    }
}
