//! The shared state of the service and how it is filled: the store, the catalog of prepared
//! per-gauge results, and the startup load (seeding an empty store from a data folder).

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;

use std::collections::BTreeMap;
use std::sync::Mutex;

use rusqlite::Connection;
use serde::{Deserialize, Serialize};
use tidetally_model::fit::{GaugeToml, TextSource};
use tokio::sync::Semaphore;

use crate::api;
use crate::auth::Token;
use crate::catalog::{Catalog, GaugeEntry, SerializedBody, ServedModel};
use crate::etag::etag_of;
use crate::pipeline::{self, GaugeInputs, GaugeResults, PipelineError, StoredForecast};
use crate::pool::Pool;
use crate::store::{self, SeriesKey, SeriesKind, SeriesRecord, Store, StoreError, StoredGaugeRow};
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
    /// Bounds concurrent refits (fits are CPU-heavy; 2 cores are shared). On-demand outlooks
    /// have their own pool, so a refit never waits behind anonymous reads.
    pub refit_permits: Semaphore,
    /// The pool of on-demand outlook runs, with a bounded queue.
    pub on_demand: Pool,
    /// One queue per gauge: its uploads and refits run one at a time, in arrival order.
    queues: Mutex<BTreeMap<String, Arc<tokio::sync::Mutex<()>>>>,
    /// What "today" is (real by default; fixed by configuration or a test).
    pub clock: crate::clock::Clock,
    /// Test hook run by a refit after fitting, before storing and installing (races made
    /// deterministic in tests); `None` in service.
    pub refit_hook: Option<RefitHook>,
}

/// A refit's test hook: called with the gauge id.
pub type RefitHook = Box<dyn Fn(&str) + Send + Sync>;

impl AppState {
    /// State over an open store, with nothing loaded yet.
    pub fn new(store: Store, token: Option<Token>, cache_max_age: Duration) -> Arc<Self> {
        Arc::new(Self::unshared(store, token, cache_max_age))
    }

    /// As [`AppState::new`], not yet shared (to set the pool or the test hook).
    pub fn unshared(store: Store, token: Option<Token>, cache_max_age: Duration) -> Self {
        Self {
            store,
            catalog: Catalog::default(),
            token,
            cache_max_age,
            refit_permits: Semaphore::new(1),
            on_demand: Pool::new(1, 8),
            queues: Mutex::default(),
            clock: crate::clock::Clock::real(),
            refit_hook: None,
        }
    }

    /// The queue of one gauge's writes.
    pub fn gauge_queue(&self, id: &str) -> Arc<tokio::sync::Mutex<()>> {
        // A poisoned map still holds whole entries: each is inserted in one step.
        let mut queues = self.queues.lock().unwrap_or_else(|p| p.into_inner());
        Arc::clone(queues.entry(id.to_owned()).or_default())
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
}

fn read_file(path: &Path) -> Result<Vec<u8>, SeedError> {
    std::fs::read(path).map_err(|error| SeedError::Read {
        path: path.to_owned(),
        error,
    })
}

/// The series a gauge's TOML chooses: `(kind, name, TOML key)` for each `[drivers]` entry.
pub fn chosen_series(meta: &upload::GaugeMeta) -> Vec<(SeriesKey, &'static str, &str)> {
    [
        (
            SeriesKind::Enso,
            "drivers.enso",
            meta.drivers.enso.as_deref(),
        ),
        (SeriesKind::Rmm, "drivers.rmm", meta.drivers.rmm.as_deref()),
        (
            SeriesKind::Wind,
            "drivers.wind",
            meta.drivers.wind.as_deref(),
        ),
        (
            SeriesKind::EnsoForecast,
            "drivers.enso_forecast",
            meta.drivers.enso_forecast.as_deref(),
        ),
    ]
    .into_iter()
    .filter_map(|(kind, key, path)| {
        path.map(|p| (SeriesKey::new(kind, store::series_name(p)), key, p))
    })
    .collect()
}

/// The CSV check of a series kind (`None` for the forecast JSON).
pub fn csv_kind(kind: SeriesKind) -> Option<CsvKind> {
    match kind {
        SeriesKind::Enso => Some(CsvKind::Enso),
        SeriesKind::Rmm => Some(CsvKind::Rmm),
        SeriesKind::Wind => Some(CsvKind::Wind),
        SeriesKind::EnsoForecast => None,
    }
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
    let summary = upload::scan_levels(&csv, &meta.ingest).map_err(|e| invalid(&levels_path, e))?;
    let levels = store::LevelsRecord {
        gauge_id: meta.id.clone(),
        content_hash: etag_of(&csv),
        csv,
        readings: summary.rows,
        first_time: summary.first,
        last_time: summary.last,
        uploaded_at: now.to_owned(),
    };
    let mut series = Vec::new();
    for (key, _, file) in chosen_series(&meta) {
        let path = base.join(file);
        let bytes = read_file(&path)?;
        let (csv, rows) = match csv_kind(key.kind) {
            Some(kind) => {
                let csv =
                    upload::decode_body(kind.describe(), &bytes, upload::MAX_DECOMPRESSED_BYTES)
                        .map_err(|e| invalid(&path, e))?;
                let rows = upload::scan_csv(kind, &csv)
                    .map_err(|e| invalid(&path, e))?
                    .rows;
                (csv, rows)
            }
            None => {
                // Checked, then stored as written: its free-text note reaches the outlook.
                upload::parse_enso_forecast(&bytes).map_err(|e| invalid(&path, e))?;
                (bytes, 0)
            }
        };
        series.push(SeriesRecord {
            key,
            content_hash: etag_of(&csv),
            csv,
            rows,
            uploaded_at: now.to_owned(),
        });
    }
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
    })
}

