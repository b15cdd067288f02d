//! The season calendar endpoints through `oneshot`: the JSON weeks, the CSV table (RFC 4180)
//! and the iCalendar file (RFC 5545) over hand-made day chances, their errors, and the demo
//! coast's `.ics` read back by a general-purpose parser (Python `icalendar`, pinned in
//! tests/python/requirements.txt). That last check needs `python3` with `icalendar`; without
//! them it fails when `CI` is set and otherwise prints a skip message (the pattern of
//! tests/page_browser.rs).
#![allow(clippy::unwrap_used)]

mod support;

use std::collections::BTreeSet;
use std::sync::Arc;

use axum::http::StatusCode;
use chrono::{Datelike, NaiveDate};
use serde_json::Value;
use support::*;
use tidetally_server::cautions::{DEFER_TO_OFFICIALS, NOT_A_WARNING};
use tidetally_server::{AppState, api, app, state};

/// A gauge name with every character RFC 5545 section 3.3.11 escapes in TEXT (`;`, `,`, `\`).
const AWKWARD_NAME: &str = r"Quay; North, Old \ Pier";

/// The fake outlook's season, 2026-DJF: 2026-12-01 to 2027-02-28, 90 days.
const FIRST: &str = "2026-12-01";
const SEASON_DAYS: u32 = 90;

/// Hand-made chances: a plumbing pattern, not a model. Every 14th day from day 3 is high
/// (0.2 to 0.6), the rest low (0.01 to 0.19).
fn chance_of(i: u32) -> f64 {
    if i % 14 == 3 {
        0.2 + f64::from(i % 5) * 0.1
    } else {
        f64::from(i % 19 + 1) / 100.0
    }
}

fn first_day() -> NaiveDate {
    NaiveDate::parse_from_str(FIRST, "%Y-%m-%d").unwrap()
}

/// A service with gauge `a` (named [`AWKWARD_NAME`]) serving a fake 2026-DJF outlook whose
/// day calendar is [`chance_of`].
async fn calendar_service(with_days: bool) -> (Arc<AppState>, axum::Router) {
    let state = state(true);
    let app = app(Arc::clone(&state));
    let toml = gauge_toml("a").replace("Test harbour a", &AWKWARD_NAME.replace('\\', "\\\\"));
    let a = write(&app, "PUT", "/api/v1/gauges/a", toml).await;
    assert_eq!(
        a.status,
        StatusCode::OK,
        "{}",
        String::from_utf8_lossy(&a.body)
    );
    let a = write(&app, "PUT", "/api/v1/gauges/a/levels", LEVELS_CSV).await;
    assert_eq!(
        a.status,
        StatusCode::OK,
        "{}",
        String::from_utf8_lossy(&a.body)
    );
    let mut results = synthetic_results("a");
    let outlook = results.outlooks.get_mut("2026-DJF").unwrap();
    outlook.first_day = FIRST.into();
    outlook.last_day = "2027-02-28".into();
    if with_days {
        outlook.days = (0..SEASON_DAYS)
            .map(|i| api::DayChance {
                date: (first_day() + chrono::Days::new(u64::from(i)))
                    .format("%Y-%m-%d")
                    .to_string(),
                predicted_high_m: 0.5 + f64::from(i % 7) * 0.05,
                chance: chance_of(i),
            })
            .collect();
    }
    let st = Arc::clone(&state);
    tokio::task::spawn_blocking(move || state::install_results(&st, "a", results))
        .await
        .unwrap()
        .unwrap();
    (state, app)
}

fn text(a: &Answer) -> String {
    String::from_utf8(a.body.clone()).unwrap()
}

/// Undoes RFC 5545 section 3.1 folding: a CRLF followed by one space or tab is removed.
fn unfold(ics: &str) -> String {
    ics.replace("\r\n ", "").replace("\r\n\t", "")
}

/// The value of each `NAME:` content line of the unfolded file (no parameters).
fn values<'a>(unfolded: &'a str, name: &str) -> Vec<&'a str> {
    let prefix = format!("{name}:");
    unfolded
        .split("\r\n")
        .filter_map(|l| l.strip_prefix(prefix.as_str()))
        .collect()
}

