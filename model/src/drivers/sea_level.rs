//! The sea-level driver: the slow rise of mean sea level at a gauge, as a least-squares trend
//! of its own monthly means, a user-set rate, or a user-given projection.
//!
//! The trend is fitted by ordinary least squares (linfa-linear's `LinearRegression`) on time
//! centred at the record's mean time, linear or quadratic. Its covariance is
//! `s^2 (X'X)^-1` with `s^2` the residual variance, then inflated for the autocorrelation of
//! monthly residuals: with `r1` their lag-1 sample autocorrelation (pairs of consecutive months only),
//! the effective sample size is `n_eff = n (1 - r1) / (1 + r1)` (AR(1); no change when
//! `r1 <= 0`) and the covariance is multiplied by `(n - p) / (n_eff - p)` for `p` parameters,
//! i.e. the residual variance is taken over `n_eff - p` degrees of freedom (Santer et al. 2000,
//! J. Geophys. Res. 105, 7337-7356). Intervals use Student's t with `n_eff - p` degrees of
//! freedom. The standard error is that of the trend line (the mean level), not of one month.
//! The mean seasonal cycle is by default fitted as nuisance harmonics ([`SeasonalCycle`]) so
//! that it does not pass for autocorrelated noise.

use std::collections::BTreeSet;

use chrono::NaiveDate;
use linfa::traits::Fit;
use linfa_linear::LinearRegression;
use nalgebra::{DMatrix, DVector};
use ndarray::{Array1, Array2};
use serde::{Deserialize, Serialize};
use statrs::distribution::{ContinuousCDF, Normal, StudentsT};

use crate::season::{Season, decimal_year};

/// Fewest usable months a trend is fitted from (two years).
pub const MIN_TREND_MONTHS: usize = 24;

/// Errors of the sea-level driver.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TrendError {
    /// Too few months with readings.
    #[error("sea-level trend: {found} usable monthly means, at least {needed} needed")]
    TooFewMonths {
        /// Months with a finite mean and at least one reading.
        found: usize,
        /// Months needed.
        needed: usize,
    },
    /// A month given twice.
    #[error("sea-level trend: month {year}-{month:02} given twice")]
    DuplicateMonth {
        /// Year.
        year: i32,
        /// Month.
        month: u32,
    },
    /// A month number outside 1..=12.
    #[error("sea-level trend: month {year}-{month} is not a month 1 to 12")]
    BadMonth {
        /// Year.
        year: i32,
        /// Month.
        month: u32,
    },
    /// Residual autocorrelation leaves too few effective months.
    #[error(
        "sea-level trend: residual lag-1 autocorrelation {r1:.3} leaves {n_eff:.1} effective months, too few for {parameters} parameters"
    )]
    TooFewEffective {
        /// Lag-1 autocorrelation of residuals.
        r1: f64,
        /// Effective sample size.
        n_eff: f64,
        /// Parameters fitted.
        parameters: usize,
    },
    /// The least-squares solve failed.
    #[error("sea-level trend: least-squares fit failed: {0}")]
    Fit(String),
    /// A set rate or reference is not finite.
    #[error("sea-level rate: {field} = {value} is not a finite number")]
    BadRate {
        /// Which field.
        field: &'static str,
        /// The value.
        value: f64,
    },
    /// A projection table that is not at least two finite, strictly increasing years.
    #[error("sea-level projection: {0}")]
    BadProjection(String),
    /// A year outside a projection's table.
    #[error("sea-level projection covers {first}..{last}; year {year:.2} is outside it")]
    OutsideProjection {
        /// The year asked for.
        year: f64,
        /// First year of the table.
        first: f64,
        /// Last year of the table.
        last: f64,
    },
}

/// One month's mean sea level from a gauge's record (produced by ingestion).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MonthlyMeanLevel {
    /// Year.
    pub year: i32,
    /// Month, 1 = January.
    pub month: u32,
    /// Mean level, metres relative to the gauge's datum.
    pub mean_m: f64,
    /// Readings the mean is made of; months with none are skipped.
    pub readings: u32,
}

/// The shape of a fitted trend.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TrendShape {
    /// level = a + b t.
    Linear,
    /// level = a + b t + c t^2 (acceleration 2c).
    Quadratic,
    /// Quadratic when the record spans at least [`AUTO_MIN_YEARS`] years, else linear: the
    /// extrapolation of an observed trajectory by a quadratic fit, as the US interagency sea
    /// level report does for the near term (Sweet et al. 2022, NOAA Technical Report NOS 01,
    /// from memory). A linear fit of an accelerating record puts next season's level too low;
    /// a quadratic fit of a short record extrapolates wildly. The acceleration is not tested
    /// for significance (monthly means rarely have the power to show it); its uncertainty
    /// enters the projection's standard error instead. The default.
    #[default]
    Auto,
}

