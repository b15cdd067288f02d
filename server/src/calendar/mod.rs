//! The season's calendar for a planner, shaped from an outlook's day calendar (the water-level
//! engine's chance of a flood day on each date): Monday-start ISO 8601 weeks, the days and
//! weeks to watch by one stated rule, and the two files a planner takes away, a CSV table
//! (RFC 4180) and an iCalendar file ([`ics`], RFC 5545).
//!
//! Everything here is a pure function of the served outlook and the gauge's description,
//! linear in the season's days, so the files are deterministic for a given outlook.

pub mod ics;

use chrono::{Datelike, NaiveDate};

use crate::api;
use crate::upload::GaugeMeta;

/// A day is to watch when its chance of a flood day is at least this (one in five). A
/// planning convention of this service, not a published level: on the demo coast it marks
/// the 4 to 11 days of a winter around the largest predicted tides, not every day of it.
pub const WATCH_CHANCE: f64 = 0.2;

/// The watch rule in plain words.
pub const WATCH_RULE_TEXT: &str = "A day to watch has a 1 in 5 (20%) or higher chance of a \
flood day; a week to watch holds at least one such day.";

/// Why a calendar cannot be made from an outlook.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CalendarError {
    /// The outlook has no day calendar (the water-level engine did not run).
    #[error(
        "gauge {gauge}'s outlook for {season} has no day calendar: the water-level engine did \
         not run for it (see the outlook's notes)"
    )]
    NoDays {
        /// The gauge.
        gauge: String,
        /// The season.
        season: String,
    },
    /// A stored value is not what the outlook's schema says.
    #[error("gauge {gauge}'s outlook field {field} holds {value:?}, not {expected}")]
    BadField {
        /// The gauge.
        gauge: String,
        /// The outlook field, e.g. `days[3].date`.
        field: String,
        /// The offending value.
        value: String,
        /// What it should be.
        expected: &'static str,
    },
}

/// Parses a `YYYY-MM-DD` date of the outlook.
fn parse_date(gauge: &str, field: String, text: &str) -> Result<NaiveDate, CalendarError> {
    NaiveDate::parse_from_str(text, "%Y-%m-%d").map_err(|_| CalendarError::BadField {
        gauge: gauge.to_owned(),
        field,
        value: text.to_owned(),
        expected: "a YYYY-MM-DD date",
    })
}

/// The season's calendar from `outlook`'s day calendar, with `gauge`'s name, datum and
/// threshold and the outlook's cautions.
pub fn season_calendar(
    outlook: &api::Outlook,
    gauge: &GaugeMeta,
) -> Result<api::SeasonCalendar, CalendarError> {
    let id = outlook.gauge.as_str();
    if outlook.days.is_empty() {
        return Err(CalendarError::NoDays {
            gauge: id.to_owned(),
            season: outlook.season.clone(),
        });
    }
    let mut dated = Vec::with_capacity(outlook.days.len());
    for (i, day) in outlook.days.iter().enumerate() {
        let date = parse_date(id, format!("days[{i}].date"), &day.date)?;
        if !(0.0..=1.0).contains(&day.chance) {
            return Err(CalendarError::BadField {
                gauge: id.to_owned(),
                field: format!("days[{i}].chance"),
                value: day.chance.to_string(),
                expected: "a probability from 0 to 1",
            });
        }
        dated.push((date, day));
    }
    dated.sort_by_key(|(date, _)| *date);

    let mut weeks: Vec<api::CalendarWeek> = Vec::new();
    for (date, day) in dated {
        let iso = date.iso_week();
        let label = format!("{:04}-W{:02}", iso.year(), iso.week());
        let watch = day.chance >= WATCH_CHANCE;
        let entry = api::CalendarDay {
            date: date.format("%Y-%m-%d").to_string(),
            weekday: date.weekday().to_string(),
            predicted_high_m: day.predicted_high_m,
            chance: day.chance,
            watch,
        };
        match weeks.last_mut() {
            Some(week) if week.week == label => week.days.push(entry),
            _ => {
                let monday =
                    date - chrono::Days::new(u64::from(date.weekday().num_days_from_monday()));
                weeks.push(api::CalendarWeek {
                    week: label,
                    monday: monday.format("%Y-%m-%d").to_string(),
                    expected_flood_days: 0.0,
                    watch: false,
                    days: vec![entry],
                });
            }
        }
    }
    for week in &mut weeks {
        // The expected count of flood days is the sum of the days' chances (linearity of
        // expectation over the days' flood-day indicators).
        week.expected_flood_days = week.days.iter().map(|d| d.chance).sum();
        week.watch = week.days.iter().any(|d| d.watch);
    }
    let all_days = || weeks.iter().flat_map(|w| w.days.iter());
    let watch_days = all_days().filter(|d| d.watch).count();
    let expected_flood_days = weeks.iter().map(|w| w.expected_flood_days).sum();
    let first_day = non_empty_or(&outlook.first_day, all_days().next());
    let last_day = non_empty_or(&outlook.last_day, all_days().last());
    Ok(api::SeasonCalendar {
        gauge: id.to_owned(),
        gauge_name: gauge.name.clone(),
        season: outlook.season.clone(),
        first_day,
        last_day,
        issued_at: outlook.issued_at.clone(),
        datum: gauge.datum.clone(),
        flood_threshold_m: gauge.flood_threshold_m,
        expected_flood_days,
        watch_rule: api::WatchRule {
            min_chance: WATCH_CHANCE,
            text: WATCH_RULE_TEXT.to_owned(),
        },
        watch_days: u32::try_from(watch_days).unwrap_or(u32::MAX),
        explanation: explanation(gauge, watch_days),
        weeks,
        cautions: outlook.cautions.clone(),
    })
}

