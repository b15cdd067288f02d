//! The mean block length of the stationary bootstrap, chosen from the residuals' own
//! persistence by the rule of Politis and White (2004, Econometric Reviews 23, 53) with the
//! correction of Patton, Politis and White (2009, Econometric Reviews 28, 372):
//!
//! `b = (2 G^2 / D)^(1/3) N^(1/3)`, `G = sum_{|k| <= M} lambda(k / M) |k| R(k)`,
//! `D = 2 g^2`, `g = sum_{|k| <= M} lambda(k / M) R(k)`,
//!
//! with the flat-top kernel `lambda(t) = 1` for `|t| <= 1/2`, `2 (1 - |t|)` for
//! `1/2 < |t| <= 1`, and `M = 2 m`, `m` the smallest lag after which `K = max(5,
//! sqrt(log10 n))` autocorrelations in a row are below `2 sqrt(log10 n / n)`.
//!
//! The autocovariances `R(k)` are pooled over the past seasons (pairs of days within one
//! season only), `n` is the number of pooled days and `N` the season's length: a gauge whose
//! weather persists for weeks (a slow wind regime) gets long blocks, one whose surges pass in
//! days gets short ones.

use super::engine::PoolDay;

/// Longest lag examined, days.
const MAX_LAG: usize = 60;

/// The rule's block length for sequences of `season_days` days, from the pooled past
/// seasons; `None` when too few days are present to estimate it.
pub(crate) fn politis_white(seasons: &[Vec<Option<PoolDay>>], season_days: usize) -> Option<f64> {
    let values: Vec<f64> = seasons
        .iter()
        .flatten()
        .flatten()
        .map(|d| d.value)
        .collect();
    let n = values.len();
    if n < 100 || season_days < 2 {
        return None;
    }
    let mean = values.iter().sum::<f64>() / n as f64;
    let max_lag = MAX_LAG.min(season_days - 1);
    // Pooled autocovariance at each lag over pairs inside one season, divided by n.
    let mut r = vec![0.0; max_lag + 1];
    for sequence in seasons {
        for (t, a) in sequence.iter().enumerate() {
            let Some(a) = a else { continue };
            for (k, slot) in r.iter_mut().enumerate() {
                if let Some(Some(b)) = sequence.get(t + k) {
                    *slot += (a.value - mean) * (b.value - mean);
                }
            }
        }
    }
    for v in &mut r {
        *v /= n as f64;
    }
    if !(r[0] > 0.0) {
        return None;
    }
    let rho: Vec<f64> = r.iter().map(|v| v / r[0]).collect();
    let log_n = (n as f64).log10();
    let bound = 2.0 * (log_n / n as f64).sqrt();
    let run = 5usize.max(log_n.sqrt().ceil() as usize);
    let m = (0..=max_lag)
        .find(|&m| (1..=run).all(|k| rho.get(m + k).is_none_or(|x| x.abs() < bound)))
        .unwrap_or(max_lag);
    let big_m = (2 * m).min(max_lag).max(1);
    let lambda = |t: f64| {
        let t = t.abs();
        if t <= 0.5 {
            1.0
        } else if t <= 1.0 {
            2.0 * (1.0 - t)
        } else {
            0.0
        }
    };
    let mut g = 0.0;
    let mut g0 = r[0];
    for (k, &rk) in r.iter().enumerate().take(big_m + 1).skip(1) {
        let w = lambda(k as f64 / big_m as f64);
        g += 2.0 * w * k as f64 * rk;
        g0 += 2.0 * w * rk;
    }
    let d = 2.0 * g0 * g0;
    if !(d > 0.0) {
        return None;
    }
    let b = (2.0 * g * g / d).cbrt() * (season_days as f64).cbrt();
    b.is_finite().then(|| b.clamp(1.0, season_days as f64))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;
    use rand_distr::{Distribution, Normal};

    fn ar1(phi: f64, seasons: usize, days: usize, seed: u64) -> Vec<Vec<Option<PoolDay>>> {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let normal = Normal::new(0.0, 1.0).expect("normal");
        (0..seasons)
            .map(|_| {
                let mut x: f64 = normal.sample(&mut rng);
                (0..days)
                    .map(|_| {
                        x = phi * x + (1.0 - phi * phi).sqrt() * normal.sample(&mut rng);
                        Some(PoolDay {
                            value: x,
                            enso: 0.0,
                            lead: 0.0,
                        })
                    })
                    .collect()
            })
            .collect()
    }

    #[test]
    fn independent_days_get_short_blocks_and_persistent_days_long_ones() {
        // The rule's block length grows with the persistence it measures (Politis and White
        // 2004): near 1 day for white noise, several times longer for an AR(1) with phi 0.9.
        let white = politis_white(&ar1(0.0, 40, 90, 1), 90).expect("estimates");
        let slow = politis_white(&ar1(0.9, 40, 90, 2), 90).expect("estimates");
        assert!(white < 3.0, "white noise: {white}");
        assert!(
            slow > 3.0 * white && slow > 8.0,
            "phi 0.9: {slow} vs {white}"
        );
    }

    #[test]
    fn too_few_days_give_no_estimate() {
        assert_eq!(politis_white(&ar1(0.5, 1, 50, 3), 90), None);
    }
}
