//! Each local-standard-time day's predicted higher high water, and the tidal driver of the
//! count model: the days of a season when the tide alone comes within a margin of the flood
//! threshold. The astronomical tide is known in advance, so the driver is known before the
//! season. (The day calendar of flood chances is the water-level engine's, `crate::water`.)

use chrono::NaiveDate;

use super::TideError;
use super::predict::TideModel;
use crate::season::Season;

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
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::season::SeasonSpec;
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
}
