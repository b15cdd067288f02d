//! Versions of a gauge's TOML, retiring gauges, and the migration that gave the shared driver
//! series of the first schema their names.

use std::collections::BTreeSet;

use rusqlite::{Connection, OptionalExtension, Transaction, params};

use super::series::{SeriesKey, SeriesKind, SeriesRecord, VersionInfo, insert_series, series_name};
use super::{StoreError, gzip};

/// Every stored version of a gauge's TOML, oldest first.
pub fn list_gauge_versions(
    conn: &Connection,
    gauge_id: &str,
) -> Result<Vec<VersionInfo>, StoreError> {
    let mut stmt = conn.prepare(
        "SELECT id, uploaded_at, toml FROM gauge_versions WHERE gauge_id = ?1 ORDER BY id",
    )?;
    let rows = stmt.query_map([gauge_id], |row| {
        let toml: String = row.get(2)?;
        Ok(VersionInfo {
            version: row.get(0)?,
            uploaded_at: row.get(1)?,
            rows: 0,
            content_hash: crate::etag::etag_of(toml.as_bytes()),
        })
    })?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

/// One stored version of a gauge's TOML.
pub fn get_gauge_version(
    conn: &Connection,
    gauge_id: &str,
    version: i64,
) -> Result<Option<String>, StoreError> {
    Ok(conn
        .query_row(
            "SELECT toml FROM gauge_versions WHERE gauge_id = ?1 AND id = ?2",
            params![gauge_id, version],
            |row| row.get(0),
        )
        .optional()?)
}

/// The newest version id of a gauge's TOML.
pub fn latest_gauge_version(conn: &Connection, gauge_id: &str) -> Result<Option<i64>, StoreError> {
    Ok(conn
        .query_row(
            "SELECT MAX(id) FROM gauge_versions WHERE gauge_id = ?1",
            [gauge_id],
            |row| row.get::<_, Option<i64>>(0),
        )
        .optional()?
        .flatten())
}

/// Retires a gauge: it leaves the lists, its data stay (a new TOML upload brings it back).
pub fn retire_gauge(conn: &mut Connection, gauge_id: &str, at: &str) -> Result<bool, StoreError> {
    let n = conn.execute(
        "UPDATE gauges SET retired_at = ?2 WHERE id = ?1 AND retired_at IS NULL",
        params![gauge_id, at],
    )?;
    Ok(n > 0)
}

/// The series names the gauges' TOMLs choose for a `[drivers]` key.
fn chosen_names(gauges: &[(String, toml::Table)], key: &str) -> BTreeSet<String> {
    gauges
        .iter()
        .filter_map(|(_, t)| t.get("drivers")?.get(key)?.as_str().map(series_name))
        .collect()
}

/// Migration 2: the first schema kept one ENSO, one RMM and one forecast per season for the
/// whole service and a wind per gauge. Each is copied, as a first version, under every name
/// the stored gauge TOMLs choose for it (so every gauge keeps exactly the data it used), or
/// under its kind's name when no gauge chooses one; then the old tables go.
pub(super) fn name_old_series(tx: &Transaction<'_>) -> Result<(), StoreError> {
    let gauges: Vec<(String, toml::Table)> = {
        let mut stmt = tx.prepare("SELECT id, toml FROM gauges ORDER BY id")?;
        let rows = stmt.query_map([], |row| {
            Ok((row.get::<_, String>(0)?, row.get::<_, String>(1)?))
        })?;
        rows.collect::<Result<Vec<_>, _>>()?
            .into_iter()
            .map(|(id, text)| (id, text.parse::<toml::Table>().unwrap_or_default()))
            .collect()
    };
    type OldSeries = (String, String, Vec<u8>, i64, i64, String, String);
    let old: Vec<OldSeries> = {
        let mut stmt = tx.prepare(
            "SELECT kind, gauge_id, gzip, bytes, rows, content_hash, uploaded_at
             FROM driver_series ORDER BY kind, gauge_id",
        )?;
        let rows = stmt.query_map([], |r| {
            Ok((
                r.get(0)?,
                r.get(1)?,
                r.get(2)?,
                r.get(3)?,
                r.get(4)?,
                r.get(5)?,
                r.get(6)?,
            ))
        })?;
        rows.collect::<Result<Vec<_>, _>>()?
    };
    for (kind_text, gauge, blob, bytes, rows, content_hash, uploaded_at) in old {
        let Some(kind) = SeriesKind::parse(&kind_text) else {
            continue;
        };
        let names: BTreeSet<String> = if kind == SeriesKind::Wind {
            let own = gauges
                .iter()
                .find(|(id, _)| *id == gauge)
                .map(|(_, t)| chosen_names(&[(gauge.clone(), t.clone())], "wind"))
                .unwrap_or_default();
            if own.is_empty() {
                BTreeSet::from([gauge.clone()])
            } else {
                own
            }
        } else {
            let chosen = chosen_names(&gauges, kind.as_str());
            if chosen.is_empty() {
                BTreeSet::from([kind_text.clone()])
            } else {
                chosen
            }
        };
        for name in names {
            tx.execute(
                "INSERT INTO series_versions (kind, name, gzip, bytes, rows, content_hash,
                                              uploaded_at)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
                params![
                    kind.as_str(),
                    name,
                    blob,
                    bytes,
                    rows,
                    content_hash,
                    uploaded_at
                ],
            )?;
        }
    }
    let forecasts: Vec<(String, String)> = {
        let mut stmt = tx
            .prepare("SELECT json, uploaded_at FROM enso_forecasts ORDER BY uploaded_at, season")?;
        let rows = stmt.query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?;
        rows.collect::<Result<Vec<_>, _>>()?
    };
    let mut names = chosen_names(&gauges, "enso_forecast");
    if names.is_empty() {
        names.insert("enso-forecast".to_owned());
    }
    for (json, uploaded_at) in forecasts {
        for name in &names {
            let record = SeriesRecord {
                key: SeriesKey::new(SeriesKind::EnsoForecast, name.clone()),
                content_hash: crate::etag::etag_of(json.as_bytes()),
                csv: json.clone().into_bytes(),
                rows: 0,
                uploaded_at: uploaded_at.clone(),
            };
            insert_series(tx, &record, &gzip(&record.csv))?;
        }
    }
    tx.execute_batch("DROP TABLE driver_series; DROP TABLE enso_forecasts;")?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::schema::tests_support::first_schema;
    use super::super::{Store, get_levels, get_series};
    use super::*;

    #[test]
    fn a_first_schema_store_migrates_with_every_gauge_keeping_its_data() {
        let conn = first_schema();
        let toml = |id: &str, enso: &str| {
            format!(
                "id = \"{id}\"\n[drivers]\nenso = \"../drivers/{enso}.csv\"\nwind = \"{id}-wind.csv\"\n"
            )
        };
        for (id, enso) in [("a", "enso-monthly"), ("b", "enso-other")] {
            conn.execute(
                "INSERT INTO gauges (id, toml, name, latitude, longitude, updated_at)
                 VALUES (?1, ?2, ?1, 0, 0, 't')",
                params![id, toml(id, enso)],
            )
            .unwrap();
        }
        let csv = b"time,level\n2020-01-01T00:00:00Z,1.0\n";
        conn.execute_batch("INSERT INTO level_uploads VALUES ('a', 37, 1, 'f', 'l', 'h', 1, 't');")
            .unwrap();
        conn.execute("INSERT INTO level_chunks VALUES ('a', 0, ?1)", [gzip(csv)])
            .unwrap();
        for (kind, gauge, text) in [
            ("enso", "", "month,anomaly\n2020-01,0.5\n"),
            ("wind", "a", "time,u,v\n2020-01-01,1,2\n"),
        ] {
            conn.execute(
                "INSERT INTO driver_series VALUES (?1, ?2, ?3, ?4, 1, 'h', 't')",
                params![kind, gauge, gzip(text.as_bytes()), text.len() as i64],
            )
            .unwrap();
        }
        let store = Store::from_connection(conn).unwrap();
        let enso = |name: &str| {
            let key = SeriesKey::new(SeriesKind::Enso, name);
            store
                .call_blocking(move |c| get_series(c, &key))
                .unwrap()
                .map(|(_, s)| s.csv)
        };
        assert_eq!(
            enso("enso-monthly").as_deref(),
            Some(&b"month,anomaly\n2020-01,0.5\n"[..])
        );
        assert_eq!(enso("enso-other"), enso("enso-monthly"));
        let wind = store
            .call_blocking(|c| get_series(c, &SeriesKey::new(SeriesKind::Wind, "a-wind")))
            .unwrap();
        assert!(wind.is_some());
        let levels = store
            .call_blocking(|c| get_levels(c, "a"))
            .unwrap()
            .unwrap();
        assert_eq!(levels.csv, csv);
        let versions = store
            .call_blocking(|c| list_gauge_versions(c, "b"))
            .unwrap();
        assert_eq!(versions.len(), 1);
    }
}
