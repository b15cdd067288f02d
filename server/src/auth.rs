//! Bearer-token authentication of write requests, compared in constant time.

use std::fmt;

/// The secret that authorizes writes. Its `Debug` never shows the value.
#[derive(Clone)]
pub struct Token(String);

impl Token {
    /// Wraps a configured token.
    pub fn new(secret: String) -> Self {
        Self(secret)
    }

    /// Whether an `Authorization` header value is `Bearer <this token>`; the scheme name is
    /// case-insensitive (RFC 9110 section 11.1), the token exact.
    pub fn accepts(&self, header: &str) -> bool {
        let Some((scheme, given)) = header.trim_start().split_once(' ') else {
            return false;
        };
        scheme.eq_ignore_ascii_case("bearer")
            && constant_time_eq(given.trim().as_bytes(), self.0.as_bytes())
    }
}

impl fmt::Debug for Token {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("Token(<redacted>)")
    }
}

/// Byte equality whose running time depends only on the lengths, not on where the inputs
/// first differ.
pub fn constant_time_eq(a: &[u8], b: &[u8]) -> bool {
    let len = a.len().max(b.len());
    let mut diff = (a.len() ^ b.len()) as u64;
    for i in 0..len {
        let x = a.get(i).copied().unwrap_or(0);
        let y = b.get(i).copied().unwrap_or(0);
        diff |= u64::from(x ^ y);
    }
    std::hint::black_box(diff) == 0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn equality_is_exact() {
        assert!(constant_time_eq(b"secret-token-123", b"secret-token-123"));
        assert!(!constant_time_eq(b"secret-token-123", b"secret-token-124"));
        assert!(!constant_time_eq(b"secret", b"secret-token"));
        assert!(!constant_time_eq(b"", b"x"));
        assert!(constant_time_eq(b"", b""));
    }

    #[test]
    fn only_the_bearer_scheme_with_the_exact_token_passes() {
        let t = Token::new("0123456789abcdef".into());
        assert!(t.accepts("Bearer 0123456789abcdef"));
        assert!(t.accepts("bearer 0123456789abcdef") && t.accepts("BEARER 0123456789abcdef"));
        assert!(!t.accepts("Basic 0123456789abcdef"));
        assert!(!t.accepts("Bearer 0123456789abcdeF"));
        assert!(!t.accepts("0123456789abcdef"));
        assert_eq!(format!("{t:?}"), "Token(<redacted>)");
    }
}
