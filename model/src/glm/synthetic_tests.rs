//! Synthetic-truth checks: data simulated from known coefficients and theta (seeded), interval
//! coverage, failure modes and the reproducibility of parameter draws.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Gamma, Poisson, StandardNormal};

use super::*;

const TRUE_BETA: [f64; 3] = [-2.0, 0.4, -0.25];
const TRUE_THETA: f64 = 3.0;

/// One simulated table: 100 seasons of 90 days, two standard-normal drivers, NB2 or Poisson.
fn simulate(rng: &mut ChaCha8Rng, theta: Option<f64>) -> GlmData {
    let n = 100;
    let x1: Vec<f64> = (0..n).map(|_| rng.sample(StandardNormal)).collect();
    let x2: Vec<f64> = (0..n)
        .map(|_| 2.0 + rng.sample::<f64, _>(StandardNormal))
        .collect();
    let exposure = vec![90.0; n];
    let response = (0..n)
        .map(|i| {
            let mu = 90.0 * (TRUE_BETA[0] + TRUE_BETA[1] * x1[i] + TRUE_BETA[2] * x2[i]).exp();
            let rate = match theta {
                Some(t) => Gamma::new(t, mu / t).expect("valid gamma").sample(rng),
                None => mu,
            };
            if rate > 0.0 {
                Poisson::new(rate).expect("valid poisson").sample(rng)
            } else {
                0.0
            }
        })
        .collect();
    GlmSpec {
        response,
        predictors: vec![("x1".into(), x1), ("x2".into(), x2)],
        offset: None,
    }
    .with_log_exposure(&exposure)
    .expect("positive exposure")
    .check()
    .expect("valid simulated data")
}

/// Share of replicates whose 95% interval holds the truth, per coefficient.
fn coverage(theta: Option<f64>, request: FamilyRequest, seed: u64) -> Vec<f64> {
    let replicates = 300;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut hits = [0usize; 3];
    for _ in 0..replicates {
        let fitted = fit(&simulate(&mut rng, theta), request).expect("fit converges");
        for (j, c) in fitted.coefficients.iter().enumerate() {
            if c.ci_low <= TRUE_BETA[j] && TRUE_BETA[j] <= c.ci_high {
                hits[j] += 1;
            }
        }
    }
    hits.iter().map(|&h| h as f64 / replicates as f64).collect()
}

/// Wald 95% intervals cover the truth 95% +/- 3% over 300 seeded replicates (the binomial
/// standard error of a coverage share is 1.3% here, so 3% is 2.4 of them).
#[test]
fn negbin_intervals_cover_the_truth() {
    for (j, share) in coverage(Some(TRUE_THETA), FamilyRequest::Negbin, 11)
        .iter()
        .enumerate()
    {
        assert!(
            (share - 0.95).abs() <= 0.03,
            "coefficient {j}: coverage {share}"
        );
    }
}

#[test]
fn poisson_intervals_cover_the_truth() {
    for (j, share) in coverage(None, FamilyRequest::Poisson, 12)
        .iter()
        .enumerate()
    {
        assert!(
            (share - 0.95).abs() <= 0.03,
            "coefficient {j}: coverage {share}"
        );
    }
}

/// Theta is recovered on average (its ML estimate is biased upward in small samples, so the
/// band is generous), and auto picks NB on overdispersed data and Poisson on Poisson data.
#[test]
fn theta_is_recovered_and_auto_picks_the_right_family() {
    let mut rng = ChaCha8Rng::seed_from_u64(13);
    let mut log_theta = 0.0;
    let mut negbin_picked = 0;
    for _ in 0..50 {
        let fitted = fit(&simulate(&mut rng, Some(TRUE_THETA)), FamilyRequest::Auto).expect("fits");
        if fitted.family == Family::Negbin {
            negbin_picked += 1;
            log_theta += fitted.theta.expect("theta").estimate.ln();
        }
    }
    assert!(negbin_picked >= 48, "{negbin_picked}");
    let mean_theta = (log_theta / negbin_picked as f64).exp();
    assert!(
        (mean_theta / TRUE_THETA - 1.0).abs() < 0.25,
        "geometric mean theta {mean_theta}"
    );

    let mut poisson_picked = 0;
    for _ in 0..50 {
        let fitted = fit(&simulate(&mut rng, None), FamilyRequest::Auto).expect("fits");
        let choice = fitted.family_choice.expect("auto reports");
        assert!(!choice.reason.is_empty());
        if fitted.family == Family::Poisson {
            poisson_picked += 1;
        }
    }
    // The test has size 5%: expect about 47 or 48 of 50.
    assert!(poisson_picked >= 44, "{poisson_picked}");
}

