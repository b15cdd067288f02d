//! The true forward distribution of next season's flood-day count at each gauge: every random
//! process of the generator continued from its state at the record's end
//! ([`crate::continuation`]), the deterministic parts (tide, trend, noise scale) evaluated once
//! per reading of the season, and the generator's own flood rule applied to the levels as
//! they would be written, replicate by replicate.

use serde::Serialize;

use crate::calendar::{MINUTES_PER_DAY, date_of, years_since_2000};
use crate::continuation::{self, SharedEnd, SharedPath};
use crate::drivers::Rmm;
use crate::gauges::{GaugeSpec, Units};
use crate::levels::{
    MIN_DAY_COMPLETENESS, Presence, daily_level, from_milli, noise_ar1, noise_sd, to_milli,
};
use crate::tide::TideModel;

/// Replicates of each scenario.
pub const FORWARD_REPLICATES: usize = 4000;

/// Levels this far (metres) below the threshold cannot reach it once written: rounding to
/// the millimetre (or 0.001 ft) moves a level by at most 0.0005 of the gauge's unit.
const ROUNDING_MARGIN_M: f64 = 0.001;

/// A season's readings at one gauge, with the parts of the level that no random process
/// touches precomputed per reading.
#[derive(Debug, Clone)]
pub struct SeasonGrid {
    /// Local day number of the first day.
    pub first_local_day: i64,
    /// Days in the season.
    pub days: usize,
    /// Readings per local day at the gauge's sampling interval.
    pub per_day: usize,
    /// Astronomical tide per reading, metres.
    tide: Vec<f64>,
    /// Sea-level trend per reading, metres relative to 2000.0.
    trend: Vec<f64>,
    /// Noise standard deviation per day, metres.
    sigma: Vec<f64>,
    /// Whether each reading is present (all of them in the future record).
    present: Vec<bool>,
    /// Whether each day has enough readings to count.
    observed: Vec<bool>,
    threshold: f64,
    units: Units,
}

impl SeasonGrid {
    /// The grid of `days` local days from `first_local_day`, every reading present.
    pub fn new(gauge: &GaugeSpec, first_local_day: i64, days: usize) -> SeasonGrid {
        let per_day = (MINUTES_PER_DAY / gauge.interval_minutes) as usize;
        let first_minute = first_local_day * MINUTES_PER_DAY - gauge.utc_offset_minutes;
        let model = TideModel {
            harmonics: gauge.harmonics,
        };
        let n = days * per_day;
        let minute = |i: usize| first_minute + i as i64 * gauge.interval_minutes;
        SeasonGrid {
            first_local_day,
            days,
            per_day,
            tide: (0..n).map(|i| model.height(minute(i))).collect(),
            trend: (0..n)
                .map(|i| gauge.trend.level_m(years_since_2000(minute(i))))
                .collect(),
            sigma: (0..days)
                .map(|d| noise_sd(gauge, first_local_day + d as i64))
                .collect(),
            present: vec![true; n],
            observed: vec![true; days],
            threshold: gauge.flood_threshold_m,
            units: gauge.units,
        }
    }

    /// The same grid with readings missing as in `presence` (one entry per reading), and days
    /// with fewer than 75% of their readings not counted, as in the record.
    pub fn with_presence(mut self, presence: &[Presence]) -> SeasonGrid {
        assert_eq!(presence.len(), self.readings(), "one presence per reading");
        for (slot, p) in self.present.iter_mut().zip(presence) {
            *slot = *p == Presence::Present;
        }
        for (d, observed) in self.observed.iter_mut().enumerate() {
            let present = self.present[d * self.per_day..(d + 1) * self.per_day]
                .iter()
                .filter(|p| **p)
                .count();
            *observed = present as f64 >= MIN_DAY_COMPLETENESS * self.per_day as f64;
        }
        self
    }

    /// Number of readings.
    pub fn readings(&self) -> usize {
        self.tide.len()
    }

