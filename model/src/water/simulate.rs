//! Simulating a season's daily high waters and counting its flood days.
//!
//! Simulated season `s`, day `d`:
//! `level = predicted_high(d) + slow(d) + z_s * se_slow + b_s * enso_s + past(d) + (b - b_s) * past_enso(d)`
//! - `predicted_high(d)`: the tide model's highest prediction of the day (known in advance);
//! - `slow(d)`: the sea-level source's level minus the tide model's mean, and `z_s` a standard
//!   normal (Student t with the trend's degrees of freedom) scaling its standard error at the
//!   season's middle;
//! - `b_s`: the ENSO coefficient drawn from its estimated normal law, `enso_s` the season's
//!   ENSO scenario (from a forecast, or as known at issue time);
//! - `past(d)`: a past season's residual with its own slow term and fitted ENSO effect removed
//!   (`b` the estimate), keeping the day-to-day persistence and the joint behaviour of MJO,
//!   wind and noise. Sequences are built by the stationary bootstrap (Politis and Romano 1994,
//!   J. Am. Stat. Assoc. 89, 1303): blocks of geometric length (mean `block_days`, chosen by
//!   [`super::block`]), each from
//!   a random past season and a random shift of up to `shift_days` along the season; a missing
//!   past day is replaced by a random present day within the shift window.
//!
//!
//! **Persistence.** The weather a season inherits is known when its outlook is issued: the
//! mean residual anomaly `A` of the days just before it (a wind regime, a surge). Where past
//! seasons show that it persists ([`super::persistence`]), day `d` of the season carries
//! `c phi^d (A - mean A)` (damped persistence, common practice), with `c` drawn from its
//! estimated law; the pooled past days have their own such term removed, as with ENSO.
//!
//! A day floods when its level reaches the threshold; the count over the counted days is one
//! draw of the season's flood days. Randomness comes from the caller's seeded generator.

use rand::Rng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal, StudentT};
use serde::Serialize;

use super::WaterError;
use super::days::SeasonWater;
use super::engine::{PoolDay, WaterFit};

/// Simulated seasons of an outlook unless asked otherwise: the Monte Carlo standard error of
/// any `P(N >= k)` is then at most `sqrt(0.25 / 4000) = 0.0079`.
pub const DEFAULT_SIMULATIONS: usize = 4000;

/// The season to simulate: its days (predicted high waters) and which of them count.
#[derive(Debug, Clone, Copy)]
pub struct SeasonPlan<'a> {
    /// The season's days.
    pub season: &'a SeasonWater,
    /// Count only observed days (a hindcast of a past season) or every calendar day.
    pub observed_only: bool,
}

/// A simulated season's distribution and day calendar.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Simulated {
    /// Probability of each count of flood days, index = days, over `0..=counted days`.
    pub pmf: Vec<f64>,
    /// Each day's share of simulations in which it flooded (0 for days not counted).
    pub day_chance: Vec<f64>,
    /// Each day's predicted high water plus the projected slow term, m.
    pub day_level: Vec<f64>,
    /// The days counted.
    pub counted_days: u32,
    /// Simulations run.
    pub simulations: usize,
}

impl Simulated {
    /// The mean count.
    pub fn mean(&self) -> f64 {
        self.pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum()
    }
}

