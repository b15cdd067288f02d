//! Tide prediction from fitted constituents, with nodal corrections for the target dates.
//!
//! Time is cut into 30-day segments (aligned on the unix epoch, as the analysis holds its
//! nodal corrections over 30 days): the equilibrium arguments V are evaluated exactly at each
//! segment's start and f, u at its middle; within a segment each constituent's phasor is
//! advanced by complex rotation rather than a cosine per sample.

use serde::{Deserialize, Serialize};

use super::astro::{Astro, NodalAngles};
use super::constituents::{self, Constituent};
use super::{HOUR, HOURS_PER_YEAR, TideError};

/// One constituent of a fitted model.
#[derive(Debug, Clone, PartialEq)]
pub struct FittedConstituent {
    /// The constituent.
    pub constituent: &'static Constituent,
    /// Amplitude in the units of the levels (nodal factor removed).
    pub amplitude: f64,
    /// Greenwich phase lag g, degrees in `[0, 360)`.
    pub phase_deg: f64,
    /// Half-width of the 95% interval of the amplitude (NaN when not estimated).
    pub amplitude_ci95: f64,
    /// Half-width of the 95% interval of the phase, degrees (NaN when not estimated).
    pub phase_ci95_deg: f64,
}

/// How a model was fitted (absent for models read from a constituents file).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitSummary {
    /// Valid samples used.
    pub samples: usize,
    /// First valid sample, unix seconds.
    pub first_time: i64,
    /// Last valid sample, unix seconds.
    pub last_time: i64,
    /// The dominant sampling interval, seconds.
    pub step_seconds: i64,
    /// Root-mean-square residual, units of the levels.
    pub residual_rms: f64,
    /// Share of the variance the fit explains.
    pub variance_explained: f64,
    /// The method of the confidence intervals, in words.
    pub ci_method: String,
}

/// A fitted (or loaded) harmonic tide model.
#[derive(Debug, Clone, PartialEq)]
pub struct TideModel {
    /// Mean level at `reference_time`, units of the levels.
    pub mean: f64,
    /// Linear trend in units per Julian year, when fitted.
    pub trend_per_year: Option<f64>,
    /// Reference time of the mean and the trend, unix seconds.
    pub reference_time: i64,
    /// The constituents.
    pub constituents: Vec<FittedConstituent>,
    /// How the model was fitted, when it was.
    pub fit: Option<FitSummary>,
}

/// Per-constituent amplitude and phase used to build a model from stored values.
#[derive(Debug, Clone, PartialEq)]
pub struct ConstituentValue<'a> {
    /// Constituent name, as in the standard table.
    pub name: &'a str,
    /// Amplitude.
    pub amplitude: f64,
    /// Greenwich phase lag, degrees.
    pub phase_deg: f64,
}

impl TideModel {
    /// Builds a model from stored constituents (e.g. a `tide analyze` file), checking the
    /// names against the standard table and the values for NaN.
    pub fn from_values(
        mean: f64,
        trend_per_year: Option<f64>,
        reference_time: i64,
        values: &[ConstituentValue<'_>],
    ) -> Result<Self, TideError> {
        if !mean.is_finite() {
            return Err(TideError::BadParameter {
                name: "mean",
                value: mean,
                expected: "a finite number",
            });
        }
        if let Some(trend) = trend_per_year.filter(|t| !t.is_finite()) {
            return Err(TideError::BadParameter {
                name: "trend_per_year",
                value: trend,
                expected: "a finite number",
            });
        }
        let mut constituents = Vec::with_capacity(values.len());
        for v in values {
            let constituent = constituents::by_name(v.name)
                .ok_or_else(|| TideError::UnknownConstituent(v.name.to_owned()))?;
            if constituents
                .iter()
                .any(|c: &FittedConstituent| c.constituent.name == v.name)
            {
                return Err(TideError::DuplicateConstituent(v.name.to_owned()));
            }
            if !(v.amplitude >= 0.0 && v.amplitude.is_finite()) {
                return Err(TideError::BadParameter {
                    name: "amplitude",
                    value: v.amplitude,
                    expected: "a finite number >= 0",
                });
            }
            if !v.phase_deg.is_finite() {
                return Err(TideError::BadParameter {
                    name: "phase_deg",
                    value: v.phase_deg,
                    expected: "a finite number of degrees",
                });
            }
            constituents.push(FittedConstituent {
                constituent,
                amplitude: v.amplitude,
                phase_deg: v.phase_deg.rem_euclid(360.0),
                amplitude_ci95: f64::NAN,
                phase_ci95_deg: f64::NAN,
            });
        }
        Ok(Self {
            mean,
            trend_per_year,
            reference_time,
            constituents,
            fit: None,
        })
    }

    /// The constituent of this model named `name`, if any.
    pub fn constituent(&self, name: &str) -> Option<&FittedConstituent> {
        self.constituents
            .iter()
            .find(|c| c.constituent.name == name)
    }

    /// Mean level (mean plus trend) at `unix_seconds`.
    pub fn mean_level_at(&self, unix_seconds: i64) -> f64 {
        let years = (unix_seconds - self.reference_time) as f64 / HOUR / HOURS_PER_YEAR;
        self.mean + self.trend_per_year.unwrap_or(0.0) * years
    }

    /// Predicted levels (mean, trend and tide) at arbitrary increasing times.
    pub fn predict_at(&self, times: &[i64]) -> Vec<f64> {
        let mut out = self.astronomical_at(times);
        for (level, &t) in out.iter_mut().zip(times) {
            *level += self.mean_level_at(t);
        }
        out
    }

    /// Predicted levels at `start + k * step_seconds`, `k = 0..count`.
    pub fn predict_regular(&self, start: i64, step_seconds: i64, count: usize) -> Vec<f64> {
        let times = regular_times(start, step_seconds, count);
        self.predict_at(&times)
    }

    /// The astronomical tide alone (no mean, no trend) at arbitrary times. Times should
    /// increase for speed; any order gives correct values.
    pub fn astronomical_at(&self, times: &[i64]) -> Vec<f64> {
        let mut engine = PhasorEngine::new(self);
        times.iter().map(|&t| engine.level(t)).collect()
    }

    /// The astronomical tide alone at `start + k * step_seconds`, `k = 0..count`.
    pub fn astronomical_regular(&self, start: i64, step_seconds: i64, count: usize) -> Vec<f64> {
        self.astronomical_at(&regular_times(start, step_seconds, count))
    }
}

fn regular_times(start: i64, step_seconds: i64, count: usize) -> Vec<i64> {
    (0..count as i64)
        .map(|k| start + k * step_seconds)
        .collect()
}

/// Length of a segment over which f and u are held.
const SEGMENT_SECONDS: i64 = 30 * 86_400;

/// Sum in four lanes (lets the compiler vectorise; order fixed, so results are repeatable).
fn sum_lanes(x: &[f64]) -> f64 {
    let mut lanes = [0.0; 4];
    let chunks = x.chunks_exact(4);
    let tail: f64 = chunks.remainder().iter().sum();
    for c in chunks {
        for (l, v) in lanes.iter_mut().zip(c) {
            *l += v;
        }
    }
    lanes.iter().sum::<f64>() + tail
}

/// Sums constituent phasors segment by segment, rotating each one from sample to sample.
struct PhasorEngine<'a> {
    model: &'a TideModel,
    /// Angular speeds, radians per second.
    omega: Vec<f64>,
    /// Current phasors (real, imaginary), amplitude and nodal factor included.
    re: Vec<f64>,
    im: Vec<f64>,
    /// Rotation for the cached time step.
    rot_re: Vec<f64>,
    rot_im: Vec<f64>,
    cached_step: i64,
    segment: Option<i64>,
    last_time: i64,
}