/// The shortest record, in years, on which [`TrendShape::Auto`] considers a quadratic.
pub const AUTO_MIN_YEARS: f64 = 30.0;

impl TrendShape {
    fn parameters(self) -> usize {
        match self {
            TrendShape::Linear => 2,
            TrendShape::Quadratic | TrendShape::Auto => 3,
        }
    }
}

/// Whether the mean seasonal cycle is fitted alongside the trend.
///
/// Monthly mean sea level carries an annual cycle of several centimetres at most gauges; left
/// in the residuals it looks like strong autocorrelation and widens the trend's interval.
/// Fitting it (annual and semiannual harmonics, nuisance terms not part of the trend value)
/// keeps the AR(1) correction for the noise that is really there.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SeasonalCycle {
    /// No cycle terms (for records already deseasonalised).
    Omitted,
    /// cos and sin of 2 pi t and 4 pi t (t in years).
    #[default]
    AnnualSemiannual,
}

impl SeasonalCycle {
    fn terms(self) -> usize {
        match self {
            SeasonalCycle::Omitted => 0,
            SeasonalCycle::AnnualSemiannual => 4,
        }
    }
}

/// The seasonal-cycle regressors at decimal year `t`.
fn cycle_terms(t: f64) -> [f64; 4] {
    let w = std::f64::consts::TAU * t;
    [w.cos(), w.sin(), (2.0 * w).cos(), (2.0 * w).sin()]
}

/// An estimate with its standard error and the degrees of freedom of its interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TrendValue {
    /// The estimate (metres, m/yr or m/yr^2 as the call says).
    pub value: f64,
    /// Its standard error (0 for a user-set rate or projection).
    pub std_error: f64,
    /// Degrees of freedom for its interval (infinite when the error is known or zero).
    pub dof: f64,
    /// Whether the time lies outside the record the trend was fitted on.
    pub extrapolated: bool,
}

impl TrendValue {
    /// The central interval holding the truth with probability `level` (e.g. 0.95).
    pub fn interval(&self, level: f64) -> (f64, f64) {
        let level_ok = level > 0.0 && level < 1.0;
        if self.std_error.is_nan() || self.std_error <= 0.0 || !level_ok {
            return (self.value, self.value);
        }
        let p = 0.5 + level / 2.0;
        let q = if self.dof.is_finite() {
            StudentsT::new(0.0, 1.0, self.dof)
                .map(|t| t.inverse_cdf(p))
                .unwrap_or(f64::NAN)
        } else {
            Normal::standard().inverse_cdf(p)
        };
        (
            self.value - q * self.std_error,
            self.value + q * self.std_error,
        )
    }
}

/// A fitted sea-level trend.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendFit {
    /// Linear or quadratic.
    pub shape: TrendShape,
    /// Whether a seasonal cycle was fitted as nuisance terms.
    pub cycle: SeasonalCycle,
    /// The centre of time, decimal year; coefficients are in powers of (t - centre).
    pub centre_year: f64,
    /// Intercept (level at the centre, m), slope (m/yr), the t^2 term if quadratic, then the
    /// seasonal-cycle terms if fitted (cos, sin of the annual, then semiannual harmonic).
    pub coefficients: Vec<f64>,
    /// Covariance of the coefficients, inflated for autocorrelation (row-major, p x p).
    pub covariance: Vec<f64>,
    /// Months used.
    pub months_used: usize,
    /// Lag-1 autocorrelation of the residuals.
    pub lag1_autocorrelation: f64,
    /// AR(1) effective number of months.
    pub effective_months: f64,
    /// Residual standard deviation, m.
    pub residual_sd: f64,
    /// First month's mid time, decimal year.
    pub first_year: f64,
    /// Last month's mid time, decimal year.
    pub last_year: f64,
}

impl TrendFit {
    fn parameters(&self) -> usize {
        self.coefficients.len()
    }

    fn dof(&self) -> f64 {
        self.effective_months - self.parameters() as f64
    }

