//! Fitting the engine on a set of training seasons: the residual regression on the drivers
//! and the pool of past residual sequences the simulation resamples.
//!
//! Unchecked [`WaterParams`] -> checked [`WaterConfig`] -> [`WaterConfig::fit`] ->
//! [`WaterFit`], which alone can simulate a season ([`crate::water::simulate()`]).

use serde::Serialize;

use super::WaterError;
use super::days::SeasonWater;
use super::regression::{self, Covariance, Regression};
use crate::drivers::SeaLevelSource;

/// Mean length of a resampled block of days when the residuals are too few for the
/// automatic rule ([`super::block`]): about the life of a weather system (a stated choice).
pub const FALLBACK_BLOCK_DAYS: f64 = 10.0;

/// Half-width of the window of calendar positions a block may be shifted within, days,
/// unless asked otherwise (the +/- 7-day window of resampling weather generators, e.g.
/// Rajagopalan and Lall 1999, from memory).
pub const DEFAULT_SHIFT_DAYS: usize = 7;

/// Training seasons needed to fit the engine.
pub const MIN_TRAINING_SEASONS: usize = 5;

/// The drivers whose effect on the water is estimated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
pub struct Columns {
    /// ENSO of the day's month.
    pub enso: bool,
    /// MJO active in the gauge's phases, and in the opposite phases.
    pub mjo: bool,
    /// The day's along-shore wind.
    pub wind: bool,
}

impl Columns {
    /// The regression's column names, intercept first.
    pub fn names(self) -> Vec<&'static str> {
        let mut names = vec!["intercept"];
        if self.enso {
            names.push("enso");
        }
        if self.mjo {
            names.extend(["mjo_in_phases", "mjo_opposite_phases"]);
        }
        if self.wind {
            names.push("wind");
        }
        names
    }
}

/// Unchecked settings of the engine.
#[derive(Debug, Clone, PartialEq)]
pub struct WaterParams {
    /// The drivers in the regression.
    pub columns: Columns,
    /// Flood threshold, m on the datum.
    pub threshold_m: f64,
    /// Mean block length of the resampling, days (>= 1); `None`: chosen from the residuals'
    /// persistence (Politis and White 2004).
    pub block_days: Option<f64>,
    /// Half-width of the shift window, days.
    pub shift_days: usize,
}

impl WaterParams {
    /// Settings with the default resampling.
    pub fn new(columns: Columns, threshold_m: f64) -> Self {
        Self {
            columns,
            threshold_m,
            block_days: None,
            shift_days: DEFAULT_SHIFT_DAYS,
        }
    }

    /// Validates the settings.
    pub fn check(&self) -> Result<WaterConfig, WaterError> {
        if !self.threshold_m.is_finite() {
            return Err(WaterError::BadSetting {
                name: "threshold_m",
                value: self.threshold_m,
            });
        }
        if let Some(b) = self.block_days
            && !(b >= 1.0 && b.is_finite())
        {
            return Err(WaterError::BadSetting {
                name: "block_days",
                value: b,
            });
        }
        Ok(WaterConfig(self.clone()))
    }
}

/// Validated settings.
#[derive(Debug, Clone, PartialEq)]
pub struct WaterConfig(WaterParams);

impl WaterConfig {
    /// The settings.
    pub fn params(&self) -> &WaterParams {
        &self.0
    }

