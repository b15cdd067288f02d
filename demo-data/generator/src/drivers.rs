//! The synthetic climate drivers: a monthly ENSO index, daily MJO (RMM1, RMM2) and daily wind
//! per gauge, with the along-shore wind component that drives Ekman setup. Every value is
//! rounded to the precision it is written with, so readers see exactly what drove the levels.

use rand::Rng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use serde::Serialize;

use crate::calendar::{date_of, month_index};
use crate::seed::component_rng;

/// Round to `decimals` decimal places (half away from zero).
pub fn round_to(x: f64, decimals: i32) -> f64 {
    let scale = 10f64.powi(decimals);
    // Adding 0.0 turns a negative zero into zero, so it is never written as -0.00.
    (x * scale).round() / scale + 0.0
}

fn normal(rng: &mut ChaCha8Rng) -> f64 {
    StandardNormal.sample(rng)
}

/// Parameters of the synthetic ENSO index: a damped AR(2) oscillation of monthly anomalies.
#[derive(Debug, Clone, Serialize)]
pub struct EnsoParams {
    /// Pole modulus r of the AR(2) (monthly damping).
    pub pole_modulus: f64,
    /// Oscillation period of the AR(2) poles, months.
    pub period_months: f64,
    /// Target standard deviation of the index, deg C.
    pub target_sd_degc: f64,
    /// Amplitude of the seasonal modulation of the innovations (peak in October).
    pub innovation_seasonality: f64,
    /// Months simulated before January 1979 and discarded.
    pub spin_up_months: usize,
}

/// The ENSO model used for the demo.
pub const ENSO: EnsoParams = EnsoParams {
    pole_modulus: 0.965,
    period_months: 50.0,
    target_sd_degc: 0.85,
    innovation_seasonality: 0.3,
    spin_up_months: 600,
};

/// Monthly ENSO anomalies (deg C, rounded to 0.01) from January 1979 for `months` months.
pub fn enso_series(master_seed: u64, months: usize) -> Vec<f64> {
    let p = &ENSO;
    let omega = std::f64::consts::TAU / p.period_months;
    let phi1 = 2.0 * p.pole_modulus * omega.cos();
    let phi2 = -p.pole_modulus * p.pole_modulus;
    // Stationary variance of AR(2) per unit innovation variance (Box and Jenkins).
    let gamma0 = (1.0 - phi2) / ((1.0 + phi2) * ((1.0 - phi2).powi(2) - phi1 * phi1));
    let sigma = p.target_sd_degc / gamma0.sqrt();
    let mut rng = component_rng(master_seed, "enso");
    let (mut x1, mut x2) = (0.0, 0.0);
    let mut out = Vec::with_capacity(months);
    for step in 0..(p.spin_up_months + months) {
        // Calendar month 1..12 of this step (the spin-up is a whole number of years).
        let month = (step % 12) as f64 + 1.0;
        let season =
            1.0 + p.innovation_seasonality * (std::f64::consts::TAU * (month - 10.0) / 12.0).cos();
        let x = phi1 * x1 + phi2 * x2 + sigma * season * normal(&mut rng);
        x2 = x1;
        x1 = x;
        if step >= p.spin_up_months {
            out.push(round_to(x, 2));
        }
    }
    out
}

/// Parameters of the synthetic MJO: an eastward-rotating (RMM1, RMM2) vector.
#[derive(Debug, Clone, Serialize)]
pub struct MjoParams {
    /// Median amplitude.
    pub median_amplitude: f64,
    /// Standard deviation of log amplitude.
    pub log_amplitude_sd: f64,
    /// Day-to-day AR(1) coefficient of log amplitude.
    pub log_amplitude_ar1: f64,
    /// Shortest and longest rotation period, days.
    pub period_range_days: [f64; 2],
    /// Day-to-day AR(1) coefficient of the period's driving process.
    pub period_ar1: f64,
    /// Daily phase jitter, radians (standard deviation).
    pub phase_jitter_rad: f64,
}

/// The MJO model used for the demo.
pub const MJO: MjoParams = MjoParams {
    median_amplitude: 0.95,
    log_amplitude_sd: 0.5,
    log_amplitude_ar1: 0.93,
    period_range_days: [30.0, 60.0],
    period_ar1: 0.98,
    phase_jitter_rad: 0.08,
};

/// One day's RMM pair (rounded to 4 decimals).
#[derive(Debug, Clone, Copy)]
pub struct Rmm {
    /// RMM1.
    pub rmm1: f64,
    /// RMM2.
    pub rmm2: f64,
}

impl Rmm {
    /// Amplitude sqrt(RMM1^2 + RMM2^2).
    pub fn amplitude(&self) -> f64 {
        self.rmm1.hypot(self.rmm2)
    }

