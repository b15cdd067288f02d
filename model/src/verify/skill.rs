//! Skill scores: `1 - score / reference`, for negatively oriented scores (lower is better)
//! such as the CRPS, RPS and Brier score (Wilks, Statistical Methods in the Atmospheric
//! Sciences, generic skill score with a perfect score of zero). One is perfect, zero is no
//! better than the reference, negative is worse.

use super::{VerifyError, mean};

/// Skill of a mean score against the reference's mean score.
///
/// # Errors
/// A reference score that is zero, negative or not finite (no room for skill).
pub fn skill_score(score: f64, reference: f64) -> Result<f64, VerifyError> {
    if !(reference > 0.0 && reference.is_finite()) {
        return Err(VerifyError::BadReferenceScore { reference });
    }
    Ok(1.0 - score / reference)
}

/// Skill of paired per-case scores: `1 - mean(forecast) / mean(reference)`.
///
/// # Errors
/// Unequal lengths, no cases, or as [`skill_score`].
pub fn mean_skill_score(forecast: &[f64], reference: &[f64]) -> Result<f64, VerifyError> {
    if forecast.len() != reference.len() {
        return Err(VerifyError::LengthMismatch {
            what: "skill score",
            left: forecast.len(),
            right: reference.len(),
        });
    }
    if forecast.is_empty() {
        return Err(VerifyError::NoCases {
            what: "skill score",
        });
    }
    skill_score(mean(forecast), mean(reference))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn skill_of_perfect_equal_and_worse_scores() {
        assert_eq!(skill_score(0.0, 0.2), Ok(1.0));
        assert_eq!(skill_score(0.2, 0.2), Ok(0.0));
        assert_eq!(skill_score(0.4, 0.2), Ok(-1.0));
        assert!(skill_score(0.1, 0.0).is_err());
        assert!(skill_score(0.1, f64::NAN).is_err());
    }

    #[test]
    fn mean_skill_pairs_cases() {
        let skill = mean_skill_score(&[1.0, 2.0], &[2.0, 4.0]).expect("paired");
        assert!((skill - 0.5).abs() < 1e-15);
        assert!(mean_skill_score(&[1.0], &[1.0, 2.0]).is_err());
    }
}