#[test]
fn perfect_separation_is_reported() {
    let x = vec![0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 1.0, 1.0];
    let data = GlmSpec {
        response: vec![0.0, 0.0, 0.0, 0.0, 3.0, 5.0, 2.0, 4.0],
        predictors: vec![("flag".into(), x)],
        offset: None,
    }
    .check()
    .expect("valid columns");
    match fit(&data, FamilyRequest::Poisson) {
        Err(GlmError::PerfectSeparation { rows, columns }) => {
            assert_eq!(rows, 4);
            assert_eq!(columns, ["flag"]);
        }
        other => panic!("expected separation, got {other:?}"),
    }
}

/// Under-dispersed counts (all near the mean): theta runs to infinity and negbin falls back.
#[test]
fn underdispersed_counts_fall_back_to_poisson() {
    let data = GlmSpec {
        response: vec![5.0, 6.0, 5.0, 4.0, 5.0, 6.0, 5.0, 5.0, 4.0, 6.0],
        predictors: vec![("x".into(), (0..10).map(f64::from).collect())],
        offset: None,
    }
    .check()
    .expect("valid columns");
    let fitted = fit(&data, FamilyRequest::Negbin).expect("falls back");
    assert_eq!(fitted.family, Family::Poisson);
    assert!(fitted.theta.is_none());
    assert!(fitted.notes[0].contains("infinity"));
}

/// Coefficient draws are reproducible from the seed and their sample covariance matches the
/// estimated covariance (20,000 draws: sampling error of a covariance ~ 1% of its scale).
#[test]
fn parameter_draws_follow_the_estimated_covariance() {
    let mut rng = ChaCha8Rng::seed_from_u64(21);
    let fitted = fit(&simulate(&mut rng, Some(TRUE_THETA)), FamilyRequest::Negbin).expect("fits");
    let a = fitted
        .predictive(&[0.5, 2.0], 90f64.ln(), 90, 500, 7)
        .expect("predicts");
    let b = fitted
        .predictive(&[0.5, 2.0], 90f64.ln(), 90, 500, 7)
        .expect("predicts");
    assert_eq!(a, b);
    assert_eq!(a.distribution.pmf.len(), 91);
    let point = fitted
        .predictive(&[0.5, 2.0], 90f64.ln(), 90, 0, 7)
        .expect("predicts");
    // Parameter uncertainty widens the distribution.
    assert!(a.distribution.variance() > point.distribution.variance());

    let mut rng = ChaCha8Rng::seed_from_u64(22);
    let n = 20_000;
    let draws = fitted.draw_coefficients(&mut rng, n);
    let q = fitted.coefficients.len();
    let mean: Vec<f64> = (0..q)
        .map(|j| draws.iter().map(|d| d[j]).sum::<f64>() / n as f64)
        .collect();
    for i in 0..q {
        let se_i = fitted.covariance[i][i].sqrt();
        assert!((mean[i] - fitted.coefficients[i].estimate).abs() < 0.05 * se_i);
        for j in 0..q {
            let cov: f64 = draws
                .iter()
                .map(|d| (d[i] - mean[i]) * (d[j] - mean[j]))
                .sum::<f64>()
                / (n as f64 - 1.0);
            let scale = se_i * fitted.covariance[j][j].sqrt();
            assert!(
                (cov - fitted.covariance[i][j]).abs() < 0.04 * scale,
                "cov[{i}][{j}]"
            );
        }
    }
    let thetas: Vec<f64> = fitted
        .draw_parameters(&mut rng, 5000)
        .iter()
        .map(|d| d.theta.expect("negbin draws theta").ln())
        .collect();
    let t = fitted.theta.expect("theta");
    let sd = (thetas
        .iter()
        .map(|l| (l - t.estimate.ln()).powi(2))
        .sum::<f64>()
        / 5000.0)
        .sqrt();
    assert!((sd / (t.std_error / t.estimate) - 1.0).abs() < 0.05);
}

/// Leave-one-out refits work row by row and the linear predictor reproduces fitted means.
#[test]
fn leave_one_out_and_linear_predictor() {
    let mut rng = ChaCha8Rng::seed_from_u64(31);
    let data = simulate(&mut rng, Some(TRUE_THETA));
    let fitted = fit(&data, FamilyRequest::Negbin).expect("fits");
    for row in [0, 57] {
        let eta = fitted
            .linear_predictor(&data.predictor_row(row), data.offset()[row])
            .expect("two predictors");
        assert!((eta.exp() / fitted.fitted_means[row] - 1.0).abs() < 1e-10);
    }
    let held_out = data.without_rows(&[3]).expect("still valid");
    assert_eq!(held_out.rows(), 99);
    fit(&held_out, FamilyRequest::Negbin).expect("refit");
    assert!(matches!(
        fitted.linear_predictor(&[1.0], 0.0),
        Err(GlmError::PredictorCount {
            expected: 2,
            found: 1
        })
    ));
}
