//! A service to point a load generator at (used by `server/bench/load.sh`): an in-memory
//! store with N invented gauges, each serving a synthetic outlook for `2026-DJF`. The numbers
//! are load-test filler, not a model result.
//!
//! `cargo run --release -p tidetally-server --example load_target -- 127.0.0.1:8099 20 [OUTLOOK.json]`
//!
//! With an outlook file (a real one, fetched from the demo service), every gauge serves a copy
//! of it under its own id with each fractional number nudged by a few parts per million, so the
//! bodies have a real outlook's size and shape and do not repeat byte for byte (a compressor
//! would otherwise fold 100 identical copies into one).

use std::sync::Arc;
use std::time::Duration;

use tidetally_server::pipeline::GaugeResults;
use tidetally_server::store::{self, Store, StoredGaugeRow};
use tidetally_server::{AppState, api, state};

fn main() -> anyhow::Result<()> {
    let mut args = std::env::args().skip(1);
    let addr = args.next().unwrap_or_else(|| "127.0.0.1:8099".into());
    let gauges: usize = args.next().map_or(Ok(20), |n| n.parse())?;
    let template: Option<serde_json::Value> = match args.next() {
        Some(path) => Some(serde_json::from_slice(&std::fs::read(&path)?)?),
        None => None,
    };
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()?;
    runtime.block_on(async move {
        let state = AppState::new(Store::open_in_memory()?, None, Duration::from_secs(300));
        let st = Arc::clone(&state);
        tokio::task::spawn_blocking(move || fill(&st, gauges, template.as_ref())).await??;
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

fn fill(
    state: &AppState,
    gauges: usize,
    template: Option<&serde_json::Value>,
) -> anyhow::Result<()> {
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
        let results = match template {
            Some(outlook) => copied(&id, outlook, i)?,
            None => filler(&id)?,
        };
        state::install_results(state, &id, results)?;
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

/// Filler results whose `2026-DJF` outlook is a nudged copy of `outlook` under gauge `id`.
fn copied(id: &str, outlook: &serde_json::Value, salt: usize) -> anyhow::Result<GaugeResults> {
    let mut results: GaugeResults =
        serde_json::from_value(tidetally_test_support::fixtures::fake_results(id, &[1.0]))?;
    let mut copy = outlook.clone();
    let mut state = 0x9e37_79b9_7f4a_7c15_u64 ^ (salt as u64).wrapping_mul(0x2545_f491_4f6c_dd1d);
    nudge(&mut copy, &mut state);
    copy["gauge"] = serde_json::Value::from(id);
    copy["season"] = serde_json::Value::from("2026-DJF");
    results
        .outlooks
        .insert("2026-DJF".into(), serde_json::from_value(copy)?);
    Ok(results)
}

/// Multiplies every fractional number in `value` by `1 + e`, `|e| < 5e-6`, from a xorshift
/// sequence (Marsaglia 2003).
fn nudge(value: &mut serde_json::Value, state: &mut u64) {
    match value {
        serde_json::Value::Number(n) if n.is_f64() => {
            if let Some(x) = n.as_f64()
                && x.fract() != 0.0
            {
                *state ^= *state << 13;
                *state ^= *state >> 7;
                *state ^= *state << 17;
                let e = ((*state % 10_000) as f64 - 5_000.0) * 1e-9;
                if let Some(nudged) = serde_json::Number::from_f64(x * (1.0 + e)) {
                    *n = nudged;
                }
            }
        }
        serde_json::Value::Array(items) => items.iter_mut().for_each(|v| nudge(v, state)),
        serde_json::Value::Object(fields) => fields.values_mut().for_each(|v| nudge(v, state)),
        _ => {}
    }
}