/// Reverses RFC 5545 section 3.3.11 TEXT escaping.
fn unescape(text: &str) -> String {
    let mut out = String::new();
    let mut chars = text.chars();
    while let Some(c) = chars.next() {
        if c == '\\' {
            match chars.next() {
                Some('n' | 'N') => out.push('\n'),
                Some(other) => out.push(other),
                None => out.push('\\'),
            }
        } else {
            out.push(c);
        }
    }
    out
}

#[tokio::test]
async fn the_calendar_json_groups_the_season_into_iso_weeks_with_the_watch_rule() {
    let (_state, app) = calendar_service(true).await;
    let a = get(&app, "/api/v1/gauges/a/calendar").await;
    assert_eq!(a.status, StatusCode::OK, "{}", text(&a));
    assert_eq!(a.header("content-type"), Some("application/json"));
    assert!(a.header("etag").is_some());
    let c = a.json();
    // The default season is the outlook's, as for the outlook endpoint.
    assert_eq!(c["season"], "2026-DJF");
    assert_eq!(c["gauge_name"], AWKWARD_NAME);
    assert_eq!(
        (c["first_day"].as_str(), c["last_day"].as_str()),
        (Some(FIRST), Some("2027-02-28"))
    );
    let min = c["watch_rule"]["min_chance"].as_f64().unwrap();
    assert!(c["watch_rule"]["text"].as_str().unwrap().contains("20%"));

    // Every season day once, in order, each in the ISO 8601 week (chrono's calendar) its
    // week names, weeks starting on their Monday.
    let mut next = first_day();
    let (mut watch_days, mut total) = (0, 0.0);
    for week in c["weeks"].as_array().unwrap() {
        let monday =
            NaiveDate::parse_from_str(week["monday"].as_str().unwrap(), "%Y-%m-%d").unwrap();
        assert_eq!(monday.weekday(), chrono::Weekday::Mon);
        let days = week["days"].as_array().unwrap();
        assert!((1..=7).contains(&days.len()));
        let mut sum = 0.0;
        let mut any = false;
        for day in days {
            let date =
                NaiveDate::parse_from_str(day["date"].as_str().unwrap(), "%Y-%m-%d").unwrap();
            assert_eq!(date, next);
            let iso = date.iso_week();
            assert_eq!(
                week["week"],
                format!("{:04}-W{:02}", iso.year(), iso.week())
            );
            assert_eq!(day["weekday"], date.weekday().to_string());
            let i = u32::try_from((date - first_day()).num_days()).unwrap();
            let chance = day["chance"].as_f64().unwrap();
            assert_eq!(chance, chance_of(i));
            assert_eq!(day["watch"], chance >= min, "{date}");
            watch_days += usize::from(chance >= min);
            any |= chance >= min;
            sum += chance;
            next = next + chrono::Days::new(1);
        }
        // Expected flood days of a week: the sum of its days' chances.
        assert!((week["expected_flood_days"].as_f64().unwrap() - sum).abs() < 1e-9);
        assert_eq!(week["watch"], any);
        total += sum;
    }
    assert_eq!(
        next,
        first_day() + chrono::Days::new(u64::from(SEASON_DAYS))
    );
    assert_eq!(c["watch_days"], watch_days);
    assert!(watch_days > 0);
    assert!((c["expected_flood_days"].as_f64().unwrap() - total).abs() < 1e-9);
    // 2026-12-01 is a Tuesday of ISO week 2026-W49 (Python's datetime.date.isocalendar).
    assert_eq!(c["weeks"][0]["week"], "2026-W49");
    assert_eq!(c["weeks"][0]["monday"], "2026-11-30");

    let cautions: Vec<&str> = c["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    assert!(
        cautions.iter().any(|c| c.contains("not a warning")),
        "{cautions:?}"
    );
    assert!(cautions.contains(&DEFER_TO_OFFICIALS), "{cautions:?}");
}

