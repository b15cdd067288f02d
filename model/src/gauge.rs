//! A gauge's description: the per-gauge TOML (format in DEVELOPERS.md, "Gauge TOML"), read
//! unchecked with serde and validated into a [`GaugeConfig`] with typed fields, and the
//! pipeline entry point [`load_record`] that reads the level file the TOML names and builds
//! the daily record and season table.
//!
//! This module and [`load_record`] are the only places the model opens files: the TOML's data
//! paths are resolved relative to the TOML's own folder.

use std::fs::File;
use std::io::BufReader;
use std::path::{Path, PathBuf};

use chrono::FixedOffset;
use serde::{Deserialize, Serialize};

use crate::daily::{DEFAULT_MIN_DAY_COMPLETENESS, DailyError, DailyRecord};
use crate::ingest::{self, IngestError, IngestOptions, LevelSeries, LevelSummary, LevelUnits};
use crate::season::{
    DEFAULT_MIN_SEASON_COMPLETENESS, SeasonError, SeasonSpec, SeasonTable, SeasonTableError,
    season_table,
};

/// Errors loading or validating a gauge.
#[derive(Debug, thiserror::Error)]
pub enum GaugeError {
    /// A file could not be opened or read.
    #[error("{}{}: cannot open: {error}", path.display(), key.map(|k| format!(" (TOML key {k})")).unwrap_or_default())]
    Io {
        /// The file.
        path: PathBuf,
        /// The gauge TOML key naming it (`None` for the TOML itself).
        key: Option<&'static str>,
        /// The I/O error.
        error: std::io::Error,
    },
    /// The TOML does not parse or has unknown or mistyped keys.
    #[error("{source_name}: {message}")]
    Toml {
        /// The TOML file or label.
        source_name: String,
        /// The parser's message (names the key and position).
        message: String,
    },
    /// A key holds a value outside what it allows.
    #[error("{source_name}: key `{key}`: expected {expected}, got {got}")]
    Invalid {
        /// The TOML file or label.
        source_name: String,
        /// The dotted key, e.g. `levels.units`.
        key: String,
        /// What the key allows.
        expected: String,
        /// The value found.
        got: String,
    },
    /// The level file is unreadable or malformed.
    #[error(transparent)]
    Ingest(#[from] IngestError),
    /// The level file has no usable days.
    #[error("{path}: {error}")]
    Daily {
        /// The level file.
        path: String,
        /// What is missing.
        error: DailyError,
    },
    /// The season table could not be built.
    #[error("{source_name}: {error}")]
    Seasons {
        /// The TOML file or label.
        source_name: String,
        /// The failure.
        error: SeasonTableError,
    },
}

// ---- Unchecked: the TOML as written ----

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGauge {
    id: String,
    name: String,
    latitude: f64,
    longitude: f64,
    datum: String,
    flood_threshold_m: f64,
    utc_offset: String,
    coast_orientation_deg: f64,
    levels: RawLevels,
    #[serde(default)]
    seasons: Option<RawSeasons>,
    #[serde(default)]
    drivers: Option<RawDrivers>,
    #[serde(default)]
    model: Option<RawModel>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLevels {
    file: String,
    units: String,
    missing_sentinel: Option<f64>,
    min_day_completeness: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeasons {
    custom: Option<Vec<RawSeasonSpec>>,
    min_completeness: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeasonSpec {
    name: String,
    start_month: u32,
    months: u32,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDrivers {
    enso: Option<String>,
    rmm: Option<String>,
    wind: Option<String>,
    enso_forecast: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawModel {
    family: Option<String>,
    predictors: Option<Vec<String>>,
    enso_timing: Option<String>,
    mjo_phases: Option<Vec<i64>>,
    wind_statistic: Option<String>,
    exceed_days: Option<Vec<i64>>,
}

// ---- Checked ----

/// A validated gauge description.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeConfig {
    /// Lowercase letters, digits and `-`.
    pub id: String,
    /// The display name.
    pub name: String,
    /// Degrees north, -90..=90.
    pub latitude: f64,
    /// Degrees east, -180..=180.
    pub longitude: f64,
    /// The datum levels and threshold are relative to.
    pub datum: String,
    /// The minor flood threshold, metres above `datum`.
    pub flood_threshold_m: f64,
    /// The gauge's local standard time (no daylight saving).
    pub utc_offset: FixedOffset,
    /// Bearing of the seaward shore normal, degrees clockwise from north, 0..360.
    pub coast_orientation_deg: f64,
    /// The water-level record.
    pub levels: LevelsConfig,
    /// The seasons counted.
    pub seasons: SeasonsConfig,
    /// Driver files, resolved.
    pub drivers: DriverFiles,
    /// Model choices.
    pub model: ModelConfig,
    /// Where the description came from (file name or label), for messages.
    pub source_name: String,
}

/// The `[levels]` table, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelsConfig {
    /// The level file, resolved against the TOML's folder.
    pub file: PathBuf,
    /// The declared units.
    pub units: LevelUnits,
    /// The value meaning "missing", in the file's units.
    pub missing_sentinel: Option<f64>,
    /// Share of a day's expected readings needed, (0, 1].
    pub min_day_completeness: f64,
}

/// The `[seasons]` table, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct SeasonsConfig {
    /// The season definitions (the meteorological four unless `custom` is given).
    pub specs: Vec<SeasonSpec>,
    /// Seasons with a smaller share of observed days are left out of fitting, [0, 1].
    pub min_completeness: f64,
}

/// The `[drivers]` table: optional files, resolved against the TOML's folder.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct DriverFiles {
    /// Monthly ENSO index CSV.
    pub enso: Option<PathBuf>,
    /// Daily RMM CSV.
    pub rmm: Option<PathBuf>,
    /// Wind CSV.
    pub wind: Option<PathBuf>,
    /// ENSO forecast JSON for a target season.
    pub enso_forecast: Option<PathBuf>,
}

/// The count-model family.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Family {
    /// Poisson.
    Poisson,
    /// Negative binomial (NB2).
    Negbin,
    /// Chosen from the data.
    Auto,
}

pub use crate::predictor::Predictor;

/// Which season's ENSO value is used.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum EnsoTiming {
    /// The preceding season's, known at issue time.
    Preceding,
    /// The target season's own (from a forecast when issuing).
    Concurrent,
}

