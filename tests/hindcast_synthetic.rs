//! Hindcast checks on synthetic truth: seasons simulated directly from a known Poisson count
//! model (seeded), so the right answer is known.
//!
//! - Counts that ignore the drivers: the verdict must be "no better than the long-term
//!   average" in at least 90% of replicates (the rule claims skill only when the 95% interval
//!   lies above zero, so a model with nothing to find should rarely claim it).
//! - Counts with strong driver effects: the verdict must claim skill.
//! - Forecasts from the true model family lie on the reliability diagram's diagonal within
//!   sampling error (common practice: a calibrated probability forecast's observed frequency
//!   in each bin matches its mean forecast probability up to binomial noise).
//!
//! The tests use few mixture draws (fewer than the command's default) to stay fast; the
//! verdict tests use the real rule with 1,000 bootstrap resamples.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal, Poisson};
use tidetally_model::drivers::EnsoTiming;
use tidetally_model::fit::{DriverValue, Predictor, SeasonData};
use tidetally_model::glm::FamilyRequest;
use tidetally_model::hindcast::{
    ConcurrentEnso, HindcastOptions, HindcastSetup, ModelKind, SeasonHindcast, VerdictKind,
    hindcast_season,
};
use tidetally_model::season::{Season, SeasonSpec};

/// The known count model: log(mean) = ln(observed days) + intercept + effects . drivers.
struct Truth {
    /// Flood days per observed day with every driver at zero.
    base_rate: f64,
    /// Log-rate effect per unit of ENSO, wind and sea level.
    effects: [f64; 3],
}

const PREDICTORS: [Predictor; 3] = [Predictor::Enso, Predictor::Wind, Predictor::SeaLevel];

/// `n` DJF seasons from 1900 on, each with 90 observed days (a few with gaps), drivers drawn
/// from standard normals (ENSO, wind) and a linear sea-level rise of 0.3 m over the record.
fn simulate(truth: &Truth, n: usize, seed: u64) -> Vec<SeasonData> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let spec = SeasonSpec::new("DJF", 12, 3).unwrap();
    let normal = Normal::new(0.0, 1.0).unwrap();
    (0..n)
        .map(|i| {
            let season = Season::new(1900 + i as i32, spec.clone()).unwrap();
            let calendar_days = season.calendar_days();
            let observed_days = if i % 7 == 3 { 70 } else { calendar_days };
            let drivers = [
                normal.sample(&mut rng),
                normal.sample(&mut rng),
                0.3 * (i as f64 / n as f64 - 0.5),
            ];
            let log_rate = truth.base_rate.ln()
                + truth
                    .effects
                    .iter()
                    .zip(&drivers)
                    .map(|(b, x)| b * x)
                    .sum::<f64>();
            let mean = f64::from(observed_days) * log_rate.exp();
            let count = Poisson::new(mean).unwrap().sample(&mut rng) as u32;
            SeasonData {
                season,
                flood_days: count.min(observed_days),
                observed_days,
                calendar_days,
                incomplete: None,
                drivers: PREDICTORS
                    .iter()
                    .zip(drivers)
                    .map(|(&p, x)| (p, DriverValue::Known(x)))
                    .collect(),
            }
        })
        .collect()
}

fn run(
    seasons: &[SeasonData],
    predictors: &[Predictor],
    draws: usize,
    seed: u64,
) -> SeasonHindcast {
    run_with(
        seasons,
        predictors,
        draws,
        seed,
        EnsoTiming::Preceding,
        ConcurrentEnso::Observed,
        FamilyRequest::Poisson,
    )
}

fn run_with(
    seasons: &[SeasonData],
    predictors: &[Predictor],
    draws: usize,
    seed: u64,
    enso_timing: EnsoTiming,
    concurrent_enso: ConcurrentEnso,
    family: FamilyRequest,
) -> SeasonHindcast {
    let setup = HindcastSetup {
        gauge_name: "Synthetic gauge",
        seasons,
        season_name: "DJF",
        predictors,
        family,
        enso_timing,
        exceed_days: &[3, 6, 10],
        enso: None,
        water: None,
    };
    let options = HindcastOptions {
        draws,
        seed,
        concurrent_enso,
        ..HindcastOptions::default()
    };
    hindcast_season(&setup, &options).unwrap()
}

#[test]
fn counts_that_ignore_the_drivers_get_no_skill_verdict() {
    let truth = Truth {
        base_rate: 5.0 / 90.0,
        effects: [0.0; 3],
    };
    let replicates = 30;
    let mut no_better = 0;
    for r in 0..replicates {
        let seasons = simulate(&truth, 45, 1000 + r);
        let h = run(&seasons, &[Predictor::Enso, Predictor::Wind], 100, r);
        let v = h.verdict(ModelKind::Climatology).unwrap();
        if v.verdict == VerdictKind::NoBetter {
            assert!(v.sentence.contains("no better than the long-term average"));
            no_better += 1;
        }
    }
    // At least 90% of replicates.
    assert!(
        no_better * 10 >= replicates * 9,
        "only {no_better} of {replicates} replicates said no better than climatology"
    );
}

