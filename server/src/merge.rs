//! Merging a water-level upload into the stored record: readings at new times are added,
//! readings at stored times with a different level or flag replace the stored ones, and the
//! rest of the stored record stays. Both files have passed the model's level check, so every
//! row here has a valid time; times are compared as instants (`12:00Z` and `07:00-05:00` are
//! the same reading).

use std::collections::BTreeMap;

use tidetally_model::ingest::parse_time;

/// One reading as written: its time text, level text and flag text.
#[derive(Debug, Clone, PartialEq)]
struct Reading {
    time: String,
    level: String,
    flag: String,
}

impl Reading {
    fn same_values(&self, other: &Reading) -> bool {
        let number = |t: &str| t.trim().parse::<f64>().ok();
        let level_same = match (number(&self.level), number(&other.level)) {
            (Some(a), Some(b)) => a == b,
            _ => self.level.trim().eq_ignore_ascii_case(other.level.trim()),
        };
        level_same && self.flag.trim() == other.flag.trim()
    }

    fn has_level(&self) -> bool {
        let t = self.level.trim();
        !t.is_empty() && !t.eq_ignore_ascii_case("nan")
    }
}

/// The readings of a checked level CSV by instant (Unix seconds).
fn readings(csv: &[u8]) -> BTreeMap<i64, Reading> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(csv);
    let mut out = BTreeMap::new();
    for record in reader.records().flatten() {
        let time = record.get(0).unwrap_or_default();
        let Some(instant) = parse_time(time.as_bytes()) else {
            continue;
        };
        out.insert(
            instant,
            Reading {
                time: time.to_owned(),
                level: record.get(1).unwrap_or_default().to_owned(),
                flag: record.get(2).unwrap_or_default().to_owned(),
            },
        );
    }
    out
}

/// What a merge did.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Merged {
    /// The merged CSV.
    pub csv: Vec<u8>,
    /// Readings at times the record did not have.
    pub added: u64,
    /// Readings that replaced a stored one with a different level or flag.
    pub changed: u64,
    /// Readings equal to the stored ones.
    pub unchanged: u64,
}

/// Merges `upload` into `stored` (both checked level CSVs).
pub fn merge_levels(stored: &[u8], upload: &[u8]) -> Merged {
    let mut record = readings(stored);
    let (mut added, mut changed, mut unchanged) = (0, 0, 0);
    for (instant, reading) in readings(upload) {
        match record.get(&instant) {
            None => added += 1,
            Some(old) if old.same_values(&reading) => {
                unchanged += 1;
                continue;
            }
            Some(_) => changed += 1,
        }
        record.insert(instant, reading);
    }
    Merged {
        csv: write(&record),
        added,
        changed,
        unchanged,
    }
}

fn write(record: &BTreeMap<i64, Reading>) -> Vec<u8> {
    let flags = record.values().any(|r| !r.flag.is_empty());
    let mut writer = csv::Writer::from_writer(Vec::new());
    let header: &[&str] = if flags {
        &["time", "level", "flag"]
    } else {
        &["time", "level"]
    };
    // Writing to a Vec cannot fail; a failed row would only be left out.
    let _ = writer.write_record(header);
    for r in record.values() {
        let _ = if flags {
            writer.write_record([&r.time, &r.level, &r.flag])
        } else {
            writer.write_record([&r.time, &r.level])
        };
    }
    writer.into_inner().unwrap_or_default()
}

/// The number of UTC calendar days with at least one level reading in a checked level CSV.
pub fn days_with_data(csv: &[u8]) -> usize {
    let mut days: Vec<i64> = readings(csv)
        .iter()
        .filter(|(_, r)| r.has_level())
        .map(|(t, _)| t.div_euclid(86_400))
        .collect();
    days.dedup();
    days.len()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn new_times_are_added_and_changed_levels_replaced() {
        let stored = b"time,level\n2020-01-01T00:00:00Z,0.5\n2020-01-01T01:00:00Z,0.6\n";
        let upload = b"time,level\n2019-12-31T19:00:00-05:00,0.50\n2020-01-01T01:00:00Z,0.7\n2020-01-02T00:00:00Z,0.1\n";
        let merged = merge_levels(stored, upload);
        assert_eq!((merged.added, merged.changed, merged.unchanged), (1, 1, 1));
        let text = String::from_utf8(merged.csv).unwrap();
        assert_eq!(
            text,
            "time,level\n2020-01-01T00:00:00Z,0.5\n2020-01-01T01:00:00Z,0.7\n2020-01-02T00:00:00Z,0.1\n"
        );
        assert_eq!(days_with_data(text.as_bytes()), 2);
    }

    #[test]
    fn flags_are_kept_and_compared() {
        let stored = b"time,level,flag\n2020-01-01T00:00:00Z,0.5,\n";
        let upload = b"time,level,flag\n2020-01-01T00:00:00Z,0.5,suspect\n";
        let merged = merge_levels(stored, upload);
        assert_eq!(merged.changed, 1);
        assert!(
            String::from_utf8(merged.csv)
                .unwrap()
                .ends_with(",0.5,suspect\n")
        );
    }
}
