//! Issued outlooks: each outlook served for a season, with the model version, the driver
//! inputs and the issue time, kept so it can be verified once the season is over.

use rusqlite::{Connection, params};

use super::StoreError;

/// One issued outlook.
#[derive(Debug, Clone, PartialEq)]
pub struct IssuedRecord {
    /// Store id (ignored on insert).
    pub id: i64,
    /// The gauge.
    pub gauge_id: String,
    /// Season label.
    pub season: String,
    /// Model version.
    pub model_version: String,
    /// Driver inputs as JSON.
    pub driver_inputs_json: String,
    /// Issue time (RFC 3339).
    pub issued_at: String,
    /// The outlook as served, JSON.
    pub outlook_json: String,
}

/// Records issued outlooks; an outlook already recorded for the same gauge, season and model
/// version keeps its first issue time. Returns how many were new.
pub fn record_issued(conn: &mut Connection, issued: &[IssuedRecord]) -> Result<usize, StoreError> {
    let tx = conn.transaction()?;
    let new = insert_issued(&tx, issued)?;
    tx.commit()?;
    Ok(new)
}

/// The inserts of [`record_issued`], inside the caller's transaction.
pub(super) fn insert_issued(
    tx: &rusqlite::Transaction<'_>,
    issued: &[IssuedRecord],
) -> Result<usize, StoreError> {
    let mut new = 0;
    {
        let mut insert = tx.prepare(
            "INSERT OR IGNORE INTO issued_outlooks
                 (gauge_id, season, model_version, driver_inputs_json, issued_at, outlook_json)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
        )?;
        for record in issued {
            new += insert.execute(params![
                record.gauge_id,
                record.season,
                record.model_version,
                record.driver_inputs_json,
                record.issued_at,
                record.outlook_json
            ])?;
        }
    }
    Ok(new)
}

/// Which issued outlooks to list.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct IssuedFilter {
    /// Only this gauge.
    pub gauge: Option<String>,
    /// Only this season label.
    pub season: Option<String>,
    /// At most this many (newest first).
    pub limit: u32,
}

/// Issued outlooks, newest first.
pub fn list_issued(
    conn: &Connection,
    filter: &IssuedFilter,
) -> Result<Vec<IssuedRecord>, StoreError> {
    let mut stmt = conn.prepare(
        "SELECT id, gauge_id, season, model_version, driver_inputs_json, issued_at, outlook_json
         FROM issued_outlooks
         WHERE (?1 IS NULL OR gauge_id = ?1) AND (?2 IS NULL OR season = ?2)
         ORDER BY id DESC LIMIT ?3",
    )?;
    let rows = stmt.query_map(
        params![filter.gauge, filter.season, i64::from(filter.limit)],
        |row| {
            Ok(IssuedRecord {
                id: row.get(0)?,
                gauge_id: row.get(1)?,
                season: row.get(2)?,
                model_version: row.get(3)?,
                driver_inputs_json: row.get(4)?,
                issued_at: row.get(5)?,
                outlook_json: row.get(6)?,
            })
        },
    )?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

#[cfg(test)]
mod tests {
    use super::super::Store;
    use super::*;

    fn issued(gauge: &str, season: &str, version: &str, at: &str) -> IssuedRecord {
        IssuedRecord {
            id: 0,
            gauge_id: gauge.into(),
            season: season.into(),
            model_version: version.into(),
            driver_inputs_json: "{}".into(),
            issued_at: at.into(),
            outlook_json: "{}".into(),
        }
    }

    #[test]
    fn reissuing_keeps_the_first_issue_time() {
        let store = Store::open_in_memory().unwrap();
        let first = vec![
            issued("a", "2026-DJF", "v1", "t1"),
            issued("b", "2026-DJF", "v1", "t1"),
        ];
        assert_eq!(
            store.call_blocking(|c| record_issued(c, &first)).unwrap(),
            2
        );
        let again = vec![
            issued("a", "2026-DJF", "v1", "t2"),
            issued("a", "2026-DJF", "v2", "t2"),
        ];
        assert_eq!(
            store.call_blocking(|c| record_issued(c, &again)).unwrap(),
            1
        );
        let filter = IssuedFilter {
            gauge: Some("a".into()),
            season: None,
            limit: 10,
        };
        let listed = store.call_blocking(|c| list_issued(c, &filter)).unwrap();
        let summary: Vec<_> = listed
            .iter()
            .map(|r| (r.model_version.as_str(), r.issued_at.as_str()))
            .collect();
        assert_eq!(summary, vec![("v2", "t2"), ("v1", "t1")]);
    }
}
