//! Benchmarks of the tide module: harmonic analysis of 20 years of hourly levels with the
//! Rayleigh-selected standard set, and one year of hourly prediction with all constituents.
#![allow(missing_docs)] // criterion's macros generate undocumented items

use criterion::{Criterion, black_box, criterion_group, criterion_main};
use tidetally_model::tide::{AnalysisParams, ConstituentValue, STANDARD, TideModel};

const START: i64 = 946_684_800; // 2000-01-01T00:00Z

/// A model with every standard constituent, amplitudes falling with priority.
fn full_model() -> TideModel {
    let values: Vec<ConstituentValue<'_>> = STANDARD
        .iter()
        .enumerate()
        .map(|(k, c)| ConstituentValue {
            name: c.name,
            amplitude: 1.0 / (1.0 + k as f64),
            phase_deg: (37.0 * k as f64) % 360.0,
        })
        .collect();
    TideModel::from_values(1.0, None, START, &values).expect("standard names")
}

fn bench_analysis(c: &mut Criterion) {
    let hours = 20 * 8766;
    let times: Vec<i64> = (0..hours).map(|k| START + k * 3600).collect();
    let mut levels = full_model().predict_at(&times);
    // A deterministic wobble standing in for noise, and a 1% scatter of missing hours.
    for (k, l) in levels.iter_mut().enumerate() {
        *l += 0.02 * ((k as f64) * 0.618_034).sin();
        if k % 97 == 0 {
            *l = f64::NAN;
        }
    }
    let config = AnalysisParams::default().check().expect("valid");
    let n = config.constituents_for(hours as f64).len();
    let mut group = c.benchmark_group("tide");
    group.sample_size(10);
    group.bench_function(format!("analyze 20 years hourly, {n} constituents"), |b| {
        b.iter(|| {
            config
                .fit(black_box(&times), black_box(&levels))
                .expect("fits")
        })
    });
    group.finish();
}

fn bench_prediction(c: &mut Criterion) {
    let model = full_model();
    let n = model.constituents.len();
    c.bench_function(&format!("predict 1 year hourly, {n} constituents"), |b| {
        b.iter(|| model.predict_regular(black_box(START), 3600, 8760))
    });
}

criterion_group!(benches, bench_analysis, bench_prediction);
criterion_main!(benches);
