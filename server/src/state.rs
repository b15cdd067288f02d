//! The shared state of the service and how it is filled: the store, the catalog of prepared
//! per-gauge results, and the startup load (seeding an empty store from a data folder).

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;

use rusqlite::Connection;
use tidetally_model::fit::{GaugeToml, TextSource};
use tokio::sync::Semaphore;

use crate::api;
use crate::auth::Token;
use crate::catalog::{Catalog, GaugeEntry, SerializedBody, ServedModel};
use crate::etag::etag_of;
use crate::pipeline::{self, GaugeInputs, GaugeResults, PipelineError, StoredForecast};
use crate::store::{self, SeriesKey, SeriesRecord, Store, StoreError, StoredGaugeRow};
use crate::upload::{self, CsvKind, UploadError};

/// Shared by every request handler.
pub struct AppState {
    /// The store.
    pub store: Store,
    /// What is being served.
    pub catalog: Catalog,
    /// The write token; `None` disables writes.
    pub token: Option<Token>,
    /// `max-age` of read responses.
    pub cache_max_age: Duration,
    /// Bounds concurrent pipeline runs (fits are CPU-heavy; 2 cores are shared).
    pub pipeline_permits: Semaphore,
}

impl AppState {
    /// State over an open store, with nothing loaded yet.
    pub fn new(store: Store, token: Option<Token>, cache_max_age: Duration) -> Arc<Self> {
        Arc::new(Self {
            store,
            catalog: Catalog::default(),
            token,
            cache_max_age,
            pipeline_permits: Semaphore::new(1),
        })
    }
}