/// Stores a new version of a series unless its newest version has the same content; returns
/// whether it stored one.
pub fn put_series_if_changed(
    conn: &mut Connection,
    series: &SeriesRecord,
) -> Result<bool, StoreError> {
    let same = store::get_series(conn, &series.key)?
        .is_some_and(|(_, newest)| newest.content_hash == series.content_hash);
    if !same {
        store::put_series(conn, series)?;
    }
    Ok(!same)
}

/// Stores every gauge TOML in `dir` (sorted by file name) with the files it names; the files
/// are read and checked in parallel (rayon), then stored in file-name order. Driver files
/// named by several gauges are stored once. Returns the number of gauges stored.
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
            put_series_if_changed(conn, series)?;
        }
    }
    Ok(tomls.len())
}

/// The versions of the stored inputs a pipeline run read: recorded with each fit, so the
/// service serves the season table and metadata of the inputs its model was fitted on.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct InputVersions {
    /// The gauge TOML's version.
    pub gauge: Option<i64>,
    /// The water-level record's version.
    pub levels: Option<i64>,
    /// Each chosen series (`kind/name`) and the newest of its versions read.
    pub series: BTreeMap<String, i64>,
}

impl InputVersions {
    /// What changed from `before` to `self`, in words (empty when nothing did).
    pub fn changes_since(&self, before: &InputVersions) -> Vec<String> {
        let mut out = Vec::new();
        if self.gauge != before.gauge {
            out.push("the gauge TOML changed".to_owned());
        }
        if self.levels != before.levels {
            out.push("the water-level record changed".to_owned());
        }
        for (name, version) in &self.series {
            match before.series.get(name) {
                None => out.push(format!("the driver series {name} is new to this gauge")),
                Some(old) if old != version => {
                    out.push(format!("the driver series {name} has a new version"))
                }
                Some(_) => {}
            }
        }
        for name in before.series.keys() {
            if !self.series.contains_key(name) {
                out.push(format!("the driver series {name} is no longer used"));
            }
        }
        out
    }
}

/// Reads everything stored for a gauge, at its newest versions.
pub fn load_inputs(conn: &Connection, id: &str) -> Result<Option<GaugeInputs>, StoreError> {
    Ok(load_inputs_at(conn, id, None)?.map(|(inputs, _)| inputs))
}

