//! The Madden-Julian Oscillation from the daily RMM1/RMM2 index: phase and amplitude after
//! Wheeler and Hendon (2004, Monthly Weather Review 132, 1917-1932), and the seasonal share of
//! days active in a chosen set of phases.
//!
//! Phase sectors: with the angle of (RMM1, RMM2) measured counter-clockwise from the +RMM1
//! axis, phase 5 is [0, 45) deg, 6 is [45, 90), 7 [90, 135), 8 [135, 180), 1 [180, 225),
//! 2 [225, 270), 3 [270, 315) and 4 [315, 360). Each sector holds its counter-clockwise
//! starting edge, so a point exactly on an edge belongs to the higher-angle sector (e.g.
//! RMM1 = RMM2 > 0, angle 45 deg, is phase 6). The origin is put in phase 5; its amplitude is 0,
//! so it is never active. Sectors are decided by exact comparisons, not a rounded angle.

use std::collections::BTreeMap;
use std::io::BufRead;

use chrono::NaiveDate;
use serde::Serialize;

use super::csv_rows::{bad_field, bounded_number, expect_header, read_rows};
use super::{CountUnit, Driver, DriverParseError, Shortfall, ShortfallReason, required_days};
use crate::season::Season;

/// Days with amplitude at least this are active (Wheeler and Hendon 2004).
pub const ACTIVE_AMPLITUDE: f64 = 1.0;

/// The largest plausible RMM component magnitude: the components are normalised to unit
/// variance (Wheeler and Hendon 2004) and observed amplitudes stay below about 5, so +/-10
/// only catches typing and unit errors.
pub const MAX_RMM_COMPONENT: f64 = 10.0;

/// One day's MJO state.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RmmState {
    /// Phase 1 to 8.
    pub phase: u8,
    /// sqrt(RMM1^2 + RMM2^2).
    pub amplitude: f64,
}

impl RmmState {
    /// Whether the amplitude is at least [`ACTIVE_AMPLITUDE`].
    pub fn is_active(&self) -> bool {
        self.amplitude >= ACTIVE_AMPLITUDE
    }
}

/// Phase and amplitude of (RMM1, RMM2); `None` if either is not finite.
pub fn rmm_state(rmm1: f64, rmm2: f64) -> Option<RmmState> {
    if !(rmm1.is_finite() && rmm2.is_finite()) {
        return None;
    }
    let (x, y) = (rmm1, rmm2);
    // Octant k covers angles [45k, 45(k+1)) deg counter-clockwise from +RMM1.
    let octant = if x > 0.0 && y >= 0.0 {
        if y < x { 0 } else { 1 }
    } else if x <= 0.0 && y > 0.0 {
        if -x < y { 2 } else { 3 }
    } else if x < 0.0 && y <= 0.0 {
        if -y < -x { 4 } else { 5 }
    } else if x >= 0.0 && y < 0.0 {
        if x < -y { 6 } else { 7 }
    } else {
        0 // the origin
    };
    Some(RmmState {
        phase: (octant + 4) % 8 + 1,
        amplitude: x.hypot(y),
    })
}

/// Errors in a set of RMM phases.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PhaseSetError {
    /// A phase outside 1..=8.
    #[error("RMM phase {0} is not a phase 1 to 8")]
    BadPhase(i64),
    /// No phase given.
    #[error("the set of RMM phases is empty")]
    Empty,
}

/// A non-empty set of RMM phases whose active days count (per gauge, `mjo_phases`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct PhaseSet {
    bits: u8,
}

impl PhaseSet {
    /// The set of `phases` (each 1 to 8; repeats are harmless).
    pub fn new(phases: &[i64]) -> Result<Self, PhaseSetError> {
        let mut bits = 0u8;
        for &p in phases {
            if !(1..=8).contains(&p) {
                return Err(PhaseSetError::BadPhase(p));
            }
            bits |= 1 << (p - 1);
        }
        if bits == 0 {
            return Err(PhaseSetError::Empty);
        }
        Ok(Self { bits })
    }

    /// Whether `phase` is in the set.
    pub fn contains(&self, phase: u8) -> bool {
        (1..=8).contains(&phase) && self.bits & (1 << (phase - 1)) != 0
    }

    /// The phases, ascending.
    pub fn phases(&self) -> Vec<u8> {
        (1..=8).filter(|&p| self.contains(p)).collect()
    }
}

/// A season's MJO predictor.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MjoShare {
    /// Share of the days with data that are active and in the chosen phases (0 to 1).
    pub share: f64,
    /// Days with data.
    pub days_present: u32,
    /// Of those, days active in the chosen phases.
    pub days_active_in_phases: u32,
}

/// Daily RMM1/RMM2; days given as missing are absent.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RmmSeries {
    days: BTreeMap<NaiveDate, (f64, f64)>,
}

