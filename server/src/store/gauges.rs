//! Gauge rows: the validated TOML text and the metadata the list pages need.

use rusqlite::{Connection, OptionalExtension, params};

use super::StoreError;

/// A stored gauge.
#[derive(Debug, Clone, PartialEq)]
pub struct StoredGaugeRow {
    /// Gauge id.
    pub id: String,
    /// The gauge TOML as uploaded (already validated).
    pub toml: String,
    /// Human name.
    pub name: String,
    /// Degrees north.
    pub latitude: f64,
    /// Degrees east.
    pub longitude: f64,
    /// Last change (RFC 3339).
    pub updated_at: String,
}

/// Inserts or replaces a gauge.
pub fn put_gauge(conn: &mut Connection, gauge: &StoredGaugeRow) -> Result<(), StoreError> {
    let tx = conn.transaction()?;
    tx.execute(
        "INSERT INTO gauges (id, toml, name, latitude, longitude, updated_at)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6)
         ON CONFLICT (id) DO UPDATE SET toml = ?2, name = ?3, latitude = ?4, longitude = ?5,
                                        updated_at = ?6, retired_at = NULL",
        params![
            gauge.id,
            gauge.toml,
            gauge.name,
            gauge.latitude,
            gauge.longitude,
            gauge.updated_at
        ],
    )?;
    tx.execute(
        "INSERT INTO gauge_versions (gauge_id, toml, uploaded_at) VALUES (?1, ?2, ?3)",
        params![gauge.id, gauge.toml, gauge.updated_at],
    )?;
    tx.commit()?;
    Ok(())
}

fn from_row(row: &rusqlite::Row<'_>) -> rusqlite::Result<StoredGaugeRow> {
    Ok(StoredGaugeRow {
        id: row.get(0)?,
        toml: row.get(1)?,
        name: row.get(2)?,
        latitude: row.get(3)?,
        longitude: row.get(4)?,
        updated_at: row.get(5)?,
    })
}

/// All gauges not retired, ordered by id.
pub fn list_gauges(conn: &Connection) -> Result<Vec<StoredGaugeRow>, StoreError> {
    let mut stmt = conn.prepare(
        "SELECT id, toml, name, latitude, longitude, updated_at FROM gauges
         WHERE retired_at IS NULL ORDER BY id",
    )?;
    let rows = stmt.query_map([], from_row)?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

/// One gauge, retired or not.
pub fn get_gauge(conn: &Connection, id: &str) -> Result<Option<StoredGaugeRow>, StoreError> {
    Ok(conn
        .query_row(
            "SELECT id, toml, name, latitude, longitude, updated_at FROM gauges WHERE id = ?1",
            [id],
            from_row,
        )
        .optional()?)
}
