//! Fitted models: the serialized results of each successful refit, newest last.

use rusqlite::{Connection, OptionalExtension, params};

use super::StoreError;

/// A stored fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FittedModelRecord {
    /// The gauge.
    pub gauge_id: String,
    /// Version string of the fit.
    pub model_version: String,
    /// Fit time (RFC 3339).
    pub fitted_at: String,
    /// The gauge's results as JSON.
    pub results_json: String,
}

/// Appends a fit.
pub fn put_model(conn: &mut Connection, model: &FittedModelRecord) -> Result<(), StoreError> {
    let tx = conn.transaction()?;
    tx.execute(
        "INSERT INTO fitted_models (gauge_id, model_version, fitted_at, results_json)
         VALUES (?1, ?2, ?3, ?4)",
        params![
            model.gauge_id,
            model.model_version,
            model.fitted_at,
            model.results_json
        ],
    )?;
    tx.commit()?;
    Ok(())
}

/// The newest fit of a gauge.
pub fn latest_model(
    conn: &Connection,
    gauge_id: &str,
) -> Result<Option<FittedModelRecord>, StoreError> {
    Ok(conn
        .query_row(
            "SELECT gauge_id, model_version, fitted_at, results_json FROM fitted_models
             WHERE gauge_id = ?1 ORDER BY id DESC LIMIT 1",
            [gauge_id],
            |row| {
                Ok(FittedModelRecord {
                    gauge_id: row.get(0)?,
                    model_version: row.get(1)?,
                    fitted_at: row.get(2)?,
                    results_json: row.get(3)?,
                })
            },
        )
        .optional()?)
}
