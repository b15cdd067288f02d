//! End-to-end checks of water-level ingestion, daily maxima and the season table, through the
//! gauge TOML entry point the server and the `counts` command use.
//!
//! Two references outside the code under test:
//! - hand-counted fixtures (`tests/fixtures/ingest/harbour.toml` writes the count out day by
//!   day), read plain and gzip;
//! - a generated three-year hourly record, written with mixed time shapes, gaps, missing
//!   values and shuffled blocks, and counted a second time by a deliberately naive counter
//!   written here (its own calendar arithmetic, a hash map of days, no sorting).

use std::collections::HashMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use tidetally_model::fit::{self, FilesNeeded, GaugeSources};
use tidetally_model::gauge::LevelRecord;

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/ingest")
        .join(name)
}

fn load(path: &Path) -> LevelRecord {
    let sources = GaugeSources::read(path, FilesNeeded::Levels).expect("fixture files read");
    fit::record_gauge(&sources)
        .expect("fixture record loads")
        .record
}

/// (label, flood days, observed days, calendar days) of every season row.
fn summary(record: &LevelRecord) -> Vec<(String, u32, u32, u32)> {
    record
        .seasons
        .rows
        .iter()
        .map(|r| {
            (
                r.label.clone(),
                r.flood_days,
                r.observed_days,
                r.calendar_days,
            )
        })
        .collect()
}

// Hand count written out in tests/fixtures/ingest/harbour.toml.
#[test]
fn hand_counted_fixture_plain_and_gzip() {
    let plain = load(&fixture("harbour.toml"));
    let expected = vec![
        ("2025-SON".to_owned(), 2, 2, 91),
        ("2025-DJF".to_owned(), 1, 2, 90),
    ];
    assert_eq!(summary(&plain), expected);
    assert!(!plain.summary.was_sorted);
    assert_eq!(plain.daily.sampling_interval_s, 6 * 3600);
    // 3.4 ft on 2 December is the season's highest reading although that day is unobserved.
    let djf_max = plain.seasons.rows[1].max_level_m.expect("DJF has readings");
    assert!((djf_max - 3.4 * 0.3048).abs() < 1e-12);
    // The same bytes gzip-compressed under a name that does not say so.
    let gzip = load(&fixture("harbour-gzip.toml"));
    assert_eq!(gzip.seasons, plain.seasons);
    assert_eq!(gzip.summary.monthly, plain.summary.monthly);
}

// ---- the independent naive counter ----

/// SplitMix64 (Steele, Lea and Flood 2014), enough for a reproducible test record.
struct SplitMix(u64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }

    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// The proleptic Gregorian date of a day count since 1970-01-01 (H. Hinnant,
/// `civil_from_days`).
fn civil_from_days(z: i64) -> (i32, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let year = (yoe + era * 400 + i64::from(month <= 2)) as i32;
    (year, month, day)
}

fn days_in_month(year: i32, month: u32) -> u32 {
    let leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
    [
        31,
        if leap { 29 } else { 28 },
        31,
        30,
        31,
        30,
        31,
        31,
        30,
        31,
        30,
        31,
    ][month as usize - 1]
}

/// "YYYY-MM-DDTHH:MM:SS" of a Unix time shifted by `offset_s`.
fn wall_clock(unix: i64, offset_s: i64, seconds: bool) -> String {
    let local = unix + offset_s;
    let (y, m, d) = civil_from_days(local.div_euclid(86_400));
    let s = local.rem_euclid(86_400);
    let mut text = format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}", s / 3600, s / 60 % 60);
    if seconds {
        write!(text, ":{:02}", s % 60).expect("writing to a String");
    }
    text
}

/// The meteorological season label of a date (DJF belongs to December's year).
fn meteorological_label(year: i32, month: u32) -> String {
    match month {
        12 => format!("{year}-DJF"),
        1 | 2 => format!("{}-DJF", year - 1),
        3..=5 => format!("{year}-MAM"),
        6..=8 => format!("{year}-JJA"),
        _ => format!("{year}-SON"),
    }
}

