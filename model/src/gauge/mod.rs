//! A gauge's description: the per-gauge TOML (format in DEVELOPERS.md, "Gauge TOML") validated
//! into a [`GaugeConfig`] with typed fields (`validate.rs`), and the gauge's level record
//! ([`LevelRecord`], `record.rs`) built from its decoded readings.
//!
//! Nothing here opens a file: the TOML arrives as text, the readings as a decoded series
//! (`fit::GaugeSources` reads the files).

mod record;
mod validate;

use std::path::PathBuf;

use chrono::FixedOffset;
use serde::Serialize;

use crate::daily::DailyError;
use crate::drivers::SeaLevelSetting;
use crate::ingest::{IngestError, IngestOptions, LevelUnits};
use crate::season::{SeasonSpec, SeasonTableError};

pub use record::LevelRecord;

/// Errors validating a gauge or building its record.
#[derive(Debug, thiserror::Error)]
pub enum GaugeError {
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
    /// Where the mean sea level comes from (`[sea_level]`; default: a linear trend of the
    /// gauge's own monthly means with the annual and semiannual cycle).
    pub sea_level: SeaLevelSetting,
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
    /// How to read this gauge's level file.
    pub fn ingest_options(&self) -> IngestOptions {
        IngestOptions {
            units: self.levels.units,
            missing_sentinel: self.levels.missing_sentinel,
            utc_offset: self.utc_offset,
        }
    }
}
