//! The fields of a gauge's TOML the service itself needs (identity, position, threshold,
//! seasons, the files it names), read from the model's own validated
//! `gauge::GaugeConfig::from_toml_str`: an upload is accepted exactly when the pipeline can
//! load it.

use std::path::Path;

use tidetally_model::gauge::{GaugeConfig, GaugeError, Predictor};
use tidetally_model::ingest::IngestOptions;
use tidetally_model::season::SeasonSpec;

use super::UploadError;

const WHAT: &str = "gauge TOML";

/// Driver files a gauge names, relative to its TOML.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct DriverFiles {
    /// Monthly ENSO CSV.
    pub enso: Option<String>,
    /// Daily RMM CSV.
    pub rmm: Option<String>,
    /// The gauge's wind CSV.
    pub wind: Option<String>,
    /// ENSO forecast JSON.
    pub enso_forecast: Option<String>,
}

/// A checked gauge description, as far as the service needs it.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeMeta {
    /// Identifier.
    pub id: String,
    /// Human name.
    pub name: String,
    /// Degrees north.
    pub latitude: f64,
    /// Degrees east.
    pub longitude: f64,
    /// Datum of levels and threshold.
    pub datum: String,
    /// Minor flood threshold in metres.
    pub flood_threshold_m: f64,
    /// Local standard time offset, `+HH:MM` or `-HH:MM`.
    pub utc_offset: String,
    /// The seasons defined for the gauge.
    pub seasons: Vec<SeasonSpec>,
    /// The water-level file named by the TOML.
    pub levels_file: String,
    /// Driver files named by the TOML.
    pub drivers: DriverFiles,
    /// `k` values for `P(N >= k)`.
    pub exceed_days: Vec<u32>,
    /// How its level file is read (units, sentinel, local time).
    pub ingest: IngestOptions,
    /// The predictors its model uses.
    pub predictors: Vec<Predictor>,
}

/// Parses and checks a gauge TOML with the model's gauge loader.
///
/// Over HTTP a TOML has no folder: data file names are resolved against an empty base, so
/// they stay exactly as written (relative to wherever the TOML is later placed).
pub fn parse_gauge_toml(text: &str) -> Result<GaugeMeta, UploadError> {
    let config = GaugeConfig::from_toml_str(text, WHAT, Path::new("")).map_err(gauge_error)?;
    Ok(GaugeMeta::of(&config))
}

impl GaugeMeta {
    /// What the service needs of a validated gauge description.
    pub fn of(config: &GaugeConfig) -> Self {
        let config = config.clone();
        let path = |p: &Path| p.to_string_lossy().into_owned();
        GaugeMeta {
            ingest: config.ingest_options(),
            predictors: config.model.predictors.clone(),
            utc_offset: config.utc_offset.to_string(),
            levels_file: path(&config.levels.file),
            drivers: DriverFiles {
                enso: config.drivers.enso.as_deref().map(path),
                rmm: config.drivers.rmm.as_deref().map(path),
                wind: config.drivers.wind.as_deref().map(path),
                enso_forecast: config.drivers.enso_forecast.as_deref().map(path),
            },
            exceed_days: config.model.exceed_days,
            seasons: config.seasons.specs,
            id: config.id,
            name: config.name,
            latitude: config.latitude,
            longitude: config.longitude,
            datum: config.datum,
            flood_threshold_m: config.flood_threshold_m,
        }
    }
}

/// The model's error with the upload's label in place of a file name.
fn gauge_error(error: GaugeError) -> UploadError {
    let message = match error {
        GaugeError::Toml { message, .. } => message,
        GaugeError::Invalid {
            key, expected, got, ..
        } => format!("field {key}: expected {expected}, got {got}"),
        // Only loading data files fails otherwise, which text parsing never does.
        other => other.to_string(),
    };
    UploadError::Document {
        what: WHAT.to_owned(),
        message,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The example of DEVELOPERS.md, "Gauge TOML", read from the document itself.
    fn documented_example() -> String {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../DEVELOPERS.md");
        let doc = std::fs::read_to_string(&path).unwrap();
        let section = doc.split_once("### Gauge TOML").unwrap().1;
        let block = section.split_once("```toml\n").unwrap().1;
        block.split_once("```").unwrap().0.to_owned()
    }

    #[test]
    fn the_documented_example_parses() {
        let g = parse_gauge_toml(&documented_example()).unwrap();
        assert_eq!(g.id, "port-alder");
        assert_eq!(g.seasons.len(), 1);
        assert_eq!(g.seasons[0].name(), "NDJFM");
        assert_eq!(g.exceed_days, vec![5, 10, 20]);
        assert_eq!(
            g.drivers.enso.as_deref(),
            Some("../drivers/enso-monthly.csv")
        );
        assert_eq!(g.levels_file, "port-alder-levels.csv.gz");
        assert_eq!(g.drivers.wind.as_deref(), Some("port-alder-wind.csv"));
        assert_eq!(g.drivers.rmm.as_deref(), Some("../drivers/rmm-daily.csv"));
        assert_eq!(g.utc_offset, "-05:00");
        assert_eq!((g.latitude, g.longitude), (44.12, -38.40));
        assert_eq!((g.datum.as_str(), g.flood_threshold_m), ("VBZ", 0.85));
    }

    #[test]
    fn bad_fields_are_named() {
        let example = documented_example();
        let cases = [
            ("id = \"port-alder\"", "id = \"Port Alder\"", "field id"),
            ("latitude = 44.12", "latitude = 144.12", "field latitude"),
            (
                "utc_offset = \"-05:00\"",
                "utc_offset = \"EST\"",
                "field utc_offset",
            ),
            ("units = \"m\"", "units = \"furlong\"", "field levels.units"),
            (
                "start_month = 11",
                "start_month = 13",
                "field seasons.custom",
            ),
            (
                "flood_threshold_m = 0.85",
                "flood_threshold_m = nan",
                "field flood_threshold_m",
            ),
        ];
        for (from, to, expected) in cases {
            let text = example.replace(from, to);
            let err = parse_gauge_toml(&text).unwrap_err().to_string();
            assert!(err.contains(expected), "{to}: {err}");
        }
        let unknown = example.replace("datum = \"VBZ\"", "colour = \"blue\"\ndatum = \"VBZ\"");
        let err = parse_gauge_toml(&unknown).unwrap_err().to_string();
        assert!(
            err.starts_with("gauge TOML: ") && err.contains("colour"),
            "{err}"
        );
        let missing: String = example
            .lines()
            .filter(|l| !l.starts_with("datum ="))
            .map(|l| format!("{l}\n"))
            .collect();
        let err = parse_gauge_toml(&missing).unwrap_err().to_string();
        assert!(err.contains("datum"), "{err}");
    }
}
