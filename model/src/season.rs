//! The season calendar: season definitions (month ranges), season labels such as `2026-DJF`,
//! and the dates a season covers.
//!
//! A season is named by the year of its first month: `2026-DJF` runs from 1 December 2026 to
//! the end of February 2027.

use std::fmt;
use std::str::FromStr;

use chrono::{Datelike, NaiveDate};
use serde::{Deserialize, Serialize};

/// Errors in season definitions and labels.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SeasonError {
    /// A season name is empty or not made of ASCII letters and digits.
    #[error("season name {0:?} must be 1 to 12 ASCII letters or digits")]
    BadName(String),
    /// A month number outside 1..=12.
    #[error("season {name}: start month {month} is not a month number 1 to 12")]
    BadMonth {
        /// The season's name.
        name: String,
        /// The offending month number.
        month: u32,
    },
    /// A season length outside 1..=12 months.
    #[error("season {name}: length {months} must be 1 to 12 months")]
    BadLength {
        /// The season's name.
        name: String,
        /// The offending length.
        months: u32,
    },
    /// A label that is not `<year>-<name>`.
    #[error("season label {0:?} is not of the form <year>-<season name>, e.g. 2026-DJF")]
    BadLabel(String),
    /// A label naming a season that is not defined.
    #[error("season label {label:?}: no season named {name:?} is defined (known: {known})")]
    UnknownSeason {
        /// The label as given.
        label: String,
        /// The season name in it.
        name: String,
        /// The defined season names, comma separated.
        known: String,
    },
    /// A year outside the supported range.
    #[error("season year {0} is outside 1800..=2200")]
    BadYear(i32),
}

/// One season's definition: a name and a run of consecutive months.
#[derive(Debug, Clone, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub struct SeasonSpec {
    name: String,
    start_month: u32,
    months: u32,
}

impl SeasonSpec {
    /// A season of `months` consecutive months starting at `start_month` (1 = January).
    pub fn new(name: &str, start_month: u32, months: u32) -> Result<Self, SeasonError> {
        let name_ok =
            !name.is_empty() && name.len() <= 12 && name.chars().all(|c| c.is_ascii_alphanumeric());
        if !name_ok {
            return Err(SeasonError::BadName(name.to_owned()));
        }
        if !(1..=12).contains(&start_month) {
            return Err(SeasonError::BadMonth {
                name: name.to_owned(),
                month: start_month,
            });
        }
        if !(1..=12).contains(&months) {
            return Err(SeasonError::BadLength {
                name: name.to_owned(),
                months,
            });
        }
        Ok(Self {
            name: name.to_owned(),
            start_month,
            months,
        })
    }

    /// The four meteorological seasons: DJF, MAM, JJA, SON.
    pub fn meteorological() -> Vec<SeasonSpec> {
        [("DJF", 12), ("MAM", 3), ("JJA", 6), ("SON", 9)]
            .into_iter()
            .map(|(name, start)| SeasonSpec {
                name: name.to_owned(),
                start_month: start,
                months: 3,
            })
            .collect()
    }

    /// The season's name, e.g. `DJF`.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The first month, 1 = January.
    pub fn start_month(&self) -> u32 {
        self.start_month
    }

    /// The number of months.
    pub fn months(&self) -> u32 {
        self.months
    }

    /// The months covered, as (year offset from the season's year, month) pairs.
    pub fn month_sequence(&self) -> impl Iterator<Item = (i32, u32)> + '_ {
        (0..self.months).map(move |i| {
            let zero_based = self.start_month - 1 + i;
            ((zero_based / 12) as i32, zero_based % 12 + 1)
        })
    }
}

/// One concrete season: a definition and the year of its first month.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub struct Season {
    year: i32,
    spec: SeasonSpec,
}

impl Season {
    /// The season of `spec` starting in `year`.
    pub fn new(year: i32, spec: SeasonSpec) -> Result<Self, SeasonError> {
        if !(1800..=2200).contains(&year) {
            return Err(SeasonError::BadYear(year));
        }
        Ok(Self { year, spec })
    }

    /// Parses a label such as `2026-DJF` against the defined seasons.
    pub fn parse(label: &str, specs: &[SeasonSpec]) -> Result<Self, SeasonError> {
        let (year, name) = label
            .trim()
            .split_once('-')
            .ok_or_else(|| SeasonError::BadLabel(label.to_owned()))?;
        let year: i32 = year
            .parse()
            .map_err(|_| SeasonError::BadLabel(label.to_owned()))?;
        let spec = specs
            .iter()
            .find(|s| s.name.eq_ignore_ascii_case(name))
            .ok_or_else(|| SeasonError::UnknownSeason {
                label: label.to_owned(),
                name: name.to_owned(),
                known: specs
                    .iter()
                    .map(|s| s.name.as_str())
                    .collect::<Vec<_>>()
                    .join(", "),
            })?;
        Season::new(year, spec.clone())
    }

    /// The year of the season's first month.
    pub fn year(&self) -> i32 {
        self.year
    }

    /// The season's definition.
    pub fn spec(&self) -> &SeasonSpec {
        &self.spec
    }

    /// The label, e.g. `2026-DJF`.
    pub fn label(&self) -> String {
        self.to_string()
    }

    /// The first calendar day.
    pub fn first_day(&self) -> NaiveDate {
        NaiveDate::from_ymd_opt(self.year, self.spec.start_month, 1)
            .expect("validated year and month form a date")
    }

