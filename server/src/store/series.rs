//! Uploaded data, every upload kept as a version: water-level records (gzip chunks per
//! version) and named driver series (ENSO, RMM, wind and ENSO forecasts, each a kind and a
//! name, versions newest last). A gauge's TOML chooses series by name
//! ([`series_name`]); nothing is shared unless gauges name the same series.

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
/// Stores a new version of a gauge's water-level record (the previous versions are kept);
/// returns the version id.
pub fn put_levels(conn: &mut Connection, levels: &LevelsRecord) -> Result<i64, StoreError> {
    put_levels_chunked(conn, levels, LEVEL_CHUNK_BYTES, None)
}

/// The write behind [`put_levels`]; `fail_after` injects an error after that many chunk
/// inserts (to test that a write cut short changes nothing).
fn put_levels_chunked(
    conn: &mut Connection,
    levels: &LevelsRecord,
    chunk_bytes: usize,
    fail_after: Option<usize>,
) -> Result<i64, StoreError> {
    let compressed = gzip(&levels.csv);
    let chunks: Vec<&[u8]> = compressed.chunks(chunk_bytes).collect();
    let tx = conn.transaction()?;
    tx.execute(
        "INSERT INTO level_versions (gauge_id, bytes, readings, days, first_time, last_time,
                                     content_hash, chunks, uploaded_at)
         VALUES (?1, ?2, ?3, -1, ?4, ?5, ?6, ?7, ?8)",
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
    let version = tx.last_insert_rowid();
    {
        let mut insert = tx.prepare(
            "INSERT INTO level_version_chunks (version_id, seq, gzip) VALUES (?1, ?2, ?3)",
        )?;
        for (seq, chunk) in chunks.iter().enumerate() {
            if fail_after == Some(seq) {
                return Err(StoreError::Task("injected failure mid-upload".into()));
            }
            insert.execute(params![version, seq as i64, chunk])?;
        }
    }
    tx.commit()?;
    Ok(version)
}

/// The newest version id of a gauge's water-level record.
pub fn latest_levels_version(conn: &Connection, gauge_id: &str) -> Result<Option<i64>, StoreError> {
    Ok(conn
        .query_row(
            "SELECT MAX(id) FROM level_versions WHERE gauge_id = ?1",
            [gauge_id],
            |row| row.get::<_, Option<i64>>(0),
        )
        .optional()?
        .flatten())
}

/// A gauge's newest water-level record, if one was uploaded.
pub fn get_levels(conn: &Connection, gauge_id: &str) -> Result<Option<LevelsRecord>, StoreError> {
    match latest_levels_version(conn, gauge_id)? {
        Some(version) => get_levels_at(conn, gauge_id, version),
        None => Ok(None),
    }
}

