//! The demo coastline (demo-data/gauges, located from this crate's manifest, not the working
//! directory) seeds an empty store, and every gauge serves its season table.
#![allow(clippy::unwrap_used)]

use std::path::Path;
use std::time::Duration;

use tidetally_server::store::Store;
use tidetally_server::{AppState, state};

#[test]
fn the_demo_data_seeds_and_serves_season_tables() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../demo-data/gauges");
    let store = Store::open_in_memory().unwrap();
    let seeded = store
        .call_blocking(|c| Ok(state::seed_from_dir(c, &dir)))
        .unwrap()
        .unwrap_or_else(|e| panic!("demo data does not seed: {e}"));
    assert!(seeded >= 1, "no gauge TOML in {}", dir.display());
    let app_state = AppState::new(store, None, Duration::from_secs(60));
    state::load_catalog(&app_state).unwrap();
    let entries = app_state.catalog.list();
    assert_eq!(entries.len(), seeded);
    for entry in entries {
        let history = entry
            .history
            .as_ref()
            .unwrap_or_else(|e| panic!("{}: {e}", entry.meta.id));
        assert!(!history.value.seasons.is_empty(), "{}", entry.meta.id);
        for row in &history.value.seasons {
            assert!(
                row.flood_days <= row.observed_days && row.observed_days <= row.calendar_days,
                "{row:?}"
            );
        }
    }
}