#[test]
fn strong_driver_effects_show_skill() {
    let truth = Truth {
        base_rate: 5.0 / 90.0,
        effects: [0.6, 0.0, 0.0],
    };
    let replicates = 5;
    for r in 0..replicates {
        let seasons = simulate(&truth, 45, 2000 + r);
        let h = run(&seasons, &[Predictor::Enso, Predictor::Wind], 100, r);
        let v = h.verdict(ModelKind::Climatology).unwrap();
        assert_eq!(
            v.verdict,
            VerdictKind::Skilful,
            "replicate {r}: {}",
            v.sentence
        );
        assert!(v.sentence.contains("beat the long-term average"));
        for scheme in &h.schemes {
            let skill = scheme
                .skill_of(ModelKind::Drivers, ModelKind::Climatology)
                .unwrap();
            let crpss = skill.entry("crpss").unwrap();
            assert!(crpss.lower.unwrap() > 0.0);
            assert!(crpss.lower.unwrap() < crpss.estimate.unwrap());
            assert!(crpss.estimate.unwrap() < crpss.upper.unwrap());
        }
    }
}

#[test]
fn a_driver_not_known_at_issue_time_gives_no_skill() {
    // The same strong ENSO effect, but as the season's own ENSO: resampled from the training
    // seasons, it tells the forecast nothing about the season, so the skill must vanish;
    // standing in the observed value (a perfect ENSO forecast) keeps it, with the caveat.
    // The family is `auto`: a mixture over resampled ENSO values is overdispersed, like the
    // counts' marginal distribution, so it would beat a Poisson climatology on dispersion
    // alone; a negative-binomial climatology has that too.
    let truth = Truth {
        base_rate: 5.0 / 90.0,
        effects: [0.6, 0.0, 0.0],
    };
    let seasons = simulate(&truth, 45, 2000);
    let blind = run_with(
        &seasons,
        &[Predictor::Enso],
        100,
        0,
        EnsoTiming::Concurrent,
        ConcurrentEnso::Resampled,
        FamilyRequest::Auto,
    );
    let v = blind.verdict(ModelKind::Climatology).unwrap();
    assert_eq!(v.verdict, VerdictKind::NoBetter, "{}", v.sentence);
    assert!(!blind.issue_time[0].known);
    let perfect = run_with(
        &seasons,
        &[Predictor::Enso],
        100,
        0,
        EnsoTiming::Concurrent,
        ConcurrentEnso::Observed,
        FamilyRequest::Auto,
    );
    let v = perfect.verdict(ModelKind::Climatology).unwrap();
    assert_eq!(v.verdict, VerdictKind::Skilful, "{}", v.sentence);
    assert!(v.sentence.contains("forecast perfectly"));
}

#[test]
fn rolling_origin_forecasts_only_after_the_minimum_training() {
    let truth = Truth {
        base_rate: 5.0 / 90.0,
        effects: [0.3, 0.0, 0.0],
    };
    let seasons = simulate(&truth, 30, 7);
    let h = run(&seasons, &[Predictor::Enso], 50, 1);
    let rolling = h.scheme("rolling_origin").unwrap();
    // 30 seasons, 15 needed before the first forecast: 1915 to 1929.
    assert_eq!(rolling.cases.len(), 15);
    assert_eq!(rolling.cases[0].season, "1915-DJF");
    assert!(
        rolling
            .cases
            .iter()
            .enumerate()
            .all(|(i, c)| c.training_seasons == 15 + i)
    );
    let loyo = h.scheme("leave_one_year_out").unwrap();
    assert_eq!(loyo.cases.len(), 30);
    // End seasons lose one neighbour, the others two.
    assert_eq!(loyo.cases[0].training_seasons, 28);
    assert_eq!(loyo.cases[10].training_seasons, 27);
    // Each forecast covers exactly its season's observed days.
    for case in &loyo.cases {
        for pmf in &case.pmfs {
            assert_eq!(pmf.len(), case.observed_days as usize + 1);
        }
    }
}

#[test]
fn forecasts_from_the_true_model_lie_on_the_reliability_diagonal() {
    let truth = Truth {
        base_rate: 5.0 / 90.0,
        effects: [0.5, 0.0, 0.3],
    };
    let seasons = simulate(&truth, 240, 99);
    let h = run(&seasons, &[Predictor::Enso, Predictor::SeaLevel], 100, 3);
    let loyo = h.scheme("leave_one_year_out").unwrap();
    let model = loyo.scores_of(ModelKind::Drivers).unwrap();
    let mut checked = 0;
    for brier in &model.brier {
        for bin in &brier.bins {
            let (Some(p), Some(o)) = (bin.mean_forecast, bin.observed_frequency) else {
                continue;
            };
            if bin.count < 15 {
                continue;
            }
            // Binomial standard error of the observed frequency; 3.3 standard errors is a
            // two-sided 0.1% level, so the ~20 bins tested together fail by chance about 2%
            // of the time (Bonferroni).
            let se = (p * (1.0 - p) / bin.count as f64).sqrt().max(0.01);
            assert!(
                (o - p).abs() <= 3.3 * se,
                "k = {}: bin [{}, {}) has forecast {p:.3}, observed {o:.3} over {} cases",
                brier.days,
                bin.lower,
                bin.upper,
                bin.count
            );
            checked += 1;
        }
        // Reliability is small next to the uncertainty for a calibrated forecast.
        assert!(brier.reliability < 0.2 * brier.uncertainty, "{brier:?}");
    }
    assert!(checked >= 10, "only {checked} well-filled bins");
}
