//! Fitted models: the serialized results of each successful refit, newest last, each with
//! the versions of the inputs it was fitted on. A fit and its issued outlooks are written in
//! one transaction.

use rusqlite::{Connection, OptionalExtension, params};

use super::StoreError;
use super::outlooks::{IssuedRecord, insert_issued};

/// A stored fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FittedModelRecord {
    /// Store id: the fit's generation (ignored on insert).
    pub id: i64,
    /// The gauge.
    pub gauge_id: String,
    /// Version string of the fit.
    pub model_version: String,
    /// Fit time (RFC 3339).
    pub fitted_at: String,
    /// The gauge's results as JSON.
    pub results_json: String,
    /// The versions of the inputs it was fitted on, as JSON.
    pub inputs_json: String,
}

/// Appends a fit and records its outlooks as issued, in one transaction; returns the fit's
/// generation (its store id).
pub fn put_model(
    conn: &mut Connection,
    model: &FittedModelRecord,
    issued: &[IssuedRecord],
) -> Result<i64, StoreError> {
    let tx = conn.transaction()?;
    tx.execute(
        "INSERT INTO fitted_models (gauge_id, model_version, fitted_at, results_json, inputs_json)
         VALUES (?1, ?2, ?3, ?4, ?5)",
        params![
            model.gauge_id,
            model.model_version,
            model.fitted_at,
            model.results_json,
            model.inputs_json
        ],
    )?;
    let generation = tx.last_insert_rowid();
    insert_issued(&tx, issued)?;
    tx.commit()?;
    Ok(generation)
}

/// The newest fit of a gauge.
pub fn latest_model(
    conn: &Connection,
    gauge_id: &str,
) -> Result<Option<FittedModelRecord>, StoreError> {
    Ok(conn
        .query_row(
            "SELECT id, gauge_id, model_version, fitted_at, results_json, inputs_json
             FROM fitted_models WHERE gauge_id = ?1 ORDER BY id DESC LIMIT 1",
            [gauge_id],
            |row| {
                Ok(FittedModelRecord {
                    id: row.get(0)?,
                    gauge_id: row.get(1)?,
                    model_version: row.get(2)?,
                    fitted_at: row.get(3)?,
                    results_json: row.get(4)?,
                    inputs_json: row.get(5)?,
                })
            },
        )
        .optional()?)
}
