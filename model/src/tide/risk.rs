//! Tide-driven risk days for a season, and the tidal driver of the count model.
//!
//! The astronomical tide is known in advance: each local-standard-time day's predicted higher
//! high water plus the season's projected mean sea level says how close the tide alone comes
//! to the flood threshold. The weather's share comes from the record: on past days of the same
//! season, the daily high-water residual (observed daily maximum minus predicted daily
//! maximum, mean level and trend included) forms an empirical distribution, and a day's flood
//! probability is the share of past residuals that would lift its tide to the threshold.

use chrono::{Datelike, NaiveDate};

use super::predict::TideModel;
use super::{TideError, check_series};
use crate::season::{Season, SeasonSpec};

/// Step of the fine prediction that locates each day's higher high water, seconds.
const FINE_STEP_SECONDS: i64 = 360;
const DAY_SECONDS: i64 = 86_400;

/// Unchecked settings of risk days and the tidal driver.
#[derive(Debug, Clone, PartialEq)]
pub struct RiskParams {
    /// Flood threshold on the levels' datum.
    pub threshold: f64,
    /// A day is a tide risk day when its predicted high water reaches `threshold - margin`.
    pub margin: f64,
    /// The gauge's local standard time offset from UTC, seconds (east positive).
    pub utc_offset_seconds: i32,
    /// Share of a day's expected readings needed for a past day's residual to count.
    pub min_day_completeness: f64,
}

impl RiskParams {
    /// Validates the settings.
    pub fn check(&self) -> Result<RiskConfig, TideError> {
        if !self.threshold.is_finite() {
            return Err(TideError::BadParameter {
                name: "threshold",
                value: self.threshold,
                expected: "a finite level",
            });
        }
        if !(self.margin >= 0.0 && self.margin.is_finite()) {
            return Err(TideError::BadParameter {
                name: "margin",
                value: self.margin,
                expected: "a finite number >= 0",
            });
        }
        if !(-14 * 3600..=14 * 3600).contains(&self.utc_offset_seconds) {
            return Err(TideError::BadParameter {
                name: "utc_offset_seconds",
                value: f64::from(self.utc_offset_seconds),
                expected: "-14 h to +14 h",
            });
        }
        if !(self.min_day_completeness > 0.0 && self.min_day_completeness <= 1.0) {
            return Err(TideError::BadParameter {
                name: "min_day_completeness",
                value: self.min_day_completeness,
                expected: "0 < share <= 1",
            });
        }
        Ok(RiskConfig(self.clone()))
    }
}

/// Validated risk settings.
#[derive(Debug, Clone, PartialEq)]
pub struct RiskConfig(RiskParams);

/// One local day's predicted higher high water (astronomical tide only).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DailyHigh {
    /// The local-standard-time date.
    pub date: NaiveDate,
    /// Time of the higher high water, unix seconds.
    pub time: i64,
    /// Its astronomical level (no mean, no trend).
    pub tide: f64,
}

/// Past daily high-water residuals of one season's months.
#[derive(Debug, Clone, PartialEq)]
pub struct ResidualClimatology {
    sorted: Vec<f64>,
}

impl ResidualClimatology {
    /// Builds the distribution from given residuals (NaN dropped).
    pub fn from_residuals(residuals: &[f64]) -> Self {
        let mut sorted: Vec<f64> = residuals
            .iter()
            .copied()
            .filter(|r| r.is_finite())
            .collect();
        sorted.sort_by(f64::total_cmp);
        Self { sorted }
    }

    /// Number of past days.
    pub fn len(&self) -> usize {
        self.sorted.len()
    }

    /// True when no past day is held.
    pub fn is_empty(&self) -> bool {
        self.sorted.is_empty()
    }

    /// Share of past residuals at or above `x`; NaN when empty.
    pub fn exceedance(&self, x: f64) -> f64 {
        if self.sorted.is_empty() {
            return f64::NAN;
        }
        let below = self.sorted.partition_point(|&r| r < x);
        (self.sorted.len() - below) as f64 / self.sorted.len() as f64
    }

    /// The residuals, ascending.
    pub fn residuals(&self) -> &[f64] {
        &self.sorted
    }
}

