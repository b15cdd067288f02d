//! Continuous ranked probability score (CRPS).
//!
//! For a count distribution with cumulative distribution `F` and an observed count `y`, the
//! CRPS is the sum over all counts `k >= 0` of `(F(k) - 1{y <= k})^2` (Czado, Gneiting and
//! Held 2009, Biometrics 65, eq. for the discrete ranked probability score with infinitely
//! many categories). It is in days, zero for a point forecast that hits, and lower is better.
//!
//! For an ensemble of real-valued members the CRPS is the integral of
//! `(F(x) - 1{y <= x})^2` over the real line with `F` the ensemble's empirical step
//! distribution, computed interval by interval as in Hersbach (2000, Weather and Forecasting
//! 15, eqs. 24-27). When every member is an integer the two coincide: the step function is
//! constant on each `[k, k+1)`.
//!
//! The papers and equation numbers here are cited from memory; none was consulted on this
//! machine. The tests check the two forms against each other, against hand sums and against
//! properscoring (`tests/verify_reference.rs`).

use super::VerifyError;

/// CRPS of a count distribution `pmf` (index = days) against the observed count.
///
/// The sum runs over `k = 0 ..= max(pmf.len() - 1, observed)`; beyond that every term is
/// `(F - 1)^2`, zero for a mass function summing to one (check it with
/// [`super::validate_pmf`]). Counts past the end of `pmf` have probability zero.
pub fn crps_count(pmf: &[f64], observed: u32) -> f64 {
    let y = observed as usize;
    let mut cdf = 0.0;
    let mut total = 0.0;
    for (k, &p) in pmf.iter().enumerate() {
        cdf += p;
        let diff = if y <= k { cdf - 1.0 } else { cdf };
        total += diff * diff;
    }
    // Counts between the end of the pmf and the observation: F is the whole mass, the
    // indicator is still zero.
    if y > pmf.len() {
        total += (y - pmf.len()) as f64 * cdf * cdf;
    }
    total
}