/// How daily along-shore wind becomes a seasonal value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum WindStatistic {
    /// The mean.
    Mean,
    /// The mean of the positive (onshore-pushing) part.
    Positive,
}

/// The `[model]` table, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelConfig {
    /// The count family (default `auto`).
    pub family: Family,
    /// The predictors, without repeats (default: every predictor whose data is present).
    pub predictors: Vec<Predictor>,
    /// ENSO timing (default `preceding`).
    pub enso_timing: EnsoTiming,
    /// RMM phases 1..=8 whose active days count (default 2 and 3).
    pub mjo_phases: Vec<u8>,
    /// Wind statistic (default `mean`).
    pub wind_statistic: WindStatistic,
    /// Day counts k for P(N >= k), increasing (default 5, 10, 20).
    pub exceed_days: Vec<u32>,
}

impl GaugeConfig {
    /// Reads and validates a gauge TOML file; data paths resolve against its folder.
    pub fn load(path: &Path) -> Result<Self, GaugeError> {
        let text = std::fs::read_to_string(path).map_err(|error| GaugeError::Io {
            key: None,
            path: path.to_owned(),
            error,
        })?;
        let base_dir = path.parent().unwrap_or(Path::new(""));
        let source_name = path.file_name().map_or_else(
            || path.display().to_string(),
            |n| n.to_string_lossy().into_owned(),
        );
        Self::from_toml_str(&text, &source_name, base_dir)
    }

    /// Validates a gauge TOML given as text; `source_name` labels messages and data paths
    /// resolve against `base_dir`.
    pub fn from_toml_str(
        text: &str,
        source_name: &str,
        base_dir: &Path,
    ) -> Result<Self, GaugeError> {
        let raw: RawGauge = toml::from_str(text).map_err(|e| GaugeError::Toml {
            source_name: source_name.to_owned(),
            message: e.message().to_owned() + &toml_position(text, e.span()),
        })?;
        Checker {
            source_name,
            base_dir,
        }
        .gauge(raw)
    }

    /// How to read this gauge's level file.
    pub fn ingest_options(&self) -> IngestOptions {
        IngestOptions {
            units: self.levels.units,
            missing_sentinel: self.levels.missing_sentinel,
            utc_offset: self.utc_offset,
        }
    }
}