/// One day of a risk calendar.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RiskDay {
    /// The local-standard-time date.
    pub date: NaiveDate,
    /// Time of the predicted higher high water, unix seconds.
    pub high_water_time: i64,
    /// Predicted higher high water: astronomical tide plus projected mean sea level.
    pub predicted_high: f64,
    /// The tide alone comes within the margin of the threshold.
    pub tide_risk: bool,
    /// Probability of a flood day from the past residuals of the same season.
    pub flood_probability: f64,
}

/// Tide-driven risk days of one season.
#[derive(Debug, Clone, PartialEq)]
pub struct RiskCalendar {
    /// Season label, e.g. `2026-DJF`.
    pub season: String,
    /// Flood threshold.
    pub threshold: f64,
    /// Margin below the threshold for tide risk days.
    pub margin: f64,
    /// Projected mean sea level added to the tide.
    pub mean_sea_level: f64,
    /// Past days behind the residual distribution.
    pub residual_days: usize,
    /// The days, in order.
    pub days: Vec<RiskDay>,
    /// Days when the tide alone reaches `threshold - margin`.
    pub tide_risk_days: u32,
    /// Sum of the days' flood probabilities: the expected number of flood days.
    pub expected_flood_days: f64,
    /// Plain cautions; never empty.
    pub cautions: Vec<String>,
}

fn epoch_day(date: NaiveDate) -> i64 {
    let epoch = NaiveDate::from_ymd_opt(1970, 1, 1).expect("1970-01-01 is a valid date");
    date.signed_duration_since(epoch).num_days()
}

fn date_of_epoch_day(day: i64) -> NaiveDate {
    let epoch = NaiveDate::from_ymd_opt(1970, 1, 1).expect("1970-01-01 is a valid date");
    epoch + chrono::Duration::days(day)
}

impl RiskConfig {
    /// Start of a local date in UTC unix seconds.
    fn local_day_start(&self, date: NaiveDate) -> i64 {
        epoch_day(date) * DAY_SECONDS - i64::from(self.0.utc_offset_seconds)
    }

    /// Predicted higher high water of each local day from `first` for `days` days.
    pub fn daily_highs(&self, model: &TideModel, first: NaiveDate, days: u32) -> Vec<DailyHigh> {
        let per_day = (DAY_SECONDS / FINE_STEP_SECONDS) as usize;
        let start = self.local_day_start(first);
        let levels =
            model.astronomical_regular(start, FINE_STEP_SECONDS, per_day * days as usize + 1);
        (0..days as usize)
            .map(|d| {
                let window = &levels[d * per_day..(d + 1) * per_day];
                let (k, _) =
                    window
                        .iter()
                        .enumerate()
                        .fold((0, f64::NEG_INFINITY), |best, (k, &x)| {
                            if x > best.1 { (k, x) } else { best }
                        });
                let i = d * per_day + k;
                // Parabola through the neighbours (the next day's first reading is there).
                let (mut time, mut tide) = (start + i as i64 * FINE_STEP_SECONDS, levels[i]);
                if k > 0 && i + 1 < levels.len() {
                    let (a, b, c) = (levels[i - 1], levels[i], levels[i + 1]);
                    let curvature = a - 2.0 * b + c;
                    if curvature < 0.0 {
                        let delta = (0.5 * (a - c) / curvature).clamp(-0.5, 0.5);
                        tide = b - 0.25 * (a - c) * delta;
                        time += (delta * FINE_STEP_SECONDS as f64).round() as i64;
                    }
                }
                DailyHigh {
                    date: date_of_epoch_day(epoch_day(first) + d as i64),
                    time,
                    tide,
                }
            })
            .collect()
    }

    /// The tidal driver: days of `season` whose predicted higher high water plus
    /// `mean_sea_level` reaches `threshold - margin`. Uses the prediction only, so it is known
    /// before the season (and computed the same way for past seasons).
    pub fn tidal_driver(&self, model: &TideModel, season: &Season, mean_sea_level: f64) -> u32 {
        let level = self.0.threshold - self.0.margin;
        self.daily_highs(model, season.first_day(), season.calendar_days())
            .iter()
            .filter(|d| d.tide + mean_sea_level >= level)
            .count() as u32
    }

