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
    /// eq. 21), an independent route to the same number.
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
}
