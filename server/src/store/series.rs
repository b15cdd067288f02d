//! Uploaded data: water-level records (gzip chunks per gauge), driver series (per kind, wind
//! per gauge) and ENSO forecasts (per target season).

use rusqlite::{Connection, OptionalExtension, params};

use super::{StoreError, gunzip_all, gzip};

/// Size of one stored chunk of a compressed water-level file.
const LEVEL_CHUNK_BYTES: usize = 1 << 20;

/// A water-level upload, decompressed, with its summary.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelsRecord {
    /// The gauge.
    pub gauge_id: String,
    /// The CSV text as uploaded (after transfer gzip is removed).
    pub csv: Vec<u8>,
    /// Data rows.
    pub readings: u64,
    /// First reading time, as written in the file.
    pub first_time: String,
    /// Last reading time, as written in the file.
    pub last_time: String,
    /// Strong hash of `csv`.
    pub content_hash: String,
    /// Upload time (RFC 3339).
    pub uploaded_at: String,
}

/// Replaces a gauge's water-level record.
pub fn put_levels(conn: &mut Connection, levels: &LevelsRecord) -> Result<(), StoreError> {
    put_levels_chunked(conn, levels, LEVEL_CHUNK_BYTES, None)
}

/// The write behind [`put_levels`]; `fail_after` injects an error after that many chunk
/// inserts (to test that a write cut short changes nothing).
fn put_levels_chunked(
    conn: &mut Connection,
    levels: &LevelsRecord,
    chunk_bytes: usize,
    fail_after: Option<usize>,
) -> Result<(), StoreError> {
    let compressed = gzip(&levels.csv);
    let chunks: Vec<&[u8]> = compressed.chunks(chunk_bytes).collect();
    let tx = conn.transaction()?;
    tx.execute(
        "DELETE FROM level_uploads WHERE gauge_id = ?1",
        [&levels.gauge_id],
    )?;
    tx.execute(
        "INSERT INTO level_uploads (gauge_id, bytes, readings, first_time, last_time,
                                    content_hash, chunks, uploaded_at)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
        params![
            levels.gauge_id,
            levels.csv.len() as i64,
            levels.readings as i64,
            levels.first_time,
            levels.last_time,
            levels.content_hash,
            chunks.len() as i64,
            levels.uploaded_at
        ],
    )?;
    {
        let mut insert =
            tx.prepare("INSERT INTO level_chunks (gauge_id, seq, gzip) VALUES (?1, ?2, ?3)")?;
        for (seq, chunk) in chunks.iter().enumerate() {
            if fail_after == Some(seq) {
                return Err(StoreError::Task("injected failure mid-upload".into()));
            }
            insert.execute(params![levels.gauge_id, seq as i64, chunk])?;
        }
    }
    tx.commit()?;
    Ok(())
}

/// A gauge's water-level record, if one was uploaded.
pub fn get_levels(conn: &Connection, gauge_id: &str) -> Result<Option<LevelsRecord>, StoreError> {
    let head = conn
        .query_row(
            "SELECT readings, first_time, last_time, content_hash, chunks, uploaded_at
             FROM level_uploads WHERE gauge_id = ?1",
            [gauge_id],
            |row| {
                Ok((
                    row.get::<_, i64>(0)?,
                    row.get::<_, String>(1)?,
                    row.get::<_, String>(2)?,
                    row.get::<_, String>(3)?,
                    row.get::<_, i64>(4)?,
                    row.get::<_, String>(5)?,
                ))
            },
        )
        .optional()?;
    let Some((readings, first_time, last_time, content_hash, chunks, uploaded_at)) = head else {
        return Ok(None);
    };
    let mut stmt =
        conn.prepare("SELECT gzip FROM level_chunks WHERE gauge_id = ?1 ORDER BY seq")?;
    let mut compressed = Vec::new();
    let mut count = 0;
    for chunk in stmt.query_map([gauge_id], |row| row.get::<_, Vec<u8>>(0))? {
        compressed.extend_from_slice(&chunk?);
        count += 1;
    }
    let what = format!("water levels of gauge {gauge_id}");
    if count != chunks {
        return Err(StoreError::Corrupt {
            what,
            message: format!("{count} of {chunks} chunks present"),
        });
    }
    Ok(Some(LevelsRecord {
        gauge_id: gauge_id.to_owned(),
        csv: gunzip_all(&compressed, &what)?,
        readings: readings as u64,
        first_time,
        last_time,
        content_hash,
        uploaded_at,
    }))
}