    /// Flood days given each day's level part shared by its readings (`daily`, see
    /// [`daily_level`]) and the unit noise at every reading (`z`): a counted day floods when
    /// a present reading, written as the generator writes it (thousandths of the gauge's
    /// units) and read back in metres, reaches the threshold.
    pub fn flood_days(&self, daily: &[f64], z: &[f64]) -> u32 {
        assert_eq!(daily.len(), self.days, "one daily level per day");
        assert_eq!(z.len(), self.readings(), "one noise value per reading");
        let near = self.threshold - ROUNDING_MARGIN_M;
        let mut count = 0;
        for (d, &day_level) in daily.iter().enumerate() {
            if !self.observed[d] {
                continue;
            }
            let sd = self.sigma[d];
            let flooded = (d * self.per_day..(d + 1) * self.per_day).any(|i| {
                // The record's arithmetic: (daily + tide) + trend, then + sd * z.
                let level = day_level + self.tide[i] + self.trend[i] + sd * z[i];
                self.present[i]
                    && level >= near
                    && from_milli(to_milli(level, self.units), self.units) >= self.threshold
            });
            count += u32::from(flooded);
        }
        count
    }
}

/// The distribution of one gauge's season count under one scenario.
#[derive(Debug, Clone, Serialize)]
pub struct CountDistribution {
    /// Replicates simulated.
    pub replicates: usize,
    /// Share of replicates with each count, index = days (0 to the season's length).
    pub pmf: Vec<f64>,
    /// Mean count.
    pub mean: f64,
    /// Variance of the count (of the pmf, dividing by the replicates).
    pub variance: f64,
    /// Smallest k with CDF(k) >= 0.1.
    pub p10: usize,
    /// Smallest k with CDF(k) >= 0.5.
    pub p50: usize,
    /// Smallest k with CDF(k) >= 0.9.
    pub p90: usize,
    /// Share of replicates with p10 <= N <= p90.
    pub share_within_p10_p90: f64,
    /// Monte Carlo standard error of the mean: sqrt(s^2 / R), s^2 with R - 1.
    pub mean_standard_error: f64,
    /// P(N >= k) for the gauge's `exceed_days`.
    pub exceedance: Vec<Exceedance>,
    /// The ENSO values used (one per replicate), summarised.
    pub enso_degc: ValueSummary,
}

/// One exceedance probability with its Monte Carlo standard error sqrt(p (1 - p) / R).
#[derive(Debug, Clone, Serialize)]
pub struct Exceedance {
    /// k.
    pub days: u32,
    /// P(N >= k).
    pub probability: f64,
    /// Monte Carlo standard error.
    pub standard_error: f64,
}

/// Mean, standard deviation (dividing by n), least and greatest of some values.
#[derive(Debug, Clone, Serialize)]
pub struct ValueSummary {
    /// Mean.
    pub mean: f64,
    /// Standard deviation.
    pub sd: f64,
    /// Least value.
    pub min: f64,
    /// Greatest value.
    pub max: f64,
}

impl ValueSummary {
    /// Summary of a non-empty slice.
    pub fn of(values: &[f64]) -> ValueSummary {
        let n = values.len() as f64;
        let mean = values.iter().sum::<f64>() / n;
        let sd = (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / n).sqrt();
        ValueSummary {
            mean,
            sd,
            min: values.iter().copied().fold(f64::INFINITY, f64::min),
            max: values.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        }
    }
}

