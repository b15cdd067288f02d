//! The fields of a gauge's TOML the service itself needs (identity, position, threshold,
//! seasons, the files it names), checked on upload. The full description is read by the
//! model's gauge loader in the pipeline.

use serde::Deserialize;
use tidetally_model::season::SeasonSpec;

use super::UploadError;

/// Exceedance thresholds used when the gauge TOML names none.
const DEFAULT_EXCEED_DAYS: [u32; 3] = [5, 10, 20];

#[derive(Debug, Deserialize)]
struct RawGauge {
    id: String,
    name: String,
    latitude: f64,
    longitude: f64,
    datum: String,
    flood_threshold_m: f64,
    utc_offset: String,
    levels: RawLevels,
    seasons: Option<RawSeasons>,
    drivers: Option<DriverFiles>,
    model: Option<RawModel>,
}

#[derive(Debug, Deserialize)]
struct RawLevels {
    file: String,
    units: String,
}

#[derive(Debug, Deserialize)]
struct RawSeasons {
    custom: Option<Vec<RawSeasonSpec>>,
}

#[derive(Debug, Deserialize)]
struct RawSeasonSpec {
    name: String,
    start_month: u32,
    months: u32,
}

#[derive(Debug, Deserialize)]
struct RawModel {
    exceed_days: Option<Vec<u32>>,
}

/// Driver files a gauge names, relative to its TOML.
#[derive(Debug, Clone, Default, PartialEq, Eq, Deserialize)]
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
}

/// Parses and checks a gauge TOML.
pub fn parse_gauge_toml(text: &str) -> Result<GaugeMeta, UploadError> {
    let doc = |message: String| UploadError::Document {
        what: "gauge TOML".into(),
        message,
    };
    let raw: RawGauge =
        toml::from_str(text).map_err(|err| doc(err.to_string().trim_end().replace('\n', " ")))?;
    let field = |name: &str, message: String| doc(format!("field {name}: {message}"));
    let id_ok = !raw.id.is_empty()
        && raw.id.len() <= 64
        && raw
            .id
            .chars()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-');
    if !id_ok {
        return Err(field(
            "id",
            format!(
                "{:?} must be 1 to 64 lowercase letters, digits or '-'",
                raw.id
            ),
        ));
    }
    if raw.name.trim().is_empty() {
        return Err(field("name", "must not be empty".into()));
    }
    if !(raw.latitude >= -90.0 && raw.latitude <= 90.0) {
        return Err(field(
            "latitude",
            format!("{} is not within -90..=90", raw.latitude),
        ));
    }
    if !(raw.longitude >= -180.0 && raw.longitude <= 180.0) {
        return Err(field(
            "longitude",
            format!("{} is not within -180..=180", raw.longitude),
        ));
    }
    if !raw.flood_threshold_m.is_finite() {
        return Err(field("flood_threshold_m", "must be a finite number".into()));
    }
    if !valid_offset(&raw.utc_offset) {
        return Err(field(
            "utc_offset",
            format!(
                "{:?} must be +HH:MM or -HH:MM within 14 hours",
                raw.utc_offset
            ),
        ));
    }
    if !matches!(raw.levels.units.as_str(), "m" | "ft") {
        return Err(field(
            "levels.units",
            format!("{:?} must be \"m\" or \"ft\"", raw.levels.units),
        ));
    }
    let seasons = match raw.seasons.and_then(|s| s.custom) {
        None => SeasonSpec::meteorological(),
        Some(custom) if custom.is_empty() => {
            return Err(field(
                "seasons.custom",
                "must list at least one season".into(),
            ));
        }
        Some(custom) => custom
            .iter()
            .map(|s| SeasonSpec::new(&s.name, s.start_month, s.months))
            .collect::<Result<Vec<_>, _>>()
            .map_err(|err| field("seasons.custom", err.to_string()))?,
    };
    let mut exceed_days = raw
        .model
        .and_then(|m| m.exceed_days)
        .unwrap_or_else(|| DEFAULT_EXCEED_DAYS.to_vec());
    exceed_days.sort_unstable();
    exceed_days.dedup();
    if exceed_days.iter().any(|&k| k == 0 || k > 366) {
        return Err(field(
            "model.exceed_days",
            "each k must be 1 to 366 days".into(),
        ));
    }
    // The model's loader must accept it too (the fields the service does not look at).
    tidetally_model::gauge::GaugeConfig::from_toml_str(
        text,
        "gauge TOML",
        std::path::Path::new(""),
    )
    .map_err(|err| doc(err.to_string()))?;
    Ok(GaugeMeta {
        id: raw.id,
        name: raw.name,
        latitude: raw.latitude,
        longitude: raw.longitude,
        datum: raw.datum,
        flood_threshold_m: raw.flood_threshold_m,
        utc_offset: raw.utc_offset,
        seasons,
        levels_file: raw.levels.file,
        drivers: raw.drivers.unwrap_or_default(),
        exceed_days,
    })
}

fn valid_offset(text: &str) -> bool {
    let bytes = text.as_bytes();
    if bytes.len() != 6 || !matches!(bytes[0], b'+' | b'-') || bytes[3] != b':' {
        return false;
    }
    let (Ok(hours), Ok(minutes)) = (text[1..3].parse::<u32>(), text[4..6].parse::<u32>()) else {
        return false;
    };
    hours <= 14 && minutes < 60 && (hours < 14 || minutes == 0)
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::upload::tests_support::EXAMPLE;

    #[test]
    fn the_documented_example_parses() {
        let g = parse_gauge_toml(EXAMPLE).unwrap();
        assert_eq!(g.id, "port-alder");
        assert_eq!(g.seasons.len(), 1);
        assert_eq!(g.seasons[0].name(), "NDJFM");
        assert_eq!(g.exceed_days, vec![5, 10, 20]);
        assert_eq!(
            g.drivers.enso.as_deref(),
            Some("../drivers/enso-monthly.csv")
        );
        assert_eq!(g.levels_file, "port-alder-levels.csv.gz");
    }

    #[test]
    fn bad_fields_are_named() {
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
            let text = EXAMPLE.replace(from, to);
            let err = parse_gauge_toml(&text).unwrap_err().to_string();
            assert!(err.contains(expected), "{to}: {err}");
        }
        let missing = EXAMPLE.replace("datum = \"STND\"\n", "");
        let err = parse_gauge_toml(&missing).unwrap_err().to_string();
        assert!(err.contains("datum"), "{err}");
    }
}