    /// Fits the engine on `seasons` (days of one season name), using only those whose index
    /// is in `training`. `sea_level` gives the slow mean-sea-level term (relative to the tide
    /// model's mean `tide_mean`).
    pub fn fit(
        &self,
        seasons: &[SeasonWater],
        training: &[usize],
        sea_level: &SeaLevelSource,
        tide_mean: f64,
    ) -> Result<WaterFit, WaterError> {
        let columns = self.0.columns;
        let names = columns.names();
        let k = names.len();
        let mut x = Vec::new();
        let mut y = Vec::new();
        let mut blocks = Vec::new();
        let mut pool = Vec::with_capacity(training.len());
        for &s in training {
            let season = seasons.get(s).ok_or(WaterError::NoSeason { index: s })?;
            let mut sequence = Vec::with_capacity(season.days.len());
            for day in &season.days {
                let entry = match day.residual {
                    Some(r) => {
                        let slow = slow_term(sea_level, tide_mean, day.year)?;
                        let y_day = r - slow;
                        let row = regressors(day, columns);
                        if let Some(row) = &row {
                            x.extend_from_slice(row);
                            y.push(y_day);
                            blocks.push(s);
                        }
                        // The pool needs the ENSO of the day's month to exchange its effect.
                        match (columns.enso, day.enso) {
                            (true, Some(e)) => Some(PoolDay {
                                value: y_day,
                                enso: e,
                                lead: 0.0,
                            }),
                            (true, None) => None,
                            (false, _) => Some(PoolDay {
                                value: y_day,
                                enso: 0.0,
                                lead: 0.0,
                            }),
                        }
                    }
                    None => None,
                };
                sequence.push(entry);
            }
            pool.push(sequence);
        }
        if training.len() < MIN_TRAINING_SEASONS {
            return Err(WaterError::TooFewSeasons {
                seasons: training.len(),
                needed: MIN_TRAINING_SEASONS,
            });
        }
        debug_assert_eq!(x.len(), y.len() * k);
        let regression = regression::fit(&names, &x, &y, &blocks, Covariance::Cluster)?;
        // Pool values carry the fitted ENSO effect removed: value - b_enso * enso.
        let enso_coefficient = regression.coefficient("enso").map_or(0.0, |c| c.estimate);
        for day in pool.iter_mut().flatten().flatten() {
            day.value -= enso_coefficient * day.enso;
        }
        // The lead-in state of each training season, then its persistence into the season.
        let anomalies = training
            .iter()
            .map(|&s| {
                lead_anomaly(
                    &seasons[s],
                    sea_level,
                    tide_mean,
                    enso_coefficient,
                    columns.enso,
                )
            })
            .collect::<Result<Vec<_>, _>>()?;
        let persistence = super::persistence::estimate(&pool, &anomalies);
        if let Some(p) = persistence {
            for (sequence, anomaly) in pool.iter_mut().zip(&anomalies) {
                let Some(a) = anomaly else { continue };
                let mut weight = 1.0;
                for day in sequence.iter_mut() {
                    if let Some(day) = day {
                        day.lead = weight * (a - p.mean_anomaly);
                        day.value -= p.coefficient * day.lead;
                    }
                    weight *= p.decay;
                }
            }
        }
        let season_days = pool.iter().map(Vec::len).max().unwrap_or(0);
        let block_days = self.0.block_days.unwrap_or_else(|| {
            super::block::politis_white(&pool, season_days).unwrap_or(FALLBACK_BLOCK_DAYS)
        });
        let pool = Pool::new(pool, self.0.shift_days)?;
        Ok(WaterFit {
            persistence,
            block_days,
            params: self.0.clone(),
            regression,
            pool,
            sea_level: sea_level.clone(),
            tide_mean,
        })
    }
}

/// The regressors of a day, intercept first; `None` when one is missing.
fn regressors(day: &super::days::WaterDay, columns: Columns) -> Option<Vec<f64>> {
    let flag = |b: bool| if b { 1.0 } else { 0.0 };
    let mut row = vec![1.0];
    if columns.enso {
        row.push(day.enso?);
    }
    if columns.mjo {
        row.push(flag(day.mjo_in_phases?));
        row.push(flag(day.mjo_opposite?));
    }
    if columns.wind {
        row.push(day.wind?);
    }
    Some(row)
}

/// The slow mean-sea-level term at a decimal year: the sea-level source's level minus the
/// tide model's mean (the level beyond what the tide model already carries).
fn slow_term(source: &SeaLevelSource, tide_mean: f64, year: f64) -> Result<f64, WaterError> {
    Ok(source.level_at(year)?.value - tide_mean)
}

/// Lead-in days with a residual needed for its mean anomaly to count.
const MIN_LEAD_DAYS: usize = 5;

