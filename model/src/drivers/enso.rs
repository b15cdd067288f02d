//! The monthly ENSO index (e.g. a Nino-3.4 sea-surface temperature anomaly, deg C), its
//! seasonal means and its reporting categories.
//!
//! A season's ENSO value is the mean over its own months (`concurrent`) or over the run of the
//! same number of months just before it (`preceding`: the value actually known when an outlook
//! is issued; for `2026-DJF` that is September to November 2026). Every month of the period must
//! be present.

use std::collections::BTreeMap;
use std::fmt;
use std::io::BufRead;

use serde::{Deserialize, Serialize};

use super::csv_rows::{bad_field, bounded_number, expect_header, read_rows};
use super::{CountUnit, Driver, DriverParseError, Shortfall, ShortfallReason};
use crate::season::Season;

/// The anomaly (deg C) at or beyond which a season is El Nino (>= +0.5) or La Nina (<= -0.5);
/// common practice, boundaries inclusive.
pub const ENSO_CATEGORY_THRESHOLD_C: f64 = 0.5;

/// The largest plausible monthly anomaly magnitude, deg C: observed Nino-3.4 anomalies stay
/// within about +/-3.5 C (common practice, from memory), so +/-10 C only catches typing and
/// unit errors.
pub const MAX_ENSO_ANOMALY_C: f64 = 10.0;

/// ENSO reporting category of a seasonal anomaly.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EnsoCategory {
    /// Anomaly at or below -0.5 deg C.
    LaNina,
    /// Between the two thresholds.
    Neutral,
    /// Anomaly at or above +0.5 deg C.
    ElNino,
}

impl EnsoCategory {
    /// All categories, coldest first.
    pub const ALL: [EnsoCategory; 3] = [
        EnsoCategory::LaNina,
        EnsoCategory::Neutral,
        EnsoCategory::ElNino,
    ];

    /// The category of an anomaly in deg C (boundaries inclusive; common practice).
    pub fn of(anomaly: f64) -> EnsoCategory {
        if anomaly >= ENSO_CATEGORY_THRESHOLD_C {
            EnsoCategory::ElNino
        } else if anomaly <= -ENSO_CATEGORY_THRESHOLD_C {
            EnsoCategory::LaNina
        } else {
            EnsoCategory::Neutral
        }
    }

    /// The name used in files and JSON: `la_nina`, `neutral`, `el_nino`.
    pub fn name(self) -> &'static str {
        match self {
            EnsoCategory::LaNina => "la_nina",
            EnsoCategory::Neutral => "neutral",
            EnsoCategory::ElNino => "el_nino",
        }
    }

    /// Position in [`EnsoCategory::ALL`].
    pub fn index(self) -> usize {
        match self {
            EnsoCategory::LaNina => 0,
            EnsoCategory::Neutral => 1,
            EnsoCategory::ElNino => 2,
        }
    }
}

impl fmt::Display for EnsoCategory {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            EnsoCategory::LaNina => "La Nina",
            EnsoCategory::Neutral => "neutral",
            EnsoCategory::ElNino => "El Nino",
        })
    }
}

/// Which months a season's ENSO value is averaged over.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EnsoTiming {
    /// The season's own months.
    Concurrent,
    /// The same number of months just before the season: known at issue time.
    #[default]
    Preceding,
}

/// A season's ENSO value and how it was formed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EnsoValue {
    /// Mean anomaly, deg C.
    pub value: f64,
    /// Which months were averaged.
    pub timing: EnsoTiming,
    /// The (year, month) pairs averaged.
    pub months: Vec<(i32, u32)>,
}

impl EnsoValue {
    /// The category of the value.
    pub fn category(&self) -> EnsoCategory {
        EnsoCategory::of(self.value)
    }
}

/// A monthly ENSO index; months given as missing are simply absent.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct EnsoSeries {
    months: BTreeMap<(i32, u32), f64>,
}

impl EnsoSeries {
    /// Reads the `month,anomaly` CSV (month `YYYY-MM`; empty or `NaN` anomaly is missing).
    /// `source` names the input in errors.
    pub fn parse(reader: impl BufRead, source: &str) -> Result<Self, DriverParseError> {
        let (header, rows) = read_rows(reader, source)?;
        expect_header(&header, &["month", "anomaly"], source)?;
        let mut months = BTreeMap::new();
        let mut lines: BTreeMap<(i32, u32), u64> = BTreeMap::new();
        for row in &rows {
            let text = &row.fields[0];
            let key = parse_month(text)
                .ok_or_else(|| bad_field(source, row, "month", text, "is not a month YYYY-MM"))?;
            if let Some(first_line) = lines.insert(key, row.line) {
                return Err(DriverParseError::Duplicate {
                    source_name: source.to_owned(),
                    line: row.line,
                    first_line,
                    field: "month".to_owned(),
                    value: text.clone(),
                });
            }
            if let Some(anomaly) = bounded_number(
                source,
                row,
                "anomaly",
                &row.fields[1],
                MAX_ENSO_ANOMALY_C,
                "an anomaly within +/-10 C",
            )? {
                months.insert(key, anomaly);
            }
        }
        Ok(Self { months })
    }