    /// Phase 1..8 in the Wheeler-Hendon (2004) convention: the angle atan2(RMM2, RMM1) in
    /// [-180, 180) degrees split into eight 45-degree sectors counted from -180 (phase 1 is
    /// -180..-135, phases 2-3 span -135..-45, phase 8 is 135..180).
    pub fn phase(&self) -> u8 {
        let angle = self.rmm2.atan2(self.rmm1).to_degrees();
        let sector = ((angle + 180.0) / 45.0).floor() as i64;
        (sector.clamp(0, 7) + 1) as u8
    }

    /// Whether the day is active (amplitude at least 1) and in one of `phases`.
    pub fn active_in(&self, phases: &[u8]) -> bool {
        self.amplitude() >= 1.0 && phases.contains(&self.phase())
    }
}

/// The MJO's full internal state on one day: log amplitude, the driver of the rotation
/// period, and the phase angle (unrounded; the day's RMM pair follows from it).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MjoState {
    /// ln(amplitude / median amplitude).
    pub log_amp: f64,
    /// The AR(1) process whose tanh sets the rotation period.
    pub period_drive: f64,
    /// Angle of (RMM1, RMM2), radians in [0, 2 pi).
    pub theta: f64,
}

impl MjoState {
    /// The day's RMM pair as written (rounded to 4 decimals).
    pub fn rmm(&self) -> Rmm {
        let amplitude = MJO.median_amplitude * self.log_amp.exp();
        Rmm {
            rmm1: round_to(amplitude * self.theta.cos(), 4),
            rmm2: round_to(amplitude * self.theta.sin(), 4),
        }
    }

    /// Advance one day, drawing the phase jitter, then the log-amplitude and period
    /// innovations from `rng`.
    pub fn step(&mut self, rng: &mut ChaCha8Rng) {
        let p = &MJO;
        let innov_amp = p.log_amplitude_sd * (1.0 - p.log_amplitude_ar1.powi(2)).sqrt();
        let innov_period = (1.0 - p.period_ar1.powi(2)).sqrt();
        let [short, long] = p.period_range_days;
        let (mid, half) = (0.5 * (short + long), 0.5 * (long - short));
        let period = mid + half * self.period_drive.tanh();
        self.theta =
            (self.theta + std::f64::consts::TAU / period + p.phase_jitter_rad * normal(rng))
                .rem_euclid(std::f64::consts::TAU);
        self.log_amp = p.log_amplitude_ar1 * self.log_amp + innov_amp * normal(rng);
        self.period_drive = p.period_ar1 * self.period_drive + innov_period * normal(rng);
    }
}

/// Daily RMM values for `days` days starting at day number `first_day`.
pub fn rmm_series(master_seed: u64, days: usize) -> Vec<Rmm> {
    rmm_series_with_end(master_seed, days).0
}

/// Daily RMM values for `days` days (at least one) and the MJO's state on the last day.
pub fn rmm_series_with_end(master_seed: u64, days: usize) -> (Vec<Rmm>, MjoState) {
    let p = &MJO;
    let mut rng = component_rng(master_seed, "rmm");
    let log_amp = p.log_amplitude_sd * normal(&mut rng);
    let period_drive = normal(&mut rng);
    let theta: f64 = rng.gen_range(0.0..std::f64::consts::TAU);
    let mut state = MjoState {
        log_amp,
        period_drive,
        theta,
    };
    let mut last = state;
    let mut out = Vec::with_capacity(days);
    for _ in 0..days {
        out.push(state.rmm());
        last = state;
        state.step(&mut rng);
    }
    (out, last)
}

/// Parameters of the regional daily wind shared by all gauges plus a local part per gauge.
#[derive(Debug, Clone, Serialize)]
pub struct WindParams {
    /// Annual-mean (u, v), m/s.
    pub mean_uv: [f64; 2],
    /// Amplitude of the annual cycle of (u, v), peaking in mid-January, m/s.
    pub seasonal_uv: [f64; 2],
    /// Slow regional anomaly: AR(1) coefficient per day and standard deviation, m/s.
    pub slow_ar1: f64,
    /// Standard deviation of the slow anomaly, m/s.
    pub slow_sd: f64,
    /// Synoptic regional anomaly: AR(1) coefficient per day.
    pub synoptic_ar1: f64,
    /// Standard deviation of the synoptic anomaly (annual mean), m/s.
    pub synoptic_sd: f64,
    /// Relative winter increase of the synoptic standard deviation.
    pub synoptic_winter_boost: f64,
    /// Local (per gauge) anomaly standard deviation, m/s, AR(1) with `synoptic_ar1`.
    pub local_sd: f64,
}