fn season_calendar_days(label: &str) -> u32 {
    let (year, name) = label.split_once('-').expect("label has a dash");
    let year: i32 = year.parse().expect("label year");
    let months: [(i32, u32); 3] = match name {
        "DJF" => [(year, 12), (year + 1, 1), (year + 1, 2)],
        "MAM" => [(year, 3), (year, 4), (year, 5)],
        "JJA" => [(year, 6), (year, 7), (year, 8)],
        _ => [(year, 9), (year, 10), (year, 11)],
    };
    months.iter().map(|&(y, m)| days_in_month(y, m)).sum()
}

struct Generated {
    csv: String,
    /// (unix time, level in metres) of every reading with a level, in generation order.
    readings: Vec<(i64, f64)>,
}

const OFFSET_S: i64 = -5 * 3600;
const THRESHOLD_M: f64 = 0.85;

/// Three years of hourly levels in feet with outages, partial days, missing values in all
/// three spellings, mixed time shapes, and blocks of rows in shuffled order.
fn generate(seed: u64) -> Generated {
    let mut rng = SplitMix(seed);
    let start = 1_559_347_200; // 2019-06-01T00:00:00Z
    let hours = 3 * 365 * 24;
    let mut rows: Vec<String> = Vec::new();
    let mut readings = Vec::new();
    let mut outage_left = 0;
    for h in 0..hours {
        if outage_left == 0 && rng.below(2000) == 0 {
            outage_left = 1 + rng.below(24 * 20);
        }
        if outage_left > 0 {
            outage_left -= 1;
            continue;
        }
        let t = start + h * 3600;
        let hours_f = h as f64;
        let metres = 0.55 * (std::f64::consts::TAU * hours_f / 12.42).sin()
            + 0.25 * (std::f64::consts::TAU * hours_f / (24.0 * 14.77)).sin()
            + 0.3 * (rng.unit() - 0.5);
        let thousandths_ft = (metres / 0.3048 * 1000.0).round() as i64;
        let level_text = match rng.below(40) {
            0 => String::new(),
            1 => "NaN".to_owned(),
            2 => "-99999".to_owned(),
            _ => {
                let sign = if thousandths_ft < 0 { "-" } else { "" };
                let a = thousandths_ft.abs();
                readings.push((t, thousandths_ft as f64 / 1000.0 * 0.3048));
                format!("{sign}{}.{:03}", a / 1000, a % 1000)
            }
        };
        let time_text = match rng.below(3) {
            0 => format!("{}Z", wall_clock(t, 0, true)),
            1 => format!("{}-05:00", wall_clock(t, OFFSET_S, true)),
            _ => format!("{}+0300", wall_clock(t, 3 * 3600, false)),
        };
        rows.push(format!("{time_text},{level_text}"));
    }
    let mut blocks: Vec<Vec<String>> = rows.chunks(500).map(<[String]>::to_vec).collect();
    for i in (1..blocks.len()).rev() {
        let j = rng.below(i as u64 + 1) as usize;
        blocks.swap(i, j);
    }
    let mut csv = String::from("time,level\n");
    for row in blocks.into_iter().flatten() {
        csv.push_str(&row);
        csv.push('\n');
    }
    Generated { csv, readings }
}

/// Season label -> (flood days, observed days, calendar days, max level), counted naively.
fn naive_counts(readings: &[(i64, f64)]) -> HashMap<String, (u32, u32, u32, f64)> {
    let mut days: HashMap<(i32, u32, u32), (u32, f64)> = HashMap::new();
    for &(t, level) in readings {
        let date = civil_from_days((t + OFFSET_S).div_euclid(86_400));
        let entry = days.entry(date).or_insert((0, f64::NEG_INFINITY));
        entry.0 += 1;
        entry.1 = entry.1.max(level);
    }
    let mut seasons: HashMap<String, (u32, u32, u32, f64)> = HashMap::new();
    for (&(y, m, _), &(count, max)) in &days {
        let label = meteorological_label(y, m);
        let calendar = season_calendar_days(&label);
        let entry = seasons
            .entry(label)
            .or_insert((0, 0, calendar, f64::NEG_INFINITY));
        // Hourly: 24 readings expected; a day needs 75 % of them.
        let observed = f64::from(count) >= 0.75 * 24.0;
        entry.1 += u32::from(observed);
        entry.0 += u32::from(observed && max >= THRESHOLD_M);
        entry.3 = entry.3.max(max);
    }
    seasons
}

