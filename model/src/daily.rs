//! Daily maxima, observed days and flood days, on calendar days of the gauge's local standard
//! time.
//!
//! [`DayTotals`] accumulates readings keyed by day index (days since 1970-01-01 in local
//! standard time) in a growable vector, so rows may arrive in any order. [`DailyRecord`]
//! applies the completeness rule: a day is observed only when its readings reach
//! `min_day_completeness` (default 0.75, common practice) times the readings expected in a day
//! at the sampling interval. A flood day is an observed day whose maximum reaches the flood
//! threshold.

use chrono::{Datelike, NaiveDate};
use serde::Serialize;

/// The share of a day's expected readings needed to count it as observed, unless the gauge
/// says otherwise (common practice).
pub const DEFAULT_MIN_DAY_COMPLETENESS: f64 = 0.75;

/// Days from 0001-01-01 (day 1 in chrono's count) to 1970-01-01.
const UNIX_EPOCH_DAYS_FROM_CE: i64 = 719_163;

/// The mean level of one calendar month (in local standard time).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MonthlyMean {
    /// The year.
    pub year: i32,
    /// The month, 1 = January.
    pub month: u32,
    /// Mean of the month's readings, metres.
    pub mean_m: f64,
    /// The number of readings averaged.
    pub readings: u64,
}

/// Errors building daily maxima.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DailyError {
    /// No reading has a level.
    #[error("no readings with a level")]
    NoReadings,
    /// Fewer than two distinct times: no sampling interval to judge completeness by.
    #[error("cannot tell the sampling interval: fewer than two distinct reading times")]
    NoInterval,
    /// A completeness share outside (0, 1].
    #[error("day completeness must be a share in (0, 1], got {0}")]
    BadCompleteness(f64),
}

/// One day's running totals.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DaySlot {
    /// Readings with a level.
    pub readings: u32,
    /// The highest level, metres (negative infinity without readings).
    pub max_m: f64,
    /// The sum of the levels, metres.
    pub sum_m: f64,
}

impl DaySlot {
    const EMPTY: DaySlot = DaySlot {
        readings: 0,
        max_m: f64::NEG_INFINITY,
        sum_m: 0.0,
    };
}

/// Per-day totals keyed by day index in local standard time; 24 bytes per day spanned.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct DayTotals {
    first_day: i64,
    slots: Vec<DaySlot>,
}

/// The calendar date of a day index (days since 1970-01-01).
pub fn date_of_day_index(day: i64) -> NaiveDate {
    i32::try_from(day + UNIX_EPOCH_DAYS_FROM_CE)
        .ok()
        .and_then(NaiveDate::from_num_days_from_ce_opt)
        .expect("ingest only admits times between 1800 and 2200")
}

impl DayTotals {
    /// Adds one reading to day index `day` (days since 1970-01-01 in local standard time).
    #[inline]
    pub fn add(&mut self, day: i64, level_m: f64) {
        if self.slots.is_empty() {
            self.first_day = day;
        }
        if day < self.first_day {
            // Grow at the front by at least the current length, so input in reverse time
            // order costs amortised constant time per day.
            let need = (self.first_day - day) as usize;
            let grow = need.max(self.slots.len());
            let mut slots = vec![DaySlot::EMPTY; grow];
            slots.append(&mut self.slots);
            self.slots = slots;
            self.first_day -= grow as i64;
        }
        let index = (day - self.first_day) as usize;
        if index >= self.slots.len() {
            self.slots.resize(index + 1, DaySlot::EMPTY);
        }
        let slot = &mut self.slots[index];
        slot.readings += 1;
        slot.sum_m += level_m;
        if level_m > slot.max_m {
            slot.max_m = level_m;
        }
    }

