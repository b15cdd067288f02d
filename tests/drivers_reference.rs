//! Reference checks of the climate drivers against definitions and facts from outside the
//! project: the RMM phase definition of Wheeler and Hendon (2004), the side of Ekman transport
//! (Ekman 1905), the meteorological wind convention, ENSO category thresholds (common
//! practice), a trend-fit coverage experiment on synthetic truth, and equal weighting of
//! multi-model forecasts.

#![allow(clippy::unwrap_used)] // a failed unwrap is a failed test

use std::fs::File;
use std::io::BufReader;
use std::path::PathBuf;

use chrono::{Duration, FixedOffset, NaiveDate};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use tidetally_model::drivers::enso::ENSO_CATEGORY_THRESHOLD_C;
use tidetally_model::drivers::forecast::ForecastContent;
use tidetally_model::drivers::sea_level::month_mid_year;
use tidetally_model::drivers::wind::uv_from_speed_direction;
use tidetally_model::drivers::{
    Coast, Driver, EnsoCategory, EnsoForecast, ForecastError, MonthlyMeanLevel, PastSeason,
    Resampling, ScenarioError, ScenarioGenerator, SeasonalCycle, TrendShape, WindSeries,
    WindStatistic, fit_trend, rmm_state,
};
use tidetally_model::season::{Season, SeasonSpec};

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/drivers")
        .join(name)
}

fn forecast_fixture(name: &str) -> EnsoForecast {
    let path = fixture(name);
    let file = File::open(&path).expect("fixture exists");
    EnsoForecast::parse(
        BufReader::new(file),
        &path.display().to_string(),
        &SeasonSpec::meteorological(),
    )
    .expect("fixture is a valid forecast")
}

fn forecast_text(text: &str) -> Result<EnsoForecast, ForecastError> {
    EnsoForecast::parse(text.as_bytes(), "inline", &SeasonSpec::meteorological())
}

// ---- MJO: Wheeler, M. C. and H. H. Hendon (2004), An all-season real-time multivariate MJO
// index, Monthly Weather Review 132, 1917-1932. Phases are 45-degree sectors of the
// (RMM1, RMM2) plane counted counter-clockwise, phase 1 at 180..225 deg (RMM1 < 0, RMM2 < 0,
// |RMM1| > |RMM2|), phase 5 at 0..45 deg; amplitude sqrt(RMM1^2 + RMM2^2), active at >= 1.

/// Checks phase and amplitude of one point; amplitudes to 1e-12 (exact arithmetic up to
/// rounding of one square root).
fn check_rmm(rmm1: f64, rmm2: f64, phase: u8, amplitude: f64) {
    let state = rmm_state(rmm1, rmm2).expect("finite input");
    assert_eq!(state.phase, phase, "phase of ({rmm1}, {rmm2})");
    assert!(
        (state.amplitude - amplitude).abs() < 1e-12,
        "amplitude of ({rmm1}, {rmm2}): {} vs {amplitude}",
        state.amplitude
    );
}

#[test]
fn rmm_worked_example_is_phase_5() {
    // RMM1 = 1.2, RMM2 = 0.3: angle 14 deg, phase 5, amplitude sqrt(1.53) = 1.2369.
    check_rmm(1.2, 0.3, 5, 1.53_f64.sqrt());
    assert!((1.53_f64.sqrt() - 1.2369).abs() < 1e-4);
    assert!(rmm_state(1.2, 0.3).unwrap().is_active());
}

#[test]
fn rmm_phase_in_every_sector_follows_wheeler_hendon() {
    // Mid-sector points at angle 22.5 + 45 k deg; phase 5 at k = 0, counter-clockwise.
    let expected = [5, 6, 7, 8, 1, 2, 3, 4];
    for (k, &phase) in expected.iter().enumerate() {
        let angle = (22.5 + 45.0 * k as f64).to_radians();
        check_rmm(2.0 * angle.cos(), 2.0 * angle.sin(), phase, 2.0);
    }
    // Wheeler-Hendon's quadrant description of phase 1: RMM1 < 0, RMM2 < 0, |RMM1| > |RMM2|.
    check_rmm(-1.5, -0.5, 1, 2.5_f64.sqrt());
    // Phase 8 mirrors it above the axis: RMM1 < 0, RMM2 > 0, |RMM1| > |RMM2|.
    check_rmm(-1.5, 0.5, 8, 2.5_f64.sqrt());
}