impl<'a> PhasorEngine<'a> {
    fn new(model: &'a TideModel) -> Self {
        let k = model.constituents.len();
        let omega = model
            .constituents
            .iter()
            .map(|c| c.constituent.speed_deg_per_hour().to_radians() / HOUR)
            .collect();
        Self {
            model,
            omega,
            re: vec![0.0; k],
            im: vec![0.0; k],
            rot_re: vec![0.0; k],
            rot_im: vec![0.0; k],
            cached_step: 0,
            segment: None,
            last_time: 0,
        }
    }

    /// Seeds the phasors exactly at time `t` from the segment's astronomical arguments.
    fn seed(&mut self, segment: i64, t: i64) {
        let segment_start = segment * SEGMENT_SECONDS;
        let astro = Astro::at(segment_start as f64);
        let angles = NodalAngles::at(&Astro::at((segment_start + SEGMENT_SECONDS / 2) as f64));
        let dt = (t - segment_start) as f64;
        for (k, c) in self.model.constituents.iter().enumerate() {
            let (f, u) = angles.factor(c.constituent);
            let v = astro.equilibrium_argument(c.constituent);
            let phase = (v + u - c.phase_deg).to_radians() + self.omega[k] * dt;
            let (s, co) = phase.sin_cos();
            self.re[k] = f * c.amplitude * co;
            self.im[k] = f * c.amplitude * s;
        }
        self.segment = Some(segment);
        self.last_time = t;
    }

    fn level(&mut self, t: i64) -> f64 {
        let segment = t.div_euclid(SEGMENT_SECONDS);
        let step = t - self.last_time;
        if self.segment != Some(segment) || step < 0 {
            self.seed(segment, t);
        } else if step > 0 {
            if self.cached_step == 0 {
                self.set_rotation(step);
            }
            let repeats = step / self.cached_step;
            if step % self.cached_step == 0 && repeats <= 16 {
                for _ in 0..repeats {
                    self.rotate();
                }
                self.last_time = t;
            } else {
                self.set_rotation(step);
                self.rotate();
                self.last_time = t;
            }
        }
        sum_lanes(&self.re)
    }

    fn set_rotation(&mut self, step: i64) {
        for k in 0..self.omega.len() {
            let (s, c) = (self.omega[k] * step as f64).sin_cos();
            self.rot_re[k] = c;
            self.rot_im[k] = s;
        }
        self.cached_step = step;
    }

    fn rotate(&mut self) {
        let n = self.re.len();
        let (re, im) = (&mut self.re[..n], &mut self.im[..n]);
        let (rr, ri) = (&self.rot_re[..n], &self.rot_im[..n]);
        for k in 0..n {
            let (a, b) = (re[k], im[k]);
            re[k] = a * rr[k] - b * ri[k];
            im[k] = a * ri[k] + b * rr[k];
        }
    }
}