/// " (line L, column C)" for a TOML error span.
fn toml_position(text: &str, span: Option<std::ops::Range<usize>>) -> String {
    let Some(span) = span else {
        return String::new();
    };
    let Some(before) = text.get(..span.start) else {
        return String::new();
    };
    let line = before.matches('\n').count() + 1;
    let column = before.len() - before.rfind('\n').map_or(0, |i| i + 1) + 1;
    format!(" (line {line}, column {column})")
}

struct Checker<'a> {
    source_name: &'a str,
    base_dir: &'a Path,
}

impl Checker<'_> {
    fn invalid(&self, key: &str, expected: &str, got: impl std::fmt::Display) -> GaugeError {
        GaugeError::Invalid {
            source_name: self.source_name.to_owned(),
            key: key.to_owned(),
            expected: expected.to_owned(),
            got: got.to_string(),
        }
    }

    /// A number in `lo..=hi` (NaN fails).
    fn in_range(
        &self,
        key: &str,
        value: f64,
        lo: f64,
        hi: f64,
        what: &str,
    ) -> Result<f64, GaugeError> {
        if value >= lo && value <= hi {
            Ok(value)
        } else {
            Err(self.invalid(key, &format!("{what} in {lo}..={hi}"), value))
        }
    }

    fn text(&self, key: &str, value: String) -> Result<String, GaugeError> {
        let trimmed = value.trim();
        if trimmed.is_empty() {
            return Err(self.invalid(key, "non-empty text", format!("{value:?}")));
        }
        Ok(trimmed.to_owned())
    }

    fn path(&self, key: &str, value: &str) -> Result<PathBuf, GaugeError> {
        if value.trim().is_empty() {
            return Err(self.invalid(key, "a file path relative to the TOML", "\"\""));
        }
        Ok(self.base_dir.join(value))
    }

    fn gauge(&self, raw: RawGauge) -> Result<GaugeConfig, GaugeError> {
        let id_ok = !raw.id.is_empty()
            && raw.id.len() <= 64
            && raw
                .id
                .bytes()
                .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'-')
            && raw.id.bytes().any(|b| b.is_ascii_alphanumeric());
        if !id_ok {
            return Err(self.invalid(
                "id",
                "1 to 64 lowercase letters, digits or '-', at least one letter or digit",
                format!("{:?}", crate::drivers::clip_echo(&raw.id)),
            ));
        }
        if !(-crate::ingest::MAX_LEVEL_M..=crate::ingest::MAX_LEVEL_M)
            .contains(&raw.flood_threshold_m)
        {
            return Err(self.invalid(
                "flood_threshold_m",
                "a number of metres within +/-100 m of the datum",
                raw.flood_threshold_m,
            ));
        }
        let orientation = raw.coast_orientation_deg;
        if !(0.0..360.0).contains(&orientation) {
            return Err(self.invalid(
                "coast_orientation_deg",
                "degrees clockwise from north in 0..360",
                orientation,
            ));
        }
        let drivers = self.drivers(raw.drivers)?;
        Ok(GaugeConfig {
            id: raw.id,
            name: self.text("name", raw.name)?,
            latitude: self.in_range("latitude", raw.latitude, -90.0, 90.0, "degrees")?,
            longitude: self.in_range("longitude", raw.longitude, -180.0, 180.0, "degrees")?,
            datum: self.text("datum", raw.datum)?,
            flood_threshold_m: raw.flood_threshold_m,
            utc_offset: self.utc_offset(&raw.utc_offset)?,
            coast_orientation_deg: orientation,
            levels: self.levels(raw.levels)?,
            seasons: self.seasons(raw.seasons)?,
            model: self.model(raw.model, &drivers)?,
            drivers,
            source_name: self.source_name.to_owned(),
        })
    }

    fn utc_offset(&self, text: &str) -> Result<FixedOffset, GaugeError> {
        let bad = || {
            self.invalid(
                "utc_offset",
                "an offset such as \"-05:00\" or \"+09:30\" within -12:00..=+14:00",
                format!("{text:?}"),
            )
        };
        let bytes = text.trim().as_bytes();
        if bytes == b"Z" || bytes == b"+00:00" || bytes == b"-00:00" {
            return FixedOffset::east_opt(0).ok_or_else(bad);
        }
        let [sign @ (b'+' | b'-'), h1, h2, b':', m1, m2] = *bytes else {
            return Err(bad());
        };
        let digit = |b: u8| b.is_ascii_digit().then(|| i32::from(b - b'0'));
        let (Some(h1), Some(h2), Some(m1), Some(m2)) = (digit(h1), digit(h2), digit(m1), digit(m2))
        else {
            return Err(bad());
        };
        let (hours, minutes) = (h1 * 10 + h2, m1 * 10 + m2);
        let seconds = (hours * 60 + minutes) * 60 * if sign == b'-' { -1 } else { 1 };
        if minutes > 59 || !(-12 * 3600..=14 * 3600).contains(&seconds) {
            return Err(bad());
        }
        FixedOffset::east_opt(seconds).ok_or_else(bad)
    }

    fn levels(&self, raw: RawLevels) -> Result<LevelsConfig, GaugeError> {
        let units = match raw.units.as_str() {
            "m" => LevelUnits::Metres,
            "ft" => LevelUnits::Feet,
            other => {
                return Err(self.invalid("levels.units", "\"m\" or \"ft\"", format!("{other:?}")));
            }
        };
        if let Some(s) = raw.missing_sentinel
            && !s.is_finite()
        {
            return Err(self.invalid("levels.missing_sentinel", "a finite number", s));
        }
        let completeness = raw
            .min_day_completeness
            .unwrap_or(DEFAULT_MIN_DAY_COMPLETENESS);
        if !(completeness > 0.0 && completeness <= 1.0) {
            return Err(self.invalid(
                "levels.min_day_completeness",
                "a share in (0, 1]",
                completeness,
            ));
        }
        Ok(LevelsConfig {
            file: self.path("levels.file", &raw.file)?,
            units,
            missing_sentinel: raw.missing_sentinel,
            min_day_completeness: completeness,
        })
    }

    fn seasons(&self, raw: Option<RawSeasons>) -> Result<SeasonsConfig, GaugeError> {
        let raw = raw.unwrap_or(RawSeasons {
            custom: None,
            min_completeness: None,
        });
        let min_completeness = raw
            .min_completeness
            .unwrap_or(DEFAULT_MIN_SEASON_COMPLETENESS);
        self.in_range(
            "seasons.min_completeness",
            min_completeness,
            0.0,
            1.0,
            "a share",
        )?;
        let specs = match raw.custom {
            None => SeasonSpec::meteorological(),
            Some(custom) if custom.is_empty() => {
                return Err(self.invalid("seasons.custom", "at least one season", "an empty list"));
            }
            Some(custom) => {
                let mut specs: Vec<SeasonSpec> = Vec::new();
                for (i, s) in custom.into_iter().enumerate() {
                    let key = format!("seasons.custom[{i}]");
                    let spec = SeasonSpec::new(&s.name, s.start_month, s.months).map_err(|e| {
                        let expected = match e {
                            SeasonError::BadName(_) => "a name of 1 to 12 ASCII letters or digits",
                            SeasonError::BadMonth { .. } => "start_month 1 to 12",
                            _ => "months 1 to 12",
                        };
                        self.invalid(&key, expected, e)
                    })?;
                    if specs
                        .iter()
                        .any(|o| o.name().eq_ignore_ascii_case(spec.name()))
                    {
                        return Err(self.invalid(
                            &key,
                            "a season name not used before",
                            format!("{:?}", spec.name()),
                        ));
                    }
                    specs.push(spec);
                }
                specs
            }
        };
        Ok(SeasonsConfig {
            specs,
            min_completeness,
        })
    }

    fn drivers(&self, raw: Option<RawDrivers>) -> Result<DriverFiles, GaugeError> {
        let Some(raw) = raw else {
            return Ok(DriverFiles::default());
        };
        let resolve =
            |key: &str, value: Option<String>| value.map(|v| self.path(key, &v)).transpose();
        Ok(DriverFiles {
            enso: resolve("drivers.enso", raw.enso)?,
            rmm: resolve("drivers.rmm", raw.rmm)?,
            wind: resolve("drivers.wind", raw.wind)?,
            enso_forecast: resolve("drivers.enso_forecast", raw.enso_forecast)?,
        })
    }

    fn model(
        &self,
        raw: Option<RawModel>,
        drivers: &DriverFiles,
    ) -> Result<ModelConfig, GaugeError> {
        let raw = raw.unwrap_or(RawModel {
            family: None,
            predictors: None,
            enso_timing: None,
            mjo_phases: None,
            wind_statistic: None,
            exceed_days: None,
        });
        let family = match raw.family.as_deref() {
            None | Some("auto") => Family::Auto,
            Some("poisson") => Family::Poisson,
            Some("negbin") => Family::Negbin,
            Some(other) => {
                return Err(self.invalid(
                    "model.family",
                    "\"poisson\", \"negbin\" or \"auto\"",
                    format!("{other:?}"),
                ));
            }
        };
        let available = |p: Predictor| match p {
            Predictor::Enso => drivers.enso.is_some(),
            Predictor::Mjo => drivers.rmm.is_some(),
            Predictor::Wind => drivers.wind.is_some(),
            Predictor::SeaLevel | Predictor::Tide => true,
        };
        let predictors = match raw.predictors {
            None => Predictor::ALL
                .into_iter()
                .filter(|&p| available(p))
                .collect(),
            Some(names) => {
                let mut out: Vec<Predictor> = Vec::new();
                for name in names {
                    let p = Predictor::ALL
                        .into_iter()
                        .find(|p| p.as_str() == name)
                        .ok_or_else(|| {
                            self.invalid(
                                "model.predictors",
                                "names among enso, mjo, wind, sea_level, tide",
                                format!("{name:?}"),
                            )
                        })?;
                    if !available(p) {
                        let needs = match p {
                            Predictor::Enso => "drivers.enso",
                            Predictor::Mjo => "drivers.rmm",
                            _ => "drivers.wind",
                        };
                        return Err(self.invalid(
                            "model.predictors",
                            &format!("{name:?} only with `{needs}` set"),
                            format!("{name:?} without `{needs}`"),
                        ));
                    }
                    if !out.contains(&p) {
                        out.push(p);
                    }
                }
                out
            }
        };
        let enso_timing = match raw.enso_timing.as_deref() {
            None | Some("preceding") => EnsoTiming::Preceding,
            Some("concurrent") => EnsoTiming::Concurrent,
            Some(other) => {
                return Err(self.invalid(
                    "model.enso_timing",
                    "\"preceding\" or \"concurrent\"",
                    format!("{other:?}"),
                ));
            }
        };
        let wind_statistic = match raw.wind_statistic.as_deref() {
            None | Some("mean") => WindStatistic::Mean,
            Some("positive") => WindStatistic::Positive,
            Some(other) => {
                return Err(self.invalid(
                    "model.wind_statistic",
                    "\"mean\" or \"positive\"",
                    format!("{other:?}"),
                ));
            }
        };
        let mut mjo_phases = Vec::new();
        for phase in raw.mjo_phases.unwrap_or_else(|| vec![2, 3]) {
            let phase = u8::try_from(phase)
                .ok()
                .filter(|p| (1..=8).contains(p))
                .ok_or_else(|| self.invalid("model.mjo_phases", "RMM phases 1 to 8", phase))?;
            if !mjo_phases.contains(&phase) {
                mjo_phases.push(phase);
            }
        }
        if mjo_phases.is_empty() {
            return Err(self.invalid(
                "model.mjo_phases",
                "at least one RMM phase 1 to 8",
                "an empty list",
            ));
        }
        mjo_phases.sort_unstable();
        let mut exceed_days = Vec::new();
        for k in raw.exceed_days.unwrap_or_else(|| vec![5, 10, 20]) {
            let k = u32::try_from(k)
                .ok()
                .filter(|&k| (1..=366).contains(&k))
                .ok_or_else(|| self.invalid("model.exceed_days", "day counts 1 to 366", k))?;
            exceed_days.push(k);
        }
        exceed_days.sort_unstable();
        exceed_days.dedup();
        if exceed_days.is_empty() {
            return Err(self.invalid(
                "model.exceed_days",
                "at least one day count",
                "an empty list",
            ));
        }
        Ok(ModelConfig {
            family,
            predictors,
            enso_timing,
            mjo_phases,
            wind_statistic,
            exceed_days,
        })
    }
}

