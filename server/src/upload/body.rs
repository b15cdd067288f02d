//! Request bodies: plain or gzip, told apart by content (the gzip magic bytes), never by
//! name or header, and bounded after decompression.

use std::io::Read;

use super::UploadError;

/// The largest body accepted after decompression (a 40-year one-minute record is ~700 MB;
/// hourly is ~15 MB, so 256 MiB leaves room without letting a gzip bomb fill memory).
pub const MAX_DECOMPRESSED_BYTES: usize = 256 << 20;

/// The body's bytes with any gzip layer removed, at most `limit` bytes.
pub fn decode_body(what: &str, bytes: &[u8], limit: usize) -> Result<Vec<u8>, UploadError> {
    let too_large = || UploadError::TooLarge {
        what: what.to_owned(),
        limit,
    };
    if !bytes.starts_with(&[0x1f, 0x8b]) {
        if bytes.len() > limit {
            return Err(too_large());
        }
        return Ok(bytes.to_vec());
    }
    let mut out = Vec::new();
    // A multi-member stream (concatenated gzip files) is one file, as gunzip treats it.
    let decoder = flate2::read::MultiGzDecoder::new(bytes);
    decoder
        .take(limit as u64 + 1)
        .read_to_end(&mut out)
        .map_err(|err| UploadError::Gzip {
            what: what.to_owned(),
            message: err.to_string(),
        })?;
    if out.len() > limit {
        return Err(too_large());
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::gzip;

    #[test]
    fn gzip_is_found_by_content() {
        let plain = b"time,level\n2026-01-01T00:00:00Z,1.0\n".to_vec();
        assert_eq!(decode_body("x", &plain, 1000).unwrap(), plain);
        assert_eq!(decode_body("x", &gzip(&plain), 1000).unwrap(), plain);
    }

    #[test]
    fn bombs_and_garbage_are_refused() {
        let big = vec![b'a'; 10_000];
        assert!(matches!(
            decode_body("x", &gzip(&big), 1000),
            Err(UploadError::TooLarge { limit: 1000, .. })
        ));
        assert!(matches!(
            decode_body("x", &[0x1f, 0x8b, 1, 2, 3], 1000),
            Err(UploadError::Gzip { .. })
        ));
    }
}
