//! Cost of the water-level engine at one 47-year hourly gauge (Port Tamsin, DJF). The gauge is
//! read, prepared and its tide analysed once, outside the timing (the harmonic analysis is
//! shared by both engines and has its own benchmark).
//!
//! - `water/table`: the daily table (predicted highs on the reading grid, residuals, drivers).
//! - `water/fit`: the residual regression, the pool, block length and persistence.
//! - `water/simulate_4000`: a 4,000-season simulation of 2026-DJF.
//! - `water/hindcast_loyo`: the leave-one-year-out hindcast of the water engine alone
//!   (one fit and a 500-season simulation per held-out season).
//! - `water/all`: the four together, the figure the README's target is for (< 300 ms).

// `criterion_group!` defines an undocumented public function.
#![allow(missing_docs)]

use std::path::Path;
use std::time::Duration;

use criterion::{Criterion, black_box, criterion_group, criterion_main};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use tidetally_model::fit::{self, FilesNeeded, GaugeSources, PreparedGauge, TideAnalysis};
use tidetally_model::season::Season;
use tidetally_model::water::{self, DayDrivers, GaugeWater, SeasonPlan};

fn prepared() -> PreparedGauge {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../demo-data/gauges/port-tamsin.toml");
    let sources = GaugeSources::read(&path, FilesNeeded::All).expect("the demo gauge's files read");
    fit::prepare(&sources, TideAnalysis::AsConfigured).expect("the demo gauge prepares")
}

/// Leave one year out (neighbours too): one fit and a 500-season simulation per season.
fn hindcast_loyo(water: &GaugeWater) -> f64 {
    let usable = water.usable();
    let mut total = 0.0;
    for &target in &usable {
        let year = water.seasons[target].season.year();
        let training: Vec<usize> = usable
            .iter()
            .copied()
            .filter(|&i| (water.seasons[i].season.year() - year).abs() > 1)
            .collect();
        let fit = water
            .fit_on(&training, |m| (m.year - year).abs() > 1)
            .expect("fits");
        let mut rng = ChaCha8Rng::seed_from_u64(target as u64);
        let sim = water::simulate(
            &fit,
            SeasonPlan {
                season: &water.seasons[target],
                observed_only: true,
            },
            &[0.0],
            500,
            &mut rng,
        )
        .expect("simulates");
        total += sim.mean();
    }
    total
}

fn bench(c: &mut Criterion) {
    let port = prepared();
    let target = Season::parse("2026-DJF", &port.config.seasons.specs).expect("label");
    let water = GaugeWater::for_gauge(&port, "DJF").expect("engine");
    let fit = water.fit_before(Some(&target)).expect("fits");
    let season = water
        .future(&target, &DayDrivers::default())
        .expect("season");
    let mut group = c.benchmark_group("water");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(8));
    group.bench_function("table", |b| {
        b.iter(|| GaugeWater::for_gauge(black_box(&port), "DJF").expect("engine"))
    });
    group.bench_function("fit", |b| {
        b.iter(|| water.fit_before(black_box(Some(&target))).expect("fits"))
    });
    group.bench_function("simulate_4000", |b| {
        b.iter(|| {
            let mut rng = ChaCha8Rng::seed_from_u64(1);
            water
                .forecast(&fit, black_box(&season), &[-0.5], 4000, &mut rng)
                .expect("simulates")
        })
    });
    group.bench_function("hindcast_loyo", |b| {
        b.iter(|| hindcast_loyo(black_box(&water)))
    });
    group.bench_function("all", |b| {
        b.iter(|| {
            let w = GaugeWater::for_gauge(black_box(&port), "DJF").expect("engine");
            let f = w.fit_before(Some(&target)).expect("fits");
            let s = w.future(&target, &DayDrivers::default()).expect("season");
            let mut rng = ChaCha8Rng::seed_from_u64(1);
            let sim = w
                .forecast(&f, &s, &[-0.5], 4000, &mut rng)
                .expect("simulates");
            (sim.mean(), hindcast_loyo(&w))
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