    fn linear_combination(&self, trend_gradient: &[f64], year: f64) -> TrendValue {
        let p = self.parameters();
        let mut gradient = vec![0.0; p];
        gradient[..trend_gradient.len()].copy_from_slice(trend_gradient);
        let value = gradient
            .iter()
            .zip(&self.coefficients)
            .map(|(g, c)| g * c)
            .sum();
        let mut variance = 0.0;
        for i in 0..p {
            for j in 0..p {
                variance += gradient[i] * self.covariance[i * p + j] * gradient[j];
            }
        }
        TrendValue {
            value,
            std_error: variance.max(0.0).sqrt(),
            dof: self.dof(),
            extrapolated: year < self.first_year || year > self.last_year,
        }
    }

    /// The trend level (m, datum of the record; the seasonal cycle averaged out) at a
    /// decimal year, with its standard error.
    pub fn level_at(&self, year: f64) -> TrendValue {
        let x = year - self.centre_year;
        let gradient = [1.0, x, x * x];
        self.linear_combination(&gradient[..self.shape.parameters()], year)
    }

    /// The rate of rise (m/yr) at a decimal year.
    pub fn rate_at(&self, year: f64) -> TrendValue {
        let x = year - self.centre_year;
        let gradient = [0.0, 1.0, 2.0 * x];
        self.linear_combination(&gradient[..self.shape.parameters()], year)
    }

    /// The acceleration (m/yr^2, twice the t^2 coefficient) of a quadratic trend.
    pub fn acceleration(&self) -> Option<TrendValue> {
        (self.shape == TrendShape::Quadratic)
            .then(|| self.linear_combination(&[0.0, 0.0, 2.0], self.centre_year))
    }
}

/// The middle of a calendar month as a decimal year.
pub fn month_mid_year(year: i32, month: u32) -> Option<f64> {
    let first = NaiveDate::from_ymd_opt(year, month, 1)?;
    let next = if month == 12 {
        NaiveDate::from_ymd_opt(year + 1, 1, 1)?
    } else {
        NaiveDate::from_ymd_opt(year, month + 1, 1)?
    };
    Some((decimal_year(first) + decimal_year(next)) / 2.0)
}

/// Fits a trend to monthly means (months with no readings or a non-finite mean are skipped),
/// with the seasonal cycle as nuisance terms if `cycle` asks for it.
pub fn fit_trend(
    months: &[MonthlyMeanLevel],
    shape: TrendShape,
    cycle: SeasonalCycle,
) -> Result<TrendFit, TrendError> {
    if shape == TrendShape::Auto {
        let linear = fit_trend(months, TrendShape::Linear, cycle)?;
        if linear.last_year - linear.first_year < AUTO_MIN_YEARS {
            return Ok(linear);
        }
        return Ok(fit_trend(months, TrendShape::Quadratic, cycle).unwrap_or(linear));
    }
    let mut seen = BTreeSet::new();
    let mut points: Vec<(i32, f64, f64)> = Vec::new(); // (month index, time, level)
    for m in months {
        if !seen.insert((m.year, m.month)) {
            return Err(TrendError::DuplicateMonth {
                year: m.year,
                month: m.month,
            });
        }
        let t = month_mid_year(m.year, m.month).ok_or(TrendError::BadMonth {
            year: m.year,
            month: m.month,
        })?;
        if m.readings > 0 && m.mean_m.is_finite() {
            points.push((m.year * 12 + m.month as i32, t, m.mean_m));
        }
    }
    let trend_p = shape.parameters();
    let p = trend_p + cycle.terms();
    let needed = MIN_TREND_MONTHS.max(p + 3);
    if points.len() < needed {
        return Err(TrendError::TooFewMonths {
            found: points.len(),
            needed,
        });
    }
    points.sort_by_key(|&(k, _, _)| k);
    let n = points.len();
    let centre = points.iter().map(|&(_, t, _)| t).sum::<f64>() / n as f64;
    let features = p - 1;
    let x = Array2::from_shape_fn((n, features), |(i, j)| {
        let t = points[i].1;
        if j + 1 < trend_p {
            (t - centre).powi(j as i32 + 1)
        } else {
            cycle_terms(t)[j + 1 - trend_p]
        }
    });
    let y = Array1::from_iter(points.iter().map(|&(_, _, level)| level));
    let fitted = LinearRegression::new()
        .with_intercept(true)
        .fit(&linfa::Dataset::new(x.clone(), y.clone()))
        .map_err(|e| TrendError::Fit(e.to_string()))?;
    let mut coefficients = vec![fitted.intercept()];
    coefficients.extend(fitted.params().iter().copied());
    if coefficients.iter().any(|c| !c.is_finite()) {
        return Err(TrendError::Fit("non-finite coefficients".to_owned()));
    }

    let design = DMatrix::from_fn(n, p, |i, j| if j == 0 { 1.0 } else { x[(i, j - 1)] });
    let beta = DVector::from_vec(coefficients.clone());
    let residuals = DVector::from_iterator(n, y.iter().copied()) - &design * beta;
    let rss = residuals.norm_squared();
    let s2 = rss / (n - p) as f64;

    let (mut lag_sum, mut lag_pairs) = (0.0, 0usize);
    for i in 1..n {
        if points[i].0 == points[i - 1].0 + 1 {
            lag_sum += residuals[i] * residuals[i - 1];
            lag_pairs += 1;
        }
    }
    // The usual sample autocorrelation sum(e_t e_t+1) / sum(e_t^2) (residuals have mean 0);
    // when gaps remove month pairs, the lag sum is scaled up to n - 1 pairs.
    let r1 = if lag_pairs > 0 && rss > 0.0 {
        lag_sum * (n - 1) as f64 / lag_pairs as f64 / rss
    } else {
        0.0
    };
    let n_eff = if r1 > 0.0 {
        n as f64 * (1.0 - r1) / (1.0 + r1)
    } else {
        n as f64
    };
    if n_eff.is_nan() || n_eff < p as f64 + 2.0 {
        return Err(TrendError::TooFewEffective {
            r1,
            n_eff,
            parameters: p,
        });
    }
    let xtx_inv = (design.transpose() * &design)
        .try_inverse()
        .ok_or_else(|| TrendError::Fit("X'X is singular".to_owned()))?;
    let inflation = (n - p) as f64 / (n_eff - p as f64);
    let covariance: Vec<f64> = (0..p * p)
        .map(|k| xtx_inv[(k / p, k % p)] * s2 * inflation)
        .collect();
    Ok(TrendFit {
        shape,
        cycle,
        centre_year: centre,
        coefficients,
        covariance,
        months_used: n,
        lag1_autocorrelation: r1,
        effective_months: n_eff,
        residual_sd: s2.sqrt(),
        first_year: points[0].1,
        last_year: points[n - 1].1,
    })
}