#[test]
fn generated_record_matches_a_naive_count() {
    let generated = generate(20_260_105);
    let dir = std::env::temp_dir().join(format!("tidetally-ingest-ref-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    std::fs::write(dir.join("levels.csv"), &generated.csv).expect("write levels");
    let toml = format!(
        r#"id = "generated"
name = "Generated gauge"
latitude = 40.0
longitude = -50.0
datum = "TEST"
flood_threshold_m = {THRESHOLD_M}
utc_offset = "-05:00"
coast_orientation_deg = 90.0

[levels]
file = "levels.csv"
units = "ft"
missing_sentinel = -99999.0
"#
    );
    std::fs::write(dir.join("generated.toml"), toml).expect("write toml");
    let record = load(&dir.join("generated.toml"));
    std::fs::remove_dir_all(&dir).expect("clean up temp dir");

    let naive = naive_counts(&generated.readings);
    assert_eq!(record.daily.sampling_interval_s, 3600);
    assert_eq!(record.seasons.rows.len(), naive.len(), "same seasons");
    let mut flood_total = 0;
    for row in &record.seasons.rows {
        let &(flood, observed, calendar, max) = naive
            .get(&row.label)
            .unwrap_or_else(|| panic!("naive count lacks {}", row.label));
        assert_eq!(
            (row.flood_days, row.observed_days, row.calendar_days),
            (flood, observed, calendar),
            "{}",
            row.label
        );
        // Same arithmetic on the same decimal text: identical bits expected.
        assert_eq!(row.max_level_m, Some(max), "{}", row.label);
        flood_total += flood;
    }
    // The generated record must exercise the checks: floods, gaps and an excluded season.
    assert!(flood_total > 20, "only {flood_total} flood days");
    assert!(record.seasons.rows.iter().any(|r| !r.included));
    assert!(record.seasons.rows.iter().filter(|r| r.included).count() >= 6);
    assert!(record.summary.missing > 500);
    assert!(!record.summary.was_sorted);
}

// The demo generator counts flood days from the files it writes with its own code
// (demo-data/truth-expected-counts.csv); our reading of the same files must agree on every
// season of every demo gauge. Synthetic truth: the demo coastline is invented.
#[test]
fn demo_gauges_agree_with_the_generators_own_count() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let truth =
        std::fs::read_to_string(root.join("truth-expected-counts.csv")).expect("demo truth table");
    let mut lines = truth.lines();
    let header: Vec<&str> = lines.next().expect("header").split(',').collect();
    let column = |name: &str| {
        header
            .iter()
            .position(|h| *h == name)
            .unwrap_or_else(|| panic!("truth table lacks {name}"))
    };
    let (g, s, o, f) = (
        column("gauge"),
        column("season"),
        column("observed_days"),
        column("flood_days"),
    );
    let mut expected: HashMap<String, HashMap<String, (u32, u32)>> = HashMap::new();
    for line in lines {
        let fields: Vec<&str> = line.split(',').collect();
        let counts = (
            fields[f].parse().expect("flood_days"),
            fields[o].parse().expect("observed_days"),
        );
        expected
            .entry(fields[g].to_owned())
            .or_default()
            .insert(fields[s].to_owned(), counts);
    }
    assert!(expected.len() >= 2, "demo gauges present");
    for (gauge, seasons) in &expected {
        let record = load(&root.join("gauges").join(format!("{gauge}.toml")));
        for row in &record.seasons.rows {
            if let Some(&want) = seasons.get(&row.label) {
                assert_eq!(
                    (row.flood_days, row.observed_days),
                    want,
                    "{gauge} {}",
                    row.label
                );
            }
        }
        let covered = record
            .seasons
            .rows
            .iter()
            .filter(|r| seasons.contains_key(&r.label))
            .count();
        assert_eq!(
            covered,
            seasons.len(),
            "{gauge}: every truth season is in our table"
        );
    }
}