/// A gauge's record, from level file to season table.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeRecord {
    /// What the streaming pass kept (per-day totals, monthly means, interval).
    pub summary: LevelSummary,
    /// Daily maxima with observed flags.
    pub daily: DailyRecord,
    /// Flood days and exposure per season.
    pub seasons: SeasonTable,
}

fn open_levels(config: &GaugeConfig) -> Result<(BufReader<File>, String), GaugeError> {
    let path = &config.levels.file;
    let file = File::open(path).map_err(|error| GaugeError::Io {
        key: Some("levels.file"),
        path: path.clone(),
        error,
    })?;
    Ok((
        BufReader::with_capacity(256 * 1024, file),
        path.display().to_string(),
    ))
}

/// Reads the gauge's level file and builds its daily record and season table.
pub fn load_record(config: &GaugeConfig) -> Result<GaugeRecord, GaugeError> {
    let (reader, name) = open_levels(config)?;
    let summary = ingest::summarize(reader, &config.ingest_options(), &name)?;
    record_from_summary(config, summary, &name)
}

/// Builds the daily record and season table from an already read summary (e.g. a level file
/// uploaded over HTTP); `levels_name` labels messages.
pub fn record_from_summary(
    config: &GaugeConfig,
    summary: LevelSummary,
    levels_name: &str,
) -> Result<GaugeRecord, GaugeError> {
    let daily = DailyRecord::new(
        &summary.days,
        summary.sampling_interval_s,
        config.levels.min_day_completeness,
    )
    .map_err(|error| GaugeError::Daily {
        path: levels_name.to_owned(),
        error,
    })?;
    let seasons = season_table(
        &daily,
        &config.seasons.specs,
        config.flood_threshold_m,
        config.seasons.min_completeness,
    )
    .map_err(|error| GaugeError::Seasons {
        source_name: config.source_name.clone(),
        error,
    })?;
    Ok(GaugeRecord {
        summary,
        daily,
        seasons,
    })
}