    /// Past daily high-water residuals on days in the months of `spec` (any year): observed
    /// daily maximum minus the predicted maximum at the same readings (mean and trend
    /// included), for local days with enough readings.
    pub fn residual_climatology(
        &self,
        model: &TideModel,
        times: &[i64],
        levels: &[f64],
        spec: &SeasonSpec,
    ) -> Result<ResidualClimatology, TideError> {
        check_series(times, levels)?;
        let months: Vec<u32> = spec.month_sequence().map(|(_, m)| m).collect();
        let present: Vec<usize> = (0..times.len())
            .filter(|&i| levels[i].is_finite())
            .collect();
        let present_times: Vec<i64> = present.iter().map(|&i| times[i]).collect();
        let predicted = model.predict_at(&present_times);
        let step = present_times
            .windows(2)
            .map(|w| w[1] - w[0])
            .min()
            .unwrap_or(3600)
            .max(1);
        let expected = (DAY_SECONDS / step) as f64;
        let offset = i64::from(self.0.utc_offset_seconds);
        let mut residuals = Vec::new();
        let mut k = 0;
        while k < present.len() {
            let day = (present_times[k] + offset).div_euclid(DAY_SECONDS);
            let (mut obs, mut pred, mut n) = (f64::NEG_INFINITY, f64::NEG_INFINITY, 0usize);
            while k < present.len() && (present_times[k] + offset).div_euclid(DAY_SECONDS) == day {
                obs = obs.max(levels[present[k]]);
                pred = pred.max(predicted[k]);
                n += 1;
                k += 1;
            }
            let date = date_of_epoch_day(day);
            if months.contains(&date.month()) && n as f64 >= self.0.min_day_completeness * expected
            {
                residuals.push(obs - pred);
            }
        }
        Ok(ResidualClimatology::from_residuals(&residuals))
    }

