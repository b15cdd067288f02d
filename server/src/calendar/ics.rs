//! The season calendar's days to watch as an iCalendar file (RFC 5545): one all-day event
//! per day to watch, for a planner's own calendar.
//!
//! The file is deterministic for a given outlook: each event's UID is made from the gauge and
//! the date, and DTSTAMP is the outlook's issue time, never the wall clock. Content lines end
//! in CRLF and are folded at 75 octets (RFC 5545 section 3.1); TEXT values are escaped
//! (section 3.3.11).

use chrono::{DateTime, NaiveDate, Utc};

use super::CalendarError;
use crate::api;
use crate::cautions;

/// The product identifier (RFC 5545 section 3.7.3).
pub const PRODID: &str = "-//tidetally//season calendar//EN";

/// The media type of the file (RFC 5545 section 8.1).
pub const CONTENT_TYPE: &str = "text/calendar; charset=utf-8";

/// Longest content line in octets, line break excluded (RFC 5545 section 3.1).
const MAX_LINE_OCTETS: usize = 75;

/// Escapes a TEXT value (RFC 5545 section 3.3.11): backslash, semicolon, comma and line
/// breaks (a CRLF or a lone CR or LF becomes `\n`).
pub fn escape_text(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' => out.push_str("\\\\"),
            ';' => out.push_str("\\;"),
            ',' => out.push_str("\\,"),
            '\r' => {
                if chars.peek() == Some(&'\n') {
                    chars.next();
                }
                out.push_str("\\n");
            }
            '\n' => out.push_str("\\n"),
            other => out.push(other),
        }
    }
    out
}

/// Folds one content line (RFC 5545 section 3.1): at most 75 octets per physical line, a
/// continuation starting with one space (which counts toward its 75), never splitting a
/// UTF-8 character; each physical line ends in CRLF.
pub fn fold_line(line: &str) -> String {
    let mut out = String::with_capacity(line.len() + line.len() / 64 * 3 + 2);
    let mut used = 0;
    for c in line.chars() {
        let width = c.len_utf8();
        if used + width > MAX_LINE_OCTETS {
            out.push_str("\r\n ");
            used = 1;
        }
        out.push(c);
        used += width;
    }
    out.push_str("\r\n");
    out
}

/// `YYYYMMDD` of a `YYYY-MM-DD` date (the DATE value form, RFC 5545 section 3.3.4).
fn ics_date(gauge: &str, field: &str, text: &str) -> Result<NaiveDate, CalendarError> {
    NaiveDate::parse_from_str(text, "%Y-%m-%d").map_err(|_| CalendarError::BadField {
        gauge: gauge.to_owned(),
        field: field.to_owned(),
        value: text.to_owned(),
        expected: "a YYYY-MM-DD date",
    })
}

/// The page's percent wording of a chance.
fn percent(p: f64) -> String {
    if p < 0.005 {
        "less than 1%".into()
    } else if p > 0.995 {
        "more than 99%".into()
    } else {
        format!("{}%", (p * 100.0).round())
    }
}