/// Reads every reading of the gauge's level file, sorted by time, in metres.
pub fn load_levels(config: &GaugeConfig) -> Result<LevelSeries, GaugeError> {
    let (reader, name) = open_levels(config)?;
    Ok(ingest::read_levels(
        reader,
        &config.ingest_options(),
        &name,
    )?)
}

#[cfg(test)]
mod tests {
    use super::*;

    const FULL: &str = r#"
id = "port-alder"
name = "Port Alder harbour"
latitude = 44.12
longitude = -67.31
datum = "STND"
flood_threshold_m = 0.85
utc_offset = "-05:00"
coast_orientation_deg = 135.0

[levels]
file = "port-alder-levels.csv.gz"
units = "ft"
missing_sentinel = -99999.0
min_day_completeness = 0.9

[seasons]
custom = [{ name = "NDJFM", start_month = 11, months = 5 }]
min_completeness = 0.7

[drivers]
enso = "../drivers/enso-monthly.csv"
rmm = "../drivers/rmm-daily.csv"
wind = "port-alder-wind.csv"
enso_forecast = "../drivers/enso-forecast-2026-DJF.json"

[model]
family = "negbin"
predictors = ["enso", "mjo", "wind", "sea_level", "tide"]
enso_timing = "concurrent"
mjo_phases = [3, 2]
wind_statistic = "positive"
exceed_days = [20, 5, 10]
"#;