impl RmmSeries {
    /// Reads the `date,rmm1,rmm2` CSV (`YYYY-MM-DD`; empty or `NaN` is missing; a day missing
    /// either component is missing). `source` names the input in errors.
    pub fn parse(reader: impl BufRead, source: &str) -> Result<Self, DriverParseError> {
        let (header, rows) = read_rows(reader, source)?;
        expect_header(&header, &["date", "rmm1", "rmm2"], source)?;
        let mut days = BTreeMap::new();
        let mut lines: BTreeMap<NaiveDate, u64> = BTreeMap::new();
        for row in &rows {
            let text = &row.fields[0];
            let date = NaiveDate::parse_from_str(text, "%Y-%m-%d")
                .map_err(|_| bad_field(source, row, "date", text, "is not a date YYYY-MM-DD"))?;
            if let Some(first_line) = lines.insert(date, row.line) {
                return Err(DriverParseError::Duplicate {
                    source_name: source.to_owned(),
                    line: row.line,
                    first_line,
                    field: "date".to_owned(),
                    value: text.clone(),
                });
            }
            let component = |field: &str, text: &str| {
                bounded_number(
                    source,
                    row,
                    field,
                    text,
                    MAX_RMM_COMPONENT,
                    "an RMM component within +/-10",
                )
            };
            let rmm1 = component("rmm1", &row.fields[1])?;
            let rmm2 = component("rmm2", &row.fields[2])?;
            if let (Some(a), Some(b)) = (rmm1, rmm2) {
                days.insert(date, (a, b));
            }
        }
        Ok(Self { days })
    }

    /// A series from (date, RMM1, RMM2); non-finite days are dropped, later duplicates win.
    pub fn from_days(values: impl IntoIterator<Item = (NaiveDate, f64, f64)>) -> Self {
        Self {
            days: values
                .into_iter()
                .filter(|(_, a, b)| a.is_finite() && b.is_finite())
                .map(|(d, a, b)| (d, (a, b)))
                .collect(),
        }
    }

    /// The state of a day, if present.
    pub fn state(&self, day: NaiveDate) -> Option<RmmState> {
        let &(a, b) = self.days.get(&day)?;
        rmm_state(a, b)
    }

    /// Number of days with data.
    pub fn len(&self) -> usize {
        self.days.len()
    }

    /// Whether there is no day with data.
    pub fn is_empty(&self) -> bool {
        self.days.is_empty()
    }

    /// The share of the season's days with data that are active and in `phases`; a
    /// [`Shortfall`] when fewer than 80% of the season's days have data.
    pub fn seasonal(&self, season: &Season, phases: PhaseSet) -> Result<MjoShare, Shortfall> {
        let states: Vec<RmmState> = self
            .days
            .range(season.first_day()..season.end_exclusive())
            .filter_map(|(_, &(a, b))| rmm_state(a, b))
            .collect();
        let total = season.calendar_days();
        let present = states.len() as u32;
        let required = required_days(total);
        if present < required {
            return Err(Shortfall {
                driver: Driver::Mjo,
                reason: ShortfallReason::Incomplete {
                    unit: CountUnit::Days,
                    present,
                    required,
                    total,
                },
            });
        }
        let hits = states
            .iter()
            .filter(|s| s.is_active() && phases.contains(s.phase))
            .count() as u32;
        Ok(MjoShare {
            share: f64::from(hits) / f64::from(present),
            days_present: present,
            days_active_in_phases: hits,
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)] // a failed unwrap is a failed test
mod tests {
    use super::*;

    #[test]
    fn parse_names_line_and_field_and_skips_missing() {
        let text = "date,rmm1,rmm2\n2020-01-01,1.0,0.5\n2020-01-02,NaN,0.5\n2020-01-03,,\n";
        let series = RmmSeries::parse(text.as_bytes(), "rmm.csv").unwrap();
        assert_eq!(series.len(), 1);
        let bad = "date,rmm1,rmm2\n2020-01-01,1.0,0.5\n2020-02-30,1.0,0.5\n";
        let msg = RmmSeries::parse(bad.as_bytes(), "rmm.csv")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("rmm.csv line 3, field date"), "{msg}");
        let bad = "date,rmm1,rmm2\n2020-01-01,1.0,inf\n";
        let msg = RmmSeries::parse(bad.as_bytes(), "rmm.csv")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("line 2, field rmm2"), "{msg}");
        let short = "date,rmm1,rmm2\n2020-01-01,1.0\n";
        assert!(RmmSeries::parse(short.as_bytes(), "rmm.csv").is_err());
    }

    #[test]
    fn phase_set_validates() {
        assert!(PhaseSet::new(&[2, 3]).unwrap().contains(3));
        assert!(!PhaseSet::new(&[2, 3]).unwrap().contains(4));
        assert_eq!(PhaseSet::new(&[0]), Err(PhaseSetError::BadPhase(0)));
        assert_eq!(PhaseSet::new(&[9]), Err(PhaseSetError::BadPhase(9)));
        assert_eq!(PhaseSet::new(&[]), Err(PhaseSetError::Empty));
    }

    #[test]
    fn seasonal_share_counts_active_days_in_phases() {
        let s: Season = "2021-JJA".parse().unwrap(); // 92 days
        let first = s.first_day();
        // 80 days with data: 20 active in phase 5, 20 weak in phase 5, 40 active in phase 1.
        let days = (0..80).map(|i| {
            let d = first + chrono::Duration::days(i);
            match i {
                0..20 => (d, 1.5, 0.1),
                20..40 => (d, 0.5, 0.1),
                _ => (d, -1.5, -0.1),
            }
        });
        let series = RmmSeries::from_days(days);
        let share = series.seasonal(&s, PhaseSet::new(&[5]).unwrap()).unwrap();
        assert_eq!(share.days_active_in_phases, 20);
        assert!((share.share - 0.25).abs() < 1e-12);
        // 73 days present < 74 needed (80% of 92, rounded up).
        let short =
            RmmSeries::from_days((0..73).map(|i| (first + chrono::Duration::days(i), 1.0, 1.0)));
        let err = short
            .seasonal(&s, PhaseSet::new(&[5]).unwrap())
            .unwrap_err();
        assert_eq!(
            err.to_string(),
            "mjo: 19 of 92 days missing (73 present, 74 needed)"
        );
    }
}
