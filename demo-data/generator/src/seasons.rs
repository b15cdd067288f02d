//! Per-season truth of a gauge: calendar and observed days, written and expected flood days,
//! and the seasonal driver values the generator used.

use serde::Serialize;

use crate::calendar::{MINUTES_PER_DAY, Season, date_of, years_since_2000};
use crate::drivers::{Rmm, alongshore};
use crate::gauges::GaugeSpec;
use crate::levels::{DailyDrivers, DayCount, Record};

/// RMM phases used for the MJO share of a gauge that has no MJO response.
pub const DEFAULT_MJO_PHASES: [u8; 2] = [2, 3];

/// One gauge-season row of the truth table.
#[derive(Debug, Clone, Serialize)]
pub struct SeasonTruth {
    /// Gauge id.
    pub gauge: String,
    /// Season label, e.g. `2001-DJF`.
    pub season: String,
    /// Calendar days of the season inside the record.
    pub days: u32,
    /// Days with enough readings.
    pub observed_days: u32,
    /// Flood days in the written data.
    pub flood_days: u32,
    /// Expected flood days over the noise (deterministic parts and missing mask fixed).
    pub expected_flood_days: f64,
    /// Mean ENSO anomaly over the season's three months, deg C.
    pub enso_mean_degc: f64,
    /// Share of the season's days active (amplitude >= 1) in the gauge's MJO phases.
    pub mjo_active_share: f64,
    /// Mean daily along-shore wind, m/s.
    pub wind_alongshore_mean_mps: f64,
    /// Mean of the positive part of the daily along-shore wind, m/s.
    pub wind_alongshore_positive_mean_mps: f64,
    /// Mean sea-level trend component relative to 2000.0, metres.
    pub sea_level_trend_m: f64,
    /// Mean of the daily maximum astronomical tide, metres about mean sea level.
    pub tide_daily_max_mean_m: f64,
}

#[derive(Default)]
struct Accumulator {
    days: u32,
    observed: u32,
    flooded: u32,
    expected: f64,
    mjo: u32,
    wind: f64,
    wind_positive: f64,
    trend: f64,
    tide_max: f64,
}

/// Aggregate a gauge's days into seasons, in calendar order.
pub fn season_truth(
    gauge: &GaugeSpec,
    record: &Record,
    counts: &[DayCount],
    drivers: &DailyDrivers<'_>,
) -> Vec<SeasonTruth> {
    let phases: &[u8] = if gauge.mjo.phases.is_empty() {
        &DEFAULT_MJO_PHASES
    } else {
        &gauge.mjo.phases
    };
    let mut seasons: Vec<(Season, Accumulator)> = Vec::new();
    for (day, count) in counts.iter().enumerate() {
        let local_day = record.first_local_day + day as i64;
        let season = Season::of(date_of(local_day));
        if seasons.last().is_none_or(|(s, _)| *s != season) {
            seasons.push((season, Accumulator::default()));
        }
        let (_, acc) = seasons.last_mut().expect("a season was just pushed");
        let rmm: Rmm = drivers.rmm[(local_day - drivers.rmm_first_day) as usize];
        let w = alongshore(
            drivers.wind_uv[(local_day - drivers.first_day) as usize],
            gauge.coast_orientation_deg,
        );
        let samples = day * record.per_day..(day + 1) * record.per_day;
        let noon = local_day * MINUTES_PER_DAY + MINUTES_PER_DAY / 2 - gauge.utc_offset_minutes;
        acc.days += 1;
        acc.observed += u32::from(count.observed);
        acc.flooded += u32::from(count.flooded);
        acc.expected += count.expected;
        acc.mjo += u32::from(rmm.active_in(phases));
        acc.wind += w;
        acc.wind_positive += w.max(0.0);
        acc.trend += gauge.trend.level_m(years_since_2000(noon));
        acc.tide_max += record.tide[samples]
            .iter()
            .copied()
            .fold(f64::MIN, f64::max);
    }
    seasons
        .into_iter()
        .map(|(season, acc)| {
            let days = f64::from(acc.days);
            let enso = season
                .months()
                .iter()
                .map(|&(y, m)| crate::drivers::enso_at(drivers.enso, y, m))
                .sum::<f64>()
                / 3.0;
            SeasonTruth {
                gauge: gauge.id.to_owned(),
                season: season.label(),
                days: acc.days,
                observed_days: acc.observed,
                flood_days: acc.flooded,
                expected_flood_days: acc.expected,
                enso_mean_degc: enso,
                mjo_active_share: f64::from(acc.mjo) / days,
                wind_alongshore_mean_mps: acc.wind / days,
                wind_alongshore_positive_mean_mps: acc.wind_positive / days,
                sea_level_trend_m: acc.trend / days,
                tide_daily_max_mean_m: acc.tide_max / days,
            }
        })
        .collect()
}

/// Mean of the written and expected flood days of one season kind over label years
/// `first..=last`, over the seasons present.
pub fn mean_counts(rows: &[SeasonTruth], kind: &str, first: i32, last: i32) -> (f64, f64, usize) {
    let picked: Vec<&SeasonTruth> = rows
        .iter()
        .filter(|r| {
            let (year, name) = r.season.split_once('-').expect("labels are <year>-<name>");
            let year: i32 = year.parse().expect("label years are numbers");
            name == kind && (first..=last).contains(&year) && r.days >= 80
        })
        .collect();
    let n = picked.len().max(1) as f64;
    (
        picked.iter().map(|r| f64::from(r.flood_days)).sum::<f64>() / n,
        picked.iter().map(|r| r.expected_flood_days).sum::<f64>() / n,
        picked.len(),
    )
}