/// Reads what a gauge's TOML chooses, at the versions `at` names (the newest where it names
/// none, or where a named version was pruned), and the versions read. Only the series the
/// gauge's own TOML names are read: nothing another gauge uploads reaches it.
pub fn load_inputs_at(
    conn: &Connection,
    id: &str,
    at: Option<&InputVersions>,
) -> Result<Option<(GaugeInputs, InputVersions)>, StoreError> {
    let Some(gauge) = store::get_gauge(conn, id)? else {
        return Ok(None);
    };
    let corrupt = |what: String, e: &dyn std::fmt::Display| StoreError::Corrupt {
        what,
        message: e.to_string(),
    };
    let pinned_toml = match at.and_then(|v| v.gauge) {
        Some(v) => store::get_gauge_version(conn, id, v)?.map(|t| (t, Some(v))),
        None => None,
    };
    let (toml, gauge_version) = match pinned_toml {
        Some(found) => found,
        None => (gauge.toml, store::latest_gauge_version(conn, id)?),
    };
    // Validated once here; the pipeline uses the same checked description.
    let toml = GaugeToml::parse(
        TextSource {
            name: format!("{id}.toml"),
            text: toml,
        },
        Path::new(""),
    )
    .map_err(|e| corrupt(format!("gauge TOML of {id}"), &e))?;
    let meta = upload::GaugeMeta::of(toml.config());
    let pinned_levels = match at.and_then(|v| v.levels) {
        Some(v) => store::get_levels_at(conn, id, v)?.map(|l| (l, v)),
        None => None,
    };
    let (levels, levels_version) = match pinned_levels {
        Some((levels, v)) => (Some(levels), Some(v)),
        None => (
            store::get_levels(conn, id)?,
            store::latest_levels_version(conn, id)?,
        ),
    };
    let mut versions = InputVersions {
        gauge: gauge_version,
        levels: levels_version,
        series: BTreeMap::new(),
    };
    let (mut enso, mut rmm, mut wind, mut enso_forecasts) = (None, None, None, Vec::new());
    for (key, _, _) in chosen_series(&meta) {
        let limit = at.and_then(|v| v.series.get(&key.describe()).copied());
        if key.kind == SeriesKind::EnsoForecast {
            // Every version up to the limit: each may be for another target season.
            let mut all = store::series_versions(conn, &key)?;
            if let Some(limit) = limit
                && all.iter().any(|(v, _)| *v <= limit)
            {
                all.retain(|(v, _)| *v <= limit);
            }
            let Some(newest) = all.last().map(|(v, _)| *v) else {
                continue;
            };
            versions.series.insert(key.describe(), newest);
            for (v, record) in &all {
                // Kept as uploaded (its free-text note included); only the season is read here.
                let forecast = serde_json::from_slice::<api::EnsoForecast>(&record.csv)
                    .map_err(|e| corrupt(format!("forecast {} version {v}", key.describe()), &e))?;
                enso_forecasts.push(StoredForecast {
                    season: forecast.season,
                    json: record.csv.clone(),
                });
            }
            continue;
        }
        // The version the limit names, else (pruned or never named) the newest.
        let found = match store::get_series_at_most(conn, &key, limit)? {
            Some(found) => Some(found),
            None => store::get_series(conn, &key)?,
        };
        let Some((version, record)) = found else {
            continue;
        };
        versions.series.insert(key.describe(), version);
        match key.kind {
            SeriesKind::Enso => enso = Some(record.csv),
            SeriesKind::Rmm => rmm = Some(record.csv),
            _ => wind = Some(record.csv),
        }
    }
    Ok(Some((
        GaugeInputs {
            levels,
            enso,
            rmm,
            wind,
            enso_forecasts,
            toml,
            meta,
        },
        versions,
    )))
}

/// The drivers a gauge's model uses whose series is not stored, as one message naming the
/// driver, the TOML key and the upload path; `None` when every one is there.
pub fn missing_drivers(inputs: &GaugeInputs) -> Option<String> {
    use tidetally_model::gauge::Predictor;
    let id = &inputs.meta.id;
    let missing: Vec<String> = chosen_series(&inputs.meta)
        .into_iter()
        .filter(|(key, _, _)| {
            let (predictor, present) = match key.kind {
                SeriesKind::Enso => (Predictor::Enso, inputs.enso.is_some()),
                SeriesKind::Rmm => (Predictor::Mjo, inputs.rmm.is_some()),
                SeriesKind::Wind => (Predictor::Wind, inputs.wind.is_some()),
                SeriesKind::EnsoForecast => return false,
            };
            inputs.meta.predictors.contains(&predictor) && !present
        })
        .map(|(key, toml_key, _)| {
            format!(
                "its {} series {:?} (TOML key {toml_key}) is not stored; PUT /api/v1/drivers/{}/{}",
                key.kind.as_str(),
                key.name,
                key.kind.as_str(),
                key.name
            )
        })
        .collect();
    (!missing.is_empty()).then(|| format!("gauge {id} cannot be fitted: {}", missing.join("; ")))
}

