//! The schema and its migrations. Version `n` is reached by applying `MIGRATIONS[..n]` in
//! order, each in its own transaction together with the version bump.

use rusqlite::{Connection, OptionalExtension, Transaction};

use super::StoreError;

/// A migration's step in Rust, run after its SQL in the same transaction.
type RustStep = fn(&Transaction<'_>) -> Result<(), StoreError>;

/// One step of the schema: SQL, then an optional step in Rust, in the same transaction.
struct Migration {
    sql: &'static str,
    then: Option<RustStep>,
}

/// Each migration; the index + 1 is the version it reaches.
const MIGRATIONS: &[Migration] = &[
    // 1: the first schema.
    Migration {
        then: None,
        sql: "
    CREATE TABLE gauges (
        id          TEXT PRIMARY KEY,
        toml        TEXT NOT NULL,
        name        TEXT NOT NULL,
        latitude    REAL NOT NULL,
        longitude   REAL NOT NULL,
        updated_at  TEXT NOT NULL
    );
    CREATE TABLE level_uploads (
        gauge_id     TEXT PRIMARY KEY REFERENCES gauges(id) ON DELETE CASCADE,
        bytes        INTEGER NOT NULL,
        readings     INTEGER NOT NULL,
        first_time   TEXT NOT NULL,
        last_time    TEXT NOT NULL,
        content_hash TEXT NOT NULL,
        chunks       INTEGER NOT NULL,
        uploaded_at  TEXT NOT NULL
    );
    CREATE TABLE level_chunks (
        gauge_id TEXT NOT NULL REFERENCES level_uploads(gauge_id) ON DELETE CASCADE,
        seq      INTEGER NOT NULL,
        gzip     BLOB NOT NULL,
        PRIMARY KEY (gauge_id, seq)
    );
    CREATE TABLE driver_series (
        kind         TEXT NOT NULL,
        gauge_id     TEXT NOT NULL DEFAULT '',
        gzip         BLOB NOT NULL,
        bytes        INTEGER NOT NULL,
        rows         INTEGER NOT NULL,
        content_hash TEXT NOT NULL,
        uploaded_at  TEXT NOT NULL,
        PRIMARY KEY (kind, gauge_id)
    );
    CREATE TABLE enso_forecasts (
        season      TEXT PRIMARY KEY,
        issued      TEXT NOT NULL,
        json        TEXT NOT NULL,
        uploaded_at TEXT NOT NULL
    );
    CREATE TABLE fitted_models (
        id            INTEGER PRIMARY KEY,
        gauge_id      TEXT NOT NULL REFERENCES gauges(id) ON DELETE CASCADE,
        model_version TEXT NOT NULL,
        fitted_at     TEXT NOT NULL,
        results_json  TEXT NOT NULL
    );
    CREATE INDEX fitted_models_by_gauge ON fitted_models (gauge_id, id);
    CREATE TABLE issued_outlooks (
        id                 INTEGER PRIMARY KEY,
        gauge_id           TEXT NOT NULL,
        season             TEXT NOT NULL,
        model_version      TEXT NOT NULL,
        driver_inputs_json TEXT NOT NULL,
        issued_at          TEXT NOT NULL,
        outlook_json       TEXT NOT NULL,
        UNIQUE (gauge_id, season, model_version)
    );
    ",
    },
    // 2: every input versioned (gauge TOMLs, level records, named driver series and
    // forecasts), gauges retired rather than deleted, fits recording the input versions.
    Migration {
        then: Some(super::versions::name_old_series),
        sql: "
    ALTER TABLE gauges ADD COLUMN retired_at TEXT;
    CREATE TABLE gauge_versions (
        id          INTEGER PRIMARY KEY,
        gauge_id    TEXT NOT NULL,
        toml        TEXT NOT NULL,
        uploaded_at TEXT NOT NULL
    );
    CREATE INDEX gauge_versions_by_gauge ON gauge_versions (gauge_id, id);
    INSERT INTO gauge_versions (gauge_id, toml, uploaded_at)
        SELECT id, toml, updated_at FROM gauges ORDER BY id;
    CREATE TABLE level_versions (
        id           INTEGER PRIMARY KEY,
        gauge_id     TEXT NOT NULL,
        bytes        INTEGER NOT NULL,
        readings     INTEGER NOT NULL,
        days         INTEGER NOT NULL,
        first_time   TEXT NOT NULL,
        last_time    TEXT NOT NULL,
        content_hash TEXT NOT NULL,
        chunks       INTEGER NOT NULL,
        uploaded_at  TEXT NOT NULL
    );
    CREATE INDEX level_versions_by_gauge ON level_versions (gauge_id, id);
    CREATE TABLE level_version_chunks (
        version_id INTEGER NOT NULL REFERENCES level_versions(id) ON DELETE CASCADE,
        seq        INTEGER NOT NULL,
        gzip       BLOB NOT NULL,
        PRIMARY KEY (version_id, seq)
    );
    INSERT INTO level_versions (gauge_id, bytes, readings, days, first_time, last_time,
                                content_hash, chunks, uploaded_at)
        SELECT gauge_id, bytes, readings, -1, first_time, last_time, content_hash, chunks,
               uploaded_at
        FROM level_uploads ORDER BY gauge_id;
    INSERT INTO level_version_chunks (version_id, seq, gzip)
        SELECT v.id, c.seq, c.gzip FROM level_chunks c JOIN level_versions v
            ON v.gauge_id = c.gauge_id;
    DROP TABLE level_chunks;
    DROP TABLE level_uploads;
    CREATE TABLE series_versions (
        id           INTEGER PRIMARY KEY,
        kind         TEXT NOT NULL,
        name         TEXT NOT NULL,
        gzip         BLOB NOT NULL,
        bytes        INTEGER NOT NULL,
        rows         INTEGER NOT NULL,
        content_hash TEXT NOT NULL,
        uploaded_at  TEXT NOT NULL
    );
    CREATE INDEX series_versions_by_name ON series_versions (kind, name, id);
    ALTER TABLE fitted_models ADD COLUMN inputs_json TEXT NOT NULL DEFAULT '{}';
    ",
    },
];

/// The schema version this program writes.
pub const SCHEMA_VERSION: i64 = MIGRATIONS.len() as i64;

/// Brings the store to [`SCHEMA_VERSION`]; refuses a store from a newer program.
pub(super) fn migrate(conn: &mut Connection) -> Result<(), StoreError> {
    conn.execute_batch("CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL);")?;
    let found: i64 = conn
        .query_row("SELECT version FROM schema_version", [], |row| row.get(0))
        .optional()?
        .unwrap_or(0);
    if found > SCHEMA_VERSION {
        return Err(StoreError::NewerSchema {
            found,
            known: SCHEMA_VERSION,
        });
    }
    for (index, step) in MIGRATIONS.iter().enumerate().skip(found as usize) {
        let tx = conn.transaction()?;
        tx.execute_batch(step.sql)?;
        if let Some(then) = step.then {
            then(&tx)?;
        }
        tx.execute("DELETE FROM schema_version", [])?;
        tx.execute(
            "INSERT INTO schema_version (version) VALUES (?1)",
            [index as i64 + 1],
        )?;
        tx.commit()?;
    }
    Ok(())
}

/// A connection at the first schema version (migration tests).
#[cfg(test)]
pub(super) mod tests_support {
    use super::*;

    pub fn first_schema() -> Connection {
        let conn = Connection::open_in_memory().unwrap();
        conn.execute_batch(MIGRATIONS[0].sql).unwrap();
        conn.execute_batch(
            "CREATE TABLE schema_version (version INTEGER NOT NULL);
             INSERT INTO schema_version VALUES (1);",
        )
        .unwrap();
        conn
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn version(conn: &Connection) -> i64 {
        conn.query_row("SELECT version FROM schema_version", [], |r| r.get(0))
            .unwrap()
    }

    #[test]
    fn migrating_twice_is_a_no_op() {
        let mut conn = Connection::open_in_memory().unwrap();
        migrate(&mut conn).unwrap();
        migrate(&mut conn).unwrap();
        assert_eq!(version(&conn), SCHEMA_VERSION);
        let rows: i64 = conn
            .query_row("SELECT COUNT(*) FROM schema_version", [], |r| r.get(0))
            .unwrap();
        assert_eq!(rows, 1);
    }

    #[test]
    fn a_newer_store_is_refused() {
        let mut conn = Connection::open_in_memory().unwrap();
        migrate(&mut conn).unwrap();
        conn.execute("UPDATE schema_version SET version = 99", [])
            .unwrap();
        assert!(matches!(
            migrate(&mut conn),
            Err(StoreError::NewerSchema { found: 99, .. })
        ));
    }
}
