//! Count models: Poisson and negative-binomial (NB2) generalised linear models with a log link
//! and an optional offset, their inference tables, the choice between the two families, and
//! predictive count distributions for a new season.
//!
//! The flow follows the crate's "unchecked -> checked -> fitted" rule:
//! [`GlmSpec`] (raw columns) -> [`GlmData`] (validated, standardised, full rank) ->
//! [`fit`] (or [`fit_from`], warm-started) -> [`FittedGlm`] (coefficients on the original scale, standard errors, deviance,
//! likelihood, theta) -> [`FittedGlm::predictive`] / [`CountDistribution`].
//!
//! Methods:
//! - Poisson: iteratively reweighted least squares (IRLS); standard errors from the Fisher
//!   information `X'WX` with `W = mu`.
//! - Negative binomial NB2 (`Var N = mu + mu^2 / theta`): theta by maximum likelihood,
//!   alternating Newton steps on theta with IRLS at fixed theta until both settle (Venables and
//!   Ripley, *Modern Applied Statistics with S*, 4th ed. 2002, section 7.4). Coefficient
//!   standard errors come from the expected information with theta held fixed,
//!   `W = mu / (1 + mu / theta)`, as R's `MASS::glm.nb` reports them; theta's standard error
//!   from the observed information of the profile in theta at fixed `mu`.
//! - Family choice: likelihood-ratio test of Poisson against NB with the boundary correction
//!   (half the chi-square(1) tail; Cameron and Trivedi, *Regression Analysis of Count Data*),
//!   reported with both AICs.
//!
//! Predictors are centred and scaled internally; every reported number is on the original
//! scale of the columns given.

// DEVELOPERS.md asks for range checks written so NaN fails them (`if !(x > 0.0)`).
#![allow(
    clippy::neg_cmp_op_on_partial_ord,
    reason = "range checks are written so that NaN fails them"
)]

mod choice;
mod data;
mod fitted;
mod irls;
mod negbin;
mod predictive;
mod special;
mod table;
mod warm;

pub use choice::{AUTO_TEST_LEVEL, FamilyChoice, FamilyRequest, fit};
pub use data::{GlmData, GlmSpec};
pub use fitted::{Coefficient, FittedGlm, ThetaEstimate};
pub use predictive::{
    CountDistribution, ParameterDraw, PmfMixture, PredictiveDistribution, TRUNCATION_NOTE_MASS,
    TruncatedPmf, negbin_pmf, poisson_pmf,
};
pub use table::{ColumnSpec, OffsetColumn, TableError, read_table};
pub use warm::fit_from;

use std::fmt;

/// The count family of a fitted model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Family {
    /// Poisson: `Var N = mu`.
    Poisson,
    /// Negative binomial NB2: `Var N = mu + mu^2 / theta`.
    Negbin,
}

impl fmt::Display for Family {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Family::Poisson => "poisson",
            Family::Negbin => "negbin",
        })
    }
}

/// Why a count model could not be set up or fitted. Rows are 1-based data rows.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum GlmError {
    /// No rows at all, or fewer rows than coefficients.
    #[error("{rows} rows are too few to fit {coefficients} coefficients")]
    TooFewRows {
        /// Rows given.
        rows: usize,
        /// Coefficients to fit (intercept included).
        coefficients: usize,
    },
    /// A predictor or offset column whose length differs from the response's.
    #[error("column {column:?} has {found} values, the response has {expected}")]
    LengthMismatch {
        /// The column's name.
        column: String,
        /// Values found.
        found: usize,
        /// Values expected.
        expected: usize,
    },
    /// Two predictors with the same name, or a predictor called `intercept`.
    #[error("predictor name {0:?} is repeated or reserved")]
    DuplicateName(String),
    /// A NaN or infinite value.
    #[error("row {row}: {column} is {value}, not a finite number")]
    NonFinite {
        /// 1-based data row.
        row: usize,
        /// The column's name.
        column: String,
        /// The value found.
        value: f64,
    },
    /// A response that is negative or not a whole number.
    #[error("row {row}: response {value} is not a non-negative whole count")]
    BadCount {
        /// 1-based data row.
        row: usize,
        /// The value found.
        value: f64,
    },
    /// An exposure that cannot be logged.
    #[error("row {row}: exposure {value} must be positive to take its logarithm")]
    BadExposure {
        /// 1-based data row.
        row: usize,
        /// The value found.
        value: f64,
    },
    /// Every response is zero: no rate can be estimated.
    #[error("every response is zero: a log-link count model has no finite fit")]
    AllZeroResponse,
    /// A predictor that does not vary.
    #[error("predictor {0:?} is constant, so it is collinear with the intercept")]
    ConstantPredictor(String),
    /// Columns that are (nearly) linear combinations of one another.
    #[error("the design is rank deficient: columns {} are collinear", .columns.join(", "))]
    RankDeficient {
        /// The columns taking part in the near-linear dependence (`intercept` included).
        columns: Vec<String>,
    },
    /// Fitted means collapsing to zero where every response is zero.
    #[error(
        "perfect separation: fitted means run to zero for {rows} rows with zero counts; \
         coefficients of {} head to infinity",
        .columns.join(", ")
    )]
    PerfectSeparation {
        /// Rows with zero counts whose fitted mean collapsed.
        rows: usize,
        /// The columns with the largest standardised coefficients.
        columns: Vec<String>,
    },
    /// IRLS or the theta iteration did not settle.
    #[error("{stage} did not converge in {iterations} iterations")]
    NotConverged {
        /// Which iteration failed (`IRLS`, `theta`, `theta/IRLS alternation`).
        stage: &'static str,
        /// Iterations made.
        iterations: usize,
    },
    /// A numerical breakdown (a singular weighted information matrix, overflow).
    #[error("numerical failure: {0}")]
    Numerical(&'static str),
    /// A new-season predictor vector of the wrong length.
    #[error("expected {expected} predictor values, got {found}")]
    PredictorCount {
        /// Predictors the model has.
        expected: usize,
        /// Values given.
        found: usize,
    },
    /// A family name that is not `poisson`, `negbin` or `auto`.
    #[error("family {0:?} is not poisson, negbin or auto")]
    UnknownFamily(String),
    /// A distribution parameter out of range (mean, theta, number of draws).
    #[error("{name} = {value} is out of range: {why}")]
    BadParameter {
        /// The parameter.
        name: &'static str,
        /// The value given.
        value: f64,
        /// The valid range in words.
        why: &'static str,
    },
}

#[cfg(test)]
mod synthetic_tests;