    /// The day after the last day of the season.
    pub fn end_exclusive(&self) -> NaiveDate {
        let zero_based = self.spec.start_month - 1 + self.spec.months;
        let year = self.year + (zero_based / 12) as i32;
        NaiveDate::from_ymd_opt(year, zero_based % 12 + 1, 1)
            .expect("validated year and month form a date")
    }

    /// The last calendar day.
    pub fn last_day(&self) -> NaiveDate {
        self.end_exclusive()
            .pred_opt()
            .expect("a season never ends at the start of time")
    }

    /// The number of calendar days.
    pub fn calendar_days(&self) -> u32 {
        (self.end_exclusive() - self.first_day()).num_days() as u32
    }

    /// Whether `day` falls in the season.
    pub fn contains(&self, day: NaiveDate) -> bool {
        day >= self.first_day() && day < self.end_exclusive()
    }

    /// The (year, month) pairs the season covers, in order.
    pub fn months(&self) -> Vec<(i32, u32)> {
        self.spec
            .month_sequence()
            .map(|(offset, month)| (self.year + offset, month))
            .collect()
    }

    /// The same season one year earlier.
    pub fn previous_year(&self) -> Season {
        Season {
            year: self.year - 1,
            spec: self.spec.clone(),
        }
    }

    /// The middle of the season as a fractional year (e.g. 2027.04 for 2026-DJF), used for
    /// trends.
    pub fn mid_year(&self) -> f64 {
        let first = self.first_day();
        let mid = first + chrono::Duration::days(i64::from(self.calendar_days()) / 2);
        decimal_year(mid)
    }
}

impl fmt::Display for Season {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}-{}", self.year, self.spec.name)
    }
}

impl FromStr for Season {
    type Err = SeasonError;

    /// Parses a label against the meteorological seasons.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Season::parse(s, &SeasonSpec::meteorological())
    }
}

/// The season of `specs` that contains `day`, if any; when seasons overlap, the first listed
/// wins.
pub fn season_of(day: NaiveDate, specs: &[SeasonSpec]) -> Option<Season> {
    specs.iter().find_map(|spec| {
        // The season containing `day` starts in this year or up to one year earlier.
        [day.year(), day.year() - 1].into_iter().find_map(|year| {
            let season = Season::new(year, spec.clone()).ok()?;
            season.contains(day).then_some(season)
        })
    })
}

/// A date as a fractional year: 2000-07-02 is about 2000.5.
pub fn decimal_year(day: NaiveDate) -> f64 {
    let start = NaiveDate::from_ymd_opt(day.year(), 1, 1).expect("1 January exists");
    let next = NaiveDate::from_ymd_opt(day.year() + 1, 1, 1).expect("1 January exists");
    let length = (next - start).num_days() as f64;
    f64::from(day.year()) + (day - start).num_days() as f64 / length
}

#[cfg(test)]
mod tests {
    use super::*;

    fn day(y: i32, m: u32, d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, d).unwrap()
    }

    // Gregorian calendar rules: February has 29 days in years divisible by 4, except
    // centuries not divisible by 400. DJF = 31 + 31 + 28 (or 29).
    #[test]
    fn djf_length_follows_gregorian_leap_years() {
        let cases = [(2026, 90), (2027, 91), (1899, 90), (1999, 91), (2099, 90)];
        for (year, days) in cases {
            let s: Season = format!("{year}-DJF").parse().unwrap();
            assert_eq!(s.calendar_days(), days, "{year}-DJF");
        }
    }

    #[test]
    fn label_names_the_year_of_the_first_month() {
        let s: Season = "2026-DJF".parse().unwrap();
        assert_eq!(s.first_day(), day(2026, 12, 1));
        assert_eq!(s.last_day(), day(2027, 2, 28));
        assert_eq!(s.months(), vec![(2026, 12), (2027, 1), (2027, 2)]);
        assert_eq!(s.label(), "2026-DJF");
        assert_eq!(s.previous_year().label(), "2025-DJF");
    }

    #[test]
    fn season_of_finds_the_containing_season() {
        let specs = SeasonSpec::meteorological();
        assert_eq!(
            season_of(day(2027, 1, 15), &specs).unwrap().label(),
            "2026-DJF"
        );
        assert_eq!(
            season_of(day(2026, 12, 1), &specs).unwrap().label(),
            "2026-DJF"
        );
        assert_eq!(
            season_of(day(2026, 11, 30), &specs).unwrap().label(),
            "2026-SON"
        );
    }

    #[test]
    fn bad_labels_and_specs_are_rejected() {
        assert!(matches!(
            "2026DJF".parse::<Season>(),
            Err(SeasonError::BadLabel(_))
        ));
        assert!(matches!(
            "2026-XYZ".parse::<Season>(),
            Err(SeasonError::UnknownSeason { .. })
        ));
        assert!(SeasonSpec::new("NDJ", 11, 3).is_ok());
        assert!(SeasonSpec::new("X", 13, 3).is_err());
        assert!(SeasonSpec::new("X", 1, 0).is_err());
        assert!(SeasonSpec::new("", 1, 3).is_err());
    }

    #[test]
    fn custom_season_wraps_the_year() {
        let spec = SeasonSpec::new("NDJFM", 11, 5).unwrap();
        let s = Season::new(2020, spec).unwrap();
        assert_eq!(s.last_day(), day(2021, 3, 31));
        assert_eq!(s.calendar_days(), 30 + 31 + 31 + 28 + 31);
    }
}
