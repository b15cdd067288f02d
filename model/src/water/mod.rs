//! The water-level engine: forecasts a season's flood days from each day's predicted high
//! water, the sea-level trend and the drivers' effect on the water.
//!
//! Flow, for one season name at one gauge:
//! 1. [`days`]: every day's predicted high water (the tide model fitted with its mean only,
//!    on the gauge's reading grid), its observed high-water residual when the day is
//!    observed (the calendar-day skew surge), and its drivers (ENSO of the month, MJO
//!    activity in the gauge's phases and the opposite ones, the along-shore wind);
//! 2. [`engine`]: the residual minus the slow mean-sea-level term (the `[sea_level]` source
//!    minus the tide model's mean, so the trend is counted once) regressed on the drivers by
//!    least squares with season-clustered errors ([`regression`]); the past seasons'
//!    residual sequences, with their slow term and fitted ENSO effect removed, form the pool;
//! 3. [`mod@simulate`]: each simulated season adds to the known tide the projected slow term
//!    (with its error), the ENSO effect of a scenario (coefficient drawn) and a resampled
//!    past residual sequence; a day floods when the sum reaches the threshold. The counts give
//!    the pmf, each day's share of flooded simulations the day calendar.
//!
//! Counts that the tide controls can be under-dispersed (variance below the mean), which a
//! count model of seasons cannot express; the simulation reproduces it because the tide of
//! each coming day is known. Outlook and hindcast reach the simulation through one function,
//! [`simulate::simulate`], so the skill quoted is the skill of what is served.

// DEVELOPERS.md asks for range checks written so NaN fails them (`if !(x > 0.0)`).
#![allow(
    clippy::neg_cmp_op_on_partial_ord,
    reason = "range checks are written so that NaN fails them"
)]

pub mod block;
pub mod days;
pub mod engine;
pub mod gauge;
pub mod persistence;
pub mod regression;
pub mod simulate;

pub use days::{DayDrivers, DayGrid, SeasonWater, WaterDay, season_days};
pub use engine::{Columns, WaterConfig, WaterFit, WaterParams};
pub use gauge::{GaugeWater, WaterReport, enso_at_issue};
pub use persistence::Persistence;
pub use regression::{Coefficient, Covariance, Regression, RegressionError};
pub use simulate::{DEFAULT_SIMULATIONS, SeasonPlan, Simulated, simulate};

/// Why the engine could not fit or simulate.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum WaterError {
    /// A setting out of range.
    #[error("water engine setting {name} = {value} is out of range")]
    BadSetting {
        /// The setting.
        name: &'static str,
        /// Its value.
        value: f64,
    },
    /// Too few training seasons.
    #[error("{seasons} training seasons; the water engine needs at least {needed}")]
    TooFewSeasons {
        /// Seasons given.
        seasons: usize,
        /// Seasons needed.
        needed: usize,
    },
    /// A training season index outside the table.
    #[error("training season {index} is not in the season table")]
    NoSeason {
        /// The index.
        index: usize,
    },
    /// Some day of the season has no observed past day within the shift window.
    #[error("some day of the season has no observed day in any training season near it")]
    EmptyPool,
    /// The regression failed.
    #[error("residual regression: {0}")]
    Regression(#[from] RegressionError),
    /// The slow term's source cannot give a level.
    #[error("sea level: {0}")]
    SeaLevel(#[from] crate::drivers::sea_level::TrendError),
    /// The tidal analysis failed.
    #[error("tidal analysis: {0}")]
    Tide(#[from] crate::tide::TideError),
    /// The gauge has no tide model (its harmonic analysis was not run).
    #[error("the water engine needs the gauge's tide model, and none was fitted")]
    NoTideModel,
    /// Zero simulations asked for.
    #[error("a simulation needs at least one season (simulations = 0)")]
    NoSimulations,
    /// The fit has an ENSO effect but no ENSO scenario was given.
    #[error("the water engine uses ENSO but no ENSO scenario was given")]
    NoEnsoScenario,
    /// No ENSO value for the target season.
    #[error("no ENSO value for {season}: {why}")]
    NoEnso {
        /// The season.
        season: String,
        /// Why.
        why: String,
    },
    /// The target season is not of the engine's season name.
    #[error("{season} is not a {season_name} season")]
    SeasonMismatch {
        /// The season.
        season: String,
        /// The engine's season name.
        season_name: String,
    },
}
