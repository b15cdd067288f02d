//! The season calendar: season definitions (month ranges), season labels such as `2026-DJF`,
//! the dates a season covers, and the season table of a gauge's record (flood days, observed
//! days and completeness per season).
//!
//! A season is named by the year of its first month: `2026-DJF` runs from 1 December 2026 to
//! the end of February 2027.

use std::fmt;
use std::str::FromStr;

use chrono::{Datelike, NaiveDate};
use serde::{Deserialize, Serialize};

use crate::daily::DailyRecord;

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

/// Seasons whose observed days fall below this share of their calendar days are flagged and
/// left out of fitting, unless the gauge says otherwise.
pub const DEFAULT_MIN_SEASON_COMPLETENESS: f64 = 0.8;

/// One season of a gauge's record.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeasonRow {
    /// The season.
    #[serde(skip)]
    pub season: Season,
    /// The season's label, e.g. `2026-DJF`.
    pub label: String,
    /// Observed days whose maximum reached the flood threshold.
    pub flood_days: u32,
    /// Days with enough readings to count (the exposure).
    pub observed_days: u32,
    /// Calendar days in the season.
    pub calendar_days: u32,
    /// `observed_days / calendar_days`.
    pub completeness: f64,
    /// Whether the season enters fitting and verification.
    pub included: bool,
    /// Why the season is left out, when it is.
    pub exclusion: Option<String>,
    /// The highest reading in the season (any day, observed or not), metres.
    pub max_level_m: Option<f64>,
}

/// Per-season flood days and exposure for every season that overlaps the record.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeasonTable {
    /// The flood threshold the days were counted against, metres.
    pub flood_threshold_m: f64,
    /// The completeness share below which a season is left out.
    pub min_completeness: f64,
    /// The seasons, by first day (ties in the order the definitions are listed).
    pub rows: Vec<SeasonRow>,
}

/// Errors building or writing a season table.
#[derive(Debug, thiserror::Error)]
pub enum SeasonTableError {
    /// A completeness share outside [0, 1].
    #[error("season completeness must be a share in [0, 1], got {0}")]
    BadCompleteness(f64),
    /// A threshold that is not a finite number.
    #[error("flood threshold must be a finite number of metres, got {0}")]
    BadThreshold(f64),
    /// No season definitions were given.
    #[error("no season definitions given")]
    NoSeasons,
    /// Writing CSV failed.
    #[error("writing the season table as CSV failed: {0}")]
    Csv(#[from] csv::Error),
}

/// Counts flood days and observed days per season of `specs` over the daily record.
pub fn season_table(
    daily: &DailyRecord,
    specs: &[SeasonSpec],
    flood_threshold_m: f64,
    min_completeness: f64,
) -> Result<SeasonTable, SeasonTableError> {
    if !(0.0..=1.0).contains(&min_completeness) {
        return Err(SeasonTableError::BadCompleteness(min_completeness));
    }
    if !flood_threshold_m.is_finite() {
        return Err(SeasonTableError::BadThreshold(flood_threshold_m));
    }
    if specs.is_empty() {
        return Err(SeasonTableError::NoSeasons);
    }
    let (first, last) = (daily.first_date(), daily.last_date());
    let mut rows = Vec::new();
    for (order, spec) in specs.iter().enumerate() {
        for year in first.year() - 1..=last.year() {
            let Ok(season) = Season::new(year, spec.clone()) else {
                continue;
            };
            if season.end_exclusive() <= first || season.first_day() > last {
                continue;
            }
            rows.push((
                order,
                season_row(daily, season, flood_threshold_m, min_completeness),
            ));
        }
    }
    rows.sort_by_key(|(order, row)| (row.season.first_day(), *order));
    Ok(SeasonTable {
        flood_threshold_m,
        min_completeness,
        rows: rows.into_iter().map(|(_, row)| row).collect(),
    })
}

fn season_row(
    daily: &DailyRecord,
    season: Season,
    flood_threshold_m: f64,
    min_completeness: f64,
) -> SeasonRow {
    let (mut flood_days, mut observed_days) = (0u32, 0u32);
    let mut max_level_m: Option<f64> = None;
    let mut date = season.first_day();
    while date < season.end_exclusive() {
        if let Some(day) = daily.day(date) {
            observed_days += u32::from(day.observed);
            flood_days += u32::from(day.is_flood(flood_threshold_m));
            if let Some(max) = day.max_m {
                max_level_m = Some(max_level_m.map_or(max, |m: f64| m.max(max)));
            }
        }
        date = date
            .succ_opt()
            .expect("season dates are far from the end of time");
    }
    let calendar_days = season.calendar_days();
    let completeness = f64::from(observed_days) / f64::from(calendar_days);
    let included = completeness >= min_completeness;
    let exclusion = (!included).then(|| {
        format!(
            "{observed_days} of {calendar_days} days observed ({:.0}%), below the {:.0}% required",
            completeness * 100.0,
            min_completeness * 100.0
        )
    });
    SeasonRow {
        label: season.label(),
        season,
        flood_days,
        observed_days,
        calendar_days,
        completeness,
        included,
        exclusion,
        max_level_m,
    }
}

impl SeasonTable {
    /// The rows that enter fitting.
    pub fn included(&self) -> impl Iterator<Item = &SeasonRow> + '_ {
        self.rows.iter().filter(|r| r.included)
    }

    /// The row for a season label, if the record covers it.
    pub fn row(&self, label: &str) -> Option<&SeasonRow> {
        self.rows
            .iter()
            .find(|r| r.label.eq_ignore_ascii_case(label))
    }