impl CountDistribution {
    /// The distribution of `counts` (each at most `days`), with exceedances for `exceed_days`.
    pub fn from_counts(
        counts: &[u32],
        days: usize,
        exceed_days: &[u32],
        enso: &[f64],
    ) -> CountDistribution {
        let r = counts.len();
        let mut tally = vec![0usize; days + 1];
        for &c in counts {
            tally[c as usize] += 1;
        }
        let rf = r as f64;
        let pmf: Vec<f64> = tally.iter().map(|&t| t as f64 / rf).collect();
        let mean = counts.iter().map(|&c| f64::from(c)).sum::<f64>() / rf;
        let squares = counts
            .iter()
            .map(|&c| (f64::from(c) - mean).powi(2))
            .sum::<f64>();
        // Smallest k with cumulative count / R >= num / den, in exact integers.
        let quantile = |num: usize, den: usize| {
            let mut cumulative = 0;
            tally
                .iter()
                .position(|&t| {
                    cumulative += t;
                    cumulative * den >= num * r
                })
                .expect("the cumulative count reaches R")
        };
        let (p10, p50, p90) = (quantile(1, 10), quantile(1, 2), quantile(9, 10));
        let within = counts
            .iter()
            .filter(|&&c| (p10..=p90).contains(&(c as usize)))
            .count();
        let exceedance = exceed_days
            .iter()
            .map(|&k| {
                let p = counts.iter().filter(|&&c| c >= k).count() as f64 / rf;
                Exceedance {
                    days: k,
                    probability: p,
                    standard_error: (p * (1.0 - p) / rf).sqrt(),
                }
            })
            .collect();
        CountDistribution {
            replicates: r,
            pmf,
            mean,
            variance: squares / rf,
            p10,
            p50,
            p90,
            share_within_p10_p90: within as f64 / rf,
            mean_standard_error: (squares / (rf - 1.0) / rf).sqrt(),
            exceedance,
            enso_degc: ValueSummary::of(enso),
        }
    }
}

/// One ENSO scenario: the season's ENSO value per replicate (each of the three months equals
/// it, so it is also the season mean).
#[derive(Debug, Clone)]
pub struct EnsoScenario {
    /// Per replicate, deg C.
    pub values: Vec<f64>,
}

/// What one gauge's simulation needs beyond its spec.
#[derive(Debug, Clone, Copy)]
pub struct GaugeEnd {
    /// The local wind anomaly on the record's last day.
    pub local_wind: [f64; 2],
    /// The unit noise at the record's last reading.
    pub noise_z: f64,
}

/// The season counts of one gauge under each scenario, replicate by replicate. Replicate `r`
/// uses the shared path `shared[r]`, the gauge's own local-wind and noise streams of replicate
/// `r` and, under scenario `s`, ENSO `scenarios[s].values[r]`; the scenarios share everything
/// else (common random numbers).
pub fn simulate_gauge(
    master_seed: u64,
    season_label: &str,
    gauge: &GaugeSpec,
    grid: &SeasonGrid,
    end: GaugeEnd,
    shared: &[SharedPath],
    scenarios: &[EnsoScenario],
) -> Vec<Vec<u32>> {
    let phi = noise_ar1(gauge);
    let mut z = vec![0.0; grid.readings()];
    let mut daily = vec![0.0; grid.days];
    let mut counts = vec![Vec::with_capacity(shared.len()); scenarios.len()];
    for (r, path) in shared.iter().enumerate() {
        let wind = continuation::local_wind_path(
            master_seed,
            season_label,
            gauge,
            end.local_wind,
            &path.regional,
            r as u64,
        );
        let mut rng = continuation::noise_rng(master_seed, season_label, gauge, r as u64);
        continuation::noise_path(phi, Some(end.noise_z), &mut rng, &mut z);
        for (scenario, out) in scenarios.iter().zip(counts.iter_mut()) {
            let enso = scenario.values[r];
            for (d, slot) in daily.iter_mut().enumerate() {
                *slot = daily_level(gauge, enso, path.rmm[d], wind[d]);
            }
            out.push(grid.flood_days(&daily, &z));
        }
    }
    counts
}