    const MINIMAL: &str = r#"
id = "g1"
name = "G"
latitude = 10
longitude = 20
datum = "MHHW"
flood_threshold_m = 0.5
utc_offset = "+09:30"
coast_orientation_deg = 0

[levels]
file = "levels.csv"
units = "m"
"#;

    fn parse(text: &str) -> Result<GaugeConfig, GaugeError> {
        GaugeConfig::from_toml_str(text, "port-alder.toml", Path::new("/data/gauges"))
    }

    /// Replaces the first line starting with `key =` in the full example.
    fn with(key: &str, value: &str) -> String {
        let prefix = format!("{key} =");
        FULL.lines()
            .map(|l| {
                if l.starts_with(&prefix) {
                    format!("{key} = {value}")
                } else {
                    l.to_owned()
                }
            })
            .collect::<Vec<_>>()
            .join("\n")
    }

    #[test]
    fn the_documented_example_validates() {
        let g = parse(FULL).unwrap();
        assert_eq!(g.id, "port-alder");
        assert_eq!(g.utc_offset.local_minus_utc(), -5 * 3600);
        assert_eq!(g.levels.units, LevelUnits::Feet);
        assert_eq!(
            g.levels.file,
            Path::new("/data/gauges/port-alder-levels.csv.gz")
        );
        assert_eq!(g.levels.min_day_completeness, 0.9);
        assert_eq!(
            g.seasons.specs,
            vec![SeasonSpec::new("NDJFM", 11, 5).unwrap()]
        );
        assert_eq!(g.seasons.min_completeness, 0.7);
        assert_eq!(
            g.drivers.enso.as_deref(),
            Some(Path::new("/data/gauges/../drivers/enso-monthly.csv"))
        );
        assert_eq!(g.model.family, Family::Negbin);
        assert_eq!(g.model.predictors.len(), 5);
        assert_eq!(g.model.enso_timing, EnsoTiming::Concurrent);
        assert_eq!(g.model.mjo_phases, vec![2, 3]);
        assert_eq!(g.model.wind_statistic, WindStatistic::Positive);
        assert_eq!(g.model.exceed_days, vec![5, 10, 20]);
    }

