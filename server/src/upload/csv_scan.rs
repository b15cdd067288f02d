//! A checking pass over an uploaded CSV series: the header must be one of the documented
//! ones, every time must parse, every value must be a number or missing, and no time may
//! repeat. The pipeline parses the stored file again with the model's own readers.

use std::collections::HashMap;

use chrono::{DateTime, NaiveDate};

use super::UploadError;

/// The documented CSV series (DEVELOPERS.md, "File formats").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CsvKind {
    /// `time,level[,flag]`.
    Levels,
    /// `month,anomaly`.
    Enso,
    /// `date,rmm1,rmm2`.
    Rmm,
    /// `time,u,v` or `time,speed,from_deg`.
    Wind,
}

#[derive(Debug, Clone, Copy)]
enum Column {
    /// ISO 8601 time with `Z` or an offset.
    Instant,
    /// `YYYY-MM`.
    Month,
    /// `YYYY-MM-DD`.
    Date,
    /// A date or an ISO 8601 time.
    DateOrInstant,
    /// A number; empty or `NaN` is missing.
    Value,
    /// Free text.
    Text,
}

impl CsvKind {
    /// What the upload is, for messages.
    pub fn describe(self) -> &'static str {
        match self {
            CsvKind::Levels => "water levels CSV",
            CsvKind::Enso => "ENSO CSV",
            CsvKind::Rmm => "RMM CSV",
            CsvKind::Wind => "wind CSV",
        }
    }

    fn headers(self) -> &'static [&'static [(&'static str, Column)]] {
        use Column::*;
        match self {
            CsvKind::Levels => &[
                &[("time", Instant), ("level", Value)],
                &[("time", Instant), ("level", Value), ("flag", Text)],
            ],
            CsvKind::Enso => &[&[("month", Month), ("anomaly", Value)]],
            CsvKind::Rmm => &[&[("date", Date), ("rmm1", Value), ("rmm2", Value)]],
            CsvKind::Wind => &[
                &[("time", DateOrInstant), ("u", Value), ("v", Value)],
                &[
                    ("time", DateOrInstant),
                    ("speed", Value),
                    ("from_deg", Value),
                ],
            ],
        }
    }
}

/// What a checked CSV holds.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ScanSummary {
    /// Data rows.
    pub rows: u64,
    /// Earliest time, as written.
    pub first: String,
    /// Latest time, as written.
    pub last: String,
}

/// Checks a CSV series of `kind`.
pub fn scan_csv(kind: CsvKind, bytes: &[u8]) -> Result<ScanSummary, UploadError> {
    let what = kind.describe();
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(bytes);
    let header = reader
        .byte_headers()
        .map_err(|err| row_error(what, &err))?
        .clone();
    let names: Vec<String> = header
        .iter()
        .map(|h| {
            String::from_utf8_lossy(h)
                .trim_start_matches('\u{feff}')
                .to_ascii_lowercase()
        })
        .collect();
    let columns = kind
        .headers()
        .iter()
        .find(|cols| cols.len() == names.len() && cols.iter().zip(&names).all(|(c, n)| c.0 == n))
        .ok_or_else(|| UploadError::Header {
            what: what.to_owned(),
            found: names.join(","),
            expected: kind
                .headers()
                .iter()
                .map(|cols| cols.iter().map(|c| c.0).collect::<Vec<_>>().join(","))
                .collect::<Vec<_>>()
                .join(" or "),
        })?;

    let mut seen: HashMap<i64, u64> = HashMap::new();
    let mut first: Option<(i64, String)> = None;
    let mut last: Option<(i64, String)> = None;
    let mut rows = 0u64;
    let mut record = csv::ByteRecord::new();
    loop {
        match reader.read_byte_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {}
            Err(err) => return Err(row_error(what, &err)),
        }
        let line = record.position().map_or(0, |p| p.line());
        rows += 1;
        let mut key = None;
        for (index, (name, column)) in columns.iter().enumerate() {
            let raw = record.get(index).unwrap_or_default();
            let text = std::str::from_utf8(raw).map_err(|_| UploadError::Row {
                what: what.to_owned(),
                line,
                message: "not UTF-8 text".into(),
            })?;
            let field_error = |message: String| UploadError::Field {
                what: what.to_owned(),
                line,
                field: (*name).to_owned(),
                message,
            };
            match column {
                Column::Value => check_value(text).map_err(field_error)?,
                Column::Text => {}
                time_column => {
                    let seconds = parse_time(*time_column, text).map_err(field_error)?;
                    if let Some(&first_line) = seen.get(&seconds) {
                        return Err(UploadError::Duplicate {
                            what: what.to_owned(),
                            field: (*name).to_owned(),
                            value: text.to_owned(),
                            first_line,
                            second_line: line,
                        });
                    }
                    seen.insert(seconds, line);
                    key = Some((seconds, text.to_owned()));
                }
            }
        }
        if let Some((seconds, text)) = key {
            if first.as_ref().is_none_or(|f| seconds < f.0) {
                first = Some((seconds, text.clone()));
            }
            if last.as_ref().is_none_or(|l| seconds > l.0) {
                last = Some((seconds, text));
            }
        }
    }
    match (first, last) {
        (Some(first), Some(last)) => Ok(ScanSummary {
            rows,
            first: first.1,
            last: last.1,
        }),
        _ => Err(UploadError::Empty {
            what: what.to_owned(),
        }),
    }
}

