//! The catalog: what the service is serving for each gauge, prepared ahead so a read only
//! clones an `Arc`. A refit builds a new entry off the runtime and swaps it in whole; readers
//! never see half an update, and a failed refit leaves the old entry serving.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex, RwLock};

use axum::body::Bytes;

use crate::api;
use crate::compress::Compressed;
use crate::outlook_set::OutlookSets;
use crate::pipeline::{GaugeResults, PipelineError};
use crate::upload::GaugeMeta;

/// A response body serialized and compressed once, with its strong ETag.
#[derive(Debug, Clone)]
pub struct SerializedBody<T> {
    /// The value.
    pub value: T,
    /// Its JSON bytes.
    pub body: Bytes,
    /// Its ETag (quoted); each compressed copy's tag derives from it
    /// ([`crate::compress::Coding::etag`]).
    pub etag: String,
    /// Its gzip and brotli copies.
    pub compressed: Compressed,
}

impl<T: serde::Serialize> SerializedBody<T> {
    /// Serializes `value` once and compresses it both ways (CPU work: call it off the async
    /// runtime).
    pub fn new(value: T) -> Self {
        let body = Bytes::from(serde_json::to_vec(&value).expect("wire types always serialize"));
        let etag = crate::etag::etag_of(&body);
        let compressed = Compressed::of(&body);
        Self {
            value,
            body,
            etag,
            compressed,
        }
    }
}

/// A fitted model as served.
#[derive(Debug)]
pub struct ServedModel {
    /// The results.
    pub results: GaugeResults,
    /// The hindcast, serialized.
    pub hindcast: SerializedBody<api::Hindcast>,
    /// Each outlook with the gauge's default exceedance days, serialized, by season label.
    pub outlooks: BTreeMap<String, Arc<SerializedBody<api::Outlook>>>,
    /// Outlooks of other seasons computed on demand from this fit, by season label.
    on_demand: Mutex<BTreeMap<String, OnDemand>>,
    /// How many on-demand outcomes have been kept (a change of the outlook sets that list them).
    kept: AtomicU64,
}

/// An outlook computed on demand, or why it could not be (kept too, so a season that cannot
/// be issued is not recomputed on every request).
pub type OnDemand = Result<Arc<SerializedBody<api::Outlook>>, PipelineError>;

/// Most on-demand outlooks one fit keeps (older labels are dropped first by label order).
pub const MAX_ON_DEMAND: usize = 64;

impl ServedModel {
    /// Prepares results for serving; every outlook gets the standard cautions.
    pub fn new(mut results: GaugeResults) -> Self {
        for outlook in results.outlooks.values_mut() {
            outlook.cautions =
                crate::cautions::with_standard(std::mem::take(&mut outlook.cautions));
        }
        let hindcast = SerializedBody::new(results.hindcast.clone());
        let outlooks = results
            .outlooks
            .iter()
            .map(|(season, outlook)| {
                (
                    season.clone(),
                    Arc::new(SerializedBody::new(outlook.clone())),
                )
            })
            .collect();
        Self {
            results,
            hindcast,
            outlooks,
            on_demand: Mutex::default(),
            kept: AtomicU64::new(0),
        }
    }

    /// What an on-demand run gave earlier for `label`.
    pub fn cached(&self, label: &str) -> Option<OnDemand> {
        self.cache().get(label).cloned()
    }

    /// Keeps what an on-demand run for `label` gave (bounded by [`MAX_ON_DEMAND`], the
    /// first labels in order dropped first) and returns it prepared.
    pub fn keep(&self, label: &str, outcome: Result<api::Outlook, PipelineError>) -> OnDemand {
        let kept = outcome.map(|o| Arc::new(SerializedBody::new(o)));
        let mut cache = self.cache();
        while cache.len() >= MAX_ON_DEMAND {
            cache.pop_first();
        }
        cache.insert(label.to_owned(), kept.clone());
        self.kept.fetch_add(1, Ordering::AcqRel);
        kept
    }

    /// How many on-demand outcomes this fit has kept so far.
    pub fn kept_count(&self) -> u64 {
        self.kept.load(Ordering::Acquire)
    }

    fn cache(&self) -> std::sync::MutexGuard<'_, BTreeMap<String, OnDemand>> {
        // A poisoned cache still holds whole entries: each is inserted in one step.
        self.on_demand.lock().unwrap_or_else(|p| p.into_inner())
    }
}

/// One gauge as served.
#[derive(Debug)]
pub struct GaugeEntry {
    /// The checked description.
    pub meta: GaugeMeta,
    /// The stored water-level record, if any.
    pub record: Option<api::RecordSpan>,
    /// The season table, or why there is none.
    pub history: Result<Arc<SerializedBody<api::SeasonHistory>>, PipelineError>,
    /// The fitted model, or why there is none.
    pub model: Result<Arc<ServedModel>, PipelineError>,
    /// The model's generation (its store id; 0 without a model): a swap never installs an
    /// older generation than the one serving.
    pub generation: i64,
    /// The versions of the stored inputs this entry was built from.
    pub inputs: crate::state::InputVersions,
}

