//! The two ways to an outlook agree: for every demo gauge, `tidetally outlook --gauge FILE`
//! (the files the TOML names) and `GET /api/v1/gauges/{id}/outlook` (the same files seeded
//! into the store) give the same distribution with the same default seed, and both carry the
//! ENSO forecast's free-text note.
#![allow(clippy::unwrap_used)]

mod support;

use std::path::Path;
use std::process::Command;
use std::sync::Arc;
use std::time::Duration;

use serde_json::Value;
use support::get;
use tidetally_server::store::Store;
use tidetally_server::{AppState, state};

fn demo_gauges() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../demo-data/gauges")
}

/// The outlook the command line prints for a demo gauge.
fn cli_outlook(id: &str) -> Value {
    let toml = demo_gauges().join(format!("{id}.toml"));
    let out = Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .arg("outlook")
        .arg("--gauge")
        .arg(&toml)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{id}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap_or_else(|| panic!("not an array: {v}"))
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_command_line_and_the_service_issue_the_same_outlooks() {
    let store = Store::open_in_memory().unwrap();
    let dir = demo_gauges();
    store
        .call_blocking(|c| Ok(state::seed_from_dir(c, &dir)))
        .unwrap()
        .unwrap();
    let app_state = AppState::new(store, None, Duration::from_secs(120));
    let loader = Arc::clone(&app_state);
    tokio::task::spawn_blocking(move || state::load_catalog(&loader))
        .await
        .unwrap()
        .unwrap();
    let app = tidetally_server::app(Arc::clone(&app_state));
    let ids: Vec<String> = app_state
        .catalog
        .list()
        .iter()
        .map(|e| e.meta.id.clone())
        .collect();
    assert_eq!(ids.len(), 4, "{ids:?}");
    for id in &ids {
        let served = get(&app, &format!("/api/v1/gauges/{id}/outlook")).await;
        assert_eq!(served.status.as_u16(), 200, "{id}");
        let http = served.json();
        let cli = tokio::task::spawn_blocking({
            let id = id.clone();
            move || cli_outlook(&id)
        })
        .await
        .unwrap();
        assert_eq!(http["season"], cli["season"], "{id}");
        // The same inputs and seed through the same code: the same numbers, bit for bit
        // (the service stores its fit as JSON with round-trip floats).
        assert_eq!(numbers(&http["pmf"]), numbers(&cli["pmf"]), "{id}: pmf");
        for key in ["mean", "median", "p10", "p90"] {
            assert_eq!(http[key].as_f64(), cli[key].as_f64(), "{id}: {key}");
        }
        let note = |o: &Value| {
            o["notes"]
                .as_array()
                .unwrap()
                .iter()
                .any(|n| n.as_str().unwrap().starts_with("ENSO forecast note: "))
        };
        assert!(note(&cli), "{id}: the command line shows the forecast note");
        assert!(note(&http), "{id}: the service shows the forecast note");
        assert_eq!(http["notes"], cli["notes"], "{id}: notes");
    }
}
