//! A bounded fuzz of every upload check (a fixed budget of cases per parser, so CI time is
//! fixed): no input panics, and every refusal is an upload error that starts with what was
//! uploaded, names its line and field where it is a row's, stays short, and answers 4xx.
#![allow(clippy::unwrap_used)]

use proptest::prelude::*;
use tidetally_model::ingest::IngestOptions;
use tidetally_server::error::AppError;
use tidetally_server::upload::{
    self, CsvKind, UploadError, decode_body, parse_enso_forecast, parse_gauge_toml, scan_csv,
};

/// The longest refusal message allowed for these inputs (each at most a few hundred bytes).
const MAX_MESSAGE: usize = 1_000;

fn columns(kind: CsvKind) -> &'static [&'static str] {
    match kind {
        CsvKind::Levels => &["time", "level", "flag"],
        CsvKind::Enso => &["month", "anomaly"],
        CsvKind::Rmm => &["date", "rmm1", "rmm2"],
        CsvKind::Wind => &["time", "u", "v", "speed", "from_deg"],
    }
}

/// Checks one refusal: its label, its field, its length, its HTTP status.
fn check_refusal(err: UploadError, label: &str, fields: &[&str]) {
    let text = err.to_string();
    assert!(text.starts_with(label), "{text}");
    assert!(
        text.chars().count() <= MAX_MESSAGE,
        "{} chars: {text}",
        text.len()
    );
    match &err {
        UploadError::Field { field, line, .. } => {
            assert!(fields.contains(&field.as_str()), "field {field}: {text}");
            assert!(*line >= 2, "{text}");
        }
        UploadError::Row { line, .. } => assert!(*line >= 1, "{text}"),
        UploadError::Duplicate { field, .. } => {
            assert!(fields.contains(&field.as_str()), "{text}")
        }
        UploadError::Header { .. }
        | UploadError::Empty { .. }
        | UploadError::Document { .. }
        | UploadError::Gzip { .. }
        | UploadError::TooLarge { .. } => {}
    }
    let status = AppError::from(err).status();
    assert!(status.is_client_error(), "{status}: {text}");
}

fn near_valid_number() -> impl Strategy<Value = String> {
    prop_oneof![
        "[-+]?[0-9]{0,4}(\\.[0-9]{0,4})?",
        Just("1e300".to_owned()),
        Just("-1e300".to_owned()),
        Just("inf".to_owned()),
        Just("NaN".to_owned()),
        Just(String::new()),
        "[-0-9.eENa]{0,12}",
        "9{200,400}",
    ]
}

fn near_valid_time() -> impl Strategy<Value = String> {
    prop_oneof![
        "(19|20)[0-9]{2}-(0[1-9]|1[0-2])-(0[1-9]|1[0-9]|2[0-8])T[0-2][0-9]:[0-5][0-9]:[0-5][0-9](Z|[+-]0[0-9]:00)",
        "(19|20)[0-9]{2}-(0[1-9]|1[0-2])(-(0[1-9]|1[0-9]|2[0-8]))?",
        "[0-9T:Z+-]{0,26}",
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(192))]

    #[test]
    fn csv_refusals_name_line_and_field(
        rows in proptest::collection::vec((near_valid_time(), near_valid_number(), near_valid_number()), 0..12)
    ) {
        for (kind, header, width) in [
            (CsvKind::Levels, "time,level", 2),
            (CsvKind::Levels, "time,level,flag", 3),
            (CsvKind::Enso, "month,anomaly", 2),
            (CsvKind::Rmm, "date,rmm1,rmm2", 3),
            (CsvKind::Wind, "time,u,v", 3),
            (CsvKind::Wind, "time,speed,from_deg", 3),
        ] {
            let mut text = format!("{header}\n");
            for (time, a, b) in &rows {
                if width == 2 {
                    text.push_str(&format!("{time},{a}\n"));
                } else {
                    text.push_str(&format!("{time},{a},{b}\n"));
                }
            }
            if let Err(err) = scan_csv(kind, text.as_bytes()) {
                check_refusal(err, kind.describe(), columns(kind));
            }
            if kind == CsvKind::Levels {
                let feet = IngestOptions {
                    units: tidetally_model::ingest::LevelUnits::Feet,
                    ..IngestOptions::default()
                };
                if let Err(err) = upload::scan_levels(text.as_bytes(), &feet) {
                    check_refusal(err, kind.describe(), columns(kind));
                }
            }
        }
    }

    #[test]
    fn any_bytes_are_refused_cleanly(bytes in proptest::collection::vec(any::<u8>(), 0..300)) {
        for kind in [CsvKind::Levels, CsvKind::Enso, CsvKind::Rmm, CsvKind::Wind] {
            if let Err(err) = scan_csv(kind, &bytes) {
                check_refusal(err, kind.describe(), columns(kind));
            }
        }
        if let Err(err) = decode_body("water levels CSV", &bytes, 1_000) {
            check_refusal(err, "water levels CSV", &[]);
        }
        let mut gz = vec![0x1f, 0x8b];
        gz.extend_from_slice(&bytes);
        if let Err(err) = decode_body("water levels CSV", &gz, 1_000) {
            check_refusal(err, "water levels CSV", &[]);
        }
        if let Err(err) = parse_enso_forecast(&bytes) {
            check_refusal(err, "ENSO forecast JSON", &[]);
        }
    }

    #[test]
    fn forecast_refusals_name_the_field(
        season in prop_oneof!["20[0-9]{2}-(DJF|MAM|djf|12|NDJFM|)", "[0-9A-Za-z-]{0,12}"],
        issued in prop_oneof!["20[0-9]{2}-[01][0-9]-[0-3][0-9]", "[0-9/-]{0,10}"],
        members in proptest::collection::vec(prop_oneof![-3.0f64..3.0, Just(1e300), Just(-11.0)], 0..4),
        p in (0.0f64..1.0, 0.0f64..1.0),
    ) {
        let members = members.iter().map(f64::to_string).collect::<Vec<_>>().join(",");
        let bodies = [
            format!(r#"{{"season": "{season}", "issued": "{issued}", "models": [{{"name": "a", "members": [{members}]}}]}}"#),
            format!(r#"{{"season": "{season}", "issued": "{issued}", "probabilities": {{"la_nina": {}, "neutral": {}, "el_nino": 0.1}}}}"#, p.0, p.1),
        ];
        for body in bodies {
            match parse_enso_forecast(body.as_bytes()) {
                Ok(f) => prop_assert_eq!(&f.season, &season, "an inexact label was accepted"),
                Err(err) => {
                    let text = err.to_string();
                    prop_assert!(
                        text.contains("field ") || text.contains("line "),
                        "no field named: {}", text
                    );
                    check_refusal(err, "ENSO forecast JSON", &[]);
                }
            }
        }
    }

    #[test]
    fn gauge_toml_refusals_name_the_key(
        id in prop_oneof!["[a-z0-9-]{0,8}", Just("-".to_owned()), ".{0,10}"],
        threshold in near_valid_number(),
        latitude in near_valid_number(),
    ) {
        let text = format!(
            "id = \"{id}\"\nname = \"x\"\nlatitude = {latitude}\nlongitude = -150.0\ndatum = \"VBZ\"\n\
             flood_threshold_m = {threshold}\nutc_offset = \"+00:00\"\n[levels]\nfile = \"x.csv\"\n"
        );
        if let Err(err) = parse_gauge_toml(&text) {
            let message = err.to_string();
            prop_assert!(
                message.contains("field ") || message.contains("line "),
                "no key named: {}", message
            );
            check_refusal(err, "gauge TOML", &[]);
        }
    }
}