/// The weather state before a season: the mean residual anomaly of its lead-in days (slow
/// term and ENSO effect removed), `None` with too few observed days.
fn lead_anomaly(
    season: &SeasonWater,
    sea_level: &SeaLevelSource,
    tide_mean: f64,
    enso_coefficient: f64,
    uses_enso: bool,
) -> Result<Option<f64>, WaterError> {
    let mut values = Vec::new();
    for day in &season.lead_in {
        let (Some(r), enso) = (day.residual, day.enso) else {
            continue;
        };
        let e = match (uses_enso, enso) {
            (true, Some(e)) => e,
            (true, None) => continue,
            (false, _) => 0.0,
        };
        values.push(r - slow_term(sea_level, tide_mean, day.year)? - enso_coefficient * e);
    }
    Ok((values.len() >= MIN_LEAD_DAYS).then(|| values.iter().sum::<f64>() / values.len() as f64))
}

/// One pooled past day: its residual with the slow term and the fitted ENSO effect removed,
/// and the ENSO value that was removed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct PoolDay {
    pub(crate) value: f64,
    pub(crate) enso: f64,
    /// `phi^d (A - mean A)`: the carried lead-in anomaly whose effect was removed.
    pub(crate) lead: f64,
}

/// The past seasons' residual sequences, aligned by day of season.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Pool {
    /// One sequence per training season (missing days `None`).
    pub(crate) seasons: Vec<Vec<Option<PoolDay>>>,
    /// For each day of season, every present pooled day within the shift window of it.
    pub(crate) near: Vec<Vec<PoolDay>>,
    pub(crate) shift_days: usize,
}

impl Pool {
    fn new(seasons: Vec<Vec<Option<PoolDay>>>, shift_days: usize) -> Result<Self, WaterError> {
        let longest = seasons.iter().map(Vec::len).max().unwrap_or(0);
        let mut near = vec![Vec::new(); longest];
        for sequence in &seasons {
            for (k, day) in sequence.iter().enumerate() {
                let Some(day) = day else { continue };
                let lo = k.saturating_sub(shift_days);
                let hi = (k + shift_days).min(longest.saturating_sub(1));
                for slot in &mut near[lo..=hi] {
                    slot.push(*day);
                }
            }
        }
        if near.iter().any(Vec::is_empty) {
            return Err(WaterError::EmptyPool);
        }
        Ok(Self {
            seasons,
            near,
            shift_days,
        })
    }
}

/// A fitted engine: ready to simulate seasons.
#[derive(Debug, Clone, PartialEq)]
pub struct WaterFit {
    pub(crate) params: WaterParams,
    /// The mean block length the simulation resamples with, days.
    pub block_days: f64,
    /// The damped persistence of the lead-in anomaly, when past seasons show one.
    pub persistence: Option<super::persistence::Persistence>,
    /// The residual regression on the drivers (block-robust errors).
    pub regression: Regression,
    pub(crate) pool: Pool,
    /// The slow term's source.
    pub sea_level: SeaLevelSource,
    /// The tide model's mean the slow term is measured from.
    pub tide_mean: f64,
}

impl WaterFit {
    /// Training seasons in the resampling pool.
    pub fn pool_seasons(&self) -> usize {
        self.pool.seasons.len()
    }

    /// The fitted ENSO effect on the daily high water, m per deg C, and its standard error.
    pub fn enso_effect(&self) -> Option<(f64, f64)> {
        self.regression
            .coefficient("enso")
            .map(|c| (c.estimate, c.std_error))
    }

    /// The settings.
    pub fn params(&self) -> &WaterParams {
        &self.params
    }

    /// The lead-in anomaly of `season` under this fit.
    pub(crate) fn lead_of(&self, season: &SeasonWater) -> Result<Option<f64>, WaterError> {
        let b = self.enso_effect().map_or(0.0, |(b, _)| b);
        lead_anomaly(
            season,
            &self.sea_level,
            self.tide_mean,
            b,
            self.params.columns.enso,
        )
    }
}