    /// The days that have readings, as (date, totals), in date order.
    pub fn days(&self) -> impl Iterator<Item = (NaiveDate, &DaySlot)> + '_ {
        self.slots
            .iter()
            .enumerate()
            .filter(|(_, s)| s.readings > 0)
            .map(|(i, s)| (date_of_day_index(self.first_day + i as i64), s))
    }

    /// The first and last day index with readings.
    fn span(&self) -> Option<(i64, i64)> {
        let first = self.slots.iter().position(|s| s.readings > 0)?;
        let last = self.slots.iter().rposition(|s| s.readings > 0)?;
        Some((self.first_day + first as i64, self.first_day + last as i64))
    }

    /// Mean level per calendar month, from the day sums; months without readings left out.
    pub fn monthly_means(&self) -> Vec<MonthlyMean> {
        let mut months: Vec<MonthlyMean> = Vec::new();
        let mut sum = 0.0;
        for (date, slot) in self.days() {
            let (year, month) = (date.year(), date.month());
            match months.last_mut() {
                Some(m) if m.year == year && m.month == month => {
                    m.readings += u64::from(slot.readings);
                    sum += slot.sum_m;
                }
                _ => {
                    if let Some(m) = months.last_mut() {
                        m.mean_m = sum / m.readings as f64;
                    }
                    months.push(MonthlyMean {
                        year,
                        month,
                        mean_m: 0.0,
                        readings: u64::from(slot.readings),
                    });
                    sum = slot.sum_m;
                }
            }
        }
        if let Some(m) = months.last_mut() {
            m.mean_m = sum / m.readings as f64;
        }
        months
    }
}

/// One calendar day of the record.
#[derive(Debug, Clone, PartialEq)]
pub struct DailyMax {
    /// The date in local standard time.
    pub date: NaiveDate,
    /// Readings with a level.
    pub readings: u32,
    /// The highest level, metres; `None` without readings.
    pub max_m: Option<f64>,
    /// Whether enough readings are present for the day to count.
    pub observed: bool,
}

impl DailyMax {
    /// Whether the day is an observed flood day: its maximum reaches `threshold_m`.
    pub fn is_flood(&self, threshold_m: f64) -> bool {
        self.observed && self.max_m.is_some_and(|max| max >= threshold_m)
    }
}

/// Every calendar day from the first to the last day with readings, gaps included as
/// unobserved days.
#[derive(Debug, Clone, PartialEq)]
pub struct DailyRecord {
    /// The days, consecutive and in order.
    pub days: Vec<DailyMax>,
    /// The sampling interval the completeness rule used, seconds.
    pub sampling_interval_s: i64,
    /// Readings expected in a full day at that interval.
    pub expected_per_day: f64,
    /// The share of expected readings a day needs to be observed.
    pub min_day_completeness: f64,
}

impl DailyRecord {
    /// Applies the completeness rule to per-day totals sampled every `sampling_interval_s`.
    pub fn new(
        totals: &DayTotals,
        sampling_interval_s: Option<i64>,
        min_day_completeness: f64,
    ) -> Result<Self, DailyError> {
        if !(min_day_completeness > 0.0 && min_day_completeness <= 1.0) {
            return Err(DailyError::BadCompleteness(min_day_completeness));
        }
        let (first, last) = totals.span().ok_or(DailyError::NoReadings)?;
        let interval = sampling_interval_s
            .filter(|&s| s > 0)
            .ok_or(DailyError::NoInterval)?;
        let expected_per_day = (86_400.0 / interval as f64).max(1.0);
        let needed = min_day_completeness * expected_per_day;
        let days = (first..=last)
            .map(|day| {
                let slot = totals.slots[(day - totals.first_day) as usize];
                DailyMax {
                    date: date_of_day_index(day),
                    readings: slot.readings,
                    max_m: (slot.readings > 0).then_some(slot.max_m),
                    observed: f64::from(slot.readings) >= needed,
                }
            })
            .collect();
        Ok(Self {
            days,
            sampling_interval_s: interval,
            expected_per_day,
            min_day_completeness,
        })
    }

    /// The first day of the record.
    pub fn first_date(&self) -> NaiveDate {
        self.days[0].date
    }

    /// The last day of the record.
    pub fn last_date(&self) -> NaiveDate {
        self.days[self.days.len() - 1].date
    }

    /// The day for `date`, if inside the record.
    pub fn day(&self, date: NaiveDate) -> Option<&DailyMax> {
        let index = (date - self.first_date()).num_days();
        usize::try_from(index).ok().and_then(|i| self.days.get(i))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::{IngestOptions, summarize};

    fn date(y: i32, m: u32, d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, d).unwrap()
    }

    fn record(text: &str, offset_hours: i32, completeness: f64) -> DailyRecord {
        let options = IngestOptions {
            utc_offset: chrono::FixedOffset::east_opt(offset_hours * 3600).unwrap(),
            ..IngestOptions::default()
        };
        let s = summarize(text.as_bytes(), &options, "t.csv").unwrap();
        DailyRecord::new(&s.days, s.sampling_interval_s, completeness).unwrap()
    }

    #[test]
    fn day_index_zero_is_the_unix_epoch() {
        assert_eq!(date_of_day_index(0), date(1970, 1, 1));
        assert_eq!(date_of_day_index(-1), date(1969, 12, 31));
        assert_eq!(date_of_day_index(20_454), date(2026, 1, 1));
    }

