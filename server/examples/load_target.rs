//! A service to point a load generator at (used by `server/bench/load.sh`): an in-memory
//! store with `--gauges N` invented gauges, each serving a synthetic outlook for `2026-DJF`.
//! The numbers are load-test filler, not a model result.
//!
//! `cargo run --release -p tidetally-server --example load_target -- 127.0.0.1:8099 20`

use std::collections::BTreeMap;
use std::sync::Arc;
use std::time::Duration;

use tidetally_server::pipeline::GaugeResults;
use tidetally_server::store::{self, GaugeRecord, Store};
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
        let toml = format!(
            "id = \"{id}\"\nname = \"Load gauge {i}\"\nlatitude = 40.0\nlongitude = -70.0\n\
             datum = \"STND\"\nflood_threshold_m = 0.8\nutc_offset = \"-05:00\"\ncoast_orientation_deg = 90.0\n\
             [levels]\nfile = \"x.csv\"\nunits = \"m\"\n"
        );
        state.store.call_blocking(|c| {
            store::put_gauge(
                c,
                &GaugeRecord {
                    id: id.clone(),
                    toml,
                    name: format!("Load gauge {i}"),
                    latitude: 40.0,
                    longitude: -70.0,
                    updated_at: store::now_rfc3339(),
                },
            )
        })?;
        state::install_results(state, &id, filler(&id))?;
    }
    Ok(())
}

/// A 91-day pmf shaped like a count distribution, to give the body a realistic size.
fn filler(gauge: &str) -> GaugeResults {
    let mean = 6.0_f64;
    let mut pmf = Vec::with_capacity(91);
    let mut p = (-mean).exp();
    for k in 0..91 {
        pmf.push(p);
        p *= mean / f64::from(k + 1);
    }
    let skill = api::Skill {
        verdict: api::Verdict::NotMeasured,
        verdict_text: "Load-test filler.".into(),
        seasons_scored: 0,
        season_name: "DJF".into(),
        scheme: "none".into(),
        scores: vec![],
        engine: "count".into(),
        enso: "at_issue".into(),
        perfect_enso_text: None,
    };
    let outlook = api::Outlook {
        gauge: gauge.into(),
        season: "2026-DJF".into(),
        season_days: 90,
        exceedance: api::exceedance_from_pmf(&pmf, &[5, 10, 20]),
        pmf,
        mean,
        median: 6,
        p10: 3,
        p90: 9,
        terciles: vec![],
        climatological_mean: 5.0,
        last_season_observed: None,
        drivers: vec![],
        skill: skill.clone(),
        cautions: vec!["Load-test filler, not an outlook.".into()],
        issued_at: "2026-11-20T00:00:00Z".into(),
        model_version: "load-filler".into(),
        explanation: vec![],
        trend_only_mean: None,
        family: "poisson".into(),
        fit_period: api::FitPeriod {
            first: "2000-DJF".into(),
            last: "2025-DJF".into(),
            seasons: 26,
        },
        notes: vec![],
        engine: "count".into(),
        engine_reason: String::new(),
        other_engine: None,
        days: vec![],
        water_effects: vec![],
    };
    GaugeResults {
        model_version: "load-filler".into(),
        fitted_at: "2026-11-20T00:00:00Z".into(),
        hindcast: api::Hindcast {
            gauge: gauge.into(),
            model_version: "load-filler".into(),
            method: "none".into(),
            skill,
            cases: vec![],
            engines: vec![],
        },
        outlooks: BTreeMap::from([("2026-DJF".to_owned(), outlook)]),
        driver_inputs: BTreeMap::new(),
    }
}