impl GaugeEntry {
    /// The gauge's wire form.
    pub fn to_wire(&self) -> api::Gauge {
        api::Gauge {
            id: self.meta.id.clone(),
            name: self.meta.name.clone(),
            latitude: self.meta.latitude,
            longitude: self.meta.longitude,
            datum: self.meta.datum.clone(),
            flood_threshold_m: self.meta.flood_threshold_m,
            utc_offset: self.meta.utc_offset.clone(),
            seasons: self
                .meta
                .seasons
                .iter()
                .map(|s| s.name().to_owned())
                .collect(),
            record: self.record.clone(),
            model_ready: self.model.is_ok(),
            model_status: self.model.as_ref().err().map(ToString::to_string),
        }
    }

    /// The default (next) season of `model`: the earliest, by first day, of the seasons its
    /// fit issued; the one `GET /api/v1/gauges/{id}/outlook` serves without `?season=`.
    pub fn default_season(&self, model: &ServedModel) -> Option<String> {
        model
            .outlooks
            .keys()
            .filter_map(|l| crate::query::parse_season(l, &self.meta.seasons).ok())
            .min_by_key(|s| s.first_day())
            .map(|s| s.label())
    }

    /// The gauge's default (next) outlook, or why it has none.
    pub fn default_outlook(&self) -> Result<&SerializedBody<api::Outlook>, String> {
        let model = self.model.as_ref().map_err(ToString::to_string)?;
        self.default_season(model)
            .and_then(|label| model.outlooks.get(&label).map(|served| &**served))
            .ok_or_else(|| format!("gauge {} serves no outlook", self.meta.id))
    }
}

/// All gauges being served.
#[derive(Debug, Default)]
pub struct Catalog {
    entries: RwLock<BTreeMap<String, Arc<GaugeEntry>>>,
    loaded: AtomicBool,
    /// Bumped on every change of the entries (a swap, a removal, the end of the load).
    version: AtomicU64,
    /// The all-gauges outlook sets, prepared once per change of the catalog.
    pub sets: OutlookSets,
}

/// What an all-gauges outlook set was built from: the catalog's version and, for a set of
/// one season (which lists on-demand outlooks), the count of on-demand outcomes kept by the
/// serving fits. A set whose stamp differs from the catalog's current one is rebuilt.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct Stamp {
    /// [`Catalog`]'s change count.
    pub version: u64,
    /// Sum of the serving fits' kept on-demand outcomes (0 when not counted).
    pub on_demand: u64,
}

impl Catalog {
    /// One gauge.
    pub fn get(&self, id: &str) -> Option<Arc<GaugeEntry>> {
        self.read().get(id).cloned()
    }

    /// All gauges, ordered by id.
    pub fn list(&self) -> Vec<Arc<GaugeEntry>> {
        self.read().values().cloned().collect()
    }

    /// Puts an entry in place of the gauge's previous one, unless that one serves a newer
    /// model generation; returns whether it was put in.
    pub fn swap_in(&self, entry: GaugeEntry) -> bool {
        let mut map = self.entries.write().unwrap_or_else(|p| p.into_inner());
        if map
            .get(&entry.meta.id)
            .is_some_and(|old| old.generation > entry.generation)
        {
            return false;
        }
        map.insert(entry.meta.id.clone(), Arc::new(entry));
        // Bumped under the write lock, after the change: a reader that sees the new version
        // sees the new entry.
        self.version.fetch_add(1, Ordering::AcqRel);
        true
    }

    /// Stops serving a gauge (retired).
    pub fn remove(&self, id: &str) {
        let mut map = self.entries.write().unwrap_or_else(|p| p.into_inner());
        map.remove(id);
        self.version.fetch_add(1, Ordering::AcqRel);
    }

    /// Marks the startup load as finished.
    pub fn mark_loaded(&self) {
        self.loaded.store(true, Ordering::Release);
        self.version.fetch_add(1, Ordering::AcqRel);
    }

    /// The catalog's current stamp; `with_on_demand` adds the on-demand outcomes kept (for a
    /// set of one season). Read before the entries a set is built from, so a change during
    /// the build leaves the set stale (rebuilt next time), never wrongly current.
    pub fn stamp(&self, with_on_demand: bool) -> Stamp {
        let map = self.read();
        let version = self.version.load(Ordering::Acquire);
        let on_demand = if with_on_demand {
            map.values()
                .filter_map(|e| e.model.as_ref().ok())
                .map(|m| m.kept_count())
                .sum()
        } else {
            0
        };
        Stamp { version, on_demand }
    }

    /// Whether the startup load has finished.
    pub fn is_loaded(&self) -> bool {
        self.loaded.load(Ordering::Acquire)
    }

    fn read(&self) -> std::sync::RwLockReadGuard<'_, BTreeMap<String, Arc<GaugeEntry>>> {
        // A poisoned lock still holds a whole map: entries are only ever swapped in whole.
        self.entries.read().unwrap_or_else(|p| p.into_inner())
    }
}
