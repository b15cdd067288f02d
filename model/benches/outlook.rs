//! Fit plus outlook from prepared inputs, on the invented demo coastline.
//!
//! Prepared once, outside the timing: each gauge's season table, driver values per season,
//! driver series, ENSO forecast and tide model (`fit::GaugeSources::read`, `fit::prepare`). Timed: the DJF gauge model
//! (GLM fit by the gauge's family, `auto` = Poisson and NB fits plus the LR test), then the
//! 2026-DJF outlook with 2,000 draws: driver scenarios, the climatology and trend-only
//! reference fits, three 2,000-component mixtures (model and both references), terciles,
//! effects, explanation and cautions.

#![allow(clippy::unwrap_used, missing_docs)]

use std::path::Path;

use criterion::{Criterion, criterion_group, criterion_main};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use tidetally_model::fit::{
    self, FilesNeeded, FitOptions, GaugeSources, PreparedGauge, TideAnalysis,
};
use tidetally_model::outlook::{self, Outlook, OutlookOptions};

const GAUGES: [&str; 4] = [
    "port-tamsin",
    "wrenmouth-inlet",
    "saltlow-sound",
    "corrin-quay",
];

fn prepare(id: &str) -> PreparedGauge {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../demo-data/gauges")
        .join(format!("{id}.toml"));
    let sources = GaugeSources::read(&path, FilesNeeded::All).unwrap();
    fit::prepare(&sources, TideAnalysis::AsConfigured).unwrap()
}

fn fit_and_outlook(prepared: &PreparedGauge) -> Outlook {
    let target = prepared.default_target().unwrap();
    let model = fit::fit_gauge(prepared, target.spec().name(), &FitOptions::default()).unwrap();
    outlook::build(&model, prepared, &target, &OutlookOptions::default()).unwrap()
}

fn bench(c: &mut Criterion) {
    let prepared: Vec<PreparedGauge> = GAUGES.iter().map(|id| prepare(id)).collect();
    c.bench_function("fit+outlook 2000 draws, one gauge (port-tamsin)", |b| {
        b.iter(|| fit_and_outlook(&prepared[0]))
    });
    c.bench_function("fit+outlook 2000 draws, 4 demo gauges, sequential", |b| {
        b.iter(|| prepared.iter().map(fit_and_outlook).collect::<Vec<_>>())
    });
    c.bench_function("fit+outlook 2000 draws, 4 demo gauges, rayon", |b| {
        b.iter(|| prepared.par_iter().map(fit_and_outlook).collect::<Vec<_>>())
    });
    let one = &prepared[0];
    c.bench_function("parts, port-tamsin: fit only", |b| {
        b.iter(|| fit::fit_gauge(one, "DJF", &FitOptions::default()).unwrap())
    });
    let target = one.default_target().unwrap();
    let model = fit::fit_gauge(one, "DJF", &FitOptions::default()).unwrap();
    let family = fit::family_request(one.config.model.family);
    c.bench_function("parts, port-tamsin: reference fits", |b| {
        b.iter(|| {
            (
                outlook::references::climatology(&one.seasons, "DJF", family).unwrap(),
                outlook::references::trend_only(&one.seasons, "DJF", family).unwrap(),
            )
        })
    });
    c.bench_function("parts, port-tamsin: 2000 driver scenarios", |b| {
        b.iter(|| {
            let mut rng = ChaCha8Rng::seed_from_u64(1);
            outlook::scenarios::target_scenarios(
                one,
                &target,
                &model.predictors,
                2000,
                false,
                &mut rng,
            )
            .unwrap()
        })
    });
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let scenarios = outlook::scenarios::target_scenarios(
        one,
        &target,
        &model.predictors,
        2000,
        false,
        &mut rng,
    )
    .unwrap();
    c.bench_function("parts, port-tamsin: one 2000-draw mixture", |b| {
        b.iter(|| {
            let mut rng = ChaCha8Rng::seed_from_u64(1);
            outlook::predictive_pmf(&model, &scenarios.drivers, 90, 2000, &mut rng).unwrap()
        })
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30);
    targets = bench
}
criterion_main!(benches);