/// The wind model used for the demo.
pub const WIND: WindParams = WindParams {
    mean_uv: [3.0, 0.5],
    seasonal_uv: [2.0, 1.0],
    slow_ar1: 0.97,
    slow_sd: 1.5,
    synoptic_ar1: 0.6,
    synoptic_sd: 4.0,
    synoptic_winter_boost: 0.3,
    local_sd: 1.5,
};

/// Cosine of the annual cycle peaking in mid-January for a day number.
pub fn winter_cycle(day: i64) -> f64 {
    use chrono::Datelike;
    let doy = f64::from(date_of(day).ordinal());
    (std::f64::consts::TAU * (doy - 15.0) / 365.25).cos()
}

/// The regional wind's internal state on one day: slow and synoptic anomalies of (u, v).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RegionalWindState {
    /// Slow anomaly of (u, v), m/s.
    pub slow: [f64; 2],
    /// Synoptic anomaly of (u, v) in units of its (seasonally varying) standard deviation.
    pub syn: [f64; 2],
}

impl RegionalWindState {
    /// The regional (u, v) in m/s on day number `day` (unrounded).
    pub fn uv(&self, day: i64) -> [f64; 2] {
        let p = &WIND;
        let cycle = winter_cycle(day);
        let syn_sd = p.synoptic_sd * (1.0 + p.synoptic_winter_boost * cycle);
        std::array::from_fn(|c| {
            p.mean_uv[c] + p.seasonal_uv[c] * cycle + self.slow[c] + syn_sd * self.syn[c]
        })
    }

    /// Advance one day, drawing the slow then the synoptic innovation of u, then of v.
    pub fn step(&mut self, rng: &mut ChaCha8Rng) {
        let p = &WIND;
        let slow_innov = p.slow_sd * (1.0 - p.slow_ar1 * p.slow_ar1).sqrt();
        let syn_innov = (1.0 - p.synoptic_ar1 * p.synoptic_ar1).sqrt();
        for c in 0..2 {
            self.slow[c] = p.slow_ar1 * self.slow[c] + slow_innov * normal(rng);
            self.syn[c] = p.synoptic_ar1 * self.syn[c] + syn_innov * normal(rng);
        }
    }
}

/// Regional daily wind (u, v) in m/s, unrounded, for days from `first_day`.
pub fn regional_wind(master_seed: u64, first_day: i64, days: usize) -> Vec<[f64; 2]> {
    regional_wind_with_end(master_seed, first_day, days).0
}

/// Regional daily wind for `days` days (at least one) from `first_day`, and the state on the
/// last day.
pub fn regional_wind_with_end(
    master_seed: u64,
    first_day: i64,
    days: usize,
) -> (Vec<[f64; 2]>, RegionalWindState) {
    let p = &WIND;
    let mut rng = component_rng(master_seed, "wind-regional");
    let slow = [p.slow_sd * normal(&mut rng), p.slow_sd * normal(&mut rng)];
    let syn = [normal(&mut rng), normal(&mut rng)];
    let mut state = RegionalWindState { slow, syn };
    let mut last = state;
    let mut out = Vec::with_capacity(days);
    for k in 0..days {
        out.push(state.uv(first_day + k as i64));
        last = state;
        state.step(&mut rng);
    }
    (out, last)
}

/// How a gauge's wind file is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum WindFormat {
    /// `time,u,v`, m/s to 0.01.
    Components,
    /// `time,speed,from_deg`: speed to 0.01 m/s, direction the wind blows from to 0.1 deg.
    SpeedFrom,
}

/// One gauge's daily wind as written: the components reconstructed from the written values.
#[derive(Debug, Clone)]
pub struct GaugeWind {
    /// Daily (u, v) in m/s exactly as a reader reconstructs them from the file.
    pub uv: Vec<[f64; 2]>,
    /// Written columns per day (u, v) or (speed, from_deg).
    pub written: Vec<[f64; 2]>,
    /// The local anomaly (u, v) on the last day, in units of `WIND.local_sd`.
    pub end_local: [f64; 2],
}

/// Advance a local wind anomaly (unit AR(1) per component) one day, u then v.
pub fn step_local_wind(local: &mut [f64; 2], rng: &mut ChaCha8Rng) {
    let p = &WIND;
    let innov = (1.0 - p.synoptic_ar1 * p.synoptic_ar1).sqrt();
    for l in local.iter_mut() {
        *l = p.synoptic_ar1 * *l + innov * normal(rng);
    }
}

