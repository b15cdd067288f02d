//! The all-gauges outlook set (`GET /api/v1/outlooks`, with and without `?season=`):
//! assembled, serialized and compressed once per change of the catalog, kept per season
//! asked, and rebuilt by the first request after any gauge's entry changes (a refit, an
//! upload, a retirement, or an on-demand outlook the set of that season lists).

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};

use tokio::sync::OnceCell;

use crate::api;
use crate::catalog::{Catalog, SerializedBody, Stamp};
use crate::error::AppError;
use crate::query;
use crate::state::AppState;

/// Most sets kept at once (the set without a season and the seasons asked for; past this
/// the last season label in order is dropped first).
pub const MAX_SETS: usize = 16;

/// A season asked for: its label (`2026-DJF`) and its name (`DJF`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SeasonAsked {
    /// `YEAR-NAME`.
    pub label: String,
    /// The season's name.
    pub name: String,
}

/// A prepared outlook set.
pub type PreparedSet = Arc<SerializedBody<api::OutlookSet>>;

/// The kept sets, by season label (`None`: each gauge's default outlook).
#[derive(Debug, Default)]
pub struct OutlookSets {
    slots: Mutex<BTreeMap<Option<String>, Arc<Slot>>>,
    builds: AtomicU64,
}

/// One kept set and the stamp it was built from; built once by the first request to need it,
/// the requests arriving meanwhile waiting for that build.
#[derive(Debug)]
struct Slot {
    stamp: Stamp,
    set: OnceCell<PreparedSet>,
}

impl OutlookSets {
    /// How many sets have been assembled, serialized and compressed so far.
    pub fn builds(&self) -> u64 {
        self.builds.load(Ordering::Acquire)
    }

    /// The set kept for `season` (by label), if one has been built.
    pub fn kept(&self, season: Option<&str>) -> Option<PreparedSet> {
        let slots = self.lock();
        slots.get(&season.map(str::to_owned))?.set.get().cloned()
    }

    /// The slot for `key` current at `stamp`: the kept one when built from this stamp or a
    /// later one, else a new empty slot in its place.
    fn slot(&self, key: &Option<String>, stamp: Stamp) -> Arc<Slot> {
        let mut slots = self.lock();
        if let Some(slot) = slots.get(key)
            && slot.stamp >= stamp
        {
            return Arc::clone(slot);
        }
        if !slots.contains_key(key) && slots.len() >= MAX_SETS {
            let last = slots.keys().next_back().cloned();
            if let Some(last) = last {
                slots.remove(&last);
            }
        }
        let slot = Arc::new(Slot {
            stamp,
            set: OnceCell::new(),
        });
        slots.insert(key.clone(), Arc::clone(&slot));
        slot
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, BTreeMap<Option<String>, Arc<Slot>>> {
        // A poisoned map still holds whole slots: each is inserted in one step.
        self.slots.lock().unwrap_or_else(|p| p.into_inner())
    }
}

/// The set for `season` (each gauge's default outlook without one), from the kept copy when
/// nothing changed since it was built, else built once off the runtime and kept.
pub async fn prepared_set(
    state: &Arc<AppState>,
    season: Option<SeasonAsked>,
) -> Result<PreparedSet, AppError> {
    // The stamp is read before the entries: a change during the build leaves the set stale.
    let stamp = state.catalog.stamp(season.is_some());
    let key = season.as_ref().map(|s| s.label.clone());
    let slot = state.catalog.sets.slot(&key, stamp);
    let set = slot
        .set
        .get_or_try_init(|| async {
            let st = Arc::clone(state);
            tokio::task::spawn_blocking(move || {
                let set = SerializedBody::new(assemble(&st.catalog, season.as_ref()));
                st.catalog.sets.builds.fetch_add(1, Ordering::AcqRel);
                Arc::new(set)
            })
            .await
            .map_err(AppError::from)
        })
        .await?;
    Ok(Arc::clone(set))
}

/// Every gauge's outlook of `season`, or without one each gauge's default outlook (the
/// earliest season its fit issued); gauges without one are listed as unavailable, with why.
pub fn assemble(catalog: &Catalog, season: Option<&SeasonAsked>) -> api::OutlookSet {
    let mut set = api::OutlookSet {
        season: season.map(|s| s.label.clone()),
        outlooks: Vec::new(),
        unavailable: Vec::new(),
    };
    for entry in catalog.list() {
        let gauge = entry.meta.id.clone();
        let outcome = match season {
            None => entry.default_outlook().map(|p| p.value.clone()),
            Some(SeasonAsked { label, name }) => {
                entry.model.as_ref().map_err(ToString::to_string).and_then(|model| {
                    query::parse_season(label, &entry.meta.seasons)
                        .map_err(|_| format!("gauge {gauge} does not define season {name}"))?;
                    match model.outlooks.get(label) {
                        Some(p) => Ok(p.value.clone()),
                        None => match model.cached(label) {
                            Some(Ok(p)) => Ok(p.value.clone()),
                            Some(Err(why)) => Err(why.to_string()),
                            None => Err(format!(
                                "no outlook issued for {label}; GET /api/v1/gauges/{gauge}/outlook?season={label} computes it"
                            )),
                        },
                    }
                })
            }
        };
        match outcome {
            Ok(outlook) => set.outlooks.push(outlook),
            Err(reason) => set.unavailable.push(api::Unavailable { gauge, reason }),
        }
    }
    set
}
