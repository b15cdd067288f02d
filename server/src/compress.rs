//! Content codings of prepared bodies: the gzip and brotli copies made once when a body is
//! built, and the choice among them by `Accept-Encoding` (RFC 9110 section 12.5.3).

use std::io::Write;

use axum::body::Bytes;
use axum::http::{HeaderMap, header};

/// A content coding the service can send.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Coding {
    /// No coding: the plain bytes.
    Identity,
    /// gzip (RFC 1952).
    Gzip,
    /// Brotli (RFC 7932).
    Brotli,
}

impl Coding {
    /// The `Content-Encoding` token, `None` for identity.
    pub fn token(self) -> Option<&'static str> {
        match self {
            Coding::Identity => None,
            Coding::Gzip => Some("gzip"),
            Coding::Brotli => Some("br"),
        }
    }

    /// The suffix added inside the quotes of the plain body's ETag, `None` for identity.
    fn tag_suffix(self) -> Option<&'static str> {
        match self {
            Coding::Identity => None,
            Coding::Gzip => Some("gz"),
            Coding::Brotli => Some("br"),
        }
    }

    /// The strong ETag of this coding's bytes, from the plain body's tag: the coding's suffix
    /// inside the quotes (`"abc-3"` -> `"abc-3-br"`), so each coding has its own tag.
    pub fn etag(self, plain: &str) -> String {
        match (self.tag_suffix(), plain.strip_suffix('"')) {
            (Some(suffix), Some(open)) => format!("{open}-{suffix}\""),
            _ => plain.to_owned(),
        }
    }
}

/// The compressed copies of a body, made once when the body is built.
#[derive(Debug, Clone)]
pub struct Compressed {
    /// The gzip bytes.
    pub gzip: Bytes,
    /// The brotli bytes.
    pub brotli: Bytes,
}

impl Compressed {
    /// Compresses `plain` both ways (CPU work: call it off the async runtime).
    pub fn of(plain: &[u8]) -> Self {
        Self {
            gzip: Bytes::from(gzip(plain)),
            brotli: Bytes::from(brotli(plain)),
        }
    }

    /// The bytes of `coding` (`None` for identity, which is the plain body).
    pub fn bytes(&self, coding: Coding) -> Option<&Bytes> {
        match coding {
            Coding::Identity => None,
            Coding::Gzip => Some(&self.gzip),
            Coding::Brotli => Some(&self.brotli),
        }
    }
}

/// Brotli quality: 6 of 11. On the demo's bodies (12 to 58 kB) it takes 1 to 4 ms and comes
/// out 8 to 10% smaller than gzip at its best level; quality 11 is 15% smaller again but
/// takes 20 to 120 ms a body, which would add about a second of CPU to a start-up that
/// compresses every gauge's outlooks, hindcast and season table (measured 2026-12-02).
const BROTLI_QUALITY: u32 = 6;
/// Brotli window, log2 bytes (22, the reference encoder's default).
const BROTLI_WINDOW: u32 = 22;

/// `plain` as gzip, at the best level.
pub fn gzip(plain: &[u8]) -> Vec<u8> {
    let mut encoder = flate2::write::GzEncoder::new(
        Vec::with_capacity(plain.len() / 4 + 64),
        flate2::Compression::best(),
    );
    // Writing to a Vec cannot fail.
    let _ = encoder.write_all(plain);
    encoder.finish().unwrap_or_default()
}

/// `plain` as brotli.
pub fn brotli(plain: &[u8]) -> Vec<u8> {
    let mut out = Vec::with_capacity(plain.len() / 4 + 64);
    {
        let mut writer =
            brotli::CompressorWriter::new(&mut out, 4096, BROTLI_QUALITY, BROTLI_WINDOW);
        // Writing to a Vec cannot fail.
        let _ = writer.write_all(plain);
    }
    out
}

/// The coding to send for a request's `Accept-Encoding` (RFC 9110 section 12.5.3, qvalues
/// section 12.4.2): the acceptable coding of highest weight, brotli before gzip before
/// identity when weights are equal. No header, an empty one, or one that accepts neither
/// coding gets identity (also when identity itself is refused: the plain bytes are the
/// fallback rather than a `406`).
pub fn negotiate(headers: &HeaderMap) -> Coding {
    let mut brotli = None;
    let mut gzip = None;
    let mut identity = None;
    let mut any = None;
    for value in headers.get_all(header::ACCEPT_ENCODING) {
        let Ok(value) = value.to_str() else { continue };
        for item in value.split(',') {
            let mut parts = item.split(';');
            let name = parts.next().unwrap_or("").trim().to_ascii_lowercase();
            if name.is_empty() {
                continue;
            }
            let Some(weight) = weight_of(parts) else {
                continue;
            };
            let slot = match name.as_str() {
                "br" => &mut brotli,
                "gzip" | "x-gzip" => &mut gzip,
                "identity" => &mut identity,
                "*" => &mut any,
                _ => continue,
            };
            *slot = Some(weight);
        }
    }
    let brotli = brotli.or(any).unwrap_or(0);
    let gzip = gzip.or(any).unwrap_or(0);
    // Identity is acceptable unless refused by name or by `*;q=0` (section 12.5.3); not
    // named, it ranks below every coding the client names (common practice, as the
    // standard gives it no weight).
    let identity = identity.or(any).unwrap_or(1);
    let best = brotli.max(gzip);
    if best == 0 || best < identity {
        Coding::Identity
    } else if brotli == best {
        Coding::Brotli
    } else {
        Coding::Gzip
    }
}

