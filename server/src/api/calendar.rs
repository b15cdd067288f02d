//! The season's calendar for a planner: the outlook's day calendar grouped into weeks, with
//! the days and weeks to watch marked by a stated rule.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// `GET /api/v1/gauges/{id}/calendar?season=LABEL`: the days of a season with their chance
/// of a flood day, grouped into Monday-start ISO 8601 weeks.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SeasonCalendar {
    /// The gauge id.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// The gauge's name.
    pub gauge_name: String,
    /// Season label (a season is named for the year its first month falls in).
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// The season's first calendar day, `YYYY-MM-DD`.
    pub first_day: String,
    /// The season's last calendar day, `YYYY-MM-DD`.
    pub last_day: String,
    /// When the outlook the calendar comes from was issued (RFC 3339, UTC).
    pub issued_at: String,
    /// Datum of `predicted_high_m`.
    pub datum: String,
    /// The gauge's minor flood threshold, metres on the datum.
    pub flood_threshold_m: f64,
    /// Expected flood days over the calendar: the sum of the days' chances, days.
    pub expected_flood_days: f64,
    /// The rule that marks days and weeks to watch.
    pub watch_rule: WatchRule,
    /// How many days the rule marks, days.
    pub watch_days: u32,
    /// The season's weeks in order; the first and last may hold fewer than seven days.
    pub weeks: Vec<CalendarWeek>,
    /// What the calendar is, in one plain sentence.
    pub explanation: String,
    /// Plain-language cautions; never empty.
    pub cautions: Vec<String>,
}

/// Which days and weeks a calendar marks to watch.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct WatchRule {
    /// A day is to watch when its chance of a flood day is at least this, a probability
    /// from 0 to 1.
    pub min_chance: f64,
    /// The rule in plain words; a week is to watch when it holds a day to watch.
    pub text: String,
}

/// One Monday-start week (ISO 8601) of a season.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct CalendarWeek {
    /// ISO 8601 week, `YYYY-Www`.
    #[schema(example = "2026-W50")]
    pub week: String,
    /// The week's Monday, `YYYY-MM-DD` (may fall before the season's first day).
    pub monday: String,
    /// Expected flood days in the week: the sum of its days' chances, days.
    pub expected_flood_days: f64,
    /// Whether the week holds a day to watch.
    pub watch: bool,
    /// The week's days that fall inside the season, in order.
    pub days: Vec<CalendarDay>,
}

/// One day of a season's calendar.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct CalendarDay {
    /// Local-standard-time date, `YYYY-MM-DD`.
    pub date: String,
    /// Day of the week, `Mon` to `Sun`.
    #[schema(example = "Mon")]
    pub weekday: String,
    /// Predicted high water (tide plus projected mean sea level), metres on the datum.
    pub predicted_high_m: f64,
    /// Chance of a flood day, a probability from 0 to 1. A seasonal estimate, not a warning.
    pub chance: f64,
    /// Whether the day's chance meets the watch rule.
    pub watch: bool,
}