#[test]
fn rmm_sector_edges_belong_to_the_counter_clockwise_sector() {
    // Our documented convention: an edge belongs to the sector that starts at it.
    let edges = [
        ((1.0, 0.0), 5),   // 0 deg
        ((1.0, 1.0), 6),   // 45 deg
        ((0.0, 1.0), 7),   // 90 deg
        ((-1.0, 1.0), 8),  // 135 deg
        ((-1.0, 0.0), 1),  // 180 deg
        ((-1.0, -1.0), 2), // 225 deg
        ((0.0, -1.0), 3),  // 270 deg
        ((1.0, -1.0), 4),  // 315 deg
    ];
    for ((x, y), phase) in edges {
        check_rmm(x, y, phase, f64::hypot(x, y));
    }
    // Amplitude exactly 1 is active; just below is not (Wheeler and Hendon 2004: >= 1).
    assert!(rmm_state(0.6, 0.8).unwrap().is_active());
    assert!(!rmm_state(0.6, 0.799).unwrap().is_active());
}

#[test]
fn rmm_phase_agrees_with_atan2_away_from_edges() {
    // Independent computation with the standard library's atan2 on a grid avoiding edges.
    for i in -20..=20 {
        for j in -20..=20 {
            let (x, y) = (i as f64 * 0.13 + 0.011, j as f64 * 0.17 + 0.007);
            let angle = y.atan2(x).to_degrees().rem_euclid(360.0);
            let sector = (angle / 45.0).floor() as u8;
            let expected = (sector + 4) % 8 + 1;
            assert_eq!(rmm_state(x, y).unwrap().phase, expected, "({x}, {y})");
        }
    }
}

// ---- Along-shore wind: Ekman (1905) transport is 90 deg to the right of the wind in the
// Northern Hemisphere and to the left in the Southern (Knauss, Introduction to Physical
// Oceanography, ch. on wind-driven circulation). Wind whose transport is onshore raises
// coastal sea level.

/// Checks the signed along-shore component of a wind (u, v) at a coast; exact to 1e-12.
fn check_alongshore(normal_deg: f64, latitude: f64, (u, v): (f64, f64), expected: f64) {
    let coast = Coast::new(normal_deg, latitude).expect("valid coast");
    let got = coast.alongshore(u, v);
    assert!(
        (got - expected).abs() < 1e-12,
        "normal {normal_deg}, lat {latitude}, wind ({u}, {v}): {got} vs {expected}"
    );
}

#[test]
fn ekman_sign_northern_hemisphere_sea_to_the_east() {
    // Coast running north-south, sea to the east (seaward normal 90 deg), 40 N: wind toward
    // the south drives transport to its right, i.e. west, onshore: positive.
    check_alongshore(90.0, 40.0, (0.0, -5.0), 5.0);
    check_alongshore(90.0, 40.0, (0.0, 5.0), -5.0);
    // Cross-shore wind has no along-shore component.
    check_alongshore(90.0, 40.0, (-5.0, 0.0), 0.0);
}

#[test]
fn ekman_sign_southern_hemisphere_mirror() {
    // Same coast at 33 S: transport to the left of the wind, so wind toward the north raises
    // sea level.
    check_alongshore(90.0, -33.0, (0.0, 5.0), 5.0);
    check_alongshore(90.0, -33.0, (0.0, -5.0), -5.0);
}

#[test]
fn ekman_sign_west_facing_coast() {
    // Sea to the west (normal 270 deg) in the north: equatorward (southward) wind drives
    // offshore transport and upwelling, lowering sea level; poleward wind raises it (common
    // practice for eastern-boundary coasts).
    check_alongshore(270.0, 40.0, (0.0, -5.0), -5.0);
    check_alongshore(270.0, 40.0, (0.0, 5.0), 5.0);
    // A south-facing coast (normal 180 deg) in the north: wind toward the west has its
    // transport to the right, toward the north, onshore: it raises sea level.
    check_alongshore(180.0, 40.0, (-5.0, 0.0), 5.0);
}

