//! A gauge's water levels: the deterministic part (tide, trend, ENSO, MJO, wind setup), the
//! red noise, the missing-data mask, rounding as written, and flood-day counting, both for the
//! written realisation and as a Monte Carlo expectation over the noise.

use rand::Rng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};

use crate::calendar::{MINUTES_PER_DAY, date_of, day_number, month_index_of, years_since_2000};
use crate::drivers::{Rmm, alongshore, winter_cycle};
use crate::gauges::{GaugeSpec, Units, record_end};
use crate::seed::component_rng;
use crate::tide::TideModel;

/// Share of a day's expected readings needed for the day to count as observed.
pub const MIN_DAY_COMPLETENESS: f64 = 0.75;

/// Monte Carlo replicates of the noise per candidate day for the expected counts.
pub const MC_REPLICATES: usize = 1024;

/// Readings whose deterministic level stays this many noise standard deviations below the
/// threshold are taken never to reach it (P(z >= 5.5) is about 2e-8 per reading).
pub const MC_PRUNE_SIGMAS: f64 = 5.5;

/// Whether and how a reading appears in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Presence {
    /// A value is written.
    Present,
    /// The row is written with a missing value.
    Blank,
    /// The row is left out (an outage).
    Omitted,
}

/// Daily driver inputs of a gauge, indexed by day number offset from `first_day`.
pub struct DailyDrivers<'a> {
    /// Day number of index 0 of `rmm` and `wind_uv`.
    pub first_day: i64,
    /// Daily RMM values.
    pub rmm: &'a [Rmm],
    /// Day number of index 0 of `rmm` (may differ from `first_day`).
    pub rmm_first_day: i64,
    /// Daily wind (u, v) as written.
    pub wind_uv: &'a [[f64; 2]],
    /// Monthly ENSO from January 1979.
    pub enso: &'a [f64],
}

/// A gauge's sampled record on its regular time grid.
pub struct Record {
    /// UTC minute (since 1970) of sample 0; sample 0 is at local midnight of the first day.
    pub first_minute: i64,
    /// Sampling interval in minutes.
    pub step_minutes: i64,
    /// Samples per local day.
    pub per_day: usize,
    /// Local day number of the first day.
    pub first_local_day: i64,
    /// Astronomical tide about mean sea level, metres.
    pub tide: Vec<f64>,
    /// Deterministic level above datum (tide, trend, ENSO, MJO, wind), metres.
    pub deterministic: Vec<f64>,
    /// Noise standard deviation per sample, metres.
    pub sigma: Vec<f64>,
    /// Presence per sample.
    pub presence: Vec<Presence>,
    /// The written realisation, in thousandths of the gauge's units (present samples).
    pub written_milli: Vec<i64>,
    /// The unit AR(1) noise at the last sample (the noise's state at the record's end).
    pub end_noise_z: f64,
}

impl Record {
    /// Number of local days.
    pub fn days(&self) -> usize {
        self.deterministic.len() / self.per_day
    }

    /// UTC minute of sample `i`.
    pub fn minute(&self, i: usize) -> i64 {
        self.first_minute + i as i64 * self.step_minutes
    }
}

/// A level in metres as written: thousandths of the gauge's units.
pub fn to_milli(level_m: f64, units: Units) -> i64 {
    let value = match units {
        Units::Metres => level_m,
        Units::Feet => level_m / 0.3048,
    };
    (value * 1000.0).round() as i64
}

/// The level in metres a reader recovers from a written value.
pub fn from_milli(milli: i64, units: Units) -> f64 {
    let value = milli as f64 / 1000.0;
    match units {
        Units::Metres => value,
        Units::Feet => value * 0.3048,
    }
}

