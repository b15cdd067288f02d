//! Strong ETags: a content hash of a body, and the `If-None-Match` comparison. Shared by the
//! response layer, the catalog (bodies hashed once per fit), the store's content hashes and
//! the model version.

use axum::http::{HeaderMap, header};

/// 64-bit FNV-1a of `bytes` (Fowler, Noll and Vo's published offset basis and prime).
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    const OFFSET_BASIS: u64 = 0xcbf2_9ce4_8422_2325;
    const PRIME: u64 = 0x0000_0100_0000_01b3;
    bytes.iter().fold(OFFSET_BASIS, |hash, &b| {
        (hash ^ u64::from(b)).wrapping_mul(PRIME)
    })
}

/// A strong ETag for a body: the quoted FNV-1a hash and the length.
pub fn etag_of(bytes: &[u8]) -> String {
    format!("\"{:016x}-{:x}\"", fnv1a64(bytes), bytes.len())
}

/// Whether an `If-None-Match` header matches `etag` (weak comparison, RFC 9110 section
/// 13.1.2: `W/` prefixes are ignored, `*` matches anything).
pub fn if_none_match_hits(headers: &HeaderMap, etag: &str) -> bool {
    let bare = |tag: &str| tag.trim().trim_start_matches("W/").to_owned();
    let ours = bare(etag);
    headers
        .get_all(header::IF_NONE_MATCH)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|tag| tag.trim() == "*" || bare(tag) == ours)
}

#[cfg(test)]
mod tests {
    use super::*;
    use axum::http::HeaderValue;

    // FNV-1a 64-bit test vectors from the reference implementation's test suite
    // (Landon Curt Noll, "FNV hash" test vectors, fnv_test.c): "" -> cbf29ce484222325,
    // "a" -> af63dc4c8601ec8c, "foobar" -> 85944171f73967e8.
    #[test]
    fn fnv1a64_matches_the_published_vectors() {
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a64(b"foobar"), 0x8594_4171_f739_67e8);
    }

    #[test]
    fn if_none_match_compares_weakly_over_lists() {
        let mut headers = HeaderMap::new();
        headers.insert(
            header::IF_NONE_MATCH,
            HeaderValue::from_static("\"x\", W/\"abc-3\""),
        );
        assert!(if_none_match_hits(&headers, "\"abc-3\""));
        assert!(!if_none_match_hits(&headers, "\"abd-3\""));
        headers.insert(header::IF_NONE_MATCH, HeaderValue::from_static("*"));
        assert!(if_none_match_hits(&headers, "\"anything\""));
        assert!(!if_none_match_hits(&HeaderMap::new(), "\"abc-3\""));
    }
}