#[tokio::test]
async fn the_calendar_csv_has_one_rfc_4180_row_per_day() {
    let (_state, app) = calendar_service(true).await;
    let json = get(&app, "/api/v1/gauges/a/calendar?season=2026-DJF")
        .await
        .json();
    for answer in [
        get(&app, "/api/v1/gauges/a/calendar?format=csv").await,
        send(
            &app,
            "GET",
            "/api/v1/gauges/a/calendar",
            &[("accept", "text/csv")],
            vec![],
        )
        .await,
    ] {
        assert_eq!(answer.status, StatusCode::OK);
        assert_eq!(
            answer.header("content-type"),
            Some("text/csv; charset=utf-8")
        );
        assert!(
            answer
                .header("content-disposition")
                .unwrap()
                .contains("tidetally-calendar-a-2026-DJF.csv")
        );
        let body = text(&answer);
        // RFC 4180 section 2, rule 1: each record ends in CRLF; rule 3: a header line.
        assert!(body.ends_with("\r\n"));
        assert_eq!(body.matches('\n').count(), body.matches("\r\n").count());
        let mut reader = csv::Reader::from_reader(body.as_bytes());
        assert_eq!(
            reader.headers().unwrap(),
            vec!["date", "weekday", "predicted_high_m", "chance", "watch"]
        );
        let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
        let days: Vec<&Value> = json["weeks"]
            .as_array()
            .unwrap()
            .iter()
            .flat_map(|w| w["days"].as_array().unwrap())
            .collect();
        assert_eq!(rows.len(), SEASON_DAYS as usize);
        for (row, day) in rows.iter().zip(&days) {
            assert_eq!(&row[0], day["date"].as_str().unwrap());
            assert_eq!(&row[1], day["weekday"].as_str().unwrap());
            assert_eq!(
                row[2].parse::<f64>().unwrap(),
                day["predicted_high_m"].as_f64().unwrap()
            );
            assert_eq!(
                row[3].parse::<f64>().unwrap(),
                day["chance"].as_f64().unwrap()
            );
            assert_eq!(
                row[4].parse::<bool>().unwrap(),
                day["watch"].as_bool().unwrap()
            );
        }
    }
}