    /// A series from (year, month, anomaly) triples; later duplicates win.
    pub fn from_months(values: impl IntoIterator<Item = (i32, u32, f64)>) -> Self {
        Self {
            months: values
                .into_iter()
                .filter(|(_, m, a)| (1..=12).contains(m) && a.is_finite())
                .map(|(y, m, a)| ((y, m), a))
                .collect(),
        }
    }

    /// The anomaly of a month, if present.
    pub fn get(&self, year: i32, month: u32) -> Option<f64> {
        self.months.get(&(year, month)).copied()
    }

    /// Number of months with a value.
    pub fn len(&self) -> usize {
        self.months.len()
    }

    /// Whether no month has a value.
    pub fn is_empty(&self) -> bool {
        self.months.is_empty()
    }

    /// The season's value over the months `timing` selects; a [`Shortfall`] unless every one
    /// of them is present.
    pub fn seasonal(&self, season: &Season, timing: EnsoTiming) -> Result<EnsoValue, Shortfall> {
        let months = period_months(season, timing);
        let values: Vec<f64> = months.iter().filter_map(|&(y, m)| self.get(y, m)).collect();
        if values.len() < months.len() {
            let total = months.len() as u32;
            return Err(Shortfall {
                driver: Driver::Enso,
                reason: ShortfallReason::Incomplete {
                    unit: CountUnit::Months,
                    present: values.len() as u32,
                    required: total,
                    total,
                },
            });
        }
        Ok(EnsoValue {
            value: values.iter().sum::<f64>() / values.len() as f64,
            timing,
            months,
        })
    }
}

/// The months a season's ENSO value is averaged over under `timing`.
pub fn period_months(season: &Season, timing: EnsoTiming) -> Vec<(i32, u32)> {
    let own = season.months();
    match timing {
        EnsoTiming::Concurrent => own,
        EnsoTiming::Preceding => {
            let n = own.len() as i32;
            let (year, month) = own[0];
            let first = year * 12 + month as i32 - 1 - n;
            (first..first + n)
                .map(|k| (k.div_euclid(12), k.rem_euclid(12) as u32 + 1))
                .collect()
        }
    }
}

fn parse_month(text: &str) -> Option<(i32, u32)> {
    let (year, month) = text.split_once('-')?;
    if year.len() != 4 || month.len() != 2 {
        return None;
    }
    let year: i32 = year.parse().ok()?;
    let month: u32 = month.parse().ok()?;
    (1..=12).contains(&month).then_some((year, month))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)] // a failed unwrap is a failed test
mod tests {
    use super::*;

    #[test]
    fn preceding_period_of_djf_is_son() {
        let s: Season = "2026-DJF".parse().unwrap();
        assert_eq!(
            period_months(&s, EnsoTiming::Preceding),
            vec![(2026, 9), (2026, 10), (2026, 11)]
        );
        let s: Season = "2027-MAM".parse().unwrap();
        assert_eq!(
            period_months(&s, EnsoTiming::Preceding),
            vec![(2026, 12), (2027, 1), (2027, 2)]
        );
    }

    #[test]
    fn parse_reports_line_and_field() {
        let text = "month,anomaly\n2020-01,0.5\n2020-13,0.1\n";
        let err = EnsoSeries::parse(text.as_bytes(), "enso.csv").unwrap_err();
        let msg = err.to_string();
        assert!(msg.contains("enso.csv line 3, field month"), "{msg}");
        let dup = "month,anomaly\n2020-01,0.5\n2020-01,0.1\n";
        let msg = EnsoSeries::parse(dup.as_bytes(), "e")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("line 3") && msg.contains("line 2"), "{msg}");
        let bad = "month,anomaly\n2020-01,warm\n";
        let msg = EnsoSeries::parse(bad.as_bytes(), "e")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("field anomaly"), "{msg}");
        let header = "month,value\n2020-01,1\n";
        assert!(matches!(
            EnsoSeries::parse(header.as_bytes(), "e"),
            Err(DriverParseError::BadHeader { .. })
        ));
    }

    #[test]
    fn seasonal_mean_needs_every_month() {
        let text = "month,anomaly\n2026-12,-1.0\n2027-01,-0.5\n2027-02,NaN\n2026-09,0.1\n2026-10,0.2\n2026-11,0.3\n";
        let series = EnsoSeries::parse(text.as_bytes(), "e").unwrap();
        let s: Season = "2026-DJF".parse().unwrap();
        let pre = series.seasonal(&s, EnsoTiming::Preceding).unwrap();
        assert!((pre.value - 0.2).abs() < 1e-12);
        let short = series.seasonal(&s, EnsoTiming::Concurrent).unwrap_err();
        assert_eq!(
            short.to_string(),
            "enso: 1 of 3 months missing (2 present, 3 needed)"
        );
    }
}
