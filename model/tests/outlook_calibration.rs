//! Synthetic-truth calibration of the outlook: seasons simulated from a known negative-binomial
//! model with known drivers; the model is fitted on a training history, the outlook is made
//! for a new season, and the new season is then drawn from the truth.
//!
//! Checks (seeded, so the outcome is fixed):
//! - the randomised probability integral transform (PIT) of the observed counts is uniform:
//!   chi-square over 10 equal bins, p > 0.01. For a discrete forecast F the randomised PIT is
//!   `u = F(y - 1) + v (F(y) - F(y - 1))` with `v ~ U(0, 1)`, uniform when the forecast is
//!   calibrated (Czado, Gneiting and Held 2009, Biometrics 65, "Predictive model assessment
//!   for count data");
//! - the central 80% interval covers 80% +/- 4% of the new seasons. Coverage is counted on
//!   the randomised PIT (`0.1 <= u <= 0.9`), because the integer interval [p10, p90] of a
//!   discrete forecast holds more than 80% by construction. The +/- 4% allows 2.2 binomial
//!   standard deviations at 500 seasons (sqrt(0.8 * 0.2 / 500) = 0.018).
//!
//! Measured across seeds (1, 2, 3, 42, 43), for the record: with a Poisson truth the coverage
//! averages 0.80 (0.78 to 0.82); with an NB2 truth (theta = 4, 45 training seasons) it
//! averages 0.77 (0.76 to 0.79): the maximum-likelihood theta of a short record is biased
//! high, so the outlook is a little too narrow there. The checks would catch a real
//! miscalibration: fitting Poisson to the NB2 seasons covers 0.60 with a U-shaped PIT.

#![allow(clippy::unwrap_used)]

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Gamma, Normal, Poisson};
use statrs::distribution::{ChiSquared, ContinuousCDF};

use tidetally_model::fit::{Design, DriverValue, Predictor, SeasonData, fit_design};
use tidetally_model::glm::FamilyRequest;
use tidetally_model::outlook::{DriverScenarios, predictive_pmf};
use tidetally_model::season::{Season, SeasonSpec};

const REPLICATES: usize = 500;
const TRAINING_SEASONS: i32 = 45;
const DRAWS: usize = 200;
const SEASON_DAYS: u32 = 90;
// The known model: ln mu = B0 + B_ENSO enso + B_SEA sea_level + ln(days); Poisson, or NB2
// with size theta.
const B0: f64 = -3.0;
const B_ENSO: f64 = 0.35;
const B_SEA: f64 = 6.0;

fn draw_count(rng: &mut ChaCha8Rng, mu: f64, theta: Option<f64>) -> u32 {
    // NB2 as a gamma-Poisson mixture: lambda ~ Gamma(shape theta, scale mu / theta).
    let lambda = match theta {
        Some(theta) => Gamma::new(theta, mu / theta).unwrap().sample(rng),
        None => mu,
    };
    if lambda <= 0.0 {
        return 0;
    }
    Poisson::new(lambda).unwrap().sample(rng) as u32
}

fn true_mean(enso: f64, sea: f64) -> f64 {
    (B0 + B_ENSO * enso + B_SEA * sea + f64::from(SEASON_DAYS).ln()).exp()
}

/// Randomised PIT values of `REPLICATES` new seasons under the truth `theta` (None = Poisson).
fn simulated_pit(theta: Option<f64>, seed: u64) -> Vec<f64> {
    let spec = SeasonSpec::new("DJF", 12, 3).unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let enso_law = Normal::new(0.0, 0.9).unwrap();
    let mut pit = Vec::with_capacity(REPLICATES);
    for r in 0..REPLICATES {
        let first = 1950 + (r as i32 % 20);
        let sea = |year: i32| 0.004 * f64::from(year - 1990);
        let rows: Vec<SeasonData> = (0..TRAINING_SEASONS)
            .map(|i| {
                let year = first + i;
                let enso = enso_law.sample(&mut rng);
                let flood = draw_count(&mut rng, true_mean(enso, sea(year)), theta);
                SeasonData {
                    season: Season::new(year, spec.clone()).unwrap(),
                    flood_days: flood,
                    observed_days: SEASON_DAYS,
                    calendar_days: SEASON_DAYS,
                    incomplete: None,
                    drivers: vec![
                        (Predictor::Enso, DriverValue::Known(enso)),
                        (Predictor::SeaLevel, DriverValue::Known(sea(year))),
                    ],
                }
            })
            .collect();
        let design = Design::build(&rows, "DJF", &[Predictor::Enso, Predictor::SeaLevel]);
        let model = fit_design(&design, FamilyRequest::Auto).expect("simulated history fits");
        let target_year = first + TRAINING_SEASONS;
        let enso = enso_law.sample(&mut rng);
        let drivers = [
            DriverScenarios {
                predictor: Predictor::Enso,
                values: vec![enso],
                source: "known".into(),
            },
            DriverScenarios {
                predictor: Predictor::SeaLevel,
                values: vec![sea(target_year)],
                source: "known".into(),
            },
        ];
        let forecast = predictive_pmf(&model, &drivers, SEASON_DAYS, DRAWS, &mut rng).unwrap();
        let y = draw_count(&mut rng, true_mean(enso, sea(target_year)), theta).min(SEASON_DAYS);
        let below = if y == 0 {
            0.0
        } else {
            forecast.cdf(y as usize - 1)
        };
        let at = forecast.cdf(y as usize);
        pit.push(below + rng.r#gen::<f64>() * (at - below));
    }

    pit
}

/// Checks a PIT sample: uniform by chi-square over 10 bins (p > 0.01), and the central 80%
/// interval covering 80% +/- 4%.
fn check_calibration(pit: &[f64]) {
    let mut bins = [0usize; 10];
    for &u in pit {
        bins[((u * 10.0) as usize).min(9)] += 1;
    }
    let expected = REPLICATES as f64 / 10.0;
    let chi2: f64 = bins
        .iter()
        .map(|&o| (o as f64 - expected).powi(2) / expected)
        .sum();
    let p_value = ChiSquared::new(9.0).unwrap().sf(chi2);
    assert!(
        p_value > 0.01,
        "PIT not uniform: bins {bins:?}, chi2 {chi2:.2}, p {p_value:.4}"
    );

    let covered = pit.iter().filter(|&&u| (0.1..=0.9).contains(&u)).count() as f64;
    let coverage = covered / REPLICATES as f64;
    assert!(
        (coverage - 0.8).abs() <= 0.04,
        "80% interval covers {coverage:.3}"
    );
}

#[test]
fn outlook_is_calibrated_when_the_truth_is_poisson() {
    check_calibration(&simulated_pit(None, 42));
}

#[test]
fn outlook_is_calibrated_when_the_truth_is_negative_binomial() {
    check_calibration(&simulated_pit(Some(4.0), 42));
}
