//! A derived minor flood threshold for gauges without a locally set one.
//!
//! Sweet et al. (2018), *Patterns and Projections of High Tide Flooding Along the U.S.
//! Coastline Using a Common Impact Threshold*, NOAA Technical Report NOS CO-OPS 086, fit the
//! locally set minor (nuisance) flood thresholds of US gauges against the great diurnal range
//! and offer `minor = 0.04 * GT + 0.50 m` above MHHW as a common impact threshold. The
//! coefficients are quoted from memory of that report; the form (a threshold rising with the
//! tidal range, about half a metre above MHHW) is what the checks pin.

use serde::Serialize;

use super::TideError;
use super::datums::Datums;

/// Slope of the derived threshold on the great diurnal range (Sweet et al. 2018).
pub const SLOPE_ON_GT: f64 = 0.04;
/// Height of the derived threshold above MHHW at zero range, metres (Sweet et al. 2018).
pub const OFFSET_ABOVE_MHHW_M: f64 = 0.50;

/// A minor flood threshold derived from the tidal range, flagged as such.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DerivedThreshold {
    /// The threshold, metres on the levels' datum.
    pub level_m: f64,
    /// The threshold above MHHW, metres.
    pub above_mhhw_m: f64,
    /// The great diurnal range used, metres.
    pub great_diurnal_range_m: f64,
    /// Always true: the value is derived, not locally set.
    pub derived: bool,
    /// Where the formula comes from.
    pub method: String,
    /// Plain cautions; never empty.
    pub cautions: Vec<String>,
}

/// The derived minor threshold from datums in metres.
pub fn derived_minor_threshold(datums: &Datums) -> Result<DerivedThreshold, TideError> {
    if !(datums.gt >= 0.0 && datums.gt.is_finite()) {
        return Err(TideError::BadParameter {
            name: "great diurnal range",
            value: datums.gt,
            expected: "a finite range >= 0 m",
        });
    }
    if !datums.mhhw.is_finite() {
        return Err(TideError::BadParameter {
            name: "MHHW",
            value: datums.mhhw,
            expected: "a finite level",
        });
    }
    let above = SLOPE_ON_GT * datums.gt + OFFSET_ABOVE_MHHW_M;
    Ok(DerivedThreshold {
        level_m: datums.mhhw + above,
        above_mhhw_m: above,
        great_diurnal_range_m: datums.gt,
        derived: true,
        method: "0.04 x GT + 0.50 m above MHHW, the common impact threshold of Sweet et al. \
                 (2018), NOAA Technical Report NOS CO-OPS 086"
            .to_owned(),
        cautions: vec![
            "This threshold is derived from the tidal range, not set locally: a locally \
             set minor flood threshold (e.g. from the local weather service or emergency \
             managers) always comes first."
                .to_owned(),
            "Derived thresholds mark where minor impacts typically begin at US gauges; \
             low-lying streets at this site may flood below or above it."
                .to_owned(),
        ],
    })
}