#[tokio::test]
async fn the_ics_file_follows_rfc_5545_and_every_event_carries_the_caution() {
    let (_state, app) = calendar_service(true).await;
    let json = get(&app, "/api/v1/gauges/a/calendar").await.json();
    let a = get(&app, "/api/v1/gauges/a/calendar.ics").await;
    assert_eq!(a.status, StatusCode::OK, "{}", text(&a));
    assert_eq!(
        a.header("content-type"),
        Some("text/calendar; charset=utf-8")
    );
    assert!(
        a.header("content-disposition")
            .unwrap()
            .contains("tidetally-calendar-a-2026-DJF.ics")
    );
    let ics = text(&a);

    // RFC 5545 section 3.1: every content line ends in CRLF, no physical line is longer than
    // 75 octets, and a continuation line starts with a space.
    assert!(ics.ends_with("\r\n"));
    assert_eq!(
        ics.matches('\n').count(),
        ics.matches("\r\n").count(),
        "a bare LF"
    );
    assert_eq!(
        ics.matches('\r').count(),
        ics.matches("\r\n").count(),
        "a bare CR"
    );
    let physical: Vec<&str> = ics.trim_end_matches("\r\n").split("\r\n").collect();
    assert!(
        physical.iter().all(|l| l.len() <= 75),
        "a line over 75 octets"
    );
    assert!(
        physical.iter().any(|l| l.starts_with(' ')),
        "nothing was folded"
    );

    let unfolded = unfold(&ics);
    let lines: Vec<&str> = unfolded.trim_end_matches("\r\n").split("\r\n").collect();
    // Section 3.4 and 3.6: the object and its required properties (3.7.3 PRODID, 3.7.4
    // VERSION).
    assert_eq!(lines.first(), Some(&"BEGIN:VCALENDAR"));
    assert_eq!(lines.last(), Some(&"END:VCALENDAR"));
    assert!(lines.contains(&"VERSION:2.0"));
    assert_eq!(
        values(&unfolded, "PRODID"),
        ["-//tidetally//season calendar//EN"]
    );

    // One all-day event per day to watch: DTSTART;VALUE=DATE and DTEND the next day
    // (section 3.6.1: for a DATE start, DTEND is the day after an all-day event's one day).
    let watch: Vec<String> = json["weeks"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|w| w["days"].as_array().unwrap())
        .filter(|d| d["watch"] == true)
        .map(|d| d["date"].as_str().unwrap().replace('-', ""))
        .collect();
    let starts: Vec<String> = lines
        .iter()
        .filter_map(|l| l.strip_prefix("DTSTART;VALUE=DATE:"))
        .map(String::from)
        .collect();
    assert_eq!(starts, watch);
    assert_eq!(
        lines.iter().filter(|l| **l == "BEGIN:VEVENT").count(),
        watch.len()
    );
    let ends: Vec<&str> = lines
        .iter()
        .filter_map(|l| l.strip_prefix("DTEND;VALUE=DATE:"))
        .collect();
    for (start, end) in starts.iter().zip(&ends) {
        let start = NaiveDate::parse_from_str(start, "%Y%m%d").unwrap();
        assert_eq!(
            *end,
            (start + chrono::Days::new(1)).format("%Y%m%d").to_string()
        );
    }
    // Section 3.8.7.2: DTSTAMP in UTC; here the outlook's issue time (2026-11-20T00:00:00Z),
    // never the wall clock.
    let stamps = values(&unfolded, "DTSTAMP");
    assert_eq!(stamps.len(), watch.len());
    assert!(
        stamps.iter().all(|s| *s == "20261120T000000Z"),
        "{stamps:?}"
    );
    // Section 3.8.4.7: a globally unique UID per event, stable across requests.
    let uids: BTreeSet<&str> = values(&unfolded, "UID").into_iter().collect();
    assert_eq!(uids.len(), watch.len());
    assert!(
        uids.iter()
            .all(|u| u.ends_with("-a-flood-day-watch@tidetally"))
    );
    assert_eq!(text(&get(&app, "/api/v1/gauges/a/calendar.ics").await), ics);

    // Section 3.3.11: `;`, `,` and `\` in TEXT are escaped, line breaks written `\n`.
    let escaped = r"Quay\; North\, Old \\ Pier";
    let locations = values(&unfolded, "LOCATION");
    assert!(locations.iter().all(|l| *l == escaped), "{locations:?}");
    for description in values(&unfolded, "DESCRIPTION") {
        assert!(!description.contains('\n'));
        assert!(description.contains(r"\n"), "{description}");
        let plain = unescape(description);
        assert!(plain.contains(AWKWARD_NAME), "{plain}");
        // Every event says what it is not and whom to follow.
        assert!(plain.contains(NOT_A_WARNING), "{plain}");
        assert!(plain.contains(DEFER_TO_OFFICIALS), "{plain}");
    }
    assert_eq!(values(&unfolded, "DESCRIPTION").len(), watch.len());
}

#[tokio::test]
async fn calendar_errors_are_the_outlooks_problems() {
    let (_state, app) = calendar_service(false).await;
    for path in [
        "/api/v1/gauges/nowhere/calendar",
        "/api/v1/gauges/nowhere/calendar.ics",
    ] {
        let p = get(&app, path).await.assert_problem(404, "not-found");
        assert!(p["detail"].as_str().unwrap().contains("nowhere"));
    }
    for path in [
        "/api/v1/gauges/a/calendar?season=2026-XYZ",
        "/api/v1/gauges/a/calendar.ics?season=2026-XYZ",
    ] {
        get(&app, path).await.assert_problem(400, "bad-request");
    }
    // A format the calendar cannot give is refused by the shared negotiation, never JSON.
    get(&app, "/api/v1/gauges/a/calendar?format=xml")
        .await
        .assert_problem(406, "not-acceptable");
    // A season the record cannot support, as the outlook endpoint says.
    for path in [
        "/api/v1/gauges/a/calendar?season=2031-DJF",
        "/api/v1/gauges/a/calendar.ics?season=2031-DJF",
    ] {
        get(&app, path).await.assert_problem(404, "not-found");
    }
    // An outlook without a day calendar (the water-level engine did not run).
    for path in [
        "/api/v1/gauges/a/calendar",
        "/api/v1/gauges/a/calendar.ics",
        "/api/v1/gauges/a/calendar?format=csv",
    ] {
        let p = get(&app, path).await.assert_problem(422, "pipeline-failed");
        assert!(
            p["detail"].as_str().unwrap().contains("no day calendar"),
            "{p}"
        );
    }
}