/// The daily (RMM, wind (u, v) as written) inputs that [`simulate_gauge`] gives a gauge's
/// level in replicate `replicate` with shared path `path`, for independent checks.
pub fn gauge_day_drivers(
    master_seed: u64,
    season_label: &str,
    gauge: &GaugeSpec,
    end: GaugeEnd,
    path: &SharedPath,
    replicate: u64,
) -> Vec<(Rmm, [f64; 2])> {
    let wind = continuation::local_wind_path(
        master_seed,
        season_label,
        gauge,
        end.local_wind,
        &path.regional,
        replicate,
    );
    path.rmm.iter().copied().zip(wind).collect()
}

/// The season's first and last local dates as text.
pub fn season_dates(first_local_day: i64, days: usize) -> (String, String) {
    (
        date_of(first_local_day).format("%Y-%m-%d").to_string(),
        date_of(first_local_day + days as i64 - 1)
            .format("%Y-%m-%d")
            .to_string(),
    )
}

/// Shared paths of replicates `0..replicates`.
pub fn shared_paths(
    master_seed: u64,
    season_label: &str,
    end: &SharedEnd,
    first_local_day: i64,
    days: usize,
    replicates: usize,
) -> Vec<SharedPath> {
    (0..replicates as u64)
        .map(|r| {
            continuation::shared_path(master_seed, season_label, end, first_local_day, days, r)
        })
        .collect()
}

/// Inputs of the forward truth: the states at the record's end and the ENSO forecast.
#[derive(Debug, Clone)]
pub struct ForwardInputs<'a> {
    /// Master seed.
    pub master_seed: u64,
    /// The gauges.
    pub gauges: &'a [GaugeSpec],
    /// Local day number of the record's last day.
    pub record_end_day: i64,
    /// Shared processes' state on the last day.
    pub shared_end: SharedEnd,
    /// Per gauge (same order), local wind and noise state at the end.
    pub gauge_ends: Vec<GaugeEnd>,
    /// ENSO forecast: per model, its name and members (deg C).
    pub forecast: Vec<(&'static str, Vec<f64>)>,
    /// Pooled forecast mean (equal weight per model), deg C.
    pub pooled_mean_degc: f64,
    /// Replicates per scenario.
    pub replicates: usize,
}

/// The forward truth document (`truth-<season>.json`).
#[derive(Debug, Clone, Serialize)]
pub struct ForwardTruth {
    /// Invented-data note.
    pub note: &'static str,
    /// Season label, e.g. `2026-DJF`.
    pub season: String,
    /// First local day of the season.
    pub first_day_local: String,
    /// Last local day of the season.
    pub last_day_local: String,
    /// Days in the season (all counted: no gaps in the future record).
    pub days: usize,
    /// Last local day of the record.
    pub record_end_local: String,
    /// Master seed.
    pub master_seed: u64,
    /// Replicates per scenario.
    pub replicates: usize,
    /// The flood rule.
    pub flood_day: &'static str,
    /// How every process was continued and how the streams were seeded.
    pub method: String,
    /// The continuation streams.
    pub streams: Vec<StreamNote>,
    /// Shared processes' state on the record's last day.
    pub end_state: SharedEnd,
    /// The two ENSO scenarios.
    pub scenarios: Vec<ScenarioNote>,
    /// Per gauge results.
    pub gauges: Vec<GaugeForward>,
}

/// One continuation stream.
#[derive(Debug, Clone, Serialize)]
pub struct StreamNote {
    /// Component name (ChaCha8 key from the master seed and this name; stream = replicate).
    pub component: String,
    /// What it drives.
    pub drives: &'static str,
}

/// One ENSO scenario.
#[derive(Debug, Clone, Serialize)]
pub struct ScenarioNote {
    /// `members` or `enso_fixed`.
    pub name: &'static str,
    /// How ENSO is set.
    pub description: &'static str,
    /// Per replicate ENSO, deg C (each of Dec, Jan, Feb equals it).
    pub enso_degc: Vec<f64>,
    /// Summary of `enso_degc`.
    pub enso_summary: ValueSummary,
    /// Members scenario: replicates that drew from each model.
    pub model_draws: Vec<ModelDraws>,
}