/// The weight of one list member in thousandths (1000 without `q`), or `None` when its `q`
/// is not a valid qvalue (`0` to `1` with at most three decimals; section 12.4.2).
fn weight_of<'a>(params: impl Iterator<Item = &'a str>) -> Option<u16> {
    let mut weight = 1000;
    for param in params {
        let Some((key, value)) = param.split_once('=') else {
            continue;
        };
        if !key.trim().eq_ignore_ascii_case("q") {
            continue;
        }
        weight = parse_qvalue(value.trim())?;
    }
    Some(weight)
}

fn parse_qvalue(text: &str) -> Option<u16> {
    let (whole, fraction) = text.split_once('.').unwrap_or((text, ""));
    if fraction.len() > 3 || !fraction.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let thousandths = format!("{fraction:0<3}").parse::<u16>().ok()?;
    match whole {
        "0" => Some(thousandths),
        "1" if thousandths == 0 => Some(1000),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use std::io::Read;

    use super::*;
    use axum::http::HeaderValue;

    fn chosen(accept: &str) -> Coding {
        let mut headers = HeaderMap::new();
        headers.insert(
            header::ACCEPT_ENCODING,
            HeaderValue::from_str(accept).unwrap(),
        );
        negotiate(&headers)
    }

    // The choices follow RFC 9110 section 12.5.3 (Accept-Encoding) and section 12.4.2
    // (qvalues); brotli before gzip on equal weights is common practice, no standard.
    #[test]
    fn the_heaviest_acceptable_coding_wins() {
        assert_eq!(negotiate(&HeaderMap::new()), Coding::Identity);
        assert_eq!(chosen(""), Coding::Identity);
        assert_eq!(chosen("gzip"), Coding::Gzip);
        assert_eq!(chosen("br"), Coding::Brotli);
        assert_eq!(chosen("gzip, deflate, br"), Coding::Brotli);
        assert_eq!(chosen("br;q=0.5, gzip"), Coding::Gzip);
        assert_eq!(chosen("BR;Q=0.9, GZIP;q=0.8"), Coding::Brotli);
        assert_eq!(chosen("x-gzip"), Coding::Gzip);
        assert_eq!(chosen("deflate"), Coding::Identity);
        assert_eq!(chosen("*"), Coding::Brotli);
        assert_eq!(chosen("*;q=0.5, br;q=0"), Coding::Gzip);
    }

    #[test]
    fn q_zero_refuses_and_identity_is_the_fallback() {
        assert_eq!(chosen("br;q=0"), Coding::Identity);
        assert_eq!(chosen("gzip;q=0, br;q=0"), Coding::Identity);
        assert_eq!(chosen("gzip;q=0.000"), Coding::Identity);
        // identity weighed above the codings is sent plain.
        assert_eq!(chosen("gzip;q=0.4, identity"), Coding::Identity);
        assert_eq!(chosen("gzip;q=0.4, identity;q=0.4"), Coding::Gzip);
        // Not named, identity ranks below any named coding.
        assert_eq!(chosen("gzip;q=0.1"), Coding::Gzip);
        // Refusing identity still gets identity when nothing else is acceptable.
        assert_eq!(chosen("identity;q=0"), Coding::Identity);
        assert_eq!(chosen("*;q=0"), Coding::Identity);
        assert_eq!(chosen("identity;q=0, gzip;q=0.1"), Coding::Gzip);
    }

    #[test]
    fn malformed_qvalues_are_ignored_not_trusted() {
        // Section 12.4.2: at most three decimals, at most 1.
        assert_eq!(chosen("br;q=1.5, gzip"), Coding::Gzip);
        assert_eq!(chosen("br;q=0.1234, gzip;q=0.2"), Coding::Gzip);
        assert_eq!(chosen("br;q=abc"), Coding::Identity);
        assert_eq!(chosen("br;q=1.000"), Coding::Brotli);
        assert_eq!(chosen("br;q=0.001"), Coding::Brotli);
    }

    #[test]
    fn each_coding_has_its_own_strong_tag() {
        assert_eq!(Coding::Identity.etag("\"abc-3\""), "\"abc-3\"");
        assert_eq!(Coding::Gzip.etag("\"abc-3\""), "\"abc-3-gz\"");
        assert_eq!(Coding::Brotli.etag("\"abc-3\""), "\"abc-3-br\"");
    }

    #[test]
    fn both_copies_decompress_to_the_plain_bytes() {
        let plain: Vec<u8> = (0..200_000u32)
            .flat_map(|i| format!("{{\"k\":{},\"p\":{}}},", i % 91, i % 7).into_bytes())
            .collect();
        for body in [&plain[..100], &plain[..]] {
            let copies = Compressed::of(body);
            let mut back = Vec::new();
            flate2::read::GzDecoder::new(&copies.gzip[..])
                .read_to_end(&mut back)
                .unwrap();
            assert_eq!(back, body);
            let mut back = Vec::new();
            brotli::Decompressor::new(&copies.brotli[..], 4096)
                .read_to_end(&mut back)
                .unwrap();
            assert_eq!(back, body);
            if body.len() > 1000 {
                assert!(copies.gzip.len() < body.len() / 2);
                assert!(copies.brotli.len() < body.len() / 2);
            }
        }
    }
}