/// CRPS of an ensemble of real-valued members against a real observation, by Hersbach's
/// interval decomposition of the empirical step distribution.
///
/// # Errors
/// An empty ensemble, or a member or observation that is NaN or infinite.
pub fn crps_ensemble(members: &[f64], observed: f64) -> Result<f64, VerifyError> {
    if members.is_empty() {
        return Err(VerifyError::NoCases {
            what: "an ensemble CRPS",
        });
    }
    if !observed.is_finite() {
        return Err(VerifyError::NotFinite {
            what: "observation",
            value: observed,
        });
    }
    if let Some(&value) = members.iter().find(|m| !m.is_finite()) {
        return Err(VerifyError::NotFinite {
            what: "ensemble member",
            value,
        });
    }
    let mut sorted = members.to_vec();
    sorted.sort_by(f64::total_cmp);
    let m = sorted.len() as f64;
    let first = sorted[0];
    let last = sorted[sorted.len() - 1];
    // Outliers: the observation below every member (F = 0 where the indicator is one) or
    // above every member (F = 1 where the indicator is zero).
    let mut total = (first - observed).max(0.0) + (observed - last).max(0.0);
    for (i, pair) in sorted.windows(2).enumerate() {
        let p = (i + 1) as f64 / m;
        let width = pair[1] - pair[0];
        // alpha: the part of the interval below the observation; beta: the part above.
        let alpha = (observed - pair[0]).clamp(0.0, width);
        let beta = width - alpha;
        total += alpha * p * p + beta * (1.0 - p) * (1.0 - p);
    }
    Ok(total)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::verify::empirical_pmf;

    /// Kernel form CRPS = E|X - y| - E|X - X'| / 2 (Gneiting and Raftery 2007, JASA 102,
    /// eq. 21, cited from memory), an independent route to the same number.
    fn crps_kernel(members: &[f64], y: f64) -> f64 {
        let m = members.len() as f64;
        let first: f64 = members.iter().map(|x| (x - y).abs()).sum::<f64>() / m;
        let mut pairs = 0.0;
        for a in members {
            for b in members {
                pairs += (a - b).abs();
            }
        }
        first - pairs / (2.0 * m * m)
    }

    #[test]
    fn point_forecast_that_hits_scores_zero() {
        assert_eq!(crps_count(&[0.0, 0.0, 1.0], 2), 0.0);
    }

    #[test]
    fn point_forecast_that_misses_scores_the_distance() {
        // F is a step at 2; the observation 5 leaves |5 - 2| unit intervals with (1 - 0)^2.
        assert!((crps_count(&[0.0, 0.0, 1.0], 5) - 3.0).abs() < 1e-15);
        assert!((crps_count(&[0.0, 0.0, 1.0], 0) - 2.0).abs() < 1e-15);
    }

    #[test]
    fn count_crps_equals_ensemble_crps_for_integer_members() {
        let members = [0.0, 0.0, 1.0, 3.0, 3.0, 7.0, 12.0];
        let counts: Vec<u32> = members.iter().map(|&m| m as u32).collect();
        let pmf = empirical_pmf(&counts);
        for y in [0u32, 1, 2, 5, 7, 12, 20] {
            let discrete = crps_count(&pmf, y);
            let ensemble = crps_ensemble(&members, f64::from(y)).expect("valid ensemble");
            let kernel = crps_kernel(&members, f64::from(y));
            assert!((discrete - ensemble).abs() < 1e-12, "y = {y}");
            assert!((kernel - ensemble).abs() < 1e-12, "y = {y}");
        }
    }

    #[test]
    fn ensemble_crps_matches_kernel_form_for_real_members() {
        let members = [-1.3, 0.2, 0.25, 2.0, 4.5];
        for y in [-3.0, 0.22, 1.0, 10.0] {
            let got = crps_ensemble(&members, y).expect("valid ensemble");
            assert!((got - crps_kernel(&members, y)).abs() < 1e-12);
        }
    }

    #[test]
    fn ensemble_crps_rejects_bad_input() {
        assert!(crps_ensemble(&[], 1.0).is_err());
        assert!(crps_ensemble(&[1.0, f64::NAN], 1.0).is_err());
        assert!(crps_ensemble(&[1.0], f64::INFINITY).is_err());
    }

    #[test]
    fn count_crps_is_the_sum_of_exceedance_brier_scores() {
        // Threshold decomposition (Gneiting and Ranjan 2011, J. Bus. Econ. Stat. 29): the
        // CRPS is the Brier score of P(N >= k) summed over every k >= 1.
        use crate::verify::{brier_case, exceedance_probability};
        let pmf = [0.35, 0.2, 0.15, 0.1, 0.1, 0.05, 0.05];
        for y in [0u32, 2, 6, 11] {
            let summed: f64 = (1..=12)
                .map(|k| brier_case(exceedance_probability(&pmf, k), y >= k))
                .sum();
            assert!((crps_count(&pmf, y) - summed).abs() < 1e-12, "y = {y}");
        }
    }

    #[test]
    fn ensemble_crps_of_gaussian_quantiles_approaches_the_closed_form() {
        // Continuous case: the CRPS of N(mu, sigma^2) is
        // sigma * (z (2 Phi(z) - 1) + 2 phi(z) - 1 / sqrt(pi)), z = (y - mu) / sigma
        // (Gneiting, Raftery, Westveld and Goldman 2005, Monthly Weather Review 133; formula
        // recalled from memory, equation number not checked).
        // An ensemble of its m quantiles at levels (i - 1/2) / m approaches it as m grows;
        // with m = 4000 the step function's error is below 1e-4 sigma (by the O(1/m)
        // discretisation of the integral, checked at two sizes below).
        use statrs::distribution::{Continuous, ContinuousCDF, Normal};
        let (mu, sigma) = (2.0, 1.5);
        let normal = Normal::new(mu, sigma).expect("valid normal");
        let standard = Normal::new(0.0, 1.0).expect("valid normal");
        let members = |m: usize| -> Vec<f64> {
            (1..=m)
                .map(|i| normal.inverse_cdf((i as f64 - 0.5) / m as f64))
                .collect()
        };
        let (coarse, fine) = (members(400), members(4000));
        for y in [-1.0, 1.7, 2.0, 6.0] {
            let z = (y - mu) / sigma;
            let exact = sigma
                * (z * (2.0 * standard.cdf(z) - 1.0) + 2.0 * standard.pdf(z)
                    - 1.0 / std::f64::consts::PI.sqrt());
            let err_coarse = (crps_ensemble(&coarse, y).expect("valid") - exact).abs();
            let err_fine = (crps_ensemble(&fine, y).expect("valid") - exact).abs();
            assert!(err_fine < 1e-4 * sigma, "y = {y}: error {err_fine}");
            assert!(err_fine < err_coarse, "y = {y}: no convergence");
        }
    }
}