/// Which driver series: ENSO and RMM are shared, wind belongs to one gauge.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SeriesKey {
    /// Monthly ENSO index.
    Enso,
    /// Daily RMM index.
    Rmm,
    /// Wind at one gauge.
    Wind(String),
}

impl SeriesKey {
    fn columns(&self) -> (&'static str, &str) {
        match self {
            SeriesKey::Enso => ("enso", ""),
            SeriesKey::Rmm => ("rmm", ""),
            SeriesKey::Wind(gauge) => ("wind", gauge.as_str()),
        }
    }

    /// A name for messages, e.g. `enso` or `wind/port-alder`.
    pub fn describe(&self) -> String {
        match self {
            SeriesKey::Wind(gauge) => format!("wind/{gauge}"),
            other => other.columns().0.to_owned(),
        }
    }
}

/// An uploaded driver series.
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesRecord {
    /// Which series.
    pub key: SeriesKey,
    /// The CSV text.
    pub csv: Vec<u8>,
    /// Data rows.
    pub rows: u64,
    /// Strong hash of `csv`.
    pub content_hash: String,
    /// Upload time (RFC 3339).
    pub uploaded_at: String,
}

/// Inserts or replaces a driver series.
pub fn put_series(conn: &mut Connection, series: &SeriesRecord) -> Result<(), StoreError> {
    let (kind, gauge) = series.key.columns();
    let tx = conn.transaction()?;
    tx.execute(
        "INSERT OR REPLACE INTO driver_series
             (kind, gauge_id, gzip, bytes, rows, content_hash, uploaded_at)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
        params![
            kind,
            gauge,
            gzip(&series.csv),
            series.csv.len() as i64,
            series.rows as i64,
            series.content_hash,
            series.uploaded_at
        ],
    )?;
    tx.commit()?;
    Ok(())
}

/// A driver series, if uploaded.
pub fn get_series(conn: &Connection, key: &SeriesKey) -> Result<Option<SeriesRecord>, StoreError> {
    let (kind, gauge) = key.columns();
    let row = conn
        .query_row(
            "SELECT gzip, rows, content_hash, uploaded_at FROM driver_series
             WHERE kind = ?1 AND gauge_id = ?2",
            params![kind, gauge],
            |row| {
                Ok((
                    row.get::<_, Vec<u8>>(0)?,
                    row.get::<_, i64>(1)?,
                    row.get::<_, String>(2)?,
                    row.get::<_, String>(3)?,
                ))
            },
        )
        .optional()?;
    row.map(|(blob, rows, content_hash, uploaded_at)| {
        Ok(SeriesRecord {
            csv: gunzip_all(&blob, &format!("driver series {}", key.describe()))?,
            key: key.clone(),
            rows: rows as u64,
            content_hash,
            uploaded_at,
        })
    })
    .transpose()
}

/// Inserts or replaces the ENSO forecast of a target season (JSON text, already validated).
pub fn put_forecast(
    conn: &mut Connection,
    season: &str,
    issued: &str,
    json: &str,
    uploaded_at: &str,
) -> Result<(), StoreError> {
    let tx = conn.transaction()?;
    tx.execute(
        "INSERT OR REPLACE INTO enso_forecasts (season, issued, json, uploaded_at)
         VALUES (?1, ?2, ?3, ?4)",
        params![season, issued, json, uploaded_at],
    )?;
    tx.commit()?;
    Ok(())
}

