//! The two references an outlook is read against:
//!
//! - the **climatology** of the current WMO standard normal period, 1991-2020: a model with
//!   intercept and exposure only, fitted on that period's seasons of the target's season name
//!   (the *climatological model*, not the empirical counts, so seasons with gaps weigh by
//!   their observed days). When fewer than [`MIN_NORMAL_SEASONS`] of the 30 seasons are usable
//!   it falls back to the whole record, with a note;
//! - the **trend-only** expectation: a model with the sea-level trend alone, fitted on every
//!   usable season and predicted for the target season with the extrapolated trend.
//!
//! With a rising sea level the fixed normal is biased low for a season today, so "above
//! normal" against the 1991-2020 normal is read honestly only next to the trend-only one.

use serde::Serialize;

use crate::fit::{Design, FitError, GaugeModel, Predictor, PreparedGauge, SeasonData, fit_design};
use crate::glm::FamilyRequest;

/// The WMO standard normal period in use (1991-2020).
pub const NORMAL_PERIOD: (i32, i32) = (1991, 2020);

/// Usable seasons of the normal period needed to fit its climatology: 24 of 30 (80%). From
/// memory of the WMO guidance on normals (WMO-No. 1203, 2017), which asks for at least 80% of
/// the years of the period; treat the exact figure as a stated choice.
pub const MIN_NORMAL_SEASONS: usize = 24;

/// Which reference a set of tercile probabilities is against.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ReferenceKind {
    /// The climatological model of the normal period (or of the whole record on fallback).
    Climatology,
    /// The sea-level trend alone, predicted for the target season.
    TrendOnly,
}

/// A fitted reference model and what it stands for.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Reference {
    /// Which reference.
    pub kind: ReferenceKind,
    /// Its name in words, e.g. `1991-2020 climatology`.
    pub name: String,
    /// What the reference distribution is, in words.
    pub description: String,
    /// Whether the climatology fell back to the whole record.
    pub fallback: bool,
    /// The fitted model.
    pub model: GaugeModel,
}

/// The climatology reference for seasons named `season_name`.
pub fn climatology(
    rows: &[SeasonData],
    season_name: &str,
    family: FamilyRequest,
) -> Result<Reference, FitError> {
    let all = Design::build(rows, season_name, &[]);
    let normal = all.years(NORMAL_PERIOD.0, NORMAL_PERIOD.1);
    let (design, fallback) = if normal.rows.len() >= MIN_NORMAL_SEASONS {
        (normal, false)
    } else {
        (all, true)
    };
    let model = fit_design(&design, family)?;
    let (name, description) = if fallback {
        (
            format!(
                "whole-record climatology ({} to {})",
                model.fit_period.first, model.fit_period.last
            ),
            format!(
                "climatological model (intercept and exposure only) fitted on every usable \
                 season of the record: only {} usable seasons fall in {}-{}, fewer than the {} \
                 needed",
                design.years(NORMAL_PERIOD.0, NORMAL_PERIOD.1).rows.len(),
                NORMAL_PERIOD.0,
                NORMAL_PERIOD.1,
                MIN_NORMAL_SEASONS
            ),
        )
    } else {
        (
            format!("{}-{} climatology", NORMAL_PERIOD.0, NORMAL_PERIOD.1),
            format!(
                "climatological model (intercept and exposure only) fitted on the {} usable \
                 {season_name} seasons of {}-{}, predicted for the target season's days with \
                 parameter uncertainty",
                model.fit_period.seasons, NORMAL_PERIOD.0, NORMAL_PERIOD.1
            ),
        )
    };
    Ok(Reference {
        kind: ReferenceKind::Climatology,
        name,
        description,
        fallback,
        model,
    })
}

/// The trend-only reference: the sea-level trend alone, fitted on every usable season.
pub fn trend_only(
    rows: &[SeasonData],
    season_name: &str,
    family: FamilyRequest,
) -> Result<Reference, FitError> {
    let design = Design::build(rows, season_name, &[Predictor::SeaLevel]);
    let model = fit_design(&design, family)?;
    Ok(Reference {
        kind: ReferenceKind::TrendOnly,
        name: "trend-only expectation".to_owned(),
        description: format!(
            "model with the sea-level trend alone, fitted on the {} usable seasons {} to {}, \
             predicted for the target season with the extrapolated trend and its uncertainty",
            model.fit_period.seasons, model.fit_period.first, model.fit_period.last
        ),
        fallback: false,
        model,
    })
}

/// Both references of a season name at a gauge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutlookReferences {
    /// The climatology.
    pub climatology: Reference,
    /// The trend-only reference, when the gauge has a sea-level trend.
    pub trend_only: Option<Reference>,
}

/// Fits both references of `season_name` at a prepared gauge, with the TOML's family.
pub fn fit_references(
    prepared: &PreparedGauge,
    season_name: &str,
) -> Result<OutlookReferences, FitError> {
    let family = crate::fit::family_request(prepared.config.model.family);
    let climatology = climatology(&prepared.seasons, season_name, family)?;
    let trend_only = match trend_only(&prepared.seasons, season_name, family) {
        Ok(reference) => Some(reference),
        Err(_) if prepared.drivers.sea_level.is_none() => None,
        Err(e) => return Err(e),
    };
    Ok(OutlookReferences {
        climatology,
        trend_only,
    })
}
