//! The engine's daily table: for every day of every season of one season name, the predicted
//! daily high water, the observed one when the day is observed, and the day's drivers.
//!
//! **The residual.** A day's high-water residual is its highest reading minus the highest
//! prediction at the same readings (the tide model with its mean, no trend). It is the
//! calendar-day form of the *skew surge*, "the difference between the maximum observed sea
//! level and the maximum predicted tide regardless of their timing" within one tidal cycle
//! (de Vries et al. 1995; Williams et al. 2016, Geophys. Res. Lett. 43, 6410, from memory):
//! the day replaces the tidal cycle because a flood day is a calendar day. Days under the
//! completeness rule have no residual (missing, never zero).
//!
//! **The predicted high water of a day** is the highest prediction on the gauge's own
//! reading grid (its sampling interval from local midnight), so that the simulated day and
//! the observed day are measured the same way.

use chrono::{Datelike, NaiveDate};

use crate::daily::DailyRecord;
use crate::drivers::{Coast, EnsoSeries, PhaseSet, RmmSeries, WindSeries};
use crate::ingest::LevelSeries;
use crate::season::{Season, SeasonSpec, decimal_year};
use crate::tide::TideModel;

const DAY_SECONDS: i64 = 86_400;

/// One day of a season.
#[derive(Debug, Clone, PartialEq)]
pub struct WaterDay {
    /// The local-standard-time date.
    pub date: NaiveDate,
    /// Decimal year of the day's middle.
    pub year: f64,
    /// Highest predicted level (tide model with its mean) on the reading grid, m.
    pub predicted_high: f64,
    /// Observed highest level minus predicted highest at the same readings, when observed.
    pub residual: Option<f64>,
    /// Whether the day is observed and reached the threshold.
    pub flood: bool,
    /// ENSO anomaly of the day's month, deg C.
    pub enso: Option<f64>,
    /// Whether the MJO is active (amplitude >= 1) in one of the gauge's phases.
    pub mjo_in_phases: Option<bool>,
    /// Whether the MJO is active in one of the opposite phases (four phases on).
    pub mjo_opposite: Option<bool>,
    /// The day's along-shore wind, m/s (positive: transport towards the coast).
    pub wind: Option<f64>,
}

/// Days before a season whose weather is known when its outlook is issued.
pub const LEAD_IN_DAYS: usize = 10;

/// The days of one season.
#[derive(Debug, Clone, PartialEq)]
pub struct SeasonWater {
    /// The season.
    pub season: Season,
    /// Its days, in order (all calendar days).
    pub days: Vec<WaterDay>,
    /// The [`LEAD_IN_DAYS`] days just before it (known at issue time: the start of the
    /// weather the season inherits).
    pub lead_in: Vec<WaterDay>,
}

impl SeasonWater {
    /// Observed days.
    pub fn observed_days(&self) -> usize {
        self.days.iter().filter(|d| d.residual.is_some()).count()
    }

    /// Observed flood days.
    pub fn flood_days(&self) -> u32 {
        self.days.iter().filter(|d| d.flood).count() as u32
    }
}

/// The driver series the table reads (any may be absent).
#[derive(Debug, Clone, Copy, Default)]
pub struct DayDrivers<'a> {
    /// Monthly ENSO index.
    pub enso: Option<&'a EnsoSeries>,
    /// Daily RMM index and the gauge's phases.
    pub rmm: Option<(&'a RmmSeries, &'a PhaseSet)>,
    /// Wind and the coast that turns it along-shore.
    pub wind: Option<(&'a WindSeries, &'a Coast)>,
}

impl DayDrivers<'_> {
    /// The drivers of `date`.
    pub fn of(&self, date: NaiveDate) -> (Option<f64>, Option<bool>, Option<bool>, Option<f64>) {
        let enso = self.enso.and_then(|s| s.get(date.year(), date.month()));
        let (mjo_in, mjo_opposite) = match self.rmm {
            Some((series, phases)) => match series.state(date) {
                Some(state) => {
                    let active = state.is_active();
                    let opposite = (state.phase + 3) % 8 + 1;
                    (
                        Some(active && phases.contains(state.phase)),
                        Some(active && phases.contains(opposite)),
                    )
                }
                None => (None, None),
            },
            None => (None, None),
        };
        let wind = self
            .wind
            .and_then(|(series, coast)| series.day(date).map(|(u, v)| coast.alongshore(u, v)));
        (enso, mjo_in, mjo_opposite, wind)
    }
}

/// The reading grid and local time of a gauge.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DayGrid {
    /// Local standard time minus UTC, seconds.
    pub utc_offset_seconds: i32,
    /// The record's sampling interval, seconds.
    pub step_seconds: i64,
}

