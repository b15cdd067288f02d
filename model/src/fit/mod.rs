//! The gauge model: from a gauge's season table and its drivers to a fitted count model of
//! seasonal flood days, one model per season name (all DJF seasons together, all MAM seasons
//! together, ...).
//!
//! Flow: [`SeasonData`]s (flood days, observed days, driver values per season) ->
//! [`Design`] (the usable seasons of one season name, the predictors the gauge asks for, the
//! offset `ln(observed days)`, and the seasons left out with their reasons) -> [`fit_design`]
//! (Poisson or negative-binomial GLM by [`crate::glm`], the family chosen by its
//! likelihood-ratio test under `auto`) -> [`GaugeModel`] (coefficients with incidence-rate
//! ratios per driver step and their 95% intervals, the family test, the fit period).
//!
//! Before that, [`prepare`] turns a gauge's [`GaugeSources`] (its TOML text and the bytes of
//! its files, read by [`GaugeSources::read`] or from the service's store) into a
//! [`PreparedGauge`], parsing each input exactly once.

mod design;
mod model;
mod prepare;
mod sources;
mod table;

pub use crate::predictor::{Predictor, UnknownPredictor};
pub use design::{Design, DesignRow, DriverValue, LeaveOutReason, LeftOut, SeasonData};
pub use model::{CoefficientReport, FitPeriod, GaugeModel, MIN_SEASONS, fit_design};
pub(crate) use model::{GlmInput, glm_input};
pub use prepare::{
    GaugeDrivers, PrepareError, PreparedGauge, RecordedGauge, TIDE_MARGIN_M, TidalDriver,
    TideAnalysis, driver_of, predictor_settings, prepare, record_gauge, sea_level_source,
    tidal_driver,
};
pub use sources::{ByteSource, FilesNeeded, GaugeSources, GaugeToml, SourceError, TextSource};
pub use table::{LEADING_COLUMNS, LEFT_OUT_COLUMN, write_predictor_table};

use crate::glm::FamilyRequest;

/// Choices of one fit beyond the gauge's TOML (for refits on part of the record, as a
/// hindcast does). The default fits every usable season with the TOML's family.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FitOptions {
    /// Overrides the TOML's family.
    pub family: Option<FamilyRequest>,
    /// Fit only seasons whose first year lies in this range (inclusive).
    pub years: Option<(i32, i32)>,
    /// Leave out seasons whose first year is listed (e.g. a held-out year and its neighbours).
    pub exclude_years: Vec<i32>,
}

/// The family a gauge's TOML asks for, as the count models name it.
pub fn family_request(family: crate::gauge::Family) -> FamilyRequest {
    match family {
        crate::gauge::Family::Poisson => FamilyRequest::Poisson,
        crate::gauge::Family::Negbin => FamilyRequest::Negbin,
        crate::gauge::Family::Auto => FamilyRequest::Auto,
    }
}

/// The design of `season_name` for a prepared gauge: the TOML's predictors, restricted by
/// `options`' years (seasons outside them are simply not part of the design).
pub fn gauge_design(prepared: &PreparedGauge, season_name: &str, options: &FitOptions) -> Design {
    let mut design = Design::build(
        &prepared.seasons,
        season_name,
        &prepared.requested_predictors(),
    );
    if let Some((first, last)) = options.years {
        design = design.years(first, last);
    }
    if !options.exclude_years.is_empty() {
        design
            .rows
            .retain(|r| !options.exclude_years.contains(&r.season.year()));
    }
    design
}

/// Fits the model of `season_name` (e.g. `DJF`) for a prepared gauge.
pub fn fit_gauge(
    prepared: &PreparedGauge,
    season_name: &str,
    options: &FitOptions,
) -> Result<GaugeModel, FitError> {
    let specs = &prepared.config.seasons.specs;
    if !specs
        .iter()
        .any(|s| s.name().eq_ignore_ascii_case(season_name))
    {
        return Err(FitError::UnknownSeasonName {
            season_name: season_name.to_owned(),
            known: specs
                .iter()
                .map(|s| s.name())
                .collect::<Vec<_>>()
                .join(", "),
        });
    }
    let design = gauge_design(prepared, season_name, options);
    let family = options
        .family
        .unwrap_or_else(|| family_request(prepared.config.model.family));
    fit_design(&design, family)
}

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
    /// A season name the gauge does not define.
    #[error("no season named {season_name:?} is defined for this gauge (known: {known})")]
    UnknownSeasonName {
        /// The name asked for.
        season_name: String,
        /// The defined names, comma separated.
        known: String,
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
