//! Gzip of stored blobs, with a bound on the decompressed size.

use std::io::{Read, Write};

use flate2::Compression;
use flate2::read::GzDecoder;
use flate2::write::GzEncoder;

use super::StoreError;

/// Gzip-compresses `bytes` (fast level: uploads are compressed once, read rarely).
pub fn gzip(bytes: &[u8]) -> Vec<u8> {
    let mut encoder = GzEncoder::new(Vec::with_capacity(bytes.len() / 4), Compression::fast());
    encoder
        .write_all(bytes)
        .expect("writing to a Vec cannot fail");
    encoder
        .finish()
        .expect("finishing a Vec-backed encoder cannot fail")
}

/// Decompresses a stored gzip blob.
pub fn gunzip_all(gzip: &[u8], what: &str) -> Result<Vec<u8>, StoreError> {
    let mut out = Vec::with_capacity(gzip.len() * 4);
    GzDecoder::new(gzip)
        .read_to_end(&mut out)
        .map_err(|err| StoreError::Corrupt {
            what: what.to_owned(),
            message: err.to_string(),
        })?;
    Ok(out)
}
