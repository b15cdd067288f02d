//! Checking an uploaded CSV series with the model's own parsers (`model::ingest` for water
//! levels, `model::drivers` for ENSO, RMM and wind), so an upload is accepted exactly when
//! the pipeline can read it. The model's errors are mapped into [`UploadError`], keeping
//! line and field; the upload's label (e.g. `water levels CSV`) stands in for the file name.

use chrono::{DateTime, FixedOffset, SecondsFormat};
use tidetally_model::drivers::{DriverParseError, EnsoSeries, RmmSeries, WindSeries};
use tidetally_model::ingest::{self, IngestError, IngestOptions};

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
}

/// What a checked CSV holds.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ScanSummary {
    /// Data rows, missing values included.
    pub rows: u64,
    /// Water levels: the earliest reading with a level, RFC 3339 UTC. Empty for driver
    /// series: their parsers keep no time range and nothing downstream stores one.
    pub first: String,
    /// Water levels: the latest reading with a level, RFC 3339 UTC. Empty for driver series.
    pub last: String,
}

/// Checks a CSV series of `kind` with the model's parser for it.
///
/// Water levels are read with default [`IngestOptions`] (metres, no sentinel, UTC days):
/// units, sentinel and offset change values and calendar days, not what parses, and the
/// pipeline reads the stored file again with the gauge's own options. Wind is read with
/// UTC days for the same reason.
pub fn scan_csv(kind: CsvKind, bytes: &[u8]) -> Result<ScanSummary, UploadError> {
    let what = kind.describe();
    // The model's driver series keep only rows with a value; the receipt counts every data
    // row, as the model's CSV reader saw them (same reader, blank lines skipped).
    let driver_rows = || ScanSummary {
        rows: data_records(bytes),
        first: String::new(),
        last: String::new(),
    };
    match kind {
        CsvKind::Levels => scan_levels_with(what, bytes, &IngestOptions::default()),
        CsvKind::Enso => EnsoSeries::parse(bytes, what)
            .map(|_| driver_rows())
            .map_err(|e| driver_error(what, e)),
        CsvKind::Rmm => RmmSeries::parse(bytes, what)
            .map(|_| driver_rows())
            .map_err(|e| driver_error(what, e)),
        CsvKind::Wind => WindSeries::parse(bytes, what, utc())
            .map(|_| driver_rows())
            .map_err(|e| driver_error(what, e)),
    }
}

/// The data records of a CSV the model's driver parser has accepted.
fn data_records(bytes: &[u8]) -> u64 {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(bytes);
    reader.byte_records().filter(Result::is_ok).count() as u64
}

fn utc() -> FixedOffset {
    FixedOffset::east_opt(0).expect("a zero offset is valid")
}

/// Checks a water-level CSV read as its gauge reads it (units, sentinel, local days), so
/// the plausible-range check applies to metres.
pub fn scan_levels(bytes: &[u8], options: &IngestOptions) -> Result<ScanSummary, UploadError> {
    scan_levels_with(CsvKind::Levels.describe(), bytes, options)
}

fn scan_levels_with(
    what: &str,
    bytes: &[u8],
    options: &IngestOptions,
) -> Result<ScanSummary, UploadError> {
    let series = ingest::read_levels(bytes, options, what).map_err(|e| levels_error(what, e))?;
    let rows = series.times.len() as u64 + series.missing;
    if rows == 0 {
        return Err(UploadError::Empty {
            what: what.to_owned(),
        });
    }
    let (Some(&first), Some(&last)) = (series.times.first(), series.times.last()) else {
        return Err(UploadError::Document {
            what: what.to_owned(),
            message: format!("all {rows} rows have a missing level (empty or NaN)"),
        });
    };
    Ok(ScanSummary {
        rows,
        first: rfc3339(first),
        last: rfc3339(last),
    })
}

/// Unix seconds as RFC 3339 UTC; the ingest module keeps times within 1800 to 2200.
fn rfc3339(seconds: i64) -> String {
    DateTime::from_timestamp(seconds, 0)
        .map(|t| t.to_rfc3339_opts(SecondsFormat::Secs, true))
        .unwrap_or_else(|| seconds.to_string())
}

const LEVELS_HEADERS: &str = "time,level or time,level,flag";

fn levels_error(what: &str, error: IngestError) -> UploadError {
    let what = what.to_owned();
    match error {
        IngestError::Io { error, .. } => UploadError::Document {
            what,
            message: format!("read failed: {error}"),
        },
        IngestError::Empty { .. } => UploadError::Empty { what },
        IngestError::BadHeader { line: 1, found, .. } => UploadError::Header {
            what,
            found,
            expected: LEVELS_HEADERS.to_owned(),
        },
        IngestError::BadHeader { line, found, .. } => UploadError::Row {
            what,
            line,
            message: format!("header {found:?} must be {LEVELS_HEADERS}"),
        },
        IngestError::Malformed {
            line,
            field: "row",
            expected,
            text,
            ..
        } => UploadError::Row {
            what,
            line,
            message: format!("expected {expected}, got {text:?}"),
        },
        IngestError::Malformed {
            line,
            field,
            expected,
            text,
            ..
        } => UploadError::Field {
            what,
            line,
            field: field.to_owned(),
            message: format!("expected {expected}, got {text:?}"),
        },
        IngestError::Duplicate {
            first_line,
            second_line,
            time,
            ..
        } => UploadError::Duplicate {
            what,
            field: "time".to_owned(),
            value: time,
            first_line,
            second_line,
        },
    }
}

