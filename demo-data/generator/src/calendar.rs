//! Time bookkeeping: UTC minutes since 1970, local calendar days, months and the four
//! standard seasons (DJF, MAM, JJA, SON) labelled by the year of their first month.

use chrono::{Datelike, NaiveDate};

/// Minutes in a day.
pub const MINUTES_PER_DAY: i64 = 1440;

/// 1970-01-01, day number 0.
fn epoch() -> NaiveDate {
    NaiveDate::from_ymd_opt(1970, 1, 1).expect("1970-01-01 is a valid date")
}

/// Day number (days since 1970-01-01) of a date.
pub fn day_number(date: NaiveDate) -> i64 {
    (date - epoch()).num_days()
}

/// The date of a day number.
pub fn date_of(day: i64) -> NaiveDate {
    epoch() + chrono::Duration::days(day)
}

/// A date from its parts; panics only on an impossible literal date in this crate's tables.
pub fn ymd(year: i32, month: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(year, month, day).expect("calendar literal is a valid date")
}

/// Julian centuries since J2000.0 (2000-01-01 12:00) of a UTC time in minutes since 1970.
/// UTC stands in for Terrestrial Time: the minute or so between them is ignored.
pub fn julian_centuries(minutes_utc: i64) -> f64 {
    // J2000.0 is 10957.5 days after 1970-01-01 00:00.
    let days = minutes_utc as f64 / MINUTES_PER_DAY as f64 - 10_957.5;
    days / 36_525.0
}

/// Years (of 365.25 days) since 2000-01-01 00:00 UTC.
pub fn years_since_2000(minutes_utc: i64) -> f64 {
    (minutes_utc as f64 / MINUTES_PER_DAY as f64 - 10_957.0) / 365.25
}

/// A month counted from January 1979 (index 0).
pub fn month_index(year: i32, month: u32) -> usize {
    let index = (year - 1979) * 12 + month as i32 - 1;
    usize::try_from(index).expect("months before 1979 are never indexed")
}

/// The month index of a date.
pub fn month_index_of(date: NaiveDate) -> usize {
    month_index(date.year(), date.month())
}

/// The four standard seasons, in calendar order of their first month.
pub const SEASON_NAMES: [&str; 4] = ["DJF", "MAM", "JJA", "SON"];

/// A standard season: the year of its first month and its position in [`SEASON_NAMES`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Season {
    /// Year of the season's first month (December for DJF).
    pub year: i32,
    /// 0 = DJF, 1 = MAM, 2 = JJA, 3 = SON.
    pub kind: usize,
}

impl Season {
    /// The season a date falls in.
    pub fn of(date: NaiveDate) -> Season {
        match date.month() {
            12 => Season {
                year: date.year(),
                kind: 0,
            },
            1 | 2 => Season {
                year: date.year() - 1,
                kind: 0,
            },
            3..=5 => Season {
                year: date.year(),
                kind: 1,
            },
            6..=8 => Season {
                year: date.year(),
                kind: 2,
            },
            _ => Season {
                year: date.year(),
                kind: 3,
            },
        }
    }

    /// The label, e.g. `2026-DJF`.
    pub fn label(&self) -> String {
        format!("{}-{}", self.year, SEASON_NAMES[self.kind])
    }

    /// The (year, month) pairs of the season's three months.
    pub fn months(&self) -> [(i32, u32); 3] {
        match self.kind {
            0 => [(self.year, 12), (self.year + 1, 1), (self.year + 1, 2)],
            kind => {
                let first = 3 * kind as u32;
                [
                    (self.year, first),
                    (self.year, first + 1),
                    (self.year, first + 2),
                ]
            }
        }
    }

    /// A dense index counting seasons from 1979-DJF (index 0).
    pub fn index(&self) -> usize {
        usize::try_from((self.year - 1979) * 4 + self.kind as i32)
            .expect("seasons before 1979-DJF are never indexed")
    }

    /// The season of a dense index.
    pub fn from_index(index: usize) -> Season {
        Season {
            year: 1979 + (index / 4) as i32,
            kind: index % 4,
        }
    }

    /// Number of calendar days in the season.
    pub fn days(&self) -> i64 {
        let [(y0, m0), _, (y2, m2)] = self.months();
        let start = ymd(y0, m0, 1);
        let end = if m2 == 12 {
            ymd(y2 + 1, 1, 1)
        } else {
            ymd(y2, m2 + 1, 1)
        };
        (end - start).num_days()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn seasons_follow_the_first_month_year_convention() {
        let dec = Season::of(ymd(2026, 12, 5));
        let feb = Season::of(ymd(2027, 2, 28));
        assert_eq!(dec, feb);
        assert_eq!(dec.label(), "2026-DJF");
        assert_eq!(dec.days(), 90);
        assert_eq!(Season::of(ymd(2023, 12, 1)).days(), 91); // Feb 2024 is a leap February
        assert_eq!(Season::of(ymd(2000, 7, 1)).label(), "2000-JJA");
        let s = Season::of(ymd(1995, 10, 1));
        assert_eq!(Season::from_index(s.index()), s);
    }

    /// J2000.0 is 2000-01-01 12:00 TT (Meeus, Astronomical Algorithms, ch. 7).
    #[test]
    fn julian_centuries_are_zero_at_j2000() {
        let minutes = day_number(ymd(2000, 1, 1)) * MINUTES_PER_DAY + 720;
        assert!(julian_centuries(minutes).abs() < 1e-15);
    }
}