/// How many replicates drew from one forecast model.
#[derive(Debug, Clone, Serialize)]
pub struct ModelDraws {
    /// Model name.
    pub model: &'static str,
    /// Its ensemble size.
    pub members: usize,
    /// Replicates that picked it.
    pub replicates: usize,
}

/// One gauge's forward truth.
#[derive(Debug, Clone, Serialize)]
pub struct GaugeForward {
    /// Gauge id.
    pub id: &'static str,
    /// Flood threshold, metres above datum.
    pub flood_threshold_m: f64,
    /// Sampling interval, minutes.
    pub interval_minutes: i64,
    /// Readings per local day.
    pub readings_per_day: usize,
    /// Units the levels are written in (`m` or `ft`).
    pub units: &'static str,
    /// The TOML's `exceed_days`.
    pub exceed_days: &'static [u32],
    /// Local wind anomaly (unit AR(1), u and v) on the record's last day.
    pub end_local_wind_unit: [f64; 2],
    /// Unit noise at the record's last reading.
    pub end_noise_z: f64,
    /// The count distribution under each scenario.
    pub scenarios: GaugeScenarios,
}

/// A gauge's distributions under the two scenarios.
#[derive(Debug, Clone, Serialize)]
pub struct GaugeScenarios {
    /// ENSO drawn from the forecast members.
    pub members: CountDistribution,
    /// ENSO fixed at the pooled forecast mean.
    pub enso_fixed: CountDistribution,
}

const FLOOD_DAY: &str = "a local-standard-time day whose highest level, written as the generator writes it (thousandths of the gauge's units) and read back in metres, is >= flood_threshold_m; every reading of every day is present";