/// Which model an entry should serve.
pub enum ModelSource {
    /// The newest stored fit, else a fresh build (startup).
    StoredOrBuild,
    /// None yet: the gauge has not been fitted (an upload to a gauge with no model).
    Unfitted,
}

fn entry_of(
    inputs: GaugeInputs,
    versions: InputVersions,
    history: Result<api::SeasonHistory, PipelineError>,
    model: Result<(GaugeResults, i64), PipelineError>,
) -> GaugeEntry {
    let record = inputs.levels.as_ref().map(|l| api::RecordSpan {
        first: l.first_time.clone(),
        last: l.last_time.clone(),
        readings: l.readings,
        uploaded_at: l.uploaded_at.clone(),
    });
    let (generation, model) = match model {
        Ok((results, generation)) => (generation, Ok(Arc::new(ServedModel::new(results)))),
        Err(why) => (0, Err(why)),
    };
    GaugeEntry {
        meta: inputs.meta,
        record,
        history: history.map(|h| Arc::new(SerializedBody::new(h))),
        model,
        generation,
        inputs: versions,
    }
}

fn not_fitted(id: &str) -> PipelineError {
    PipelineError::MissingInput(format!(
        "gauge {id} has not been fitted yet; POST /api/v1/gauges/{id}/refit"
    ))
}

/// Builds a gauge's catalog entry from the store (blocking: runs the pipeline, without
/// holding the store's lock). A fresh successful build is stored with its issued outlooks
/// before it is returned.
pub fn build_entry(
    store: &Store,
    id: &str,
    source: ModelSource,
) -> Result<Option<GaugeEntry>, StoreError> {
    if let ModelSource::Unfitted = source {
        let Some((inputs, versions)) = store.call_blocking(|c| load_inputs_at(c, id, None))? else {
            return Ok(None);
        };
        let history = pipeline::season_history(&inputs);
        return Ok(Some(entry_of(
            inputs,
            versions,
            history,
            Err(not_fitted(id)),
        )));
    }
    let stored = store.call_blocking(|c| store::latest_model(c, id))?;
    if let Some(model) = stored
        && let Ok(results) = serde_json::from_str::<GaugeResults>(&model.results_json)
        && results.results_format == pipeline::RESULTS_FORMAT
    {
        let at: InputVersions = serde_json::from_str(&model.inputs_json).unwrap_or_default();
        let Some((inputs, versions)) = store.call_blocking(|c| load_inputs_at(c, id, Some(&at)))?
        else {
            return Ok(None);
        };
        let history = pipeline::season_history(&inputs);
        return Ok(Some(entry_of(
            inputs,
            versions,
            history,
            Ok((results, model.id)),
        )));
    }
    let Some((inputs, versions)) = store.call_blocking(|c| load_inputs_at(c, id, None))? else {
        return Ok(None);
    };
    let (history, model) = match missing_drivers(&inputs) {
        Some(why) => (
            pipeline::season_history(&inputs),
            Err(PipelineError::MissingInput(why)),
        ),
        None => pipeline::build_with_history(&inputs),
    };
    let model = match model {
        Ok(results) => {
            let generation = store.call_blocking(|c| store_results(c, id, &results, &versions))?;
            Ok((results, generation))
        }
        Err(why) => Err(why),
    };
    Ok(Some(entry_of(inputs, versions, history, model)))
}

/// Stores a fit with the versions of its inputs and records its outlooks as issued, in one
/// transaction; returns its generation.
fn store_results(
    conn: &mut Connection,
    id: &str,
    results: &GaugeResults,
    versions: &InputVersions,
) -> Result<i64, StoreError> {
    let json = serde_json::to_string(results).expect("wire types always serialize");
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
    store::put_model(
        conn,
        &store::FittedModelRecord {
            id: 0,
            gauge_id: id.to_owned(),
            model_version: results.model_version.clone(),
            fitted_at: results.fitted_at.clone(),
            results_json: json,
            inputs_json: serde_json::to_string(versions).expect("versions always serialize"),
        },
        &issued,
    )
}