/// The calendar's days to watch as an iCalendar file.
pub fn season_ics(calendar: &api::SeasonCalendar) -> Result<String, CalendarError> {
    let gauge = calendar.gauge.as_str();
    let issued: DateTime<Utc> = DateTime::parse_from_rfc3339(&calendar.issued_at)
        .map_err(|_| CalendarError::BadField {
            gauge: gauge.to_owned(),
            field: "issued_at".into(),
            value: calendar.issued_at.clone(),
            expected: "an RFC 3339 date-time",
        })?
        .with_timezone(&Utc);
    // DATE-TIME in UTC form (RFC 5545 section 3.3.5, FORM #2), as DTSTAMP requires.
    let stamp = issued.format("%Y%m%dT%H%M%SZ").to_string();
    let mut lines: Vec<String> = vec![
        "BEGIN:VCALENDAR".into(),
        "VERSION:2.0".into(),
        format!("PRODID:{}", escape_text(PRODID)),
        "CALSCALE:GREGORIAN".into(),
        "METHOD:PUBLISH".into(),
        format!(
            "NAME:{}",
            escape_text(&format!(
                "Flood-day watch, {} {}",
                calendar.gauge_name, calendar.season
            ))
        ),
    ];
    for (i, day) in calendar
        .weeks
        .iter()
        .flat_map(|w| &w.days)
        .filter(|d| d.watch)
        .enumerate()
    {
        let date = ics_date(gauge, &format!("watch day {i}"), &day.date)?;
        let next = date + chrono::Days::new(1);
        let summary = format!(
            "Flood-day watch at {}: {} chance",
            calendar.gauge_name,
            percent(day.chance)
        );
        let description = format!(
            "Chance of a flood day at {} ({}) on {}: {}. Predicted high water {:.2} m on {}; \
             flood threshold {:.2} m. Season {}, outlook issued {}.\n\n{}\n{}",
            calendar.gauge_name,
            calendar.gauge,
            day.date,
            percent(day.chance),
            day.predicted_high_m,
            calendar.datum,
            calendar.flood_threshold_m,
            calendar.season,
            calendar.issued_at,
            cautions::NOT_A_WARNING,
            cautions::DEFER_TO_OFFICIALS,
        );
        lines.extend([
            "BEGIN:VEVENT".into(),
            format!(
                "UID:{}",
                escape_text(&format!(
                    "{}-{gauge}-flood-day-watch@tidetally",
                    date.format("%Y%m%d")
                ))
            ),
            format!("DTSTAMP:{stamp}"),
            format!("DTSTART;VALUE=DATE:{}", date.format("%Y%m%d")),
            format!("DTEND;VALUE=DATE:{}", next.format("%Y%m%d")),
            format!("SUMMARY:{}", escape_text(&summary)),
            format!("DESCRIPTION:{}", escape_text(&description)),
            format!("LOCATION:{}", escape_text(&calendar.gauge_name)),
            "TRANSP:TRANSPARENT".into(),
            "END:VEVENT".into(),
        ]);
    }
    lines.push("END:VCALENDAR".into());
    Ok(lines.iter().map(|l| fold_line(l)).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Undoes folding (RFC 5545 section 3.1: a CRLF followed by one space or tab is removed).
    fn unfold(text: &str) -> String {
        text.replace("\r\n ", "").replace("\r\n\t", "")
    }

    #[test]
    fn text_escaping_follows_section_3_3_11() {
        // RFC 5545 section 3.3.11: ESCAPED-CHAR = "\\" / "\;" / "\," / "\N" / "\n".
        assert_eq!(escape_text(r"a\b"), r"a\\b");
        assert_eq!(escape_text("a;b,c"), r"a\;b\,c");
        assert_eq!(
            escape_text("one\ntwo\r\nthree\rfour"),
            r"one\ntwo\nthree\nfour"
        );
        assert_eq!(escape_text("plain: text"), "plain: text");
    }

    #[test]
    fn folding_keeps_lines_within_75_octets_and_characters_whole() {
        // RFC 5545 section 3.1: lines SHOULD NOT be longer than 75 octets, excluding the
        // line break; a fold is CRLF followed by a single space.
        let long = format!("DESCRIPTION:{}", "x".repeat(200));
        let folded = fold_line(&long);
        assert!(folded.ends_with("\r\n"));
        let physical: Vec<&str> = folded.trim_end_matches("\r\n").split("\r\n").collect();
        assert_eq!(physical[0].len(), 75);
        assert!(
            physical[1..]
                .iter()
                .all(|l| l.starts_with(' ') && l.len() <= 75)
        );
        assert_eq!(unfold(&folded), format!("{long}\r\n"));
        // A line of exactly 75 octets is not folded.
        let exact = "y".repeat(75);
        assert_eq!(fold_line(&exact), format!("{exact}\r\n"));
        // Two-octet characters are never split across a fold.
        let wide = format!("SUMMARY:{}", "\u{e9}".repeat(60));
        let folded = fold_line(&wide);
        for l in folded.trim_end_matches("\r\n").split("\r\n") {
            assert!(l.len() <= 75, "{} octets", l.len());
        }
        assert_eq!(unfold(&folded), format!("{wide}\r\n"));
    }
}