/// What the calendar is, in one or two plain sentences.
fn explanation(gauge: &GaugeMeta, watch_days: usize) -> String {
    let mut text = format!(
        "Each day's chance that its highest water reaches the flood threshold ({:.2} m on {}), \
         from the outlook's simulated seasons: it says which weeks to watch, not which day \
         will flood.",
        gauge.flood_threshold_m, gauge.datum
    );
    if watch_days == 0 {
        text.push_str(
            " No day reaches a 1 in 5 chance: the flood days expected here are spread over \
             the season rather than gathered around a few high tides.",
        );
    }
    text
}

/// `text`, or the date of `fallback` when `text` is empty (results stored before the outlook
/// carried its season's dates).
fn non_empty_or(text: &str, fallback: Option<&api::CalendarDay>) -> String {
    if text.is_empty() {
        fallback.map(|d| d.date.clone()).unwrap_or_default()
    } else {
        text.to_owned()
    }
}

/// The calendar as CSV (RFC 4180: a header line, CRLF line ends, fields quoted only when
/// needed): one row per day with `date, weekday, predicted_high_m, chance, watch`.
pub fn calendar_csv(calendar: &api::SeasonCalendar) -> Result<Vec<u8>, csv::Error> {
    let mut writer = csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .from_writer(Vec::new());
    writer.write_record(["date", "weekday", "predicted_high_m", "chance", "watch"])?;
    for day in calendar.weeks.iter().flat_map(|w| &w.days) {
        writer.write_record([
            day.date.clone(),
            day.weekday.clone(),
            day.predicted_high_m.to_string(),
            day.chance.to_string(),
            day.watch.to_string(),
        ])?;
    }
    writer.into_inner().map_err(|e| e.into_error().into())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn outlook_with(days: &[(&str, f64)]) -> api::Outlook {
        let fake = tidetally_test_support::fixtures::fake_outlook("a", &[0.5, 0.5]);
        let mut outlook: api::Outlook = serde_json::from_value(fake).expect("wire shape");
        outlook.days = days
            .iter()
            .map(|(date, chance)| api::DayChance {
                date: (*date).to_owned(),
                predicted_high_m: 0.5,
                chance: *chance,
            })
            .collect();
        outlook
    }

    fn gauge() -> GaugeMeta {
        crate::upload::parse_gauge_toml(&tidetally_test_support::fixtures::gauge_toml("a"))
            .expect("the example gauge parses")
    }

    #[test]
    fn weeks_start_on_monday_and_sum_their_chances() {
        // ISO 8601 weeks (week 1 holds the year's first Thursday), checked with Python's
        // `datetime.date.isocalendar`: 2026-12-01 is a Tuesday of 2026-W49, 2026-12-07 the
        // Monday of 2026-W50, and 2027-01-01 a Friday of 2026-W53 (2026 starts on a
        // Thursday, so it has 53 weeks).
        let calendar = season_calendar(
            &outlook_with(&[
                ("2026-12-01", 0.1),
                ("2026-12-06", 0.3),
                ("2026-12-07", 0.2),
                ("2027-01-01", 0.19),
            ]),
            &gauge(),
        )
        .unwrap();
        let weeks: Vec<(&str, &str, usize, bool)> = calendar
            .weeks
            .iter()
            .map(|w| (w.week.as_str(), w.monday.as_str(), w.days.len(), w.watch))
            .collect();
        assert_eq!(
            weeks,
            [
                ("2026-W49", "2026-11-30", 2, true),
                ("2026-W50", "2026-12-07", 1, true),
                ("2026-W53", "2026-12-28", 1, false),
            ]
        );
        assert_eq!(calendar.weeks[0].days[0].weekday, "Tue");
        assert!((calendar.weeks[0].expected_flood_days - 0.4).abs() < 1e-12);
        assert!((calendar.expected_flood_days - 0.79).abs() < 1e-12);
        // The rule's edge: 0.2 is a day to watch, 0.19 is not.
        assert_eq!(calendar.watch_days, 2);
        assert!(calendar.weeks[1].days[0].watch);
        assert_eq!(calendar.first_day, "2026-12-01");
    }

    #[test]
    fn no_days_or_bad_values_are_errors_naming_the_field() {
        let none = season_calendar(&outlook_with(&[]), &gauge()).unwrap_err();
        assert!(matches!(none, CalendarError::NoDays { .. }));
        let bad = season_calendar(
            &outlook_with(&[("2026-12-01", 0.1), ("2026-13-01", 0.1)]),
            &gauge(),
        )
        .unwrap_err()
        .to_string();
        assert!(
            bad.contains("days[1].date") && bad.contains("2026-13-01"),
            "{bad}"
        );
        let nan = season_calendar(&outlook_with(&[("2026-12-01", f64::NAN)]), &gauge())
            .unwrap_err()
            .to_string();
        assert!(nan.contains("days[0].chance"), "{nan}");
    }

    #[test]
    fn csv_has_a_header_and_crlf_rows() {
        let calendar = season_calendar(
            &outlook_with(&[("2026-12-01", 0.5), ("2026-12-02", 0.125)]),
            &gauge(),
        )
        .unwrap();
        let text = String::from_utf8(calendar_csv(&calendar).unwrap()).unwrap();
        // RFC 4180 section 2, rules 1 and 3: CRLF after each record, an optional header.
        assert_eq!(
            text,
            "date,weekday,predicted_high_m,chance,watch\r\n\
             2026-12-01,Tue,0.5,0.5,true\r\n\
             2026-12-02,Wed,0.5,0.125,false\r\n"
        );
    }
}