/// A user-given table of year -> mean sea level (m, the gauge's datum), linearly interpolated.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Projection {
    points: Vec<(f64, f64)>,
}

impl Projection {
    /// A projection from (decimal year, level m) points, at least two, strictly increasing in
    /// year, all finite.
    pub fn new(points: Vec<(f64, f64)>) -> Result<Self, TrendError> {
        if points.len() < 2 {
            return Err(TrendError::BadProjection(
                "at least two (year, level) points are needed".to_owned(),
            ));
        }
        if let Some((y, l)) = points
            .iter()
            .find(|(y, l)| !(y.is_finite() && l.is_finite()))
        {
            return Err(TrendError::BadProjection(format!(
                "point ({y}, {l}) is not finite"
            )));
        }
        if let Some(w) = points.windows(2).find(|w| w[1].0 <= w[0].0) {
            return Err(TrendError::BadProjection(format!(
                "years must increase: {} then {}",
                w[0].0, w[1].0
            )));
        }
        Ok(Self { points })
    }

    /// The interpolated level at a decimal year inside the table.
    pub fn level_at(&self, year: f64) -> Result<f64, TrendError> {
        let first = self.points[0].0;
        let last = self.points[self.points.len() - 1].0;
        if !(year >= first && year <= last) {
            return Err(TrendError::OutsideProjection { year, first, last });
        }
        let k = self
            .points
            .windows(2)
            .position(|w| year <= w[1].0)
            .expect("year lies within the table, checked above");
        let ((y0, l0), (y1, l1)) = (self.points[k], self.points[k + 1]);
        Ok(l0 + (l1 - l0) * (year - y0) / (y1 - y0))
    }
}

/// Where a gauge's sea-level predictor comes from.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum SeaLevelSource {
    /// A trend fitted to the gauge's own monthly means.
    Fitted(TrendFit),
    /// A set rate from a reference year and level.
    Rate {
        /// m/yr.
        rate_m_per_yr: f64,
        /// Decimal year of the reference level.
        reference_year: f64,
        /// Level at the reference year, m (gauge datum).
        reference_level_m: f64,
    },
    /// A projection table.
    Projection(Projection),
}