fn driver_error(what: &str, error: DriverParseError) -> UploadError {
    let what = what.to_owned();
    match error {
        // The CSV reader's message names the record and line.
        DriverParseError::Read { message, .. } => UploadError::Document {
            what,
            message: format!("cannot read: {message}"),
        },
        DriverParseError::BadHeader {
            found, expected, ..
        } => UploadError::Header {
            what,
            found,
            expected,
        },
        DriverParseError::BadField {
            line,
            field,
            value,
            problem,
            ..
        } => UploadError::Field {
            what,
            line,
            field,
            message: format!("{value:?} {problem}"),
        },
        DriverParseError::Duplicate {
            line,
            first_line,
            field,
            value,
            ..
        } => UploadError::Duplicate {
            what,
            field,
            value,
            first_line,
            second_line: line,
        },
        DriverParseError::Empty { .. } => UploadError::Empty { what },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_levels_file_is_summarised() {
        let csv = "time,level\n2026-01-01T02:00:00Z,0.5\n2026-01-01T00:00:00-05:00,\n\
                   2026-01-01T00:00:00Z,NaN\n2026-01-01T03:00:00+02:00,0.25\n";
        let s = scan_csv(CsvKind::Levels, csv.as_bytes()).unwrap();
        assert_eq!(s.rows, 4);
        // The span is that of readings with a level (missing ones at both ends left out), in UTC.
        assert_eq!(s.first, "2026-01-01T01:00:00Z");
        assert_eq!(s.last, "2026-01-01T02:00:00Z");
    }

    #[test]
    fn levels_errors_name_line_and_field() {
        let bad_level = "time,level,flag\n2026-01-01T00:00:00Z,0.5,\n2026-01-01T01:00:00Z,high,\n";
        let err = scan_csv(CsvKind::Levels, bad_level.as_bytes()).unwrap_err();
        assert!(
            matches!(&err, UploadError::Field { line: 3, field, .. } if field == "level"),
            "{err:?}"
        );
        assert!(
            err.to_string()
                .starts_with("water levels CSV: line 3, field level: expected "),
            "{err}"
        );
        assert!(err.to_string().contains("\"high\""), "{err}");
        let bad_time = scan_csv(CsvKind::Levels, b"time,level\n2026-13-01T00:00:00Z,1\n");
        assert!(
            matches!(&bad_time, Err(UploadError::Field { line: 2, field, .. }) if field == "time"),
            "{bad_time:?}"
        );
        let dup = "time,level\n2026-01-01T05:00:00Z,1\n2026-01-01T00:00:00-05:00,2\n";
        let err = scan_csv(CsvKind::Levels, dup.as_bytes()).unwrap_err();
        assert!(
            matches!(
                &err,
                UploadError::Duplicate {
                    first_line: 2,
                    second_line: 3,
                    field,
                    ..
                } if field == "time"
            ),
            "{err:?}"
        );
        let header = scan_csv(CsvKind::Levels, b"when,level\n2026-01-01T00:00:00Z,1\n");
        assert!(
            matches!(header, Err(UploadError::Header { .. })),
            "{header:?}"
        );
        let wide = scan_csv(CsvKind::Levels, b"time,level\n2026-01-01T00:00:00Z,1,x\n");
        assert!(
            matches!(wide, Err(UploadError::Row { line: 2, .. })),
            "{wide:?}"
        );
        assert!(matches!(
            scan_csv(CsvKind::Levels, b""),
            Err(UploadError::Empty { .. })
        ));
        let all_missing = scan_csv(CsvKind::Levels, b"time,level\n2026-01-01T00:00:00Z,\n");
        assert!(
            matches!(all_missing, Err(UploadError::Document { .. })),
            "{all_missing:?}"
        );
    }

    #[test]
    fn driver_errors_name_line_and_field() {
        let header = scan_csv(CsvKind::Enso, b"date,value\n2026-01,1\n").unwrap_err();
        assert!(header.to_string().contains("month,anomaly"), "{header}");
        let short = scan_csv(CsvKind::Rmm, b"date,rmm1,rmm2\n2026-01-01,1\n").unwrap_err();
        assert!(short.to_string().contains("line: 2"), "{short}");
        let month = scan_csv(CsvKind::Enso, b"month,anomaly\n2026-1,1\n").unwrap_err();
        assert!(
            month
                .to_string()
                .starts_with("ENSO CSV: line 2, field month: "),
            "{month}"
        );
        let value = scan_csv(CsvKind::Rmm, b"date,rmm1,rmm2\n2026-01-01,1,x\n").unwrap_err();
        assert!(
            matches!(&value, UploadError::Field { line: 2, field, .. } if field == "rmm2"),
            "{value:?}"
        );
        let dup = scan_csv(
            CsvKind::Rmm,
            b"date,rmm1,rmm2\n2026-01-01,1,1\n2026-01-01,2,2\n",
        )
        .unwrap_err();
        assert!(
            matches!(
                dup,
                UploadError::Duplicate {
                    first_line: 2,
                    second_line: 3,
                    ..
                }
            ),
            "{dup:?}"
        );
        assert!(matches!(
            scan_csv(CsvKind::Enso, b"month,anomaly\n"),
            Err(UploadError::Empty { .. })
        ));
    }

    #[test]
    fn driver_rows_count_every_data_row() {
        let enso = scan_csv(CsvKind::Enso, b"month,anomaly\n2026-01,0.5\n\n2026-02,\n").unwrap();
        assert_eq!(enso.rows, 2);
        assert!(enso.first.is_empty() && enso.last.is_empty());
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
        let bearing = scan_csv(
            CsvKind::Wind,
            b"time,speed,from_deg\n2026-01-01T00:00:00Z,4,400\n",
        )
        .unwrap_err();
        assert!(
            bearing.to_string().contains("line 2, field from_deg"),
            "{bearing}"
        );
    }
}
