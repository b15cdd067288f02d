//! An independent recount of the committed demo files: read each gauge's TOML and gzip levels
//! file the way a user would (RFC 3339 times, units, missing markers, local standard days,
//! 75% completeness), count DJF/MAM/JJA/SON flood days and observed days, and compare them
//! with the truth table the generator wrote. Shares no code with the generator.

use std::collections::BTreeMap;
use std::fs;
use std::io::Read;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Datelike, Duration, NaiveDate};
use flate2::read::GzDecoder;

fn demo_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the generator crate sits inside demo-data")
        .to_path_buf()
}

/// `key = value` lines of a flat TOML file, values with quotes stripped (first occurrence).
fn toml_values(text: &str) -> BTreeMap<String, String> {
    let mut out = BTreeMap::new();
    for line in text.lines() {
        let line = line.split('#').next().unwrap_or("").trim();
        if let Some((k, v)) = line.split_once('=') {
            out.entry(k.trim().to_owned())
                .or_insert_with(|| v.trim().trim_matches('"').to_owned());
        }
    }
    out
}

fn season_label(date: NaiveDate) -> String {
    let (year, name) = match date.month() {
        12 => (date.year(), "DJF"),
        1 | 2 => (date.year() - 1, "DJF"),
        3..=5 => (date.year(), "MAM"),
        6..=8 => (date.year(), "JJA"),
        _ => (date.year(), "SON"),
    };
    format!("{year}-{name}")
}

/// Per season: (observed days, flood days), recounted from the files.
fn recount(toml_path: &Path) -> BTreeMap<String, (u32, u32)> {
    let toml = toml_values(&fs::read_to_string(toml_path).expect("gauge TOML is committed"));
    let threshold: f64 = toml["flood_threshold_m"]
        .parse()
        .expect("threshold is a number");
    let offset = &toml["utc_offset"];
    let sign = if offset.starts_with('-') { -1 } else { 1 };
    let offset_minutes = sign
        * (offset[1..3].parse::<i64>().expect("offset hours") * 60
            + offset[4..6].parse::<i64>().expect("offset minutes"));
    let to_metres = match toml["units"].as_str() {
        "m" => 1.0,
        "ft" => 0.3048, // the international foot (exact by definition)
        other => panic!("unexpected units {other}"),
    };
    let sentinel: Option<f64> = toml
        .get("missing_sentinel")
        .map(|s| s.parse().expect("number"));
    let file = toml_path.parent().expect("a folder").join(&toml["file"]);
    let mut text = String::new();
    GzDecoder::new(fs::File::open(file).expect("levels file is committed"))
        .read_to_string(&mut text)
        .expect("levels file is gzip text");

    // local date -> (present readings, highest level in metres)
    let mut days: BTreeMap<NaiveDate, (u32, f64)> = BTreeMap::new();
    let mut times: Vec<i64> = Vec::new();
    for line in text.lines().skip(1) {
        let (time, value) = line.split_once(',').expect("two columns");
        let t = DateTime::parse_from_rfc3339(time)
            .expect("RFC 3339 time")
            .timestamp();
        times.push(t);
        let local = (DateTime::from_timestamp(t, 0)
            .expect("in range")
            .naive_utc()
            + Duration::minutes(offset_minutes))
        .date();
        let entry = days.entry(local).or_insert((0, f64::NEG_INFINITY));
        let level: f64 = match value {
            "" | "NaN" => continue,
            v => v.parse().expect("level is a number"),
        };
        if sentinel == Some(level) {
            continue;
        }
        entry.0 += 1;
        entry.1 = entry.1.max(level * to_metres);
    }
    times.sort_unstable();
    let interval = times
        .windows(2)
        .map(|w| w[1] - w[0])
        .filter(|d| *d > 0)
        .min()
        .expect("more than one reading");
    let expected_per_day = (86_400 / interval) as f64;
    let mut out: BTreeMap<String, (u32, u32)> = BTreeMap::new();
    for (date, (present, max)) in days {
        let entry = out.entry(season_label(date)).or_insert((0, 0));
        if f64::from(present) >= 0.75 * expected_per_day {
            entry.0 += 1;
            entry.1 += u32::from(max >= threshold);
        }
    }
    out
}

/// Truth rows: (gauge, season) -> (observed days, flood days, expected flood days).
fn truth_rows() -> BTreeMap<(String, String), (u32, u32, f64)> {
    let text = fs::read_to_string(demo_dir().join("truth-expected-counts.csv"))
        .expect("truth table is committed");
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().expect("a header").split(',').collect();
    let col = |name: &str| {
        header
            .iter()
            .position(|h| *h == name)
            .expect("column present")
    };
    let (g, s, o, f, e) = (
        col("gauge"),
        col("season"),
        col("observed_days"),
        col("flood_days"),
        col("expected_flood_days"),
    );
    lines
        .map(|l| {
            let v: Vec<&str> = l.split(',').collect();
            (
                (v[g].to_owned(), v[s].to_owned()),
                (
                    v[o].parse().expect("integer"),
                    v[f].parse().expect("integer"),
                    v[e].parse().expect("number"),
                ),
            )
        })
        .collect()
}

fn gauge_ids() -> Vec<String> {
    let mut ids: Vec<String> = fs::read_dir(demo_dir().join("gauges"))
        .expect("gauges folder")
        .filter_map(|e| {
            let name = e
                .expect("dir entry")
                .file_name()
                .into_string()
                .expect("utf-8 name");
            name.strip_suffix(".toml").map(str::to_owned)
        })
        .collect();
    ids.sort();
    ids
}

#[test]
fn recounted_flood_days_match_the_truth_table() {
    let truth = truth_rows();
    let ids = gauge_ids();
    assert_eq!(ids.len(), 4);
    for id in ids {
        let counts = recount(&demo_dir().join("gauges").join(format!("{id}.toml")));
        let rows: Vec<_> = truth.iter().filter(|((g, _), _)| *g == id).collect();
        assert!(rows.len() > 80, "{id}: {} seasons", rows.len());
        for ((_, season), (observed, flooded, _)) in rows {
            let (got_observed, got_flooded) = counts.get(season).copied().unwrap_or((0, 0));
            assert_eq!(
                (got_observed, got_flooded),
                (*observed, *flooded),
                "{id} {season}: recount (observed, flood days) vs truth"
            );
        }
    }
}

/// The written counts are one draw from the noise whose expectation the truth states: over a
/// gauge's whole record their totals agree within sampling error. Flood days cluster in runs
/// (neighbouring days share spring tides and red noise), so the tolerance allows a variance of
/// three times the Poisson variance, at four standard deviations.
#[test]
fn written_counts_agree_with_expected_counts_overall() {
    let truth = truth_rows();
    for id in gauge_ids() {
        let (actual, expected) = truth
            .iter()
            .filter(|((g, _), _)| *g == id)
            .fold((0.0, 0.0), |(a, e), (_, (_, f, x))| {
                (a + f64::from(*f), e + x)
            });
        let tolerance = 4.0 * (3.0 * expected).sqrt();
        assert!(expected > 50.0, "{id}: expected total {expected}");
        assert!(
            (actual - expected).abs() < tolerance,
            "{id}: written total {actual} vs expected {expected} (tolerance {tolerance:.1})"
        );
    }
}