/// The pinned `icalendar` version (tests/python/requirements.txt).
fn pinned_icalendar() -> String {
    let path =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../tests/python/requirements.txt");
    let text = std::fs::read_to_string(path).unwrap();
    text.lines()
        .find_map(|l| l.trim().strip_prefix("icalendar=="))
        .expect("icalendar is pinned")
        .trim()
        .to_owned()
}

/// Reads an .ics file with Python `icalendar` and prints each VEVENT's DTSTART (ISO date, and
/// whether it is a date rather than a date-time), DTEND and DESCRIPTION as JSON.
const READ_ICS: &str = r#"
import datetime, json, sys
import icalendar
cal = icalendar.Calendar.from_ical(open(sys.argv[1], "rb").read())
events = []
for ev in cal.walk("VEVENT"):
    start = ev.decoded("DTSTART")
    end = ev.decoded("DTEND")
    events.append({
        "start": start.isoformat(),
        "start_is_date": type(start) is datetime.date,
        "end": end.isoformat(),
        "description": str(ev.get("DESCRIPTION")),
        "uid": str(ev.get("UID")),
    })
print(json.dumps({"version": icalendar.__version__, "prodid": str(cal.get("PRODID")), "events": events}))
"#;

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_demo_ics_parses_with_python_icalendar() {
    let python = std::env::var_os("PYTHON").unwrap_or_else(|| "python3".into());
    let probe = std::process::Command::new(&python)
        .args(["-c", "import icalendar"])
        .output();
    if !probe.as_ref().is_ok_and(|o| o.status.success()) {
        assert!(
            std::env::var_os("CI").is_none(),
            "CI is set but python3 with icalendar is missing (pip install -r tests/python/requirements.txt)"
        );
        eprintln!(
            "SKIPPED the_demo_ics_parses_with_python_icalendar: python3 with icalendar not found \
             (pip install -r tests/python/requirements.txt, or set PYTHON)"
        );
        return;
    }
    let data = support::demo::demo_folder("calendar-ics");
    let state = support::demo::seeded_state(&data).await;
    let app = app(state);
    let calendar = get(&app, "/api/v1/gauges/port-tamsin/calendar").await;
    assert_eq!(calendar.status, StatusCode::OK, "{}", text(&calendar));
    let calendar = calendar.json();
    let ics = get(&app, "/api/v1/gauges/port-tamsin/calendar.ics").await;
    assert_eq!(ics.status, StatusCode::OK, "{}", text(&ics));
    let file = data.join("port-tamsin.ics");
    std::fs::write(&file, &ics.body).unwrap();
    let out = std::process::Command::new(&python)
        .args(["-c", READ_ICS])
        .arg(&file)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "icalendar refused the file: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let parsed: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(parsed["version"], pinned_icalendar());
    assert_eq!(parsed["prodid"], "-//tidetally//season calendar//EN");

    let first =
        NaiveDate::parse_from_str(calendar["first_day"].as_str().unwrap(), "%Y-%m-%d").unwrap();
    let last =
        NaiveDate::parse_from_str(calendar["last_day"].as_str().unwrap(), "%Y-%m-%d").unwrap();
    let events = parsed["events"].as_array().unwrap();
    assert!(!events.is_empty(), "the demo gauge has days to watch");
    assert_eq!(
        events.len() as u64,
        calendar["watch_days"].as_u64().unwrap()
    );
    let uids: BTreeSet<&str> = events.iter().map(|e| e["uid"].as_str().unwrap()).collect();
    assert_eq!(uids.len(), events.len());
    for event in events {
        assert_eq!(event["start_is_date"], true, "{event}");
        let start =
            NaiveDate::parse_from_str(event["start"].as_str().unwrap(), "%Y-%m-%d").unwrap();
        assert!(
            first <= start && start <= last,
            "{start} outside {first}..{last}"
        );
        let end = NaiveDate::parse_from_str(event["end"].as_str().unwrap(), "%Y-%m-%d").unwrap();
        assert_eq!(end, start + chrono::Days::new(1));
        let description = event["description"].as_str().unwrap();
        assert!(description.contains(NOT_A_WARNING), "{description}");
        assert!(description.contains(DEFER_TO_OFFICIALS), "{description}");
    }
}
