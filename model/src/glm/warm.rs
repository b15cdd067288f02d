//! Warm-started fits: the same fit as [`super::fit`], with IRLS starting from the means of
//! given coefficients and the theta iteration from a given theta (e.g. a refit on a subset
//! of the seasons starting from the full-record fit). The answer is the same maximum of the
//! same likelihood; only the path to it is shorter.

use super::choice::fit_starting;
use super::data::GlmData;
use super::fitted::linear_predictor_with;
use super::irls::MAX_START_ETA;
use super::predictive::ParameterDraw;
use super::{FamilyRequest, FittedGlm, GlmError};

/// Fits `request` to `data` starting from `start` (coefficients on the original scale,
/// intercept first, in `data`'s column order; theta used only by the negative binomial).
///
/// A start whose means are not all positive and finite is not used (the cold start is), and
/// a warm fit that fails is repeated from the cold start, so a warm start never turns a fit
/// that [`super::fit`] would make into an error.
///
/// # Errors
/// A start with a different number of coefficients than `data` has columns; otherwise as
/// [`super::fit`].
pub fn fit_from(
    data: &GlmData,
    request: FamilyRequest,
    start: &ParameterDraw,
) -> Result<FittedGlm, GlmError> {
    let mut mu = Vec::with_capacity(data.rows());
    for (row, &offset) in data.offset().iter().enumerate() {
        let eta = linear_predictor_with(&start.coefficients, &data.predictor_row(row), offset)?;
        if !(eta < MAX_START_ETA) {
            return super::fit(data, request);
        }
        mu.push(eta.exp());
    }
    if !mu.iter().all(|m| *m > 0.0) {
        return super::fit(data, request);
    }
    let theta = start.theta.filter(|t| *t > 0.0 && t.is_finite());
    fit_starting(data, request, &mu, theta).or_else(|_| super::fit(data, request))
}

#[cfg(test)]
mod tests {
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;
    use rand_distr::{Distribution, Gamma, Poisson, StandardNormal};

    use super::*;
    use crate::glm::{Family, GlmSpec, fit};

    /// Relative agreement asked of a warm fit with the cold one: both stop on tolerances
    /// (deviance change 1e-12, alternation 1e-9 of theta's standard error) far tighter.
    const MATCH: f64 = 1e-8;

    /// 60 seeded seasons of 90 days, two drivers, NB2 (theta 3) or Poisson counts.
    fn table(seed: u64, theta: Option<f64>) -> GlmData {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let n = 60;
        let x1: Vec<f64> = (0..n).map(|_| rng.sample(StandardNormal)).collect();
        let x2: Vec<f64> = (0..n).map(|_| rng.gen_range(0.0..2.0)).collect();
        let response = (0..n)
            .map(|i| {
                let mu = 90.0 * (-2.3 + 0.35 * x1[i] - 0.3 * x2[i]).exp();
                let rate = match theta {
                    Some(t) => Gamma::new(t, mu / t).expect("valid gamma").sample(&mut rng),
                    None => mu,
                };
                Poisson::new(rate).expect("valid poisson").sample(&mut rng)
            })
            .collect();
        GlmSpec {
            response,
            predictors: vec![("x1".into(), x1), ("x2".into(), x2)],
            offset: None,
        }
        .with_log_exposure(&[90.0; 60])
        .and_then(GlmSpec::check)
        .expect("a valid table")
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= MATCH * a.abs().max(b.abs()).max(1e-300)
    }

    fn assert_same(cold: &FittedGlm, warm: &FittedGlm) {
        assert_eq!(cold.family, warm.family);
        for (c, w) in cold.coefficients.iter().zip(&warm.coefficients) {
            assert!(close(c.estimate, w.estimate), "{c:?} vs {w:?}");
            assert!(close(c.std_error, w.std_error), "{c:?} vs {w:?}");
        }
        match (cold.theta, warm.theta) {
            (Some(c), Some(w)) => {
                assert!(close(c.estimate, w.estimate), "theta {c:?} vs {w:?}");
                assert!(close(c.std_error, w.std_error), "theta se {c:?} vs {w:?}");
            }
            (None, None) => {}
            other => panic!("theta presence differs: {other:?}"),
        }
        assert!(close(cold.log_likelihood, warm.log_likelihood));
    }

    #[test]
    fn a_refit_warm_started_from_the_full_fit_matches_the_cold_refit() {
        for (seed, theta, request) in [
            (11, Some(3.0), FamilyRequest::Negbin),
            (12, None, FamilyRequest::Poisson),
            (13, Some(3.0), FamilyRequest::Auto),
            (14, None, FamilyRequest::Auto),
        ] {
            let full_data = table(seed, theta);
            let full = fit(&full_data, request).expect("full fit");
            for left_out in [vec![0], vec![5, 6, 7], (40..60).collect::<Vec<_>>()] {
                let sub = full_data.without_rows(&left_out).expect("subset");
                let cold = fit(&sub, request).expect("cold refit");
                let warm = fit_from(&sub, request, &full.point_parameters()).expect("warm");
                assert_same(&cold, &warm);
            }
        }
    }

    #[test]
    fn a_poor_or_unusable_start_still_reaches_the_cold_fit() {
        let data = table(21, Some(3.0));
        let cold = fit(&data, FamilyRequest::Negbin).expect("cold");
        assert_eq!(cold.family, Family::Negbin);
        let far = ParameterDraw {
            coefficients: vec![-4.0, -1.0, 1.0],
            theta: Some(50.0),
        };
        assert_same(
            &cold,
            &fit_from(&data, FamilyRequest::Negbin, &far).expect("far"),
        );
        let overflowing = ParameterDraw {
            coefficients: vec![900.0, 0.0, 0.0],
            theta: Some(f64::NAN),
        };
        assert_same(
            &cold,
            &fit_from(&data, FamilyRequest::Negbin, &overflowing).expect("cold start used"),
        );
        let wrong_length = ParameterDraw {
            coefficients: vec![-2.0, 0.3],
            theta: None,
        };
        assert!(fit_from(&data, FamilyRequest::Negbin, &wrong_length).is_err());
    }
}