/// Errors while seeding the store from a data folder.
#[derive(Debug, thiserror::Error)]
pub enum SeedError {
    /// A file could not be read.
    #[error("{path}: {error}")]
    Read {
        /// The file.
        path: PathBuf,
        /// The I/O error.
        error: std::io::Error,
    },
    /// A file failed its check.
    #[error("{path}: {problem}")]
    Invalid {
        /// The file.
        path: PathBuf,
        /// What is wrong.
        problem: UploadError,
    },
    /// The store failed.
    #[error(transparent)]
    Store(#[from] StoreError),
}

/// One gauge of a data folder, read and checked, ready to store.
struct SeedGauge {
    record: StoredGaugeRow,
    levels: store::LevelsRecord,
    series: Vec<SeriesRecord>,
    forecast: Option<(api::EnsoForecast, String)>,
}

fn read_file(path: &Path) -> Result<Vec<u8>, SeedError> {
    std::fs::read(path).map_err(|error| SeedError::Read {
        path: path.to_owned(),
        error,
    })
}

/// Reads a gauge TOML and the files it names, and checks them as uploads are checked.
fn read_seed_gauge(toml_path: &Path, now: &str) -> Result<SeedGauge, SeedError> {
    let invalid = |path: &Path, problem| SeedError::Invalid {
        path: path.to_owned(),
        problem,
    };
    let text = String::from_utf8_lossy(&read_file(toml_path)?).into_owned();
    let meta = upload::parse_gauge_toml(&text).map_err(|e| invalid(toml_path, e))?;
    let base = toml_path.parent().unwrap_or(Path::new("."));
    let levels_path = base.join(&meta.levels_file);
    let csv = upload::decode_body(
        "water levels",
        &read_file(&levels_path)?,
        upload::MAX_DECOMPRESSED_BYTES,
    )
    .map_err(|e| invalid(&levels_path, e))?;
    let summary = upload::scan_csv(CsvKind::Levels, &csv).map_err(|e| invalid(&levels_path, e))?;
    let levels = store::LevelsRecord {
        gauge_id: meta.id.clone(),
        content_hash: etag_of(&csv),
        csv,
        readings: summary.rows,
        first_time: summary.first,
        last_time: summary.last,
        uploaded_at: now.to_owned(),
    };
    let wanted = [
        (meta.drivers.enso.as_ref(), SeriesKey::Enso, CsvKind::Enso),
        (meta.drivers.rmm.as_ref(), SeriesKey::Rmm, CsvKind::Rmm),
        (
            meta.drivers.wind.as_ref(),
            SeriesKey::Wind(meta.id.clone()),
            CsvKind::Wind,
        ),
    ];
    let mut series = Vec::new();
    for (file, key, kind) in wanted {
        let Some(file) = file else { continue };
        let path = base.join(file);
        let csv = upload::decode_body(
            kind.describe(),
            &read_file(&path)?,
            upload::MAX_DECOMPRESSED_BYTES,
        )
        .map_err(|e| invalid(&path, e))?;
        let summary = upload::scan_csv(kind, &csv).map_err(|e| invalid(&path, e))?;
        series.push(SeriesRecord {
            key,
            content_hash: etag_of(&csv),
            csv,
            rows: summary.rows,
            uploaded_at: now.to_owned(),
        });
    }
    let forecast = match &meta.drivers.enso_forecast {
        Some(file) => {
            let path = base.join(file);
            let bytes = read_file(&path)?;
            let forecast = upload::parse_enso_forecast(&bytes).map_err(|e| invalid(&path, e))?;
            Some((forecast, String::from_utf8_lossy(&bytes).into_owned()))
        }
        None => None,
    };
    Ok(SeedGauge {
        record: StoredGaugeRow {
            id: meta.id.clone(),
            toml: text,
            name: meta.name.clone(),
            latitude: meta.latitude,
            longitude: meta.longitude,
            updated_at: now.to_owned(),
        },
        levels,
        series,
        forecast,
    })
}

/// Stores every gauge TOML in `dir` (sorted by file name) with the files it names; the files
/// are read and checked in parallel (rayon), then stored in file-name order. Returns the
/// number of gauges stored.
pub fn seed_from_dir(conn: &mut Connection, dir: &Path) -> Result<usize, SeedError> {
    use rayon::prelude::*;
    let entries = std::fs::read_dir(dir).map_err(|error| SeedError::Read {
        path: dir.to_owned(),
        error,
    })?;
    let mut tomls: Vec<PathBuf> = entries
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    tomls.sort();
    let now = store::now_rfc3339();
    let gauges: Vec<SeedGauge> = tomls
        .par_iter()
        .map(|path| read_seed_gauge(path, &now))
        .collect::<Result<_, _>>()?;
    for gauge in &gauges {
        store::put_gauge(conn, &gauge.record)?;
        store::put_levels(conn, &gauge.levels)?;
        for series in &gauge.series {
            store::put_series(conn, series)?;
        }
        if let Some((forecast, json)) = &gauge.forecast {
            store::put_forecast(conn, &forecast.season, &forecast.issued, json, &now)?;
        }
    }
    Ok(tomls.len())
}

/// Reads everything stored for a gauge.
pub fn load_inputs(conn: &Connection, id: &str) -> Result<Option<GaugeInputs>, StoreError> {
    let Some(gauge) = store::get_gauge(conn, id)? else {
        return Ok(None);
    };
    // Validated once here; the pipeline uses the same checked description.
    let source = TextSource {
        name: format!("{id}.toml"),
        text: gauge.toml,
    };
    let toml = GaugeToml::parse(source, Path::new("")).map_err(|e| StoreError::Corrupt {
        what: format!("gauge TOML of {id}"),
        message: e.to_string(),
    })?;
    let meta = upload::GaugeMeta::of(toml.config());
    let series = |key: SeriesKey| -> Result<Option<Vec<u8>>, StoreError> {
        Ok(store::get_series(conn, &key)?.map(|s| s.csv))
    };
    let enso_forecasts = store::get_forecasts(conn)?
        .into_iter()
        .map(|(season, json)| StoredForecast {
            season,
            json: json.into_bytes(),
        })
        .collect();
    Ok(Some(GaugeInputs {
        levels: store::get_levels(conn, id)?,
        enso: series(SeriesKey::Enso)?,
        rmm: series(SeriesKey::Rmm)?,
        wind: series(SeriesKey::Wind(id.to_owned()))?,
        enso_forecasts,
        toml,
        meta,
    }))
}

/// Which model an entry should serve.
pub enum ModelSource {
    /// The newest stored fit, else a fresh build (startup).
    StoredOrBuild,
    /// A fresh build (a refit).
    Build,
    /// Whatever the gauge served before (an upload: the model changes only on refit).
    Keep(Result<Arc<ServedModel>, PipelineError>),
}

/// Builds a gauge's catalog entry from the store (blocking: runs the pipeline, without
/// holding the store's lock). A fresh successful build is stored with its issued outlooks
/// before it is returned.
pub fn build_entry(
    store: &Store,
    id: &str,
    source: ModelSource,
) -> Result<Option<GaugeEntry>, StoreError> {
    let Some(inputs) = store.call_blocking(|c| load_inputs(c, id))? else {
        return Ok(None);
    };
    let record = inputs.levels.as_ref().map(|l| api::RecordSpan {
        first: l.first_time.clone(),
        last: l.last_time.clone(),
        readings: l.readings,
        uploaded_at: l.uploaded_at.clone(),
    });
    let history_now =
        || pipeline::season_history(&inputs).map(|h| Arc::new(SerializedBody::new(h)));
    let stored = match source {
        ModelSource::StoredOrBuild => store
            .call_blocking(|c| store::latest_model(c, id))?
            .and_then(|m| serde_json::from_str::<GaugeResults>(&m.results_json).ok()),
        ModelSource::Build => None,
        ModelSource::Keep(model) => {
            let history = history_now();
            return Ok(Some(GaugeEntry {
                meta: inputs.meta,
                record,
                history,
                model,
            }));
        }
    };
    let stored_version = stored.as_ref().map(|r| r.model_version.clone());
    let (history, model) = match stored {
        Some(results) => (history_now(), Ok(results)),
        None => {
            let (history, model) = pipeline::build_with_history(&inputs);
            (history.map(|h| Arc::new(SerializedBody::new(h))), model)
        }
    };
    if let (Ok(results), None) = (&model, &stored_version) {
        store.call_blocking(|c| store_results(c, id, results))?;
    }
    Ok(Some(GaugeEntry {
        meta: inputs.meta,
        record,
        history,
        model: model.map(|r| Arc::new(ServedModel::new(r))),
    }))
}

/// Stores a fit and records its outlooks as issued.
fn store_results(
    conn: &mut Connection,
    id: &str,
    results: &GaugeResults,
) -> Result<(), StoreError> {
    let json = serde_json::to_string(results).expect("wire types always serialize");
    store::put_model(
        conn,
        &store::FittedModelRecord {
            gauge_id: id.to_owned(),
            model_version: results.model_version.clone(),
            fitted_at: results.fitted_at.clone(),
            results_json: json,
        },
    )?;
    let issued: Vec<store::IssuedRecord> = results
        .outlooks
        .iter()
        .map(|(season, outlook)| store::IssuedRecord {
            id: 0,
            gauge_id: id.to_owned(),
            season: season.clone(),
            model_version: results.model_version.clone(),
            driver_inputs_json: results
                .driver_inputs
                .get(season)
                .map_or_else(|| "{}".to_owned(), ToString::to_string),
            issued_at: outlook.issued_at.clone(),
            outlook_json: serde_json::to_string(outlook).expect("wire types always serialize"),
        })
        .collect();
    store::record_issued(conn, &issued)?;
    Ok(())
}

/// Loads every stored gauge into the catalog, gauges in parallel (rayon), then marks it
/// loaded (blocking).
pub fn load_catalog(state: &AppState) -> Result<usize, StoreError> {
    use rayon::prelude::*;
    let ids: Vec<String> = state
        .store
        .call_blocking(|c| Ok(store::list_gauges(c)?.into_iter().map(|g| g.id).collect()))?;
    let entries: Vec<(&String, Result<Option<GaugeEntry>, StoreError>)> = ids
        .par_iter()
        .map(|id| {
            (
                id,
                build_entry(&state.store, id, ModelSource::StoredOrBuild),
            )
        })
        .collect();
    for (id, entry) in entries {
        if let Some(entry) = entry? {
            if let Err(why) = &entry.model {
                tracing::warn!(gauge = %id, reason = %why, "no model serving");
            }
            state.catalog.swap_in(entry);
        }
    }
    state.catalog.mark_loaded();
    Ok(ids.len())
}

/// Stores `results` as the gauge's newest fit (recording its outlooks as issued) and swaps
/// them in as the serving model (blocking). The entry's other parts are rebuilt from the store.
pub fn install_results(
    state: &AppState,
    id: &str,
    results: GaugeResults,
) -> Result<(), StoreError> {
    state
        .store
        .call_blocking(|c| store_results(c, id, &results))?;
    let model = Ok(Arc::new(ServedModel::new(results)));
    if let Some(entry) = build_entry(&state.store, id, ModelSource::Keep(model))? {
        state.catalog.swap_in(entry);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn seeding_names_the_bad_file_and_line() {
        let dir = std::env::temp_dir().join(format!("tidetally-seed-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let toml = tidetally_test_support::fixtures::gauge_toml("port-alder")
            .replace("port-alder-levels.csv", "levels.csv");
        std::fs::write(dir.join("port-alder.toml"), toml).unwrap();
        std::fs::write(
            dir.join("levels.csv"),
            "time,level\n2020-01-01T00:00:00Z,x\n",
        )
        .unwrap();
        let store = Store::open_in_memory().unwrap();
        let err = store
            .call_blocking(|c| Ok(seed_from_dir(c, &dir)))
            .unwrap()
            .unwrap_err()
            .to_string();
        assert!(
            err.contains("levels.csv") && err.contains("line 2, field level"),
            "{err}"
        );

        std::fs::write(
            dir.join("levels.csv"),
            "time,level\n2020-01-01T00:00:00Z,0.5\n",
        )
        .unwrap();
        let n = store
            .call_blocking(|c| Ok(seed_from_dir(c, &dir)))
            .unwrap()
            .unwrap();
        assert_eq!(n, 1);
        let inputs = store
            .call_blocking(|c| load_inputs(c, "port-alder"))
            .unwrap()
            .unwrap();
        assert_eq!(inputs.levels.unwrap().readings, 1);
        let _ = std::fs::remove_dir_all(&dir);
    }
}