/// Simulates `simulations` seasons. `enso` holds the ENSO scenarios (cycled; ignored when the
/// fit has no ENSO column, and required when it has one).
pub fn simulate(
    fit: &WaterFit,
    plan: SeasonPlan<'_>,
    enso: &[f64],
    simulations: usize,
    rng: &mut ChaCha8Rng,
) -> Result<Simulated, WaterError> {
    if simulations == 0 {
        return Err(WaterError::NoSimulations);
    }
    let days = &plan.season.days;
    let counted: Vec<bool> = days
        .iter()
        .map(|d| !plan.observed_only || d.residual.is_some())
        .collect();
    let counted_days = counted.iter().filter(|&&c| c).count();
    let threshold = fit.params.threshold_m;
    let slow: Vec<f64> = days
        .iter()
        .map(|d| Ok(fit.sea_level.level_at(d.year)?.value - fit.tide_mean))
        .collect::<Result<_, WaterError>>()?;
    let mid = days.get(days.len() / 2).map_or(0.0, |d| d.year);
    let slow_at_mid = fit.sea_level.level_at(mid)?;
    let slow_draw = SlowDraw::new(slow_at_mid.std_error, slow_at_mid.dof);
    let enso_law = match fit.enso_effect() {
        Some((b, se)) => {
            if enso.is_empty() {
                return Err(WaterError::NoEnsoScenario);
            }
            Some((
                b,
                Normal::new(b, se.max(0.0)).map_err(|_| WaterError::BadSetting {
                    name: "enso std_error",
                    value: se,
                })?,
            ))
        }
        None => None,
    };
    let base: Vec<f64> = days
        .iter()
        .zip(&slow)
        .map(|(d, s)| d.predicted_high + s)
        .collect();
    let mut counts = vec![0usize; counted_days + 1];
    let mut flooded = vec![0usize; days.len()];
    let mut sequence = vec![
        PoolDay {
            value: 0.0,
            enso: 0.0,
            lead: 0.0,
        };
        days.len()
    ];
    let continue_block = 1.0 - 1.0 / fit.block_days;
    let persistence = fit.persistence;
    let target_lead = match (persistence, fit.lead_of(plan.season)?) {
        (Some(p), Some(a)) => Some((p, a - p.mean_anomaly)),
        _ => None,
    };
    let persistence_law = match persistence {
        Some(p) => Some(
            Normal::new(p.coefficient, p.std_error.max(0.0)).map_err(|_| {
                WaterError::BadSetting {
                    name: "persistence std_error",
                    value: p.std_error,
                }
            })?,
        ),
        None => None,
    };
    for s in 0..simulations {
        let z = slow_draw.sample(rng);
        let (shift_enso, b_s, b_hat) = match &enso_law {
            Some((b, law)) => {
                let b_s = law.sample(rng);
                (b_s * enso[s % enso.len()], b_s, *b)
            }
            None => (0.0, 0.0, 0.0),
        };
        resample_sequence(fit, &mut sequence, continue_block, rng);
        let (c_hat, c_s) = match (&persistence_law, persistence) {
            (Some(law), Some(p)) => (p.coefficient, law.sample(rng)),
            _ => (0.0, 0.0),
        };
        let mut n = 0;
        for (d, past) in sequence.iter().enumerate() {
            let carried = match target_lead {
                Some((p, anomaly)) => c_s * p.decay.powi(d as i32) * anomaly,
                None => 0.0,
            };
            let level = base[d]
                + z
                + shift_enso
                + carried
                + past.value
                + (b_hat - b_s) * past.enso
                + (c_hat - c_s) * past.lead;
            if level >= threshold && counted[d] {
                n += 1;
                flooded[d] += 1;
            }
        }
        counts[n] += 1;
    }
    let total = simulations as f64;
    Ok(Simulated {
        pmf: counts.iter().map(|&c| c as f64 / total).collect(),
        day_chance: flooded.iter().map(|&c| c as f64 / total).collect(),
        day_level: base,
        counted_days: counted_days as u32,
        simulations,
    })
}

/// Fills `out` with one stationary-bootstrap sequence of pooled past days.
fn resample_sequence(
    fit: &WaterFit,
    out: &mut [PoolDay],
    continue_block: f64,
    rng: &mut ChaCha8Rng,
) {
    let pool = &fit.pool;
    let shift = pool.shift_days as i64;
    let mut source = 0usize;
    let mut offset = 0i64;
    for (d, slot) in out.iter_mut().enumerate() {
        if d == 0 || rng.r#gen::<f64>() >= continue_block {
            source = rng.gen_range(0..pool.seasons.len());
            offset = rng.gen_range(-shift..=shift);
        }
        let sequence = &pool.seasons[source];
        let k = (d as i64 + offset).clamp(0, sequence.len() as i64 - 1) as usize;
        *slot = match sequence[k] {
            Some(day) => day,
            None => {
                let near = &pool.near[d.min(pool.near.len() - 1)];
                near[rng.gen_range(0..near.len())]
            }
        };
    }
}

/// The standardised draw of the slow term's error: normal, or Student t with finite degrees
/// of freedom; zero when the source has no error.
enum SlowDraw {
    None,
    Normal(f64),
    Student(f64, StudentT<f64>),
}

impl SlowDraw {
    fn new(std_error: f64, dof: f64) -> Self {
        if !(std_error > 0.0) {
            return SlowDraw::None;
        }
        if dof.is_finite()
            && dof > 2.0
            && let Ok(t) = StudentT::new(dof)
        {
            return SlowDraw::Student(std_error, t);
        }
        SlowDraw::Normal(std_error)
    }

    fn sample(&self, rng: &mut ChaCha8Rng) -> f64 {
        match self {
            SlowDraw::None => 0.0,
            SlowDraw::Normal(se) => se * rng.sample::<f64, _>(rand_distr::StandardNormal),
            SlowDraw::Student(se, t) => se * t.sample(rng),
        }
    }
}