/// Build a gauge's record: deterministic part, noise scale, missing mask and one realisation.
pub fn build_record(master_seed: u64, gauge: &GaugeSpec, drivers: &DailyDrivers<'_>) -> Record {
    let per_day = (MINUTES_PER_DAY / gauge.interval_minutes) as usize;
    let first_local_day = day_number(gauge.record_start);
    let days = (day_number(record_end()) - first_local_day + 1) as usize;
    let n = days * per_day;
    let first_minute = first_local_day * MINUTES_PER_DAY - gauge.utc_offset_minutes;
    let tide_model = TideModel {
        harmonics: gauge.harmonics,
    };
    let mut tide = Vec::with_capacity(n);
    let mut deterministic = Vec::with_capacity(n);
    let mut sigma = Vec::with_capacity(n);
    for d in 0..days {
        let local_day = first_local_day + d as i64;
        let date = date_of(local_day);
        let enso = drivers.enso[month_index_of(date)];
        let rmm = drivers.rmm[(local_day - drivers.rmm_first_day) as usize];
        let uv = drivers.wind_uv[(local_day - drivers.first_day) as usize];
        let daily = daily_level(gauge, enso, rmm, uv);
        let sd = noise_sd(gauge, local_day);
        for k in 0..per_day {
            let minute = first_minute + (d * per_day + k) as i64 * gauge.interval_minutes;
            let astro = tide_model.height(minute);
            tide.push(astro);
            deterministic.push(daily + astro + gauge.trend.level_m(years_since_2000(minute)));
            sigma.push(sd);
        }
    }
    let presence = missing_mask(master_seed, gauge, days, per_day);
    let mut record = Record {
        first_minute,
        step_minutes: gauge.interval_minutes,
        per_day,
        first_local_day,
        tide,
        deterministic,
        sigma,
        presence,
        written_milli: Vec::new(),
        end_noise_z: 0.0,
    };
    (record.written_milli, record.end_noise_z) = realisation(master_seed, gauge, &record);
    record
}

/// The part of a day's level that is the same at every reading: mean sea level at 2000.0
/// plus the ENSO, MJO and along-shore wind setup terms, metres above datum.
pub fn daily_level(gauge: &GaugeSpec, enso_degc: f64, rmm: Rmm, wind_uv: [f64; 2]) -> f64 {
    let mjo = if rmm.active_in(&gauge.mjo.phases) {
        gauge.mjo.effect_m
    } else {
        0.0
    };
    let w = alongshore(wind_uv, gauge.coast_orientation_deg);
    let w = if gauge.wind.positive_part_only {
        w.max(0.0)
    } else {
        w
    };
    gauge.msl_2000_above_datum_m
        + gauge.enso_m_per_degc * enso_degc
        + mjo
        + gauge.wind.setup_m_per_mps * w
}

/// The noise standard deviation on a local day, metres: larger in mid-winter.
pub fn noise_sd(gauge: &GaugeSpec, local_day: i64) -> f64 {
    gauge.noise.sd_m * (1.0 + gauge.noise.winter_boost * winter_cycle(local_day))
}

/// The AR(1) coefficient of the unit noise per sampling step.
pub fn noise_ar1(gauge: &GaugeSpec) -> f64 {
    (-(gauge.interval_minutes as f64 / 60.0) / gauge.noise.efold_hours).exp()
}

/// The written realisation (deterministic part plus one continuous AR(1) noise path) and the
/// noise at the last sample.
fn realisation(master_seed: u64, gauge: &GaugeSpec, record: &Record) -> (Vec<i64>, f64) {
    let mut rng = component_rng(master_seed, &format!("noise-{}", gauge.id));
    let phi = noise_ar1(gauge);
    let innov = (1.0 - phi * phi).sqrt();
    let mut z: f64 = StandardNormal.sample(&mut rng);
    let mut last = z;
    let mut out = Vec::with_capacity(record.deterministic.len());
    for (det, sd) in record.deterministic.iter().zip(&record.sigma) {
        out.push(to_milli(det + sd * z, gauge.units));
        last = z;
        let e: f64 = StandardNormal.sample(&mut rng);
        z = phi * z + innov * e;
    }
    (out, last)
}