/// Simulate the forward truth of the season after the record.
pub fn forward_truth(inputs: &ForwardInputs<'_>) -> ForwardTruth {
    let seed = inputs.master_seed;
    let first_day = inputs.record_end_day + 1;
    let season = crate::calendar::Season::of(date_of(first_day));
    let label = season.label();
    let days = season.days() as usize;
    let r = inputs.replicates;
    let shared = shared_paths(seed, &label, &inputs.shared_end, first_day, days, r);
    let models: Vec<Vec<f64>> = inputs.forecast.iter().map(|(_, m)| m.clone()).collect();
    let draws: Vec<(usize, usize, f64)> = (0..r as u64)
        .map(|k| continuation::enso_member_draw(seed, &label, &models, k))
        .collect();
    let members = EnsoScenario {
        values: draws.iter().map(|d| d.2).collect(),
    };
    let fixed = EnsoScenario {
        values: vec![inputs.pooled_mean_degc; r],
    };
    let scenarios = [members, fixed];
    let counts: Vec<Vec<Vec<u32>>> = std::thread::scope(|scope| {
        let handles: Vec<_> = inputs
            .gauges
            .iter()
            .zip(&inputs.gauge_ends)
            .map(|(gauge, end)| {
                let (label, shared, scenarios) = (&label, &shared, &scenarios);
                scope.spawn(move || {
                    let grid = SeasonGrid::new(gauge, first_day, days);
                    simulate_gauge(seed, label, gauge, &grid, *end, shared, scenarios)
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().expect("a gauge thread does not panic"))
            .collect()
    });
    let gauges = inputs
        .gauges
        .iter()
        .zip(&inputs.gauge_ends)
        .zip(counts)
        .map(|((gauge, end), per_scenario)| {
            let dist = |s: usize| {
                CountDistribution::from_counts(
                    &per_scenario[s],
                    days,
                    gauge.exceed_days,
                    &scenarios[s].values,
                )
            };
            GaugeForward {
                id: gauge.id,
                flood_threshold_m: gauge.flood_threshold_m,
                interval_minutes: gauge.interval_minutes,
                readings_per_day: (MINUTES_PER_DAY / gauge.interval_minutes) as usize,
                units: gauge.units.toml_name(),
                exceed_days: gauge.exceed_days,
                end_local_wind_unit: end.local_wind,
                end_noise_z: end.noise_z,
                scenarios: GaugeScenarios {
                    members: dist(0),
                    enso_fixed: dist(1),
                },
            }
        })
        .collect();
    let model_draws = inputs
        .forecast
        .iter()
        .enumerate()
        .map(|(m, (name, list))| ModelDraws {
            model: name,
            members: list.len(),
            replicates: draws.iter().filter(|d| d.0 == m).count(),
        })
        .collect();
    let [members, fixed] = scenarios;
    let (first_text, last_text) = season_dates(first_day, days);
    let streams = vec![
        StreamNote {
            component: continuation::stream_name(&label, "rmm"),
            drives: "MJO: phase jitter, log-amplitude and period innovations, three per day",
        },
        StreamNote {
            component: continuation::stream_name(&label, "wind-regional"),
            drives: "regional wind: slow and synoptic innovations of u, then of v, per day",
        },
        StreamNote {
            component: continuation::stream_name(&label, "wind-local-<gauge id>"),
            drives: "a gauge's local wind anomaly: innovations of u, then v, per day",
        },
        StreamNote {
            component: continuation::stream_name(&label, "noise-<gauge id>"),
            drives: "a gauge's unit AR(1) noise: one innovation per reading",
        },
        StreamNote {
            component: continuation::stream_name(&label, "enso-members"),
            drives: "members scenario: a model index, then a member index, uniform",
        },
    ];
    ForwardTruth {
        note: "Every number here is invented: the demo coastline is fictional. This is the true distribution of the season's flood-day count under the generator, not a forecast.",
        season: label.clone(),
        first_day_local: first_text,
        last_day_local: last_text,
        days,
        record_end_local: date_of(inputs.record_end_day)
            .format("%Y-%m-%d")
            .to_string(),
        master_seed: seed,
        replicates: r,
        flood_day: FLOOD_DAY,
        method: method_text(&label, r),
        streams,
        end_state: inputs.shared_end,
        scenarios: vec![
            ScenarioNote {
                name: "members",
                description: "each replicate draws one ENSO value from the forecast file: a model uniformly (equal weight per model), then one of its members uniformly; the value is the season-mean anomaly, and each of the three months (Dec, Jan, Feb) is set to it, so the season mean equals it",
                enso_summary: ValueSummary::of(&members.values),
                enso_degc: members.values,
                model_draws,
            },
            ScenarioNote {
                name: "enso_fixed",
                description: "ENSO fixed at the pooled forecast mean (the mean of the three models' member means) in each of the three months, for every replicate",
                enso_summary: ValueSummary::of(&fixed.values),
                enso_degc: vec![inputs.pooled_mean_degc],
                model_draws: Vec::new(),
            },
        ],
        gauges,
    }
}

fn method_text(label: &str, replicates: usize) -> String {
    format!(
        "Monte Carlo over {replicates} replicates per scenario; replicate r is the same in both scenarios except for ENSO (common random numbers), and shares its MJO and regional wind path across the four gauges. \
Every random process starts from its full internal state on the record's last local day (2026-11-30: end_state and each gauge's end_* fields, unrounded) and is stepped with the record's own update, day by day (reading by reading for the noise), with innovations from new streams: ChaCha8 keyed, like every generator stream, by the master seed and the FNV-1a 64 hash of a new component name (forward-{label}-<part>, see streams), with the replicate number as the ChaCha stream (nonce), so the streams that made the record are untouched. \
MJO: theta += 2 pi / period + jitter, log amplitude and the period driver AR(1), then RMM1, RMM2 = A cos/sin(theta) rounded to 4 decimals, and active = amplitude >= 1 in the gauge's phases. \
Regional wind: slow and synoptic AR(1) anomalies of u and v, with the annual cycle and winter synoptic boost of each future day. \
Local wind: each gauge's unit AR(1) anomaly times local_sd added to the regional wind, then rounded exactly as the gauge's wind file writes it (u, v to 0.01 m/s, or speed to 0.01 m/s and direction to 0.1 degree, rebuilt to u, v), and the along-shore component (positive part at saltlow-sound) taken from that. \
Noise: the unit AR(1) continued from its value at the record's last reading, z' = phi z + sqrt(1 - phi^2) e at every reading of the season. \
ENSO: per scenario (see scenarios), the same value in each of the season's three months. \
Deterministic parts, computed once per reading at the gauge's own sampling interval: the astronomical tide (twelve constituents with nodal factors at each reading), the sea-level trend at each reading, the mean sea level at 2000.0, and the day's noise standard deviation (winter boost). \
Level = (msl + b_enso ENSO + MJO effect + wind setup) + tide + trend + sd z, with the generator's arithmetic; written to thousandths of the gauge's units (feet at corrin-quay) and read back in metres; a day floods when any of its readings reaches flood_threshold_m. No gaps: all 90 days count. \
pmf[k] = share of replicates with k flood days; variance divides by R; p10, p50, p90 are the smallest k with CDF(k) >= 0.1, 0.5, 0.9 (exact integer comparison); mean_standard_error = sqrt(s^2 / R) with s^2 dividing by R - 1; exceedance standard errors sqrt(p (1 - p) / R)."
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantiles_are_the_smallest_k_reaching_the_level() {
        // Counts 0 x 1, 1 x 4, 2 x 4, 9 x 1: CDF 0.1, 0.5, 0.9, 1.0.
        let counts = [0, 1, 1, 1, 1, 2, 2, 2, 2, 9];
        let d = CountDistribution::from_counts(&counts, 10, &[2, 10], &[0.0; 10]);
        assert_eq!((d.p10, d.p50, d.p90), (0, 1, 2));
        assert!((d.share_within_p10_p90 - 0.9).abs() < 1e-12);
        assert!((d.mean - 2.1).abs() < 1e-12);
        assert!((d.pmf.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        assert_eq!(d.pmf.len(), 11);
        assert!((d.exceedance[0].probability - 0.5).abs() < 1e-12);
        assert_eq!(d.exceedance[1].probability, 0.0);
        // Population variance: mean of squares 0.4 + 1.6*... computed directly.
        let var = counts
            .iter()
            .map(|&c| (f64::from(c) - 2.1).powi(2))
            .sum::<f64>()
            / 10.0;
        assert!((d.variance - var).abs() < 1e-12);
    }

    /// The flood rule applies to the level as written: in metres, 4.1796 m is written 4.180
    /// and floods a 4.18 m threshold (4.1794 m, written 4.179, does not); in feet, 10.7284 ft
    /// (3.270016 m, above a 3.27 m threshold) is written 10.728 ft = 3.269894 m and does not
    /// flood, while 10.7286 ft (written 10.729 ft = 3.270199 m) does.
    #[test]
    fn the_flood_rule_sees_the_written_rounding() {
        let all = crate::gauges::gauges();
        for (gauge, under, over) in [
            (&all[0], 4.1794, 4.1796),
            (&all[3], 10.7284 * 0.3048, 10.7286 * 0.3048),
        ] {
            let grid = SeasonGrid::new(gauge, 20_000, 1);
            let z = vec![0.0; grid.readings()];
            let peak = (0..grid.readings())
                .map(|i| grid.tide[i] + grid.trend[i])
                .fold(f64::MIN, f64::max);
            let at = |level: f64| grid.flood_days(&[level - peak], &z);
            assert_eq!(at(under), 0, "{}", gauge.id);
            assert_eq!(at(over), 1, "{}", gauge.id);
        }
    }
}