fn row_error(what: &str, err: &csv::Error) -> UploadError {
    let line = err.position().map_or(1, |p| p.line());
    let message = match err.kind() {
        csv::ErrorKind::UnequalLengths {
            expected_len, len, ..
        } => {
            format!("{len} fields where the header has {expected_len}")
        }
        csv::ErrorKind::Utf8 { .. } => "not UTF-8 text".to_owned(),
        _ => "not readable as CSV".to_owned(),
    };
    UploadError::Row {
        what: what.to_owned(),
        line,
        message,
    }
}

fn check_value(text: &str) -> Result<(), String> {
    if text.is_empty() || text.eq_ignore_ascii_case("nan") {
        return Ok(());
    }
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(()),
        _ => Err(format!(
            "{text:?} is not a number (empty or NaN mark a missing value)"
        )),
    }
}

/// Seconds since 1970 of a time cell.
fn parse_time(column: Column, text: &str) -> Result<i64, String> {
    let date = |t: &str| {
        NaiveDate::parse_from_str(t, "%Y-%m-%d")
            .ok()
            .filter(|_| t.len() == 10)
    };
    let seconds_of = |d: NaiveDate| {
        d.and_hms_opt(0, 0, 0)
            .expect("midnight exists")
            .and_utc()
            .timestamp()
    };
    let instant = |t: &str| {
        DateTime::parse_from_rfc3339(t)
            .ok()
            .map(|dt| dt.timestamp())
    };
    let parsed = match column {
        Column::Instant => instant(text),
        Column::Date => date(text).map(seconds_of),
        Column::Month => (text.len() == 7)
            .then(|| date(&format!("{text}-01")))
            .flatten()
            .map(seconds_of),
        Column::DateOrInstant => date(text).map(seconds_of).or_else(|| instant(text)),
        Column::Value | Column::Text => None,
    };
    parsed.ok_or_else(|| {
        let expected = match column {
            Column::Instant => "an ISO 8601 time with Z or an offset, e.g. 2026-01-05T13:00:00Z",
            Column::Date => "a date YYYY-MM-DD",
            Column::Month => "a month YYYY-MM",
            _ => "a date YYYY-MM-DD or an ISO 8601 time with Z or an offset",
        };
        format!("{text:?} is not {expected}")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_levels_file_is_summarised() {
        let csv = "time,level\n2026-01-01T01:00:00Z,0.5\n2026-01-01T00:00:00-05:00,\n\
                   2026-01-01T00:00:00Z,NaN\n";
        let s = scan_csv(CsvKind::Levels, csv.as_bytes()).unwrap();
        assert_eq!(s.rows, 3);
        assert_eq!(s.first, "2026-01-01T00:00:00Z");
        assert_eq!(s.last, "2026-01-01T00:00:00-05:00");
    }

    #[test]
    fn errors_name_line_and_field() {
        let bad_level = "time,level,flag\n2026-01-01T00:00:00Z,0.5,\n2026-01-01T01:00:00Z,high,\n";
        let err = scan_csv(CsvKind::Levels, bad_level.as_bytes()).unwrap_err();
        assert_eq!(
            err.to_string(),
            "water levels CSV: line 3, field level: \"high\" is not a number \
             (empty or NaN mark a missing value)"
        );
        let dup = "time,level\n2026-01-01T05:00:00Z,1\n2026-01-01T00:00:00-05:00,2\n";
        let err = scan_csv(CsvKind::Levels, dup.as_bytes()).unwrap_err();
        assert!(matches!(
            err,
            UploadError::Duplicate {
                first_line: 2,
                second_line: 3,
                ..
            }
        ));
        let header = scan_csv(CsvKind::Enso, b"date,value\n2026-01,1\n").unwrap_err();
        assert!(header.to_string().contains("month,anomaly"), "{header}");
        let short = scan_csv(CsvKind::Rmm, b"date,rmm1,rmm2\n2026-01-01,1\n").unwrap_err();
        assert!(matches!(short, UploadError::Row { line: 2, .. }), "{short}");
        let month = scan_csv(CsvKind::Enso, b"month,anomaly\n2026-1,1\n").unwrap_err();
        assert!(month.to_string().contains("line 2, field month"), "{month}");
        assert!(matches!(
            scan_csv(CsvKind::Enso, b"month,anomaly\n"),
            Err(UploadError::Empty { .. })
        ));
    }

    #[test]
    fn wind_takes_dates_or_times_and_both_headers() {
        assert!(scan_csv(CsvKind::Wind, b"time,u,v\n2026-01-01,1,2\n").is_ok());
        assert!(
            scan_csv(
                CsvKind::Wind,
                b"time,speed,from_deg\n2026-01-01T00:00:00Z,4,270\n"
            )
            .is_ok()
        );
    }
}