    #[test]
    fn defaults_fill_optional_tables() {
        let g = parse(MINIMAL).unwrap();
        assert_eq!(g.utc_offset.local_minus_utc(), 9 * 3600 + 1800);
        assert_eq!(g.levels.min_day_completeness, 0.75);
        assert_eq!(g.levels.missing_sentinel, None);
        assert_eq!(g.seasons.specs, SeasonSpec::meteorological());
        assert_eq!(g.seasons.min_completeness, 0.8);
        assert_eq!(g.drivers, DriverFiles::default());
        assert_eq!(g.model.family, Family::Auto);
        // Without driver files only the record's own predictors are available.
        assert_eq!(
            g.model.predictors,
            vec![Predictor::SeaLevel, Predictor::Tide]
        );
        assert_eq!(g.model.exceed_days, vec![5, 10, 20]);
    }

    #[test]
    fn bad_values_name_file_key_and_expectation() {
        let cases = [
            (
                with("latitude", "123"),
                "port-alder.toml: key `latitude`: expected degrees in -90..=90, got 123",
            ),
            (with("latitude", "nan"), "key `latitude`"),
            (with("longitude", "-200"), "key `longitude`"),
            (with("id", "\"Port Alder\""), "key `id`"),
            (with("utc_offset", "\"-5\""), "key `utc_offset`"),
            (with("utc_offset", "\"+15:00\""), "key `utc_offset`"),
            (
                with("coast_orientation_deg", "360"),
                "key `coast_orientation_deg`",
            ),
            (with("flood_threshold_m", "inf"), "key `flood_threshold_m`"),
            (with("units", "\"feet\""), "key `levels.units`"),
            (
                with("missing_sentinel", "nan"),
                "key `levels.missing_sentinel`",
            ),
            (
                with("min_day_completeness", "0"),
                "key `levels.min_day_completeness`",
            ),
            (
                with("min_completeness", "1.5"),
                "key `seasons.min_completeness`",
            ),
            (
                with("custom", "[{ name = \"X\", start_month = 13, months = 3 }]"),
                "key `seasons.custom[0]`: expected start_month 1 to 12",
            ),
            (with("family", "\"gamma\""), "key `model.family`"),
            (
                with("predictors", "[\"enso\", \"rain\"]"),
                "key `model.predictors`",
            ),
            (with("mjo_phases", "[0]"), "key `model.mjo_phases`"),
            (with("exceed_days", "[-1]"), "key `model.exceed_days`"),
            (with("enso_timing", "\"later\""), "key `model.enso_timing`"),
            (
                with("wind_statistic", "\"max\""),
                "key `model.wind_statistic`",
            ),
        ];
        for (text, want) in cases {
            let err = parse(&text).unwrap_err().to_string();
            assert!(err.contains(want), "{err}\n  wanted: {want}");
            assert!(err.starts_with("port-alder.toml: "), "{err}");
        }
    }

    #[test]
    fn predictors_need_their_driver_files() {
        let text = format!("{MINIMAL}\n[model]\npredictors = [\"wind\"]\n");
        let err = parse(&text).unwrap_err().to_string();
        assert!(
            err.contains("key `model.predictors`") && err.contains("drivers.wind"),
            "{err}"
        );
    }

    #[test]
    fn unknown_missing_and_mistyped_keys_are_named() {
        let err = parse(&format!("{MINIMAL}\ncolour = \"blue\"\n"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("unknown field `colour`"), "{err}");
        let err = parse(&MINIMAL.replace("datum = \"MHHW\"\n", ""))
            .unwrap_err()
            .to_string();
        assert!(err.contains("missing field `datum`"), "{err}");
        let err = parse(&MINIMAL.replace("latitude = 10", "latitude = \"north\""))
            .unwrap_err()
            .to_string();
        assert!(
            err.starts_with("port-alder.toml: ") && err.contains("line 4"),
            "{err}"
        );
        let err = parse(&format!("{MINIMAL}\n[levels.extra]\n"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("extra"), "{err}");
    }
}
