//! Cost of the verification work inside one gauge's hindcast: 45 seasons x 3 models of
//! count distributions (61 counts each), scored once per case, then 1000 bootstrap resamples
//! of the paired per-case scores. Target: well under 250 ms for the whole.

// `criterion_group!` defines an undocumented public function.
#![allow(missing_docs)]

use criterion::{Criterion, black_box, criterion_group, criterion_main};
use tidetally_model::verify::{Bootstrap, CaseScores, TercileEdges};

const SEASONS: usize = 45;
const MODELS: usize = 3;
const N_MAX: usize = 60;
const EXCEED_DAYS: [u32; 3] = [5, 10, 20];

/// Negative-binomial pmf with mean `mu` and size `theta` over `0..=N_MAX`, tail folded into
/// the last entry.
fn negbin_pmf(mu: f64, theta: f64) -> Vec<f64> {
    let p = theta / (theta + mu);
    let mut pmf = Vec::with_capacity(N_MAX + 1);
    let mut term = p.powf(theta);
    for k in 0..=N_MAX {
        if k > 0 {
            term *= (theta + k as f64 - 1.0) / k as f64 * (1.0 - p);
        }
        pmf.push(term);
    }
    let sum: f64 = pmf.iter().sum();
    pmf[N_MAX] += 1.0 - sum;
    pmf
}

/// Forecasts per model and season, the climatology, and the observed counts.
struct Hindcast {
    forecasts: Vec<Vec<Vec<f64>>>,
    climatology: Vec<f64>,
    observed: Vec<u32>,
}

fn hindcast() -> Hindcast {
    let observed: Vec<u32> = (0..SEASONS).map(|s| ((s * 7919) % 23) as u32).collect();
    let forecasts = (0..MODELS)
        .map(|m| {
            (0..SEASONS)
                .map(|s| negbin_pmf(4.0 + ((s * 31 + m * 7) % 17) as f64, 2.0 + m as f64))
                .collect()
        })
        .collect();
    Hindcast {
        forecasts,
        climatology: negbin_pmf(9.0, 1.5),
        observed,
    }
}

fn score_cases(pmfs: &[&[f64]], observed: &[u32], edges: &TercileEdges) -> CaseScores {
    CaseScores::compute(pmfs, observed, edges, &EXCEED_DAYS).expect("paired cases")
}

/// The whole verification step: score every case once, then bootstrap CRPS, RPS and the
/// three Brier skill scores of the three models against climatology.
fn verify_hindcast(h: &Hindcast, boot: &Bootstrap) -> f64 {
    let edges = TercileEdges::from_reference(&h.climatology).expect("valid climatology");
    let climatology: Vec<&[f64]> = vec![&h.climatology; SEASONS];
    let reference = score_cases(&climatology, &h.observed, &edges);
    let models: Vec<CaseScores> = h
        .forecasts
        .iter()
        .map(|f| {
            let pmfs: Vec<&[f64]> = f.iter().map(Vec::as_slice).collect();
            score_cases(&pmfs, &h.observed, &edges)
        })
        .collect();
    let mut total = 0.0;
    let crps: Vec<&[f64]> = models.iter().map(|m| m.crps.as_slice()).collect();
    let rps: Vec<&[f64]> = models.iter().map(|m| m.rps.as_slice()).collect();
    for interval in boot.skill_intervals(&reference.crps, &crps).expect("valid") {
        total += interval.lower;
    }
    for interval in boot.skill_intervals(&reference.rps, &rps).expect("valid") {
        total += interval.lower;
    }
    for (k, reference_brier) in reference.brier.iter().enumerate() {
        let brier: Vec<&[f64]> = models.iter().map(|m| m.brier[k].as_slice()).collect();
        for interval in boot
            .skill_intervals(reference_brier, &brier)
            .expect("valid")
        {
            total += interval.lower;
        }
    }
    total + reference.log[0] + reference.absolute_error[0]
}

fn bench_verify(c: &mut Criterion) {
    let h = hindcast();
    let boot = Bootstrap::new(1000, 1).expect("enough resamples");
    let edges = TercileEdges::from_reference(&h.climatology).expect("valid climatology");
    let pmfs: Vec<&[f64]> = h.forecasts[0].iter().map(Vec::as_slice).collect();
    c.bench_function(
        "score 45 cases once (crps, rps, log, abs error, 3 brier)",
        |b| b.iter(|| score_cases(black_box(&pmfs), black_box(&h.observed), &edges)),
    );
    let reference = score_cases(
        &vec![h.climatology.as_slice(); SEASONS],
        &h.observed,
        &edges,
    );
    let crps: Vec<Vec<f64>> = h
        .forecasts
        .iter()
        .map(|f| {
            let pmfs: Vec<&[f64]> = f.iter().map(Vec::as_slice).collect();
            score_cases(&pmfs, &h.observed, &edges).crps
        })
        .collect();
    let crps: Vec<&[f64]> = crps.iter().map(Vec::as_slice).collect();
    c.bench_function("bootstrap 1000 x 45 cases, 3 models, one score", |b| {
        b.iter(|| boot.skill_intervals(black_box(&reference.crps), black_box(&crps)))
    });
    c.bench_function(
        "hindcast verification 45 seasons x 3 models x 1000 resamples",
        |b| b.iter(|| verify_hindcast(black_box(&h), &boot)),
    );
}

criterion_group!(benches, bench_verify);
criterion_main!(benches);
