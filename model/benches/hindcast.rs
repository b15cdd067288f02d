//! Cost of a full hindcast: both schemes, the driver model and both baselines refitted per
//! case, every score, 1,000 bootstrap resamples. Gauges are read and prepared once, outside
//! the timing (reading the level files is the ingest benchmark's business).
//!
//! - `hindcast/one_season_name`: Port Tamsin's DJF seasons (46 usable seasons, 4-5 drivers).
//!   Target: median under 250 ms.
//! - `hindcast/demo_gauges_parallel`: every season name (4 each) of all four demo gauges,
//!   gauges in parallel with rayon: 16 season-name hindcasts. Target: median under 1 s.
//! - `hindcast/demo_gauges_djf_parallel`: the DJF seasons of all four gauges in parallel (one
//!   season name per gauge, the reading of "one gauge with 45 seasons" per gauge).

// `criterion_group!` defines an undocumented public function.
#![allow(missing_docs)]

use std::path::Path;
use std::time::Duration;

use criterion::{Criterion, black_box, criterion_group, criterion_main};
use rayon::prelude::*;
use tidetally_model::fit::{
    self, FilesNeeded, GaugeSources, PreparedGauge, TideAnalysis, family_request,
};
use tidetally_model::hindcast::{self, HindcastOptions, HindcastSetup};

const GAUGES: [&str; 4] = [
    "port-tamsin",
    "wrenmouth-inlet",
    "saltlow-sound",
    "corrin-quay",
];

fn prepared(id: &str) -> PreparedGauge {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../demo-data/gauges")
        .join(format!("{id}.toml"));
    let sources = GaugeSources::read(&path, FilesNeeded::All).expect("the demo gauge's files read");
    fit::prepare(&sources, TideAnalysis::AsConfigured).expect("the demo gauge prepares")
}

fn bench(c: &mut Criterion) {
    let gauges: Vec<PreparedGauge> = GAUGES.iter().map(|id| prepared(id)).collect();
    let options = HindcastOptions::default();
    let all_predictors: Vec<_> = gauges.iter().map(|g| g.requested_predictors()).collect();
    let mut group = c.benchmark_group("hindcast");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(8));

    let port = &gauges[0];
    let predictors = port.requested_predictors();
    let setup = HindcastSetup {
        gauge_name: &port.config.name,
        seasons: &port.seasons,
        season_name: "DJF",
        predictors: &predictors,
        family: family_request(port.config.model.family),
        enso_timing: port.settings.enso_timing,
        exceed_days: &port.config.model.exceed_days,
        enso: port.drivers.enso.as_ref(),
        water: None,
    };
    group.bench_function("one_season_name", |b| {
        b.iter(|| hindcast::hindcast_season(black_box(&setup), &options).expect("runs"))
    });
    group.bench_function("demo_gauges_parallel", |b| {
        b.iter(|| {
            gauges
                .par_iter()
                .map(|g| hindcast::hindcast_gauge(black_box(g), &options).expect("runs"))
                .collect::<Vec<_>>()
        })
    });
    let setups: Vec<HindcastSetup<'_>> = gauges
        .iter()
        .zip(&all_predictors)
        .map(|(g, predictors)| HindcastSetup {
            gauge_name: &g.config.name,
            seasons: &g.seasons,
            season_name: "DJF",
            predictors,
            family: family_request(g.config.model.family),
            enso_timing: g.settings.enso_timing,
            exceed_days: &g.config.model.exceed_days,
            enso: g.drivers.enso.as_ref(),
            water: None,
        })
        .collect();
    group.bench_function("demo_gauges_djf_parallel", |b| {
        b.iter(|| {
            setups
                .par_iter()
                .map(|s| hindcast::hindcast_season(black_box(s), &options).expect("runs"))
                .collect::<Vec<_>>()
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