/// One stored version of a gauge's water-level record.
pub fn get_levels_at(
    conn: &Connection,
    gauge_id: &str,
    version: i64,
) -> Result<Option<LevelsRecord>, StoreError> {
    let head = conn
        .query_row(
            "SELECT readings, first_time, last_time, content_hash, chunks, uploaded_at
             FROM level_versions WHERE gauge_id = ?1 AND id = ?2",
            params![gauge_id, version],
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
        conn.prepare("SELECT gzip FROM level_version_chunks WHERE version_id = ?1 ORDER BY seq")?;
    let mut compressed = Vec::new();
    let mut count = 0;
    for chunk in stmt.query_map([version], |row| row.get::<_, Vec<u8>>(0))? {
        compressed.extend_from_slice(&chunk?);
        count += 1;
    }
    let what = format!("water levels of gauge {gauge_id} (version {version})");
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

/// One stored version of an input, as listed.
#[derive(Debug, Clone, PartialEq)]
pub struct VersionInfo {
    /// Version id (store-wide, increasing with time).
    pub version: i64,
    /// Upload time (RFC 3339).
    pub uploaded_at: String,
    /// Data rows (0 for a TOML or a forecast).
    pub rows: u64,
    /// Strong hash of the content.
    pub content_hash: String,
}

/// Every stored version of a gauge's water-level record, oldest first.
pub fn list_levels_versions(
    conn: &Connection,
    gauge_id: &str,
) -> Result<Vec<VersionInfo>, StoreError> {
    let mut stmt = conn.prepare(
        "SELECT id, uploaded_at, readings, content_hash FROM level_versions
         WHERE gauge_id = ?1 ORDER BY id",
    )?;
    let rows = stmt.query_map([gauge_id], |row| {
        Ok(VersionInfo {
            version: row.get(0)?,
            uploaded_at: row.get(1)?,
            rows: row.get::<_, i64>(2)? as u64,
            content_hash: row.get(3)?,
        })
    })?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

/// Deletes all but the newest `keep` versions of a gauge's level record and TOML (and never
/// the versions listed in `pinned`, e.g. those the serving model was fitted on). Returns how
/// many versions were deleted.
pub fn prune_gauge_versions(
    conn: &mut Connection,
    gauge_id: &str,
    keep: usize,
    pinned: &[i64],
) -> Result<usize, StoreError> {
    let tx = conn.transaction()?;
    let mut deleted = 0;
    for table in ["level_versions", "gauge_versions"] {
        let ids: Vec<i64> = {
            let mut stmt = tx.prepare(&format!(
                "SELECT id FROM {table} WHERE gauge_id = ?1 ORDER BY id DESC"
            ))?;
            let ids = stmt.query_map([gauge_id], |row| row.get(0))?;
            ids.collect::<Result<Vec<_>, _>>()?
        };
        for id in ids.into_iter().skip(keep.max(1)) {
            if !pinned.contains(&id) {
                deleted += tx.execute(&format!("DELETE FROM {table} WHERE id = ?1"), [id])?;
            }
        }
    }
    tx.commit()?;
    Ok(deleted)
}

/// The kinds of named driver series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum SeriesKind {
    /// Monthly ENSO index CSV.
    Enso,
    /// Daily RMM index CSV.
    Rmm,
    /// Wind CSV (daily or hourly).
    Wind,
    /// ENSO forecast JSON, one target season per version.
    EnsoForecast,
}

impl SeriesKind {
    /// The kind as stored and as written in paths.
    pub fn as_str(self) -> &'static str {
        match self {
            SeriesKind::Enso => "enso",
            SeriesKind::Rmm => "rmm",
            SeriesKind::Wind => "wind",
            SeriesKind::EnsoForecast => "enso_forecast",
        }
    }

    /// The kind of a stored name.
    pub fn parse(text: &str) -> Option<Self> {
        [Self::Enso, Self::Rmm, Self::Wind, Self::EnsoForecast]
            .into_iter()
            .find(|k| k.as_str() == text)
    }
}

/// A named driver series: its kind and name, e.g. `enso/enso-monthly`.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
pub struct SeriesKey {
    /// The kind.
    pub kind: SeriesKind,
    /// The name (the file stem a gauge TOML gives, see [`series_name`]).
    pub name: String,
}

impl SeriesKey {
    /// A key.
    pub fn new(kind: SeriesKind, name: impl Into<String>) -> Self {
        Self {
            kind,
            name: name.into(),
        }
    }

    /// A name for messages, e.g. `enso/enso-monthly`.
    pub fn describe(&self) -> String {
        format!("{}/{}", self.kind.as_str(), self.name)
    }
}

/// The series name a gauge TOML's `[drivers]` entry chooses: the file name without its
/// folders, a `.gz` suffix and one more extension (`../drivers/enso-monthly.csv` ->
/// `enso-monthly`).
pub fn series_name(path: &str) -> String {
    let file = path.rsplit(['/', '\\']).next().unwrap_or(path);
    let file = file.strip_suffix(".gz").unwrap_or(file);
    match file.rsplit_once('.') {
        Some((stem, _)) if !stem.is_empty() => stem.to_owned(),
        _ => file.to_owned(),
    }
}

/// Whether `name` can name a series: 1 to 64 letters, digits, `-`, `_` or `.`, starting
/// with a letter or digit.
pub fn valid_series_name(name: &str) -> bool {
    !name.is_empty()
        && name.len() <= 64
        && name.starts_with(|c: char| c.is_ascii_alphanumeric())
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.'))
}

/// One version of a named driver series.
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesRecord {
    /// Which series.
    pub key: SeriesKey,
    /// The CSV (or JSON) text.
    pub csv: Vec<u8>,
    /// Data rows.
    pub rows: u64,
    /// Strong hash of `csv`.
    pub content_hash: String,
    /// Upload time (RFC 3339).
    pub uploaded_at: String,
}

/// Stores a new version of a series; returns its version id.
pub fn put_series(conn: &mut Connection, series: &SeriesRecord) -> Result<i64, StoreError> {
    let tx = conn.transaction()?;
    insert_series(&tx, series, &gzip(&series.csv))?;
    let version = tx.last_insert_rowid();
    tx.commit()?;
    Ok(version)
}

pub(super) fn insert_series(
    conn: &Connection,
    series: &SeriesRecord,
    compressed: &[u8],
) -> Result<(), StoreError> {
    conn.execute(
        "INSERT INTO series_versions (kind, name, gzip, bytes, rows, content_hash, uploaded_at)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
        params![
            series.key.kind.as_str(),
            series.key.name,
            compressed,
            series.csv.len() as i64,
            series.rows as i64,
            series.content_hash,
            series.uploaded_at
        ],
    )?;
    Ok(())
}

fn series_from_row(
    key: &SeriesKey,
    row: (i64, Vec<u8>, i64, String, String),
) -> Result<(i64, SeriesRecord), StoreError> {
    let (version, blob, rows, content_hash, uploaded_at) = row;
    Ok((
        version,
        SeriesRecord {
            csv: gunzip_all(&blob, &format!("driver series {}", key.describe()))?,
            key: key.clone(),
            rows: rows as u64,
            content_hash,
            uploaded_at,
        },
    ))
}

/// Every version of a series, oldest first, with its version id.
pub fn series_versions(
    conn: &Connection,
    key: &SeriesKey,
) -> Result<Vec<(i64, SeriesRecord)>, StoreError> {
    let mut stmt = conn.prepare(
        "SELECT id, gzip, rows, content_hash, uploaded_at FROM series_versions
         WHERE kind = ?1 AND name = ?2 ORDER BY id",
    )?;
    let rows = stmt.query_map(params![key.kind.as_str(), key.name], |row| {
        Ok((
            row.get(0)?,
            row.get(1)?,
            row.get(2)?,
            row.get(3)?,
            row.get(4)?,
        ))
    })?;
    let rows = rows.collect::<Result<Vec<_>, _>>()?;
    rows.into_iter().map(|r| series_from_row(key, r)).collect()
}

/// The newest version of a series, with its version id.
pub fn get_series(
    conn: &Connection,
    key: &SeriesKey,
) -> Result<Option<(i64, SeriesRecord)>, StoreError> {
    get_series_at_most(conn, key, None)
}

/// The newest version of a series no newer than `limit` (any version when `None`), with its
/// version id.
pub fn get_series_at_most(
    conn: &Connection,
    key: &SeriesKey,
    limit: Option<i64>,
) -> Result<Option<(i64, SeriesRecord)>, StoreError> {
    let row = conn
        .query_row(
            "SELECT id, gzip, rows, content_hash, uploaded_at FROM series_versions
             WHERE kind = ?1 AND name = ?2 AND (?3 IS NULL OR id <= ?3)
             ORDER BY id DESC LIMIT 1",
            params![key.kind.as_str(), key.name, limit],
            |row| {
                Ok((
                    row.get(0)?,
                    row.get(1)?,
                    row.get(2)?,
                    row.get(3)?,
                    row.get(4)?,
                ))
            },
        )
        .optional()?;
    row.map(|r| series_from_row(key, r)).transpose()
}

/// One stored series with its versions, as listed.
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesSummary {
    /// Which series.
    pub key: SeriesKey,
    /// Its versions, oldest first.
    pub versions: Vec<VersionInfo>,
}

/// Every stored series, by kind and name.
pub fn list_series(conn: &Connection) -> Result<Vec<SeriesSummary>, StoreError> {
    let mut stmt = conn.prepare(
        "SELECT kind, name, id, uploaded_at, rows, content_hash FROM series_versions
         ORDER BY kind, name, id",
    )?;
    let rows = stmt.query_map([], |row| {
        Ok((
            row.get::<_, String>(0)?,
            row.get::<_, String>(1)?,
            VersionInfo {
                version: row.get(2)?,
                uploaded_at: row.get(3)?,
                rows: row.get::<_, i64>(4)? as u64,
                content_hash: row.get(5)?,
            },
        ))
    })?;
    let mut out: Vec<SeriesSummary> = Vec::new();
    for row in rows {
        let (kind, name, info) = row?;
        let Some(kind) = SeriesKind::parse(&kind) else {
            continue;
        };
        match out.last_mut() {
            Some(last) if last.key.kind == kind && last.key.name == name => {
                last.versions.push(info);
            }
            _ => out.push(SeriesSummary {
                key: SeriesKey::new(kind, name),
                versions: vec![info],
            }),
        }
    }
    Ok(out)
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
                    "SELECT (SELECT COUNT(*) FROM level_versions),
                            (SELECT COUNT(*) FROM level_version_chunks)",
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
    fn series_are_named_and_versioned() {
        let store = store_with_gauge();
        let version = |csv: &str| SeriesRecord {
            key: SeriesKey::new(SeriesKind::Wind, "g-wind"),
            csv: csv.as_bytes().to_vec(),
            rows: 1,
            content_hash: csv.into(),
            uploaded_at: "t".into(),
        };
        let (a, b) = (
            version("time,u,v\n2026-01-01,1,2\n"),
            version("time,u,v\n2026-01-01,3,4\n"),
        );
        let expected = b.clone();
        store.call_blocking(move |c| put_series(c, &a)).unwrap();
        store.call_blocking(move |c| put_series(c, &b)).unwrap();
        let key = SeriesKey::new(SeriesKind::Wind, "g-wind");
        let k = key.clone();
        let (_, newest) = store
            .call_blocking(move |c| get_series(c, &k))
            .unwrap()
            .unwrap();
        assert_eq!(newest, expected);
        let k = key.clone();
        assert_eq!(
            store
                .call_blocking(move |c| series_versions(c, &k))
                .unwrap()
                .len(),
            2
        );
        let other = store
            .call_blocking(|c| get_series(c, &SeriesKey::new(SeriesKind::Wind, "h-wind")))
            .unwrap();
        assert_eq!(other, None);
        let listed = store.call_blocking(|c| list_series(c)).unwrap();
        assert_eq!(listed.len(), 1);
        assert_eq!(listed[0].versions.len(), 2);
    }

    #[test]
    fn a_toml_path_names_its_series_by_file_stem() {
        assert_eq!(series_name("../drivers/enso-monthly.csv"), "enso-monthly");
        assert_eq!(series_name("port-tamsin-wind.csv.gz"), "port-tamsin-wind");
        assert_eq!(
            series_name("enso-forecast-2026-DJF.json"),
            "enso-forecast-2026-DJF"
        );
        assert_eq!(series_name("plain"), "plain");
        assert!(valid_series_name("enso-monthly") && !valid_series_name("-x"));
        assert!(!valid_series_name("a/b") && !valid_series_name(""));
    }
}