#[test]
fn speed_and_direction_follow_the_meteorological_convention() {
    // Meteorological convention (WMO): direction is where the wind blows from, clockwise from
    // north. From the north at 10 m/s: v = -10; from the east: u = -10; from the south-west
    // (225 deg): blowing toward the north-east, u = v = +10/sqrt(2).
    let cases = [
        (0.0, (0.0, -10.0)),
        (90.0, (-10.0, 0.0)),
        (180.0, (0.0, 10.0)),
        (270.0, (10.0, 0.0)),
        (225.0, (10.0 / 2f64.sqrt(), 10.0 / 2f64.sqrt())),
    ];
    for (from, (u, v)) in cases {
        let (gu, gv) = uv_from_speed_direction(10.0, from);
        assert!(
            (gu - u).abs() < 1e-12 && (gv - v).abs() < 1e-12,
            "from {from}"
        );
    }
    // The two file layouts give the same seasonal along-shore wind.
    let season: Season = "2021-JJA".parse().unwrap();
    let mut uv = String::from("time,u,v\n");
    let mut sd = String::from("time,speed,from_deg\n");
    for k in 0..92 {
        let day = season.first_day() + Duration::days(k);
        let from = (k * 37 % 360) as f64;
        let speed = 2.0 + (k % 5) as f64;
        let (u, v) = uv_from_speed_direction(speed, from);
        uv.push_str(&format!("{day},{u},{v}\n"));
        sd.push_str(&format!("{day},{speed},{from}\n"));
    }
    let utc = FixedOffset::east_opt(0).unwrap();
    let a = WindSeries::parse(uv.as_bytes(), "uv.csv", utc).unwrap();
    let b = WindSeries::parse(sd.as_bytes(), "sd.csv", utc).unwrap();
    let coast = Coast::new(135.0, 44.0).unwrap();
    let wa = a.seasonal(&season, &coast, WindStatistic::Mean).unwrap();
    let wb = b.seasonal(&season, &coast, WindStatistic::Mean).unwrap();
    assert!((wa.value - wb.value).abs() < 1e-9);
}

// ---- ENSO categories: El Nino at or above +0.5 deg C, La Nina at or below -0.5 deg C
// (common practice; boundaries inclusive).

#[test]
fn enso_categories_include_their_boundaries() {
    assert_eq!(ENSO_CATEGORY_THRESHOLD_C, 0.5);
    assert_eq!(EnsoCategory::of(0.5), EnsoCategory::ElNino);
    assert_eq!(EnsoCategory::of(0.4999), EnsoCategory::Neutral);
    assert_eq!(EnsoCategory::of(-0.5), EnsoCategory::LaNina);
    assert_eq!(EnsoCategory::of(-0.4999), EnsoCategory::Neutral);
    assert_eq!(EnsoCategory::of(0.0), EnsoCategory::Neutral);
    assert_eq!(EnsoCategory::of(2.1), EnsoCategory::ElNino);
}

// ---- Sea-level trend on synthetic truth: known rate and acceleration plus AR(1) noise.

const TRUE_RATE: f64 = 0.003; // m/yr at 2000.0
const TRUE_ACCEL: f64 = 0.0001; // m/yr^2
const NOISE_SD: f64 = 0.06; // m, stationary standard deviation
const NOISE_PHI: f64 = 0.6; // lag-1 autocorrelation of monthly noise

const ANNUAL_AMPLITUDE: f64 = 0.08; // m, a typical mid-latitude annual cycle (from memory)

fn true_level(t: f64) -> f64 {
    let x = t - 2000.0;
    0.2 + TRUE_RATE * x + 0.5 * TRUE_ACCEL * x * x
}

fn seasonal_cycle(t: f64) -> f64 {
    let w = std::f64::consts::TAU * t;
    ANNUAL_AMPLITUDE * (w - 1.0).cos() + 0.02 * (2.0 * w).sin()
}