/// Loads every stored gauge into the catalog, gauges in parallel (rayon), each served as soon
/// as it is loaded (per-gauge readiness), then marks the catalog loaded (blocking).
pub fn load_catalog(state: &AppState) -> Result<usize, StoreError> {
    use rayon::prelude::*;
    let ids: Vec<String> = state
        .store
        .call_blocking(|c| Ok(store::list_gauges(c)?.into_iter().map(|g| g.id).collect()))?;
    ids.par_iter().try_for_each(|id| {
        if let Some(entry) = build_entry(&state.store, id, ModelSource::StoredOrBuild)? {
            if let Err(why) = &entry.model {
                tracing::warn!(gauge = %id, reason = %why, "no model serving");
            }
            state.catalog.swap_in(entry);
        }
        Ok::<_, StoreError>(())
    })?;
    state.catalog.mark_loaded();
    Ok(ids.len())
}

/// Stores `results` as the gauge's newest fit on its newest inputs (recording its outlooks as
/// issued) and swaps them in as the serving model (blocking).
pub fn install_results(
    state: &AppState,
    id: &str,
    results: GaugeResults,
) -> Result<(), StoreError> {
    let Some((inputs, versions)) = state.store.call_blocking(|c| load_inputs_at(c, id, None))?
    else {
        return Ok(());
    };
    let generation = state
        .store
        .call_blocking(|c| store_results(c, id, &results, &versions))?;
    let history = pipeline::season_history(&inputs);
    state.catalog.swap_in(entry_of(
        inputs,
        versions,
        history,
        Ok((results, generation)),
    ));
    Ok(())
}

/// Why a refit gave no new model.
#[derive(Debug, thiserror::Error)]
pub enum RefitError {
    /// No such gauge.
    #[error("no gauge named {0:?}")]
    NoGauge(String),
    /// The pipeline failed; the old model keeps serving.
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    /// The store failed.
    #[error(transparent)]
    Store(#[from] StoreError),
}

/// Refits a gauge on its newest inputs (blocking; the caller holds the gauge's queue). On
/// unchanged inputs the serving model stays, with its issue time, ETag and no stored copy.
/// A fit whose fit period differs from the serving one says so, and why, in its notes. The
/// new model and its issued outlooks are stored in one transaction before it is swapped in.
pub fn refit(state: &AppState, id: &str) -> Result<api::Gauge, RefitError> {
    let (inputs, versions) = state
        .store
        .call_blocking(|c| load_inputs_at(c, id, None))?
        .ok_or_else(|| RefitError::NoGauge(id.to_owned()))?;
    let serving = state.catalog.get(id);
    let serving_model = serving
        .as_ref()
        .and_then(|e| e.model.as_ref().ok().map(|m| (e, m)));
    if let Some((entry, model)) = serving_model
        && model.results.model_version == pipeline::model_version(&inputs)
    {
        return Ok(entry.to_wire());
    }
    if let Some(why) = missing_drivers(&inputs) {
        return Err(PipelineError::MissingInput(why).into());
    }
    let (history, results) = pipeline::build_with_history(&inputs);
    let mut results = results?;
    if let Some((entry, model)) = serving_model {
        note_fit_period_changes(
            &mut results,
            &model.results,
            &versions.changes_since(&entry.inputs),
        );
    }
    if let Some(hook) = &state.refit_hook {
        hook(id);
    }
    let generation = state
        .store
        .call_blocking(|c| store_results(c, id, &results, &versions))?;
    let entry = entry_of(inputs, versions, history, Ok((results, generation)));
    let wire = entry.to_wire();
    state.catalog.swap_in(entry);
    Ok(wire)
}

/// Adds a note to each new outlook whose fit period differs from the serving outlook of the
/// same season name, with the input changes that explain it.
fn note_fit_period_changes(new: &mut GaugeResults, old: &GaugeResults, changes: &[String]) {
    let period = |p: &api::FitPeriod| format!("{} to {} ({} seasons)", p.first, p.last, p.seasons);
    for outlook in new.outlooks.values_mut() {
        let before = old
            .outlooks
            .values()
            .find(|o| o.skill.season_name == outlook.skill.season_name);
        let Some(before) = before else { continue };
        if before.fit_period != outlook.fit_period {
            let why = if changes.is_empty() {
                "the model code changed".to_owned()
            } else {
                changes.join("; ")
            };
            outlook.notes.push(format!(
                "The fit period changed from {} to {} because {why}.",
                period(&before.fit_period),
                period(&outlook.fit_period)
            ));
        }
    }
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
