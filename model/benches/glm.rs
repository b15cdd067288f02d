//! Count-model speed: one Poisson and one NB fit on a 45-season, 6-predictor table (the same
//! table R timed in tests/fixtures/glm/bench_45x6.json), leave-one-out of 45 NB refits, and a
//! predictive pmf mixed over 1,000 parameter draws.

#![allow(
    missing_docs,
    reason = "criterion_group! generates undocumented functions"
)]

use criterion::{Criterion, black_box, criterion_group, criterion_main};
use tidetally_model::glm::{ColumnSpec, FamilyRequest, GlmData, OffsetColumn, fit, read_table};

const TABLE: &str = include_str!("../../tests/fixtures/glm/bench_45x6.csv");

fn bench_data() -> GlmData {
    let columns = ColumnSpec {
        response: "y".into(),
        predictors: (1..=6).map(|i| format!("x{i}")).collect(),
        offset: Some(OffsetColumn::Log("exposure".into())),
    };
    read_table(TABLE.as_bytes(), "bench_45x6.csv", &columns)
        .expect("bench table reads")
        .check()
        .expect("bench table is valid")
}

fn count_models(c: &mut Criterion) {
    let data = bench_data();
    c.bench_function("glm poisson fit 45x6", |b| {
        b.iter(|| fit(black_box(&data), FamilyRequest::Poisson).expect("fits"))
    });
    c.bench_function("glm negbin fit 45x6", |b| {
        b.iter(|| fit(black_box(&data), FamilyRequest::Negbin).expect("fits"))
    });
    c.bench_function("glm negbin leave-one-out 45 refits", |b| {
        b.iter(|| {
            for row in 0..data.rows() {
                let held = data.without_rows(&[row]).expect("valid");
                black_box(fit(&held, FamilyRequest::Negbin).expect("fits"));
            }
        })
    });
    let fitted = fit(&data, FamilyRequest::Negbin).expect("fits");
    let x = data.predictor_row(0);
    let offset = 90f64.ln();
    c.bench_function("glm predictive pmf 1000 draws n_max 90", |b| {
        b.iter(|| {
            fitted
                .predictive(black_box(&x), offset, 90, 1000, 42)
                .expect("predicts")
        })
    });
}

criterion_group!(benches, count_models);
criterion_main!(benches);