fn synthetic_record(rng: &mut ChaCha8Rng) -> Vec<MonthlyMeanLevel> {
    let innovation_sd = NOISE_SD * (1.0 - NOISE_PHI * NOISE_PHI).sqrt();
    let start: f64 = StandardNormal.sample(rng);
    let mut noise = NOISE_SD * start;
    (0..480)
        .map(|k| {
            let (year, month) = (1980 + k / 12, (k % 12) as u32 + 1);
            let z: f64 = StandardNormal.sample(rng);
            noise = NOISE_PHI * noise + innovation_sd * z;
            MonthlyMeanLevel {
                year,
                month,
                mean_m: {
                    let t = month_mid_year(year, month).unwrap();
                    true_level(t) + seasonal_cycle(t) + noise
                },
                readings: 720,
            }
        })
        .collect()
}

#[test]
fn trend_recovers_rate_and_acceleration_with_honest_intervals() {
    const REPLICATES: usize = 200;
    let target: Season = "2030-DJF".parse().unwrap();
    let t_future = target.mid_year();
    let (mut cover_rate, mut cover_accel, mut cover_future, mut naive_rate) = (0, 0, 0, 0);
    let (mut mean_rate, mut mean_accel) = (0.0, 0.0);
    for seed in 0..REPLICATES as u64 {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let fit = fit_trend(
            &synthetic_record(&mut rng),
            TrendShape::Quadratic,
            SeasonalCycle::AnnualSemiannual,
        )
        .unwrap();
        let rate = fit.rate_at(2000.0);
        let accel = fit.acceleration().unwrap();
        let future = fit.level_at(t_future);
        assert!(future.extrapolated);
        let covers = |v: &tidetally_model::drivers::TrendValue, truth: f64| {
            let (lo, hi) = v.interval(0.95);
            lo <= truth && truth <= hi
        };
        cover_rate += usize::from(covers(&rate, TRUE_RATE + TRUE_ACCEL * (2000.0 - 2000.0)));
        cover_accel += usize::from(covers(&accel, TRUE_ACCEL));
        cover_future += usize::from(covers(&future, true_level(t_future)));
        // Without the AR(1) inflation the interval is too narrow.
        let p = fit.coefficients.len() as f64;
        let shrink = ((fit.effective_months - p) / (fit.months_used as f64 - p)).sqrt();
        let naive_half = 1.96 * rate.std_error * shrink;
        naive_rate += usize::from((rate.value - TRUE_RATE).abs() <= naive_half);
        mean_rate += rate.value / REPLICATES as f64;
        mean_accel += accel.value / REPLICATES as f64;
    }
    // Unbiased OLS: the replicate means sit within a few standard errors of the truth
    // (rate SE about 0.3 mm/yr per replicate -> 0.02 mm/yr for the mean of 200).
    assert!(
        (mean_rate - TRUE_RATE).abs() < 1e-4,
        "mean rate {mean_rate}"
    );
    assert!(
        (mean_accel - TRUE_ACCEL).abs() < 2e-5,
        "mean accel {mean_accel}"
    );
    // 95% nominal coverage within +/- 3 percentage points (binomial SD at n = 200 is 1.5).
    for (name, hits) in [
        ("rate", cover_rate),
        ("acceleration", cover_accel),
        ("2030-DJF level", cover_future),
    ] {
        let coverage = hits as f64 / REPLICATES as f64;
        assert!(
            (0.92..=0.98).contains(&coverage),
            "{name}: coverage {coverage}"
        );
    }
    let naive = naive_rate as f64 / REPLICATES as f64;
    eprintln!(
        "coverage: rate {cover_rate}, acceleration {cover_accel}, future {cover_future}, uninflated rate {naive_rate} of {REPLICATES}"
    );
    assert!(
        naive < 0.85,
        "uninflated coverage {naive} should fall short"
    );
}

/// Checks a value against a reference to a relative tolerance.
fn check_close(name: &str, got: f64, want: f64, rel: f64) {
    assert!(
        (got - want).abs() <= rel * want.abs().max(1e-12),
        "{name}: {got} vs reference {want}"
    );
}