impl SeaLevelSource {
    /// A set rate, checked finite.
    pub fn rate(
        rate_m_per_yr: f64,
        reference_year: f64,
        reference_level_m: f64,
    ) -> Result<Self, TrendError> {
        for (field, value) in [
            ("rate_m_per_yr", rate_m_per_yr),
            ("reference_year", reference_year),
            ("reference_level_m", reference_level_m),
        ] {
            if !value.is_finite() {
                return Err(TrendError::BadRate { field, value });
            }
        }
        Ok(SeaLevelSource::Rate {
            rate_m_per_yr,
            reference_year,
            reference_level_m,
        })
    }

    /// The mean sea level (m, gauge datum) at a decimal year.
    pub fn level_at(&self, year: f64) -> Result<TrendValue, TrendError> {
        let exact = |value: f64| TrendValue {
            value,
            std_error: 0.0,
            dof: f64::INFINITY,
            extrapolated: false,
        };
        match self {
            SeaLevelSource::Fitted(fit) => Ok(fit.level_at(year)),
            SeaLevelSource::Rate {
                rate_m_per_yr,
                reference_year,
                reference_level_m,
            } => Ok(exact(
                reference_level_m + rate_m_per_yr * (year - reference_year),
            )),
            SeaLevelSource::Projection(table) => table.level_at(year).map(exact),
        }
    }

    /// The season's predictor: the level at the season's middle minus the flood threshold
    /// (both m on the gauge's datum), with its standard error.
    pub fn season_value(
        &self,
        season: &Season,
        flood_threshold_m: f64,
    ) -> Result<TrendValue, TrendError> {
        let mut v = self.level_at(season.mid_year())?;
        v.value -= flood_threshold_m;
        Ok(v)
    }
}

/// A gauge's choice of sea-level source, as written in its TOML (`[sea_level]`), before any
/// fit. `source = "trend"` (the default; `shape` and `cycle` optional), `"rate"`
/// (`rate_m_per_yr`, `reference_year`, `reference_level_m`) or `"projection"`
/// (`points = [[year, level_m], ...]`).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(tag = "source", rename_all = "snake_case", deny_unknown_fields)]
pub enum SeaLevelSetting {
    /// Fit a trend to the gauge's monthly means.
    Trend {
        /// Linear (default) or quadratic.
        #[serde(default)]
        shape: TrendShape,
        /// Seasonal-cycle terms (default: annual and semiannual).
        #[serde(default)]
        cycle: SeasonalCycle,
    },
    /// A set rate.
    Rate {
        /// m/yr.
        rate_m_per_yr: f64,
        /// Decimal year of the reference level.
        reference_year: f64,
        /// Level at the reference year, m on the gauge's datum.
        reference_level_m: f64,
    },
    /// A projection table.
    Projection {
        /// (decimal year, level m) points, years increasing.
        points: Vec<[f64; 2]>,
    },
}

impl Default for SeaLevelSetting {
    fn default() -> Self {
        SeaLevelSetting::Trend {
            shape: TrendShape::default(),
            cycle: SeasonalCycle::default(),
        }
    }
}

impl SeaLevelSetting {
    /// The checked source: fits the trend to `months` when the setting asks for one.
    pub fn resolve(&self, months: &[MonthlyMeanLevel]) -> Result<SeaLevelSource, TrendError> {
        match self {
            SeaLevelSetting::Trend { shape, cycle } => {
                fit_trend(months, *shape, *cycle).map(SeaLevelSource::Fitted)
            }
            SeaLevelSetting::Rate {
                rate_m_per_yr,
                reference_year,
                reference_level_m,
            } => SeaLevelSource::rate(*rate_m_per_yr, *reference_year, *reference_level_m),
            SeaLevelSetting::Projection { points } => {
                Projection::new(points.iter().map(|&[y, l]| (y, l)).collect())
                    .map(SeaLevelSource::Projection)
            }
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)] // a failed unwrap is a failed test
mod tests {
    use super::*;

    fn straight_line(rate: f64) -> Vec<MonthlyMeanLevel> {
        (0..120)
            .map(|k| {
                let (year, month) = (2000 + k / 12, (k % 12) as u32 + 1);
                let t = month_mid_year(year, month).unwrap();
                // A small alternating wiggle keeps the residual variance positive.
                let wiggle = if k % 2 == 0 { 0.001 } else { -0.001 };
                MonthlyMeanLevel {
                    year,
                    month,
                    mean_m: 0.1 + rate * (t - 2000.0) + wiggle,
                    readings: 700,
                }
            })
            .collect()
    }

