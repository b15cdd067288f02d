//! The service's one clock: what "today" is. Real (the UTC date) by default; fixed to a date by
//! configuration (`TIDETALLY_TODAY=YYYY-MM-DD`) or by a test, so nothing the service or the
//! page decides from the date depends on when it runs.
//!
//! Only `GET /api/v1/clock` and the page read it. Outlook bodies never carry a date that
//! depends on today: they are cached by content (ETags), and today changes without them.

use std::sync::atomic::{AtomicI32, Ordering};

use chrono::{Datelike, NaiveDate, Utc};

/// Stored in the atomic when the clock follows the real date (no valid date has this day
/// number: chrono's dates stop far short of `i32::MIN` days before the common era).
const REAL: i32 = i32::MIN;

/// Errors reading a fixed date.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("today {0:?} is not a date written YYYY-MM-DD, e.g. 2026-12-01")]
pub struct BadToday(pub String);

/// What "today" is for the service. Interior-mutable so a test can move it while the service
/// runs; reads and writes are single atomic operations.
#[derive(Debug)]
pub struct Clock {
    /// Days from the common era of the fixed date, or [`REAL`].
    fixed_day: AtomicI32,
}

impl Default for Clock {
    fn default() -> Self {
        Self::real()
    }
}

impl Clock {
    /// The real date (UTC).
    pub fn real() -> Self {
        Self {
            fixed_day: AtomicI32::new(REAL),
        }
    }

    /// A clock stopped at `day`.
    pub fn fixed(day: NaiveDate) -> Self {
        let clock = Self::real();
        clock.set(Some(day));
        clock
    }

    /// Stops the clock at `day`, or lets it follow the real date again with `None`.
    pub fn set(&self, day: Option<NaiveDate>) {
        let value = day.map_or(REAL, |d| d.num_days_from_ce());
        self.fixed_day.store(value, Ordering::Relaxed);
    }

    /// Today: the fixed date, or the real UTC date.
    pub fn today(&self) -> NaiveDate {
        match self.fixed_day.load(Ordering::Relaxed) {
            REAL => Utc::now().date_naive(),
            days => NaiveDate::from_num_days_from_ce_opt(days)
                .unwrap_or_else(|| Utc::now().date_naive()),
        }
    }

    /// Whether the clock is stopped at a fixed date.
    pub fn is_fixed(&self) -> bool {
        self.fixed_day.load(Ordering::Relaxed) != REAL
    }
}

/// Parses a fixed date written `YYYY-MM-DD`.
pub fn parse_today(text: &str) -> Result<NaiveDate, BadToday> {
    let trimmed = text.trim();
    // chrono's %Y also takes signed and short years; a date here is four digits, a dash, two
    // digits, a dash, two digits.
    let shaped = trimmed.len() == 10
        && trimmed.bytes().enumerate().all(|(i, b)| {
            if i == 4 || i == 7 {
                b == b'-'
            } else {
                b.is_ascii_digit()
            }
        });
    shaped
        .then(|| NaiveDate::parse_from_str(trimmed, "%Y-%m-%d").ok())
        .flatten()
        .ok_or_else(|| BadToday(text.to_owned()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_fixed_clock_says_its_date_and_can_be_moved_and_released() {
        let day = NaiveDate::from_ymd_opt(2026, 12, 1).unwrap();
        let clock = Clock::fixed(day);
        assert!(clock.is_fixed());
        assert_eq!(clock.today(), day);
        let later = NaiveDate::from_ymd_opt(2031, 6, 30).unwrap();
        clock.set(Some(later));
        assert_eq!(clock.today(), later);
        clock.set(None);
        assert!(!clock.is_fixed());
        // The real date, read on either side of the call so a midnight between them passes.
        let before = Utc::now().date_naive();
        let today = clock.today();
        let after = Utc::now().date_naive();
        assert!(today == before || today == after);
    }

    #[test]
    fn the_earliest_and_latest_dates_chrono_knows_stay_fixed() {
        for day in [NaiveDate::MIN, NaiveDate::MAX] {
            let clock = Clock::fixed(day);
            assert_eq!(clock.today(), day);
            assert_eq!(clock.today().year(), day.year());
        }
    }

    #[test]
    fn dates_are_read_as_yyyy_mm_dd_only() {
        assert_eq!(
            parse_today(" 2026-12-01 "),
            Ok(NaiveDate::from_ymd_opt(2026, 12, 1).unwrap())
        );
        for bad in [
            "2026-13-01",
            "2026-02-30",
            "26-12-01",
            "2026-1-01",
            "+2026-12-01",
            "today",
            "",
        ] {
            assert_eq!(parse_today(bad), Err(BadToday(bad.to_owned())), "{bad}");
        }
    }
}
