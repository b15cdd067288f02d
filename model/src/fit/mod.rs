//! The gauge model: from a gauge's season table and its drivers to a fitted count model of
//! seasonal flood days, one model per season name (all DJF seasons together, all MAM seasons
//! together, ...).
//!
//! Flow: [`SeasonRow`]s (flood days, observed days, driver values per season) ->
//! [`Design`] (the usable seasons of one season name, the predictors the gauge asks for, the
//! offset `ln(observed days)`, and the seasons left out with their reasons) -> [`fit_design`]
//! (Poisson or negative-binomial GLM by [`crate::glm`], the family chosen by its
//! likelihood-ratio test under `auto`) -> [`GaugeModel`] (coefficients with incidence-rate
//! ratios per driver step and their 95% intervals, the family test, the fit period).

mod design;
mod model;
mod predictor;

pub use design::{Design, DesignRow, DriverValue, LeaveOutReason, LeftOut, SeasonRow};
pub use model::{CoefficientReport, FitPeriod, GaugeModel, MIN_SEASONS, fit_design};
pub use predictor::{Predictor, UnknownPredictor};

/// Why a gauge model could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    /// Too few usable seasons of the season name.
    #[error(
        "{season_name}: {usable} usable seasons, at least {needed} needed ({left_out} left out; \
         see the left-out reasons)"
    )]
    TooFewSeasons {
        /// The season name.
        season_name: String,
        /// Seasons usable.
        usable: usize,
        /// Seasons needed.
        needed: usize,
        /// Seasons of that name left out.
        left_out: usize,
    },
    /// The count model failed.
    #[error("{season_name}: {source}")]
    Glm {
        /// The season name.
        season_name: String,
        /// The GLM's error.
        #[source]
        source: crate::glm::GlmError,
    },
}