/// The missing-data mask: scattered readings, short runs (written blank) and outages (rows
/// left out), from the gauge's own random stream.
pub fn missing_mask(
    master_seed: u64,
    gauge: &GaugeSpec,
    days: usize,
    per_day: usize,
) -> Vec<Presence> {
    let mut rng = component_rng(master_seed, &format!("gaps-{}", gauge.id));
    let n = days * per_day;
    let per_hour = (60 / gauge.interval_minutes) as usize;
    let g = &gauge.gaps;
    let mut mask = vec![Presence::Present; n];
    for item in mask.iter_mut() {
        if rng.r#gen::<f64>() < g.scattered_prob {
            *item = Presence::Blank;
        }
    }
    let mut mark = |rng: &mut ChaCha8Rng, day: usize, len: usize, what: Presence| {
        let start = day * per_day + rng.gen_range(0..per_day);
        for item in mask.iter_mut().skip(start).take(len) {
            *item = what;
        }
    };
    for day in 0..days {
        if rng.r#gen::<f64>() < g.runs_per_year / 365.25 {
            let hours = rng.gen_range(g.run_hours[0]..=g.run_hours[1]) as usize;
            mark(&mut rng, day, hours * per_hour, Presence::Blank);
        }
        if rng.r#gen::<f64>() < g.outages_per_year / 365.25 {
            let len_days = rng.gen_range(g.outage_days[0]..=g.outage_days[1]) as usize;
            mark(&mut rng, day, len_days * per_day, Presence::Omitted);
        }
    }
    mask
}

/// One local day's flood bookkeeping.
#[derive(Debug, Clone, Copy)]
pub struct DayCount {
    /// Whether enough readings are present.
    pub observed: bool,
    /// Whether the written daily maximum reaches the threshold (observed days only).
    pub flooded: bool,
    /// Expected flood indicator (probability) over the noise (observed days only).
    pub expected: f64,
}

/// Whether a day has enough present readings.
fn day_observed(record: &Record, day: usize) -> bool {
    let range = day * record.per_day..(day + 1) * record.per_day;
    let present = record.presence[range]
        .iter()
        .filter(|p| **p == Presence::Present)
        .count();
    present as f64 >= MIN_DAY_COMPLETENESS * record.per_day as f64
}

/// Flood days of the written realisation and their Monte Carlo expectation, per local day.
///
/// The expectation of a day's flood indicator depends only on that day's noise, whose path is
/// a stationary unit AR(1). Only the day's candidate readings (present, and within
/// [`MC_PRUNE_SIGMAS`] noise standard deviations of the threshold) can reach it, so each
/// replicate draws the noise at just those readings, exactly: a stationary start at the first
/// and, `j` steps later, `z' = phi^j z + sqrt(1 - phi^(2j)) e`. Each day with a candidate is
/// simulated [`MC_REPLICATES`] times, the deterministic part and missing mask fixed.
pub fn day_counts(master_seed: u64, gauge: &GaugeSpec, record: &Record) -> Vec<DayCount> {
    let mut rng = component_rng(master_seed, &format!("expected-{}", gauge.id));
    let phi = noise_ar1(gauge);
    let threshold = gauge.flood_threshold_m;
    let units = gauge.units;
    let mut out = Vec::with_capacity(record.days());
    for day in 0..record.days() {
        let range = day * record.per_day..(day + 1) * record.per_day;
        if !day_observed(record, day) {
            out.push(DayCount {
                observed: false,
                flooded: false,
                expected: 0.0,
            });
            continue;
        }
        let present = |i: usize| record.presence[i] == Presence::Present;
        let flooded = range
            .clone()
            .filter(|&i| present(i))
            .any(|i| from_milli(record.written_milli[i], units) >= threshold);
        // (deterministic level, noise sd, AR(1) carry-over from the previous candidate and
        // its innovation scale) per candidate reading.
        let mut candidates: Vec<(f64, f64, f64, f64)> = Vec::new();
        let mut previous: Option<usize> = None;
        for i in range.filter(|&i| present(i)) {
            if record.deterministic[i] + MC_PRUNE_SIGMAS * record.sigma[i] >= threshold {
                let carry = previous.map_or(0.0, |p| phi.powi((i - p) as i32));
                candidates.push((
                    record.deterministic[i],
                    record.sigma[i],
                    carry,
                    (1.0 - carry * carry).sqrt(),
                ));
                previous = Some(i);
            }
        }
        let mut hits = 0usize;
        if !candidates.is_empty() {
            for _ in 0..MC_REPLICATES {
                let mut z = 0.0;
                for &(det, sd, carry, scale) in &candidates {
                    let e: f64 = StandardNormal.sample(&mut rng);
                    z = carry * z + scale * e;
                    if from_milli(to_milli(det + sd * z, units), units) >= threshold {
                        hits += 1;
                        break;
                    }
                }
            }
        }
        out.push(DayCount {
            observed: true,
            flooded,
            expected: hits as f64 / MC_REPLICATES as f64,
        });
    }
    out
}
