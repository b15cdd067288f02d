//! A service to point a load generator at (used by `server/bench/load.sh`): an in-memory
//! store with `--gauges N` invented gauges, each serving a synthetic outlook for `2026-DJF`.
//! The numbers are load-test filler, not a model result.
//!
//! `cargo run --release -p tidetally-server --example load_target -- 127.0.0.1:8099 20`

use std::sync::Arc;
use std::time::Duration;

use tidetally_server::pipeline::GaugeResults;
use tidetally_server::store::{self, Store, StoredGaugeRow};
use tidetally_server::{AppState, api, state};

fn main() -> anyhow::Result<()> {
    let mut args = std::env::args().skip(1);
    let addr = args.next().unwrap_or_else(|| "127.0.0.1:8099".into());
    let gauges: usize = args.next().map_or(Ok(20), |n| n.parse())?;
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()?;
    runtime.block_on(async move {
        let state = AppState::new(Store::open_in_memory()?, None, Duration::from_secs(300));
        let st = Arc::clone(&state);
        tokio::task::spawn_blocking(move || fill(&st, gauges)).await??;
        state.catalog.mark_loaded();
        let listener = tokio::net::TcpListener::bind(&addr).await?;
        println!(
            "{}",
            serde_json::json!({"listening": listener.local_addr()?.to_string()})
        );
        tidetally_server::run(listener, state, async {
            let _ = tokio::signal::ctrl_c().await;
        })
        .await?;
        Ok(())
    })
}

fn fill(state: &AppState, gauges: usize) -> anyhow::Result<()> {
    for i in 0..gauges {
        let id = format!("g{i:02}");
        let toml = tidetally_test_support::fixtures::gauge_toml(&id);
        state.store.call_blocking(|c| {
            store::put_gauge(
                c,
                &StoredGaugeRow {
                    id: id.clone(),
                    toml,
                    name: format!("Test harbour {id}"),
                    latitude: 44.12,
                    longitude: -38.40,
                    updated_at: store::now_rfc3339(),
                },
            )
        })?;
        state::install_results(state, &id, filler(&id)?)?;
    }
    Ok(())
}

/// A 91-day pmf shaped like a count distribution, to give the body a realistic size.
fn filler(gauge: &str) -> anyhow::Result<GaugeResults> {
    let mean = 6.0_f64;
    let mut pmf = Vec::with_capacity(91);
    let mut p = (-mean).exp();
    for k in 0..91 {
        pmf.push(p);
        p *= mean / f64::from(k + 1);
    }
    let mut results: GaugeResults =
        serde_json::from_value(tidetally_test_support::fixtures::fake_results(gauge, &pmf))?;
    for outlook in results.outlooks.values_mut() {
        outlook.exceedance = api::exceedance_from_pmf(&pmf, &[5, 10, 20]);
        outlook.cautions = vec!["Load-test filler, not an outlook.".into()];
    }
    Ok(results)
}