/// A day's wind as written (`[u, v]` or `[speed, from_deg]`, rounded) and the (u, v) a reader
/// rebuilds from it, for the regional wind plus the local anomaly.
pub fn written_wind(
    regional: [f64; 2],
    local: [f64; 2],
    format: WindFormat,
) -> ([f64; 2], [f64; 2]) {
    let p = &WIND;
    let u = regional[0] + p.local_sd * local[0];
    let v = regional[1] + p.local_sd * local[1];
    match format {
        WindFormat::Components => {
            let (u, v) = (round_to(u, 2), round_to(v, 2));
            ([u, v], [u, v])
        }
        WindFormat::SpeedFrom => {
            let speed = round_to(u.hypot(v), 2);
            // Direction the wind blows from, clockwise from north.
            let from = round_to((-u).atan2(-v).to_degrees().rem_euclid(360.0), 1) % 360.0;
            let rad = from.to_radians();
            ([speed, from], [-speed * rad.sin(), -speed * rad.cos()])
        }
    }
}

/// A gauge's daily wind: the regional field plus a local AR(1) part, rounded as written.
pub fn gauge_wind(
    master_seed: u64,
    gauge_id: &str,
    regional: &[[f64; 2]],
    format: WindFormat,
) -> GaugeWind {
    let mut rng = component_rng(master_seed, &format!("wind-local-{gauge_id}"));
    let mut local = [normal(&mut rng), normal(&mut rng)];
    let mut end_local = local;
    let mut uv = Vec::with_capacity(regional.len());
    let mut written = Vec::with_capacity(regional.len());
    for r in regional {
        let (w, rebuilt) = written_wind(*r, local, format);
        written.push(w);
        uv.push(rebuilt);
        end_local = local;
        step_local_wind(&mut local, &mut rng);
    }
    GaugeWind {
        uv,
        written,
        end_local,
    }
}

/// Along-shore wind component, m/s, signed positive when the Northern-Hemisphere Ekman
/// transport (90 degrees to the right of the wind) points onshore, for a coast whose seaward
/// shore normal has bearing `orientation_deg`: `u cos(theta) - v sin(theta)`.
pub fn alongshore(uv: [f64; 2], orientation_deg: f64) -> f64 {
    let theta = orientation_deg.to_radians();
    uv[0] * theta.cos() - uv[1] * theta.sin()
}

/// Monthly ENSO value at a date, from a series starting January 1979.
pub fn enso_at(enso: &[f64], year: i32, month: u32) -> f64 {
    enso[month_index(year, month)]
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Wheeler and Hendon (2004) phase diagram: phase 1 lower left (RMM1 < 0, RMM2 slightly
    /// negative), phases 2-3 below the origin, 4-5 to the right, 6-7 above, 8 upper left
    /// (recalled from memory).
    #[test]
    fn rmm_phases_follow_wheeler_hendon_sectors() {
        let phase = |a: f64| {
            let r = a.to_radians();
            Rmm {
                rmm1: r.cos(),
                rmm2: r.sin(),
            }
            .phase()
        };
        assert_eq!(phase(-160.0), 1);
        assert_eq!(phase(-110.0), 2);
        assert_eq!(phase(-60.0), 3);
        assert_eq!(phase(-20.0), 4);
        assert_eq!(phase(20.0), 5);
        assert_eq!(phase(60.0), 6);
        assert_eq!(phase(110.0), 7);
        assert_eq!(phase(160.0), 8);
    }

    /// Ekman transport is 90 degrees to the right of the wind in the Northern Hemisphere
    /// (common practice). On a coast facing east (sea to the east), a wind towards the south
    /// drives water west, onshore; on a coast facing north a wind towards the east does.
    #[test]
    fn alongshore_sign_is_positive_for_onshore_ekman_transport() {
        assert!(alongshore([0.0, -5.0], 90.0) > 4.99);
        assert!(alongshore([5.0, 0.0], 0.0) > 4.99);
        assert!(alongshore([0.0, 5.0], 90.0) < -4.99);
        // Wind along the shore normal has no along-shore part.
        assert!(alongshore([3.0, 3.0], 45.0).abs() < 1e-12);
    }

    #[test]
    fn enso_has_the_target_spread() {
        let enso = enso_series(7, 12 * 600);
        let mean = enso.iter().sum::<f64>() / enso.len() as f64;
        let sd = (enso.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / enso.len() as f64).sqrt();
        // Six hundred years of a slowly decorrelating AR(2): about 15% sampling spread.
        assert!((sd - ENSO.target_sd_degc).abs() < 0.15, "sd {sd}");
        assert!(mean.abs() < 0.1, "mean {mean}");
    }

    #[test]
    fn speed_from_round_trips_to_components() {
        let regional = vec![[3.0, -4.0], [-2.0, 1.5]];
        let w = gauge_wind(1, "x", &regional, WindFormat::SpeedFrom);
        for (uv, wr) in w.uv.iter().zip(&w.written) {
            assert!((uv[0].hypot(uv[1]) - wr[0]).abs() < 1e-9);
        }
    }
}
