//! One row of seasonal predictors per season, with the reason for each missing one.
//!
//! A season lacking any wanted driver is kept in the row list with its [`Shortfall`]s so the
//! fit can leave it out and report why; nothing is filled in.

use serde::Serialize;

use super::enso::{EnsoSeries, EnsoTiming, EnsoValue};
use super::forecast::PastSeason;
use super::mjo::{MjoShare, PhaseSet, RmmSeries};
use super::sea_level::{SeaLevelSource, TrendValue};
use super::wind::{Coast, WindSeries, WindStatistic, WindValue};
use super::{Driver, Shortfall, ShortfallReason};
use crate::season::Season;

/// The driver series available for a gauge (any may be absent).
#[derive(Debug, Clone, Copy, Default)]
pub struct DriverInputs<'a> {
    /// Monthly ENSO index.
    pub enso: Option<&'a EnsoSeries>,
    /// Daily RMM index.
    pub rmm: Option<&'a RmmSeries>,
    /// Daily wind at the gauge.
    pub wind: Option<&'a WindSeries>,
    /// The sea-level trend, rate or projection.
    pub sea_level: Option<&'a SeaLevelSource>,
}

/// A gauge's settings for turning driver series into predictors.
#[derive(Debug, Clone, PartialEq)]
pub struct PredictorSettings {
    /// Concurrent or preceding ENSO.
    pub enso_timing: EnsoTiming,
    /// RMM phases whose active days count.
    pub mjo_phases: PhaseSet,
    /// Mean or positive part of the along-shore wind.
    pub wind_statistic: WindStatistic,
    /// The coastline (orientation and hemisphere); needed for wind.
    pub coast: Option<Coast>,
    /// Minor flood threshold, m on the gauge's datum; the sea-level predictor is relative to it.
    pub flood_threshold_m: f64,
}

/// One season's predictors.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeasonPredictors {
    /// The season's label.
    pub season: String,
    /// ENSO under the gauge's timing.
    pub enso: Option<EnsoValue>,
    /// ENSO mean over the season's own months (used to categorise past seasons), whether or
    /// not ENSO is a predictor.
    pub enso_own_season: Option<f64>,
    /// MJO active share.
    pub mjo: Option<MjoShare>,
    /// Along-shore wind.
    pub wind: Option<WindValue>,
    /// Trend sea level at mid-season minus the flood threshold, m.
    pub sea_level: Option<TrendValue>,
    /// Why wanted drivers are missing; empty when the season is usable.
    pub missing: Vec<Shortfall>,
}

impl SeasonPredictors {
    /// The numeric value of `driver`, if present.
    pub fn value(&self, driver: Driver) -> Option<f64> {
        match driver {
            Driver::Enso => self.enso.as_ref().map(|v| v.value),
            Driver::Mjo => self.mjo.as_ref().map(|v| v.share),
            Driver::Wind => self.wind.as_ref().map(|v| v.value),
            Driver::SeaLevel => self.sea_level.as_ref().map(|v| v.value),
        }
    }

    /// Whether every wanted driver has a value (the season may enter a fit).
    pub fn is_complete(&self) -> bool {
        self.missing.is_empty()
    }

    /// The reasons as plain sentences, e.g. `mjo: 30 of 90 days missing (60 present, 72 needed)`.
    pub fn missing_reasons(&self) -> Vec<String> {
        self.missing.iter().map(ToString::to_string).collect()
    }

    /// This season as a candidate for scenario resampling.
    pub fn past_season(&self) -> PastSeason {
        PastSeason {
            label: self.season.clone(),
            enso: self.enso_own_season,
            mjo_share: self.mjo.as_ref().map(|m| m.share),
            wind: self.wind.as_ref().map(|w| w.value),
        }
    }
}

/// The predictors of `season` for the `wanted` drivers; unwanted drivers are not computed
/// (except the own-season ENSO mean, kept for categorising).
pub fn season_predictors(
    season: &Season,
    inputs: &DriverInputs<'_>,
    settings: &PredictorSettings,
    wanted: &[Driver],
) -> SeasonPredictors {
    let mut missing = Vec::new();
    let enso = take(
        &mut missing,
        wanted,
        Driver::Enso,
        inputs
            .enso
            .map(|s| s.seasonal(season, settings.enso_timing)),
    );
    let mjo = take(
        &mut missing,
        wanted,
        Driver::Mjo,
        inputs.rmm.map(|s| s.seasonal(season, settings.mjo_phases)),
    );
    let wind_result = inputs.wind.map(|s| match &settings.coast {
        Some(coast) => s.seasonal(season, coast, settings.wind_statistic),
        None => Err(Shortfall {
            driver: Driver::Wind,
            reason: ShortfallReason::Unavailable {
                detail: "the gauge has no coast orientation and latitude".to_owned(),
            },
        }),
    });
    let wind = take(&mut missing, wanted, Driver::Wind, wind_result);
    let sea_result = inputs.sea_level.map(|s| {
        s.season_value(season, settings.flood_threshold_m)
            .map_err(|e| Shortfall {
                driver: Driver::SeaLevel,
                reason: ShortfallReason::Unavailable {
                    detail: e.to_string(),
                },
            })
    });
    let sea_level = take(&mut missing, wanted, Driver::SeaLevel, sea_result);
    let enso_own_season = inputs
        .enso
        .and_then(|s| s.seasonal(season, EnsoTiming::Concurrent).ok())
        .map(|v| v.value);
    SeasonPredictors {
        season: season.label(),
        enso,
        enso_own_season,
        mjo,
        wind,
        sea_level,
        missing,
    }
}

/// The value of a wanted driver, recording its shortfall (or a missing series) otherwise.
fn take<T>(
    missing: &mut Vec<Shortfall>,
    wanted: &[Driver],
    driver: Driver,
    result: Option<Result<T, Shortfall>>,
) -> Option<T> {
    if !wanted.contains(&driver) {
        return None;
    }
    match result {
        Some(Ok(v)) => Some(v),
        Some(Err(shortfall)) => {
            missing.push(shortfall);
            None
        }
        None => {
            missing.push(Shortfall {
                driver,
                reason: ShortfallReason::NoSeries,
            });
            None
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)] // a failed unwrap is a failed test
mod tests {
    use super::*;

    #[test]
    fn missing_drivers_are_reported_not_filled() {
        let s: Season = "2020-DJF".parse().unwrap();
        let enso = EnsoSeries::from_months([(2020, 9, 1.0), (2020, 10, 1.0), (2020, 11, 1.0)]);
        let settings = PredictorSettings {
            enso_timing: EnsoTiming::Preceding,
            mjo_phases: PhaseSet::new(&[2, 3]).unwrap(),
            wind_statistic: WindStatistic::Mean,
            coast: Some(Coast::new(90.0, 40.0).unwrap()),
            flood_threshold_m: 0.8,
        };
        let inputs = DriverInputs {
            enso: Some(&enso),
            ..DriverInputs::default()
        };
        let row = season_predictors(&s, &inputs, &settings, &[Driver::Enso, Driver::Mjo]);
        assert_eq!(row.value(Driver::Enso), Some(1.0));
        assert_eq!(row.enso_own_season, None); // DJF months absent
        assert!(!row.is_complete());
        assert_eq!(
            row.missing_reasons(),
            vec!["mjo: no series given".to_owned()]
        );
        let only_enso = season_predictors(&s, &inputs, &settings, &[Driver::Enso]);
        assert!(only_enso.is_complete());
    }
}
