//! The predictors a gauge model can use, as named in the gauge TOML's `[model].predictors`:
//! their units, and the step in which their rate ratios are reported.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// One predictor of the gauge model, named as in the gauge TOML's `[model].predictors`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Predictor {
    /// Seasonal ENSO index (deg C), preceding or concurrent season.
    Enso,
    /// Share of the season's days with an active MJO in the gauge's chosen RMM phases.
    Mjo,
    /// Mean along-shore wind component that drives onshore Ekman transport (m/s).
    Wind,
    /// Sea-level trend value at the season's middle (m).
    SeaLevel,
    /// Days in the season when predicted tide plus mean sea level comes near the threshold.
    Tide,
}

/// A predictor name that is not one of `enso`, `mjo`, `wind`, `sea_level`, `tide`.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown predictor {0:?} (known: enso, mjo, wind, sea_level, tide)")]
pub struct UnknownPredictor(pub String);

impl Predictor {
    /// Every predictor, in the order the design matrix lists them.
    pub const ALL: [Predictor; 5] = [
        Predictor::Enso,
        Predictor::Mjo,
        Predictor::Wind,
        Predictor::SeaLevel,
        Predictor::Tide,
    ];

    /// The name used in TOML and JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            Predictor::Enso => "enso",
            Predictor::Mjo => "mjo",
            Predictor::Wind => "wind",
            Predictor::SeaLevel => "sea_level",
            Predictor::Tide => "tide",
        }
    }

    /// The unit of the predictor's values.
    pub fn unit(self) -> &'static str {
        match self {
            Predictor::Enso => "degC",
            Predictor::Mjo => "share of days",
            Predictor::Wind => "m/s",
            Predictor::SeaLevel => "m",
            Predictor::Tide => "days",
        }
    }

    /// The step, in the predictor's unit, per which its rate ratio is reported: a step of a
    /// size that occurs between seasons, so the ratio reads naturally.
    pub fn report_step(self) -> f64 {
        match self {
            Predictor::Enso => 1.0,
            Predictor::Mjo => 0.1,
            Predictor::Wind => 1.0,
            Predictor::SeaLevel => 0.1,
            Predictor::Tide => 1.0,
        }
    }

    /// The report step in words, e.g. `per 0.1 m`.
    pub fn step_words(self) -> &'static str {
        match self {
            Predictor::Enso => "per 1 degC",
            Predictor::Mjo => "per 10 percentage points of days",
            Predictor::Wind => "per 1 m/s",
            Predictor::SeaLevel => "per 0.1 m",
            Predictor::Tide => "per 1 day",
        }
    }

    /// A plain name for sentences, e.g. `ENSO`.
    pub fn plain_name(self) -> &'static str {
        match self {
            Predictor::Enso => "ENSO",
            Predictor::Mjo => "MJO activity",
            Predictor::Wind => "along-shore wind",
            Predictor::SeaLevel => "mean sea level",
            Predictor::Tide => "astronomical tide",
        }
    }
}

impl fmt::Display for Predictor {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl FromStr for Predictor {
    type Err = UnknownPredictor;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Predictor::ALL
            .into_iter()
            .find(|p| p.as_str() == s.trim())
            .ok_or_else(|| UnknownPredictor(s.to_owned()))
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        for p in Predictor::ALL {
            assert_eq!(p.as_str().parse::<Predictor>().unwrap(), p);
        }
        assert!("salinity".parse::<Predictor>().is_err());
    }
}