    /// `years` of monthly means on `level(t) = 0.1 + rate t + accel t^2 / 2` (t from 2000),
    /// with an alternating 1 mm wiggle.
    fn curve(years: i32, rate: f64, accel: f64) -> Vec<MonthlyMeanLevel> {
        (0..years * 12)
            .map(|k| {
                let (year, month) = (1980 + k / 12, (k % 12) as u32 + 1);
                let t = month_mid_year(year, month).unwrap() - 2000.0;
                let wiggle = if k % 2 == 0 { 0.001 } else { -0.001 };
                MonthlyMeanLevel {
                    year,
                    month,
                    mean_m: 0.1 + rate * t + 0.5 * accel * t * t + wiggle,
                    readings: 700,
                }
            })
            .collect()
    }

    #[test]
    fn auto_takes_the_quadratic_only_for_a_long_record() {
        let auto = |m: &[MonthlyMeanLevel]| {
            fit_trend(m, TrendShape::Auto, SeasonalCycle::Omitted)
                .unwrap()
                .shape
        };
        // 46 years accelerating at 0.1 mm/yr^2: quadratic (its acceleration is recovered).
        let long = curve(46, 0.003, 0.0001);
        assert_eq!(auto(&long), TrendShape::Quadratic);
        let fit = fit_trend(&long, TrendShape::Auto, SeasonalCycle::Omitted).unwrap();
        assert!((fit.acceleration().unwrap().value - 0.0001).abs() < 1e-5);
        // 20 years accelerating: too short for a quadratic, linear.
        assert_eq!(auto(&curve(20, 0.003, 0.0001)), TrendShape::Linear);
        assert_eq!(auto(&curve(29, 0.003, 0.0001)), TrendShape::Linear);
    }

    #[test]
    fn exact_line_is_recovered() {
        let fit = fit_trend(
            &straight_line(0.004),
            TrendShape::Linear,
            SeasonalCycle::Omitted,
        )
        .unwrap();
        assert!((fit.rate_at(2005.0).value - 0.004).abs() < 1e-5);
        assert!((fit.level_at(2000.0).value - 0.1).abs() < 1e-3);
        assert!(fit.lag1_autocorrelation < 0.0); // alternating residuals
        assert_eq!(fit.effective_months, 120.0);
        assert!(fit.level_at(2030.0).extrapolated);
    }

    #[test]
    fn too_few_months_and_duplicates_are_errors() {
        let months = straight_line(0.0);
        assert!(matches!(
            fit_trend(&months[..10], TrendShape::Linear, SeasonalCycle::Omitted),
            Err(TrendError::TooFewMonths { found: 10, .. })
        ));
        let mut dup = months.clone();
        dup.push(months[3]);
        assert!(matches!(
            fit_trend(&dup, TrendShape::Linear, SeasonalCycle::Omitted),
            Err(TrendError::DuplicateMonth { .. })
        ));
    }

    #[test]
    fn settings_resolve_to_their_sources() {
        let rate = SeaLevelSetting::Rate {
            rate_m_per_yr: 0.004,
            reference_year: 2000.0,
            reference_level_m: 0.1,
        };
        let source = rate.resolve(&[]).unwrap();
        assert!((source.level_at(2010.0).unwrap().value - 0.14).abs() < 1e-12);
        let table = SeaLevelSetting::Projection {
            points: vec![[2020.0, 0.1], [2050.0, 0.3]],
        };
        assert!(table.resolve(&[]).is_ok());
        assert!(SeaLevelSetting::default().resolve(&[]).is_err()); // too few months
    }

    #[test]
    fn rate_and_projection_sources() {
        let s: Season = "2030-JJA".parse().unwrap();
        let rate = SeaLevelSource::rate(0.01, 2020.0, 0.2).unwrap();
        let v = rate.season_value(&s, 0.5).unwrap();
        let expected = 0.2 + 0.01 * (s.mid_year() - 2020.0) - 0.5;
        assert!((v.value - expected).abs() < 1e-12);
        let table = Projection::new(vec![(2020.0, 0.0), (2040.0, 0.2)]).unwrap();
        assert!((table.level_at(2030.0).unwrap() - 0.1).abs() < 1e-12);
        assert!(table.level_at(2041.0).is_err());
        assert!(Projection::new(vec![(2020.0, 0.0), (2020.0, 0.1)]).is_err());
        assert!(SeaLevelSource::rate(f64::NAN, 2020.0, 0.0).is_err());
    }
}