impl DayGrid {
    fn day_start(&self, date: NaiveDate) -> i64 {
        let epoch = NaiveDate::from_ymd_opt(1970, 1, 1).expect("1970-01-01 is a valid date");
        (date - epoch).num_days() * DAY_SECONDS - i64::from(self.utc_offset_seconds)
    }

    /// Readings per day on the grid.
    pub fn per_day(&self) -> usize {
        (DAY_SECONDS / self.step_seconds.max(1)).max(1) as usize
    }

    /// Highest prediction of each of `days` local days from `first`.
    pub fn predicted_highs(&self, tide: &TideModel, first: NaiveDate, days: u32) -> Vec<f64> {
        let per_day = self.per_day();
        let levels = tide.predict_regular(
            self.day_start(first),
            self.step_seconds,
            per_day * days as usize,
        );
        levels
            .chunks(per_day)
            .map(|c| c.iter().copied().fold(f64::NEG_INFINITY, f64::max))
            .collect()
    }

    /// `days` days from `first` with their predicted high water and drivers, no observation.
    fn unobserved(
        &self,
        tide: &TideModel,
        first: NaiveDate,
        days: u32,
        drivers: &DayDrivers<'_>,
    ) -> Vec<WaterDay> {
        self.predicted_highs(tide, first, days)
            .into_iter()
            .enumerate()
            .map(|(i, predicted_high)| {
                let date = first + chrono::Duration::days(i as i64);
                let (enso, mjo_in_phases, mjo_opposite, wind) = drivers.of(date);
                WaterDay {
                    date,
                    year: decimal_year(date) + 0.5 / 365.25,
                    predicted_high,
                    residual: None,
                    flood: false,
                    enso,
                    mjo_in_phases,
                    mjo_opposite,
                    wind,
                }
            })
            .collect()
    }

    /// The days of `season`, with no observation (for a season ahead) and no lead-in.
    pub fn future_days(
        &self,
        tide: &TideModel,
        season: &Season,
        drivers: &DayDrivers<'_>,
    ) -> SeasonWater {
        SeasonWater {
            season: season.clone(),
            days: self.unobserved(tide, season.first_day(), season.calendar_days(), drivers),
            lead_in: Vec::new(),
        }
    }
}

/// Builds the daily table of every season of `spec` that overlaps the record.
///
/// `levels` are the record's readings (metres, unix seconds, increasing), `daily` its daily
/// record (the completeness rule), `tide` the tide model fitted with its mean only.
pub fn season_days(
    levels: &LevelSeries,
    daily: &DailyRecord,
    tide: &TideModel,
    spec: &SeasonSpec,
    grid: DayGrid,
    threshold_m: f64,
    drivers: &DayDrivers<'_>,
) -> Vec<SeasonWater> {
    let first = daily.first_date();
    let last = daily.last_date();
    let offset = i64::from(grid.utc_offset_seconds);
    let mut out = Vec::new();
    let lead = chrono::Duration::days(LEAD_IN_DAYS as i64);
    for year in first.year() - 1..=last.year() + 1 {
        let Ok(season) = Season::new(year, spec.clone()) else {
            continue;
        };
        // Every season overlapping the record, and the next one whose lead-in it holds.
        if season.last_day() < first || season.first_day() - lead > last {
            continue;
        }
        let lead_first = season.first_day() - lead;
        let mut all = grid.unobserved(tide, lead_first, LEAD_IN_DAYS as u32, drivers);
        all.extend(grid.unobserved(tide, season.first_day(), season.calendar_days(), drivers));
        // Readings of the lead-in and the season, predicted at their own times.
        let start = grid.day_start(lead_first);
        let end = grid.day_start(season.end_exclusive());
        let lo = levels.times.partition_point(|&t| t < start);
        let hi = levels.times.partition_point(|&t| t < end);
        let times = &levels.times[lo..hi];
        let predicted = tide.predict_at(times);
        let mut k = 0;
        while k < times.len() {
            let day = (times[k] + offset).div_euclid(DAY_SECONDS);
            let (mut obs, mut pred) = (f64::NEG_INFINITY, f64::NEG_INFINITY);
            while k < times.len() && (times[k] + offset).div_euclid(DAY_SECONDS) == day {
                obs = obs.max(levels.levels_m[lo + k]);
                pred = pred.max(predicted[k]);
                k += 1;
            }
            let date = crate::daily::date_of_day_index(day);
            let Some(record_day) = daily.day(date) else {
                continue;
            };
            let index = (date - lead_first).num_days();
            let Some(slot) = usize::try_from(index).ok().and_then(|i| all.get_mut(i)) else {
                continue;
            };
            if record_day.observed {
                slot.residual = Some(obs - pred);
                slot.flood = record_day.is_flood(threshold_m);
            }
        }
        let days = all.split_off(LEAD_IN_DAYS);
        out.push(SeasonWater {
            lead_in: all,
            season,
            days,
        });
    }
    out
}
