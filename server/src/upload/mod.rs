//! Checking uploads before anything is stored: transfer gzip, CSV series (water levels and
//! drivers), gauge TOML and ENSO forecast JSON. Every format is checked by the model's own
//! parser for it (`ingest`, `drivers`, `gauge`), so an upload is accepted exactly when the
//! pipeline can read it; this module only maps the model's errors into [`UploadError`]. Every
//! error names what was uploaded (in place of a file name), and the line and field where the
//! model's parser knows them.

mod body;
mod csv_scan;
mod forecast;
mod gauge_toml;

pub use body::{MAX_DECOMPRESSED_BYTES, decode_body};
pub use csv_scan::{CsvKind, ScanSummary, scan_csv, scan_levels};
pub use forecast::parse_enso_forecast;
pub use gauge_toml::{DriverFiles, GaugeMeta, parse_gauge_toml};

/// Why an upload was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum UploadError {
    /// The body (after gzip) is larger than allowed.
    #[error("{what}: more than {limit} bytes after decompression")]
    TooLarge {
        /// What was uploaded.
        what: String,
        /// The limit in bytes.
        limit: usize,
    },
    /// The body starts like gzip but does not decompress.
    #[error("{what}: gzip stream is corrupt: {message}")]
    Gzip {
        /// What was uploaded.
        what: String,
        /// The decoder's message.
        message: String,
    },
    /// The body is empty or has no data rows.
    #[error("{what}: no data rows")]
    Empty {
        /// What was uploaded.
        what: String,
    },
    /// The header row is not one of the accepted ones.
    #[error("{what}: line 1: header {found:?} must be {expected}")]
    Header {
        /// What was uploaded.
        what: String,
        /// The header found.
        found: String,
        /// The accepted headers.
        expected: String,
    },
    /// A bad value in a data row.
    #[error("{what}: line {line}, field {field}: {message}")]
    Field {
        /// What was uploaded.
        what: String,
        /// 1-based line number.
        line: u64,
        /// The column name.
        field: String,
        /// What is wrong.
        message: String,
    },
    /// A row that is not CSV of the right width, or not UTF-8.
    #[error("{what}: line {line}: {message}")]
    Row {
        /// What was uploaded.
        what: String,
        /// 1-based line number.
        line: u64,
        /// What is wrong.
        message: String,
    },
    /// The same time appears twice.
    #[error("{what}: line {second_line}, field {field}: time {value} repeats line {first_line}")]
    Duplicate {
        /// What was uploaded.
        what: String,
        /// The time column name.
        field: String,
        /// The repeated value.
        value: String,
        /// The first line with it.
        first_line: u64,
        /// The line repeating it.
        second_line: u64,
    },
    /// A document (TOML or JSON) that does not parse or fails a check.
    #[error("{what}: {message}")]
    Document {
        /// What was uploaded, e.g. `gauge TOML`.
        what: String,
        /// The message, with line and field where known.
        message: String,
    },
}

#[cfg(test)]
mod demo_files {
    use super::*;

    fn demo(path: &str) -> Vec<u8> {
        let full = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../demo-data")
            .join(path);
        std::fs::read(&full).unwrap_or_else(|e| panic!("{}: {e}", full.display()))
    }

    #[test]
    fn the_demo_coastline_passes_every_check() {
        let text = String::from_utf8(demo("gauges/port-tamsin.toml")).unwrap();
        let meta = parse_gauge_toml(&text).unwrap();
        assert_eq!(meta.id, "port-tamsin");
        let levels = decode_body(
            "levels",
            &demo(&format!("gauges/{}", meta.levels_file)),
            MAX_DECOMPRESSED_BYTES,
        )
        .unwrap();
        let summary = scan_csv(CsvKind::Levels, &levels).unwrap();
        assert!(
            summary.rows > 0 && summary.first < summary.last,
            "{summary:?}"
        );
        for (kind, file) in [
            (CsvKind::Enso, "drivers/enso-monthly.csv"),
            (CsvKind::Rmm, "drivers/rmm-daily.csv"),
            (CsvKind::Wind, "gauges/port-tamsin-wind.csv"),
        ] {
            assert!(scan_csv(kind, &demo(file)).unwrap().rows > 0, "{file}");
        }
        // It carries a top-level `note`, which the model allows.
        let forecast = parse_enso_forecast(&demo("drivers/enso-forecast-2026-DJF.json")).unwrap();
        assert_eq!(forecast.season, "2026-DJF");
    }
}

#[cfg(test)]
mod no_panic {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn csv_checks_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
            for kind in [CsvKind::Levels, CsvKind::Enso, CsvKind::Rmm, CsvKind::Wind] {
                let _ = scan_csv(kind, &bytes);
            }
            let _ = decode_body("x", &bytes, 1000);
            let _ = parse_enso_forecast(&bytes);
        }

        #[test]
        fn csv_checks_never_panic_on_near_valid_rows(
            rows in proptest::collection::vec(("[0-9T:Z+-]{0,26}", "[-0-9.eNa]{0,8}"), 0..20)
        ) {
            let mut text = String::from("time,level\n");
            for (time, level) in rows {
                text.push_str(&format!("{time},{level}\n"));
            }
            let _ = scan_csv(CsvKind::Levels, text.as_bytes());
        }

        #[test]
        fn driver_checks_never_panic_on_near_valid_rows(
            rows in proptest::collection::vec(
                ("[0-9T:Z+-]{0,26}", "[-0-9.eNa]{0,6}", "[-0-9.eNa]{0,6}"), 0..20)
        ) {
            for (kind, header) in [
                (CsvKind::Enso, "month,anomaly"),
                (CsvKind::Rmm, "date,rmm1,rmm2"),
                (CsvKind::Wind, "time,u,v"),
                (CsvKind::Wind, "time,speed,from_deg"),
            ] {
                let mut text = format!("{header}\n");
                for (time, a, b) in &rows {
                    if kind == CsvKind::Enso {
                        text.push_str(&format!("{time},{a}\n"));
                    } else {
                        text.push_str(&format!("{time},{a},{b}\n"));
                    }
                }
                let _ = scan_csv(kind, text.as_bytes());
            }
        }

        #[test]
        fn gauge_toml_check_never_panics(text in ".{0,300}") {
            let _ = parse_gauge_toml(&text);
        }

        #[test]
        fn gzip_bodies_of_any_content_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
            let mut gz = vec![0x1f, 0x8b];
            gz.extend_from_slice(&bytes);
            let _ = decode_body("x", &gz, 1000);
        }
    }
}