    /// The risk calendar of `season` with the tide, the projected `mean_sea_level` and the
    /// residual distribution of the season's months.
    pub fn calendar(
        &self,
        model: &TideModel,
        season: &Season,
        mean_sea_level: f64,
        residuals: &ResidualClimatology,
    ) -> Result<RiskCalendar, TideError> {
        if !mean_sea_level.is_finite() {
            return Err(TideError::BadParameter {
                name: "mean_sea_level",
                value: mean_sea_level,
                expected: "a finite level",
            });
        }
        if residuals.is_empty() {
            return Err(TideError::TooFewSamples {
                samples: 0,
                parameters: 1,
            });
        }
        let (threshold, margin) = (self.0.threshold, self.0.margin);
        let days: Vec<RiskDay> = self
            .daily_highs(model, season.first_day(), season.calendar_days())
            .into_iter()
            .map(|d| {
                let predicted_high = d.tide + mean_sea_level;
                RiskDay {
                    date: d.date,
                    high_water_time: d.time,
                    predicted_high,
                    tide_risk: predicted_high >= threshold - margin,
                    flood_probability: residuals.exceedance(threshold - predicted_high),
                }
            })
            .collect();
        Ok(RiskCalendar {
            season: season.label(),
            threshold,
            margin,
            mean_sea_level,
            residual_days: residuals.len(),
            tide_risk_days: days.iter().filter(|d| d.tide_risk).count() as u32,
            expected_flood_days: days.iter().map(|d| d.flood_probability).sum(),
            days,
            cautions: vec![
                "These are seasonal probabilities from the predicted tide and past weather, \
                 not a warning or a forecast of any one day."
                    .to_owned(),
                "Follow official forecasts and local emergency managers for flood warnings."
                    .to_owned(),
            ],
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tide::predict::ConstituentValue;

    fn model(values: &[(&str, f64, f64)]) -> TideModel {
        let values: Vec<_> = values
            .iter()
            .map(|(name, amplitude, phase_deg)| ConstituentValue {
                name,
                amplitude: *amplitude,
                phase_deg: *phase_deg,
            })
            .collect();
        TideModel::from_values(0.0, None, 1_700_000_000, &values).expect("valid model")
    }

    fn config(threshold: f64, margin: f64) -> RiskConfig {
        RiskParams {
            threshold,
            margin,
            utc_offset_seconds: -5 * 3600,
            min_day_completeness: 0.75,
        }
        .check()
        .expect("valid")
    }

    fn season(label: &str) -> Season {
        Season::parse(label, &SeasonSpec::meteorological()).expect("valid label")
    }

    #[test]
    fn daily_highs_match_a_one_minute_search() {
        let m = model(&[
            ("M2", 1.0, 30.0),
            ("S2", 0.3, 60.0),
            ("K1", 0.4, 100.0),
            ("O1", 0.3, 80.0),
        ]);
        let cfg = config(1.0, 0.1);
        let first = NaiveDate::from_ymd_opt(2026, 12, 1).expect("date");
        let highs = cfg.daily_highs(&m, first, 10);
        for h in &highs {
            let start = cfg.local_day_start(h.date);
            let fine = m.astronomical_regular(start, 60, 1440);
            let best = fine.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            assert!(
                (h.tide - best).abs() < 1e-3,
                "{}: {} vs {best}",
                h.date,
                h.tide
            );
            assert!(h.time >= start && h.time < start + DAY_SECONDS);
        }
    }

    #[test]
    fn tidal_driver_counts_days_reaching_threshold_minus_margin() {
        // M2 alone: every day's higher high water is f(M2) * 1 m, within 4% of 1 m.
        let m = model(&[("M2", 1.0, 0.0)]);
        let djf = season("2026-DJF");
        assert_eq!(
            config(0.9, 0.0).tidal_driver(&m, &djf, 0.0),
            djf.calendar_days()
        );
        assert_eq!(config(1.2, 0.0).tidal_driver(&m, &djf, 0.0), 0);
        // Raising the mean sea level by 0.3 m or the margin by 0.3 m brings them all in.
        assert_eq!(
            config(1.2, 0.0).tidal_driver(&m, &djf, 0.3),
            djf.calendar_days()
        );
        assert_eq!(
            config(1.2, 0.3).tidal_driver(&m, &djf, 0.0),
            djf.calendar_days()
        );
        // Spring-neap cycle: some days but not all.
        let sn = model(&[("M2", 1.0, 0.0), ("S2", 0.4, 0.0)]);
        let n = config(1.2, 0.0).tidal_driver(&sn, &djf, 0.0);
        assert!(n > 10 && n < 80, "{n}");
    }

    #[test]
    fn flood_probability_is_the_share_of_residuals_lifting_the_tide() {
        let m = model(&[("M2", 1.0, 0.0)]);
        let djf = season("2026-DJF");
        let residuals = ResidualClimatology::from_residuals(&[-0.2, -0.1, 0.0, 0.1, 0.2, f64::NAN]);
        assert_eq!(residuals.len(), 5);
        // Threshold 0.1 m above each day's ~1 m high: residuals 0.1 and 0.2 reach it on days
        // whose high exceeds 1.0, only 0.2 on days below; f(M2) in 2026-27 is ~0.97 -> 1/5.
        let cal = config(1.1, 0.0)
            .calendar(&m, &djf, 0.0, &residuals)
            .expect("calendar");
        assert_eq!(cal.days.len(), 90);
        for d in &cal.days {
            let need = 1.1 - d.predicted_high;
            let expected = [-0.2, -0.1, 0.0, 0.1, 0.2]
                .iter()
                .filter(|&&r| r >= need)
                .count() as f64
                / 5.0;
            assert!((d.flood_probability - expected).abs() < 1e-12);
        }
        assert!(cal.expected_flood_days > 0.0 && cal.expected_flood_days < 90.0);
        assert!(!cal.cautions.is_empty());
    }

    #[test]
    fn residual_climatology_recovers_a_constant_surge_in_season_months() {
        let m = model(&[("M2", 1.0, 0.0), ("K1", 0.3, 0.0)]);
        let start = 1_798_761_600; // 2027-01-01T00:00Z
        let times: Vec<i64> = (0..24 * 120).map(|k| start + k * 3600).collect();
        let mut levels = m.predict_at(&times);
        for (t, l) in times.iter().zip(levels.iter_mut()) {
            // +0.25 m in January and February (local days), nothing after.
            if *t < 1_803_859_200 + 5 * 3600 {
                *l += 0.25;
            }
        }
        let spec = SeasonSpec::meteorological().remove(0);
        let clim = config(1.0, 0.1)
            .residual_climatology(&m, &times, &levels, &spec)
            .expect("climatology");
        assert!(clim.len() >= 57 && clim.len() <= 59, "{}", clim.len());
        assert!(clim.residuals().iter().all(|r| (r - 0.25).abs() < 1e-9));
    }
}