    // A flood day is a calendar day in the gauge's local standard time (DEVELOPERS.md).
    #[test]
    fn days_split_at_local_standard_midnight() {
        // At UTC-05:00, 04:30Z is 23:30 local on 4 January and 05:30Z is 00:30 local on
        // 5 January, although both are 5 January in UTC.
        let text = "time,level\n2026-01-05T04:30:00Z,1.0\n2026-01-05T05:30:00Z,2.0\n";
        let r = record(text, -5, 0.01);
        assert_eq!(r.days.len(), 2);
        assert_eq!(r.days[0].date, date(2026, 1, 4));
        assert_eq!(r.days[0].max_m, Some(1.0));
        assert_eq!(r.days[1].date, date(2026, 1, 5));
        assert_eq!(r.days[1].max_m, Some(2.0));
        // East of Greenwich, 20:30Z and 21:30Z on 4 January straddle midnight at UTC+03:00.
        let text = "time,level\n2026-01-04T20:30:00Z,1.0\n2026-01-04T21:30:00Z,2.0\n";
        let r = record(text, 3, 0.01);
        assert_eq!(r.days[0].date, date(2026, 1, 4));
        assert_eq!(r.days[1].date, date(2026, 1, 5));
    }

    #[test]
    fn completeness_rule_and_gaps() {
        // Hourly: 24 expected; 0.75 x 24 = 18 readings needed.
        let mut text = String::from("time,level\n");
        for h in 0..24 {
            text.push_str(&format!("2026-03-01T{h:02}:00:00Z,{}\n", h as f64 / 10.0));
        }
        for h in 0..18 {
            text.push_str(&format!("2026-03-02T{h:02}:00:00Z,0.1\n"));
        }
        for h in 0..17 {
            text.push_str(&format!("2026-03-03T{h:02}:00:00Z,9.9\n"));
        }
        // 4 and 5 March missing entirely, then one full day.
        for h in 0..24 {
            text.push_str(&format!("2026-03-06T{h:02}:00:00Z,NaN\n"));
        }
        for h in 0..24 {
            text.push_str(&format!("2026-03-07T{h:02}:00:00Z,0.5\n"));
        }
        let r = record(&text, 0, DEFAULT_MIN_DAY_COMPLETENESS);
        assert_eq!(r.sampling_interval_s, 3600);
        assert_eq!(r.expected_per_day, 24.0);
        let observed: Vec<bool> = r.days.iter().map(|d| d.observed).collect();
        // 6 March has rows but all missing: unobserved and outside no span since 7th is read.
        assert_eq!(observed, vec![true, true, false, false, false, false, true]);
        assert_eq!(r.days[0].max_m, Some(2.3));
        assert!(r.days[0].is_flood(2.3), "reaching the threshold counts");
        assert!(!r.days[0].is_flood(2.31));
        assert!(
            !r.days[2].is_flood(1.0),
            "an unobserved day is never a flood day"
        );
        assert_eq!(r.day(date(2026, 3, 4)).unwrap().max_m, None);
        assert!(r.day(date(2026, 3, 8)).is_none());
    }

    #[test]
    fn reverse_order_input_builds_the_same_days() {
        let mut rows: Vec<String> = (0..24 * 40)
            .map(|h| {
                let t = chrono::DateTime::from_timestamp(1_700_000_000 + h * 3600, 0).unwrap();
                format!("{},{}", t.to_rfc3339(), (h % 13) as f64 * 0.1)
            })
            .collect();
        let forward = format!("time,level\n{}\n", rows.join("\n"));
        rows.reverse();
        let backward = format!("time,level\n{}\n", rows.join("\n"));
        assert_eq!(record(&forward, -4, 0.75), record(&backward, -4, 0.75));
    }

    #[test]
    fn bad_inputs_are_typed_errors() {
        let totals = DayTotals::default();
        assert_eq!(
            DailyRecord::new(&totals, Some(3600), 0.75),
            Err(DailyError::NoReadings)
        );
        let mut totals = DayTotals::default();
        totals.add(0, 1.0);
        assert_eq!(
            DailyRecord::new(&totals, None, 0.75),
            Err(DailyError::NoInterval)
        );
        assert!(matches!(
            DailyRecord::new(&totals, Some(3600), f64::NAN),
            Err(DailyError::BadCompleteness(_))
        ));
    }
}
