//! Climate drivers and the seasonal predictors built from them.
//!
//! Owns the driver file formats (ENSO monthly index, RMM daily index, wind, ENSO forecast
//! JSON; see DEVELOPERS.md "Driver series"), the per-season reductions of each driver, the
//! sea-level trend, the completeness rules that decide when a season's driver value is usable,
//! and the sampling of driver scenarios for a target season.
//!
//! Submodules, in the order data flows through them:
//! - [`enso`]: monthly ENSO index, seasonal means (concurrent or preceding), categories.
//! - [`mjo`]: daily RMM1/RMM2, Wheeler-Hendon phase and amplitude, seasonal active share.
//! - [`wind`]: daily or hourly wind, along-shore component signed by Ekman transport.
//! - [`sea_level`]: least-squares trend of monthly mean sea level, a set rate or a projection.
//! - [`predictors`]: one row of seasonal predictors per season, with reasons for missing ones.
//! - [`forecast`]: the ENSO forecast file and scenario sampling for a target season.
//!
//! Completeness rules (a season's value is used only when they hold; otherwise the season is
//! reported with a [`Shortfall`] and left out of fitting, never filled):
//! - ENSO: every month of the season (or of the preceding season) present.
//! - MJO: at least 80% of the season's days present ([`MIN_DAILY_COMPLETENESS`]).
//! - wind: at least 80% of the season's days have a daily mean (an hourly day needs 18 of its
//!   24 clock hours, see [`wind`]).

use std::fmt;

use serde::Serialize;

pub mod enso;
pub mod forecast;
pub mod mjo;
pub mod predictors;
pub mod sea_level;
pub mod wind;

mod csv_rows;

pub use csv_rows::{MAX_ECHO_CHARS, clip_echo};
pub use enso::{EnsoCategory, EnsoSeries, EnsoTiming, EnsoValue};
pub use forecast::{
    CategoryProbabilities, EnsoForecast, ForecastContent, ForecastError, ModelMembers, PastSeason,
    Resampling, Scenario, ScenarioError, ScenarioGenerator,
};
pub use mjo::{MjoShare, PhaseSet, RmmSeries, RmmState, rmm_state};
pub use predictors::{DriverInputs, PredictorSettings, SeasonPredictors, season_predictors};
pub use sea_level::{
    MonthlyMeanLevel, Projection, SeaLevelSetting, SeaLevelSource, SeasonalCycle, TrendError,
    TrendFit, TrendShape, TrendValue, fit_trend,
};
pub use wind::{Coast, Hemisphere, WindSeries, WindStatistic, WindValue};

/// Share of a season's days that must carry a value for the daily drivers (MJO, wind).
pub const MIN_DAILY_COMPLETENESS: f64 = 0.8;

/// Errors reading a driver CSV file: each names the source, and the line and field where
/// there is one.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DriverParseError {
    /// The file could not be read or is not valid CSV.
    #[error("{source_name}: cannot read: {message}")]
    Read {
        /// The source name given to the parser (usually the file path).
        source_name: String,
        /// What went wrong.
        message: String,
    },
    /// The header row is not one of the accepted ones.
    #[error("{source_name} line 1: header {found:?} must be {expected}")]
    BadHeader {
        /// The source name.
        source_name: String,
        /// The header as found.
        found: String,
        /// The accepted header(s).
        expected: String,
    },
    /// A field could not be parsed or is out of range.
    #[error("{source_name} line {line}, field {field}: {value:?} {problem}")]
    BadField {
        /// The source name.
        source_name: String,
        /// The 1-based line number.
        line: u64,
        /// The field (column) name.
        field: String,
        /// The offending text.
        value: String,
        /// What is wrong with it.
        problem: String,
    },
    /// The same time appears twice.
    #[error("{source_name} line {line}, field {field}: {value} repeats line {first_line}")]
    Duplicate {
        /// The source name.
        source_name: String,
        /// The line of the repeat.
        line: u64,
        /// The first line with this time.
        first_line: u64,
        /// The time field name.
        field: String,
        /// The repeated time.
        value: String,
    },
    /// The file has a header but no data rows.
    #[error("{source_name}: no data rows")]
    Empty {
        /// The source name.
        source_name: String,
    },
}

/// The drivers tidetally knows, as named in a gauge's `[model] predictors`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Driver {
    /// ENSO index (seasonal mean anomaly).
    Enso,
    /// MJO: share of days active in the chosen RMM phases.
    Mjo,
    /// Along-shore wind component.
    Wind,
    /// Sea-level trend relative to the flood threshold.
    SeaLevel,
}

impl Driver {
    /// All drivers, in reporting order.
    pub const ALL: [Driver; 4] = [Driver::Enso, Driver::Mjo, Driver::Wind, Driver::SeaLevel];

    /// The name used in TOML, JSON and messages: `enso`, `mjo`, `wind`, `sea_level`.
    pub fn name(self) -> &'static str {
        match self {
            Driver::Enso => "enso",
            Driver::Mjo => "mjo",
            Driver::Wind => "wind",
            Driver::SeaLevel => "sea_level",
        }
    }

    /// The driver of a name, if it is one of [`Driver::name`]'s.
    pub fn from_name(name: &str) -> Option<Driver> {
        Driver::ALL.into_iter().find(|d| d.name() == name)
    }
}

impl fmt::Display for Driver {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Why a season has no usable value for one driver.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Shortfall {
    /// The driver lacking a value.
    pub driver: Driver,
    /// Why.
    pub reason: ShortfallReason,
}

/// The unit a completeness count is in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CountUnit {
    /// Calendar months.
    Months,
    /// Calendar days.
    Days,
}

impl fmt::Display for CountUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            CountUnit::Months => "months",
            CountUnit::Days => "days",
        })
    }
}

/// The reason behind a [`Shortfall`].
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum ShortfallReason {
    /// No series for this driver was given.
    NoSeries,
    /// Too few months or days present in the period the value is taken over.
    Incomplete {
        /// Months or days.
        unit: CountUnit,
        /// How many carry a value.
        present: u32,
        /// How many are needed.
        required: u32,
        /// How many the period has.
        total: u32,
    },
    /// The sea-level source cannot give a value for this time (e.g. outside a projection).
    Unavailable {
        /// Why, in words.
        detail: String,
    },
}

impl fmt::Display for Shortfall {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.reason {
            ShortfallReason::NoSeries => write!(f, "{}: no series given", self.driver),
            ShortfallReason::Incomplete {
                unit,
                present,
                required,
                total,
            } => write!(
                f,
                "{}: {} of {total} {unit} missing ({present} present, {required} needed)",
                self.driver,
                total - present
            ),
            ShortfallReason::Unavailable { detail } => write!(f, "{}: {detail}", self.driver),
        }
    }
}

/// The number of days needed out of `total` under [`MIN_DAILY_COMPLETENESS`].
pub(crate) fn required_days(total: u32) -> u32 {
    (f64::from(total) * MIN_DAILY_COMPLETENESS).ceil() as u32
}