    /// Writes the table as CSV: `season,flood_days,observed_days,calendar_days,completeness,
    /// used_in_fit,left_out_reason,max_level_m` (missing values empty).
    pub fn write_csv(&self, writer: impl std::io::Write) -> Result<(), SeasonTableError> {
        let mut csv = csv::Writer::from_writer(writer);
        csv.write_record([
            "season",
            "flood_days",
            "observed_days",
            "calendar_days",
            "completeness",
            "used_in_fit",
            "left_out_reason",
            "max_level_m",
        ])?;
        for r in &self.rows {
            csv.write_record([
                r.label.clone(),
                r.flood_days.to_string(),
                r.observed_days.to_string(),
                r.calendar_days.to_string(),
                format!("{:.4}", r.completeness),
                r.included.to_string(),
                r.exclusion.clone().unwrap_or_default(),
                r.max_level_m.map(|m| format!("{m:.4}")).unwrap_or_default(),
            ])?;
        }
        csv.flush().map_err(csv::Error::from)?;
        Ok(())
    }
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
    fn daily_from(text: &str) -> DailyRecord {
        let options = crate::ingest::IngestOptions::default();
        let s = crate::ingest::summarize(text.as_bytes(), &options, "t.csv").unwrap();
        DailyRecord::new(&s.days, s.sampling_interval_s, 0.75).unwrap()
    }

    /// Six-hourly readings from `from` (inclusive) to `to` (exclusive); the 12:00 reading is
    /// `peak` on days listed in `peaks`, other readings 0.
    fn six_hourly(from: NaiveDate, to: NaiveDate, peaks: &[NaiveDate], peak: f64) -> String {
        let mut text = String::from("time,level\n");
        let mut d = from;
        while d < to {
            for h in [0, 6, 12, 18] {
                let v = if h == 12 && peaks.contains(&d) {
                    peak
                } else {
                    0.0
                };
                text.push_str(&format!("{d}T{h:02}:00:00Z,{v}\n"));
            }
            d = d.succ_opt().unwrap();
        }
        text
    }

    #[test]
    fn season_table_counts_flood_and_observed_days() {
        // 2026-12-15 .. 2027-03-10: part of 2026-DJF and the start of 2027-MAM.
        let peaks = [
            day(2026, 12, 20),
            day(2027, 1, 1),
            day(2027, 2, 28),
            day(2027, 3, 1),
        ];
        let daily = daily_from(&six_hourly(
            day(2026, 12, 15),
            day(2027, 3, 11),
            &peaks,
            1.0,
        ));
        let table = season_table(&daily, &SeasonSpec::meteorological(), 1.0, 0.8).unwrap();
        let labels: Vec<&str> = table.rows.iter().map(|r| r.label.as_str()).collect();
        assert_eq!(labels, ["2026-DJF", "2027-MAM"]);
        let djf = &table.rows[0];
        assert_eq!(
            (djf.flood_days, djf.observed_days, djf.calendar_days),
            (3, 76, 90)
        );
        assert!((djf.completeness - 76.0 / 90.0).abs() < 1e-12);
        assert!(djf.included && djf.exclusion.is_none());
        assert_eq!(djf.max_level_m, Some(1.0));
        let mam = &table.rows[1];
        assert_eq!(
            (mam.flood_days, mam.observed_days, mam.calendar_days),
            (1, 10, 92)
        );
        assert!(!mam.included);
        assert!(
            mam.exclusion
                .as_deref()
                .unwrap()
                .starts_with("10 of 92 days observed")
        );
        assert_eq!(table.included().count(), 1);
        assert_eq!(table.row("2026-djf").unwrap().flood_days, 3);
    }

    #[test]
    fn overlapping_custom_seasons_each_get_rows() {
        let specs = vec![
            SeasonSpec::new("NDJFM", 11, 5).unwrap(),
            SeasonSpec::new("DJF", 12, 3).unwrap(),
        ];
        let daily = daily_from(&six_hourly(day(2020, 11, 1), day(2021, 4, 1), &[], 0.0));
        let table = season_table(&daily, &specs, 1.0, 0.8).unwrap();
        let labels: Vec<&str> = table.rows.iter().map(|r| r.label.as_str()).collect();
        assert_eq!(labels, ["2020-NDJFM", "2020-DJF"]);
        assert_eq!(table.rows[0].observed_days, 151);
        assert!(season_table(&daily, &specs, f64::NAN, 0.8).is_err());
        assert!(season_table(&daily, &specs, 1.0, 1.5).is_err());
        assert!(season_table(&daily, &[], 1.0, 0.8).is_err());
    }

    #[test]
    fn season_table_writes_csv_and_json() {
        let daily = daily_from(&six_hourly(
            day(2021, 6, 1),
            day(2021, 6, 3),
            &[day(2021, 6, 2)],
            2.5,
        ));
        let table = season_table(&daily, &SeasonSpec::meteorological(), 2.0, 0.8).unwrap();
        let mut out = Vec::new();
        table.write_csv(&mut out).unwrap();
        let text = String::from_utf8(out).unwrap();
        let mut lines = text.lines();
        assert_eq!(
            lines.next(),
            Some(
                "season,flood_days,observed_days,calendar_days,completeness,used_in_fit,left_out_reason,max_level_m"
            )
        );
        assert_eq!(
            lines.next(),
            Some(
                "2021-JJA,1,2,92,0.0217,false,\"2 of 92 days observed (2%), below the 80% required\",2.5000"
            )
        );
        let json = serde_json::to_value(&table).unwrap();
        assert_eq!(json["rows"][0]["label"], "2021-JJA");
        assert_eq!(json["rows"][0]["flood_days"], 1);
    }
}
