//! The store: one SQLite file (WAL mode) holding gauges, uploaded data, fitted models and
//! every issued outlook.
//!
//! Water-level records are kept as the uploaded file, gzip-compressed, in chunks, rather than
//! as one row per reading. A 40-year hourly record is about 350,000 readings: as rows with a
//! key that is some 15-20 MB and a slow insert, while the compressed file is 2-3 MB, keeps
//! the exact upload for reproducible refits, and is read back whole by the ingest parser in
//! one pass (the pipeline always consumes a whole record, never a time range).
//!
//! Every write runs in one transaction: a failed write changes nothing. The connection sits
//! behind a mutex that is only ever taken inside `spawn_blocking` ([`Store::call`]), never
//! across an `.await`.

mod blobs;
mod gauges;
mod models;
mod outlooks;
mod schema;
mod series;
mod versions;

use std::path::Path;
use std::sync::{Arc, Mutex};

use rusqlite::Connection;

pub use blobs::{gunzip_all, gzip};
pub use gauges::{StoredGaugeRow, get_gauge, list_gauges, put_gauge};
pub use models::{FittedModelRecord, latest_model, put_model};
pub use outlooks::{IssuedFilter, IssuedRecord, list_issued, record_issued};
pub use schema::SCHEMA_VERSION;
pub use series::{
    LevelsRecord, SeriesKey, SeriesKind, SeriesRecord, SeriesSummary, VersionInfo, get_levels,
    get_levels_at, get_series, get_series_at_most, latest_levels_version, list_levels_versions,
    list_series, prune_gauge_versions, put_levels, put_series, series_name, series_versions,
    valid_series_name,
};
pub use versions::{get_gauge_version, latest_gauge_version, list_gauge_versions, retire_gauge};

/// Errors of the store.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// SQLite failed.
    #[error("sqlite: {0}")]
    Sqlite(#[from] rusqlite::Error),
    /// The file was written by a newer tidetally.
    #[error("store schema version {found} is newer than this program's {known}")]
    NewerSchema {
        /// Version found in the file.
        found: i64,
        /// Newest version this program knows.
        known: i64,
    },
    /// A stored blob does not decompress or a stored JSON does not parse.
    #[error("stored {what} is corrupt: {message}")]
    Corrupt {
        /// What was being read.
        what: String,
        /// The decoder's message.
        message: String,
    },
    /// The blocking task running the query was lost.
    #[error("store task: {0}")]
    Task(String),
    /// The mutex was poisoned by a panic in another store call.
    #[error("store connection poisoned by an earlier panic")]
    Poisoned,
}

/// A handle on the store, cheap to clone.
#[derive(Clone)]
pub struct Store {
    conn: Arc<Mutex<Connection>>,
}

impl Store {
    /// Opens (creating if needed) the store file, switches it to WAL mode and migrates it.
    pub fn open(path: &Path) -> Result<Self, StoreError> {
        let conn = Connection::open(path)?;
        conn.pragma_update(None, "journal_mode", "WAL")?;
        Self::init(conn)
    }

    /// An in-memory store (tests, `--db :memory:`).
    pub fn open_in_memory() -> Result<Self, StoreError> {
        Self::init(Connection::open_in_memory()?)
    }

    /// A store over an open connection, migrated (tests of migrations).
    pub fn from_connection(conn: Connection) -> Result<Self, StoreError> {
        Self::init(conn)
    }

    fn init(mut conn: Connection) -> Result<Self, StoreError> {
        conn.pragma_update(None, "foreign_keys", "ON")?;
        conn.pragma_update(None, "synchronous", "NORMAL")?;
        conn.busy_timeout(std::time::Duration::from_secs(5))?;
        schema::migrate(&mut conn)?;
        Ok(Self {
            conn: Arc::new(Mutex::new(conn)),
        })
    }

    /// Runs `f` on the connection in a blocking thread.
    pub async fn call<T, F>(&self, f: F) -> Result<T, StoreError>
    where
        T: Send + 'static,
        F: FnOnce(&mut Connection) -> Result<T, StoreError> + Send + 'static,
    {
        let conn = Arc::clone(&self.conn);
        tokio::task::spawn_blocking(move || {
            let mut guard = conn.lock().map_err(|_| StoreError::Poisoned)?;
            f(&mut guard)
        })
        .await
        .map_err(|err| StoreError::Task(err.to_string()))?
    }

    /// Runs `f` on the connection in the calling thread (startup, CLI and tests).
    pub fn call_blocking<T>(
        &self,
        f: impl FnOnce(&mut Connection) -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        let mut guard = self.conn.lock().map_err(|_| StoreError::Poisoned)?;
        f(&mut guard)
    }
}

/// The current time as RFC 3339 UTC with second precision.
pub fn now_rfc3339() -> String {
    chrono::Utc::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
}