/// All stored ENSO forecasts as `(season, json)`, ordered by season label.
pub fn get_forecasts(conn: &Connection) -> Result<Vec<(String, String)>, StoreError> {
    let mut stmt = conn.prepare("SELECT season, json FROM enso_forecasts ORDER BY season")?;
    let rows = stmt.query_map([], |row| Ok((row.get(0)?, row.get(1)?)))?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

#[cfg(test)]
mod tests {
    use super::super::{Store, StoredGaugeRow, put_gauge};
    use super::*;

    fn store_with_gauge() -> Store {
        let store = Store::open_in_memory().unwrap();
        store
            .call_blocking(|c| {
                put_gauge(
                    c,
                    &StoredGaugeRow {
                        id: "g".into(),
                        toml: "id = \"g\"".into(),
                        name: "G".into(),
                        latitude: 1.0,
                        longitude: 2.0,
                        updated_at: "2026-01-01T00:00:00Z".into(),
                    },
                )
            })
            .unwrap();
        store
    }

    /// Bytes that gzip cannot shrink much (a xorshift stream), so they span several chunks.
    fn noisy_csv(seed: u64, len: usize) -> Vec<u8> {
        let mut x = seed | 1;
        (0..len)
            .map(|_| {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                b'0' + (x % 10) as u8
            })
            .collect()
    }

    fn record(csv: Vec<u8>, tag: &str) -> LevelsRecord {
        LevelsRecord {
            gauge_id: "g".into(),
            csv,
            readings: 7,
            first_time: format!("first-{tag}"),
            last_time: format!("last-{tag}"),
            content_hash: tag.into(),
            uploaded_at: "2026-01-01T00:00:00Z".into(),
        }
    }

    #[test]
    fn levels_round_trip_through_chunks() {
        let store = store_with_gauge();
        let upload = record(noisy_csv(1, 50_000), "a");
        let expected = upload.clone();
        store
            .call_blocking(move |c| put_levels_chunked(c, &upload, 4096, None))
            .unwrap();
        let back = store
            .call_blocking(|c| get_levels(c, "g"))
            .unwrap()
            .unwrap();
        assert_eq!(back, expected);
    }

    #[test]
    fn an_upload_cut_short_leaves_the_previous_record() {
        let store = store_with_gauge();
        let first = record(noisy_csv(1, 50_000), "a");
        let expected = first.clone();
        store
            .call_blocking(move |c| put_levels_chunked(c, &first, 4096, None))
            .unwrap();
        // The replacement fails after half its chunks were inserted.
        let second = record(noisy_csv(2, 50_000), "b");
        let chunks = gzip(&second.csv).len().div_ceil(4096);
        assert!(chunks >= 4, "test needs several chunks, got {chunks}");
        let err = store
            .call_blocking(move |c| put_levels_chunked(c, &second, 4096, Some(chunks / 2)))
            .unwrap_err();
        assert!(err.to_string().contains("injected"));
        let back = store
            .call_blocking(|c| get_levels(c, "g"))
            .unwrap()
            .unwrap();
        assert_eq!(back, expected);
        let (uploads, stored_chunks): (i64, i64) = store
            .call_blocking(|c| {
                Ok(c.query_row(
                    "SELECT (SELECT COUNT(*) FROM level_uploads),
                            (SELECT COUNT(*) FROM level_chunks)",
                    [],
                    |r| Ok((r.get(0)?, r.get(1)?)),
                )?)
            })
            .unwrap();
        assert_eq!(uploads, 1);
        assert_eq!(
            stored_chunks as usize,
            gzip(&expected.csv).len().div_ceil(4096)
        );
    }

    #[test]
    fn a_first_upload_cut_short_leaves_nothing() {
        let store = store_with_gauge();
        let upload = record(noisy_csv(3, 50_000), "c");
        store
            .call_blocking(move |c| put_levels_chunked(c, &upload, 4096, Some(3)))
            .unwrap_err();
        assert_eq!(store.call_blocking(|c| get_levels(c, "g")).unwrap(), None);
    }

    #[test]
    fn wind_series_are_per_gauge() {
        let store = store_with_gauge();
        let wind = SeriesRecord {
            key: SeriesKey::Wind("g".into()),
            csv: b"time,u,v\n2026-01-01,1,2\n".to_vec(),
            rows: 1,
            content_hash: "h".into(),
            uploaded_at: "t".into(),
        };
        let expected = wind.clone();
        store.call_blocking(move |c| put_series(c, &wind)).unwrap();
        let back = store
            .call_blocking(|c| get_series(c, &SeriesKey::Wind("g".into())))
            .unwrap();
        assert_eq!(back, Some(expected));
        let other = store
            .call_blocking(|c| get_series(c, &SeriesKey::Wind("h".into())))
            .unwrap();
        assert_eq!(other, None);
    }
}