#[test]
fn trend_matches_statsmodels_ols_with_ar1_inflation() {
    // Fixture made by tests/reference/drivers_trend_statsmodels.py (statsmodels OLS and acf,
    // scipy t quantile; versions recorded in the file). Tolerances: coefficients and standard
    // errors to 1e-8 relative (two least-squares solvers in double precision on a
    // well-conditioned, centred design); the t quantile to 1e-6 (statrs vs scipy inverse CDF).
    let text = std::fs::read_to_string(fixture("trend-statsmodels.json")).unwrap();
    let reference: serde_json::Value = serde_json::from_str(&text).unwrap();
    let num = |v: &serde_json::Value| v.as_f64().unwrap();
    let months: Vec<MonthlyMeanLevel> = reference["months"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| {
            let (year, month) = (
                m["year"].as_i64().unwrap() as i32,
                m["month"].as_u64().unwrap() as u32,
            );
            // Our month mid-time equals the script's (same calendar arithmetic).
            check_close(
                "month time",
                month_mid_year(year, month).unwrap(),
                num(&m["t"]),
                1e-14,
            );
            MonthlyMeanLevel {
                year,
                month,
                mean_m: num(&m["mean_m"]),
                readings: 700,
            }
        })
        .collect();
    let fit = fit_trend(
        &months,
        TrendShape::Quadratic,
        SeasonalCycle::AnnualSemiannual,
    )
    .unwrap();
    check_close(
        "centre",
        fit.centre_year,
        num(&reference["centre_year"]),
        1e-14,
    );
    let p = fit.coefficients.len();
    for (i, want) in reference["coefficients"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
    {
        check_close(
            &format!("coefficient {i}"),
            fit.coefficients[i],
            num(want),
            1e-8,
        );
    }
    check_close(
        "r1",
        fit.lag1_autocorrelation,
        num(&reference["lag1_autocorrelation"]),
        1e-8,
    );
    check_close(
        "n_eff",
        fit.effective_months,
        num(&reference["effective_months"]),
        1e-8,
    );
    for (i, want) in reference["inflated_std_errors"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
    {
        check_close(
            &format!("std error {i}"),
            fit.covariance[i * p + i].sqrt(),
            num(want),
            1e-8,
        );
    }
    let pred = &reference["prediction"];
    let level = fit.level_at(num(&pred["year"]));
    check_close("level", level.value, num(&pred["value"]), 1e-8);
    check_close("level SE", level.std_error, num(&pred["std_error"]), 1e-8);
    check_close("dof", level.dof, num(&pred["dof"]), 1e-8);
    let (lo, hi) = level.interval(0.95);
    check_close("interval low", lo, num(&pred["interval95"][0]), 1e-6);
    check_close("interval high", hi, num(&pred["interval95"][1]), 1e-6);
}

#[test]
fn seasonal_cycle_left_in_passes_for_autocorrelation() {
    let mut rng = ChaCha8Rng::seed_from_u64(99);
    let record = synthetic_record(&mut rng);
    let with = fit_trend(&record, TrendShape::Linear, SeasonalCycle::AnnualSemiannual).unwrap();
    let without = fit_trend(&record, TrendShape::Linear, SeasonalCycle::Omitted).unwrap();
    // With the cycle fitted, the residual lag-1 autocorrelation is the noise's own 0.6
    // (sampling SD about 0.04 at n = 480).
    assert!(
        (with.lag1_autocorrelation - NOISE_PHI).abs() < 0.1,
        "{}",
        with.lag1_autocorrelation
    );
    assert!(without.residual_sd > with.residual_sd);
    assert!(without.lag1_autocorrelation > with.lag1_autocorrelation);
}

// ---- Multi-model ENSO forecasts pooled with equal weight per model (common practice for
// multi-model ensembles; no skill weighting).

#[test]
fn equal_weight_per_model_not_per_member() {
    // Model A: 10 members at -1.0; model B: 2 members at +1.0. Per model: (-1 + 1) / 2 = 0.0;
    // per member it would be -8/12 = -0.67.
    let forecast = forecast_fixture("forecast-two-models.json");
    assert!(matches!(forecast.content, ForecastContent::Members(ref m) if m.len() == 2));
    assert!(forecast.pooled_mean().unwrap().abs() < 1e-12);
    let p = forecast.category_probabilities();
    assert!((p.la_nina - 0.5).abs() < 1e-12 && (p.el_nino - 0.5).abs() < 1e-12);
    // Sampling agrees: half the draws come from each model (binomial SD 0.0035 at n = 20000;
    // tolerance 0.02 is over five SDs).
    let generator =
        ScenarioGenerator::from_forecast(&forecast, &[], &[Driver::Enso], Resampling::AllSeasons)
            .unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    let draws = generator.sample_many(&mut rng, 20_000);
    let mean = draws.iter().map(|s| s.enso).sum::<f64>() / draws.len() as f64;
    assert!(mean.abs() < 0.02, "sampled mean {mean}");
    assert!(draws.iter().all(|s| s.source_season.is_none()));
}

#[test]
fn forecast_files_are_validated() {
    let p = forecast_fixture("forecast-probabilities.json");
    assert_eq!(p.season.label(), "2026-DJF");
    assert!(p.check_season(&"2026-DJF".parse().unwrap()).is_ok());
    assert!(matches!(
        p.check_season(&"2027-DJF".parse().unwrap()),
        Err(ScenarioError::WrongSeason { .. })
    ));
    assert_eq!(p.issued, NaiveDate::from_ymd_opt(2026, 11, 15).unwrap());
    let cases = [
        (
            r#"{"season":"2026-DJF","issued":"2026-11-15","probabilities":{"la_nina":0.6,"neutral":0.4,"el_nino":0.1}}"#,
            "sum to",
        ),
        (
            r#"{"season":"2026-XYZ","issued":"2026-11-15","probabilities":{"la_nina":0.6,"neutral":0.4,"el_nino":0.0}}"#,
            "field season",
        ),
        (
            r#"{"season":"2026-DJF","issued":"15/11/2026","probabilities":{"la_nina":0.6,"neutral":0.4,"el_nino":0.0}}"#,
            "field issued",
        ),
        (
            r#"{"season":"2026-DJF","issued":"2026-11-15","models":[{"name":"a","members":[]}]}"#,
            "field models[0].members",
        ),
        (
            r#"{"season":"2026-DJF","issued":"2026-11-15","models":[{"name":"a","members":[1e999]}]}"#,
            "line 1",
        ),
        (
            r#"{"season":"2026-DJF","issued":"2026-11-15","models":[{"name":"a","members":[1]},{"name":"a","members":[2]}]}"#,
            "appears twice",
        ),
        (
            r#"{"season":"2026-DJF","issued":"2026-11-15"}"#,
            "is needed",
        ),
    ];
    for (text, needle) in cases {
        let msg = forecast_text(text).unwrap_err().to_string();
        assert!(msg.contains(needle), "{text}: {msg}");
    }
    // A free-text `note` is kept; any other unknown field is refused.
    let noted = forecast_text(
        r#"{"season":"2026-DJF","issued":"2026-11-15","note":"invented","probabilities":{"la_nina":0.5,"neutral":0.5,"el_nino":0.0}}"#,
    )
    .unwrap();
    assert_eq!(noted.note.as_deref(), Some("invented"));
    assert!(forecast_text(
        r#"{"season":"2026-DJF","issued":"2026-11-15","remark":"x","probabilities":{"la_nina":0.5,"neutral":0.5,"el_nino":0.0}}"#
    )
    .is_err());
    // Within 1e-6 of 1 is accepted.
    assert!(forecast_text(
        r#"{"season":"2026-DJF","issued":"2026-11-15","probabilities":{"la_nina":0.3333333,"neutral":0.3333333,"el_nino":0.3333333}}"#
    )
    .is_ok());
}

fn past(label: &str, enso: f64, mjo: f64, wind: f64) -> PastSeason {
    PastSeason {
        label: label.to_owned(),
        enso: Some(enso),
        mjo_share: Some(mjo),
        wind: Some(wind),
    }
}

fn past_seasons() -> Vec<PastSeason> {
    // Invented synthetic seasons: the label's year encodes mjo and wind so pairing can be
    // checked.
    (0..30)
        .map(|k| {
            let enso = match k % 3 {
                0 => -1.0 - 0.01 * k as f64,
                1 => 0.01 * k as f64,
                _ => 1.0 + 0.01 * k as f64,
            };
            past(
                &format!("{}-DJF", 1990 + k),
                enso,
                k as f64 / 100.0,
                k as f64,
            )
        })
        .collect()
}

#[test]
fn category_forecast_draws_past_values_of_the_drawn_category() {
    let forecast = forecast_text(
        r#"{"season":"2026-DJF","issued":"2026-11-15","probabilities":{"la_nina":0.7,"neutral":0.3,"el_nino":0.0}}"#,
    )
    .unwrap();
    let seasons = past_seasons();
    let generator = ScenarioGenerator::from_forecast(
        &forecast,
        &seasons,
        &[Driver::Enso, Driver::Mjo, Driver::Wind],
        Resampling::AllSeasons,
    )
    .unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let draws = generator.sample_many(&mut rng, 10_000);
    let la_nina = draws
        .iter()
        .filter(|s| s.enso_category == EnsoCategory::LaNina)
        .count() as f64
        / draws.len() as f64;
    // Binomial SD 0.0046 at n = 10000; tolerance 0.02.
    assert!((la_nina - 0.7).abs() < 0.02, "{la_nina}");
    assert!(
        draws
            .iter()
            .all(|s| s.enso_category != EnsoCategory::ElNino)
    );
    let observed: Vec<f64> = seasons.iter().filter_map(|s| s.enso).collect();
    assert!(draws.iter().all(|s| observed.contains(&s.enso)));
    // MJO and wind always come from the same past season.
    for s in &draws {
        let src = seasons
            .iter()
            .find(|p| Some(&p.label) == s.source_season.as_ref())
            .unwrap();
        assert_eq!((s.mjo_share, s.wind), (src.mjo_share, src.wind));
    }
    // A category with positive probability but no past season is an error.
    let only_cold: Vec<PastSeason> = seasons
        .iter()
        .filter(|s| s.enso.is_some_and(|e| e < -0.5))
        .cloned()
        .collect();
    assert!(matches!(
        ScenarioGenerator::from_forecast(&forecast, &only_cold, &[], Resampling::AllSeasons),
        Err(ScenarioError::CategoryWithoutPast {
            category: EnsoCategory::Neutral,
            ..
        })
    ));
}

#[test]
fn conditioned_resampling_uses_the_scenario_category_or_falls_back_with_a_note() {
    let seasons = past_seasons();
    let needs = [Driver::Mjo, Driver::Wind];
    let cold = ScenarioGenerator::with_known_enso(
        -1.2,
        &seasons,
        &needs,
        Resampling::SameEnsoCategory { min_seasons: 5 },
    )
    .unwrap();
    assert!(cold.notes().is_empty());
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    for s in cold.sample_many(&mut rng, 500) {
        let src = seasons
            .iter()
            .find(|p| Some(&p.label) == s.source_season.as_ref())
            .unwrap();
        assert!(src.enso.unwrap() <= -0.5, "{:?}", s.source_season);
    }
    // Ten seasons per category: asking for 11 falls back to all 30, with notes.
    let fallback = ScenarioGenerator::with_known_enso(
        -1.2,
        &seasons,
        &needs,
        Resampling::SameEnsoCategory { min_seasons: 11 },
    )
    .unwrap();
    assert_eq!(fallback.notes().len(), 3);
    assert!(fallback.notes()[0].contains("all 30 past seasons"));
    let sources: std::collections::BTreeSet<String> = fallback
        .sample_many(&mut rng, 2000)
        .into_iter()
        .filter_map(|s| s.source_season)
        .collect();
    assert_eq!(sources.len(), 30);
}
