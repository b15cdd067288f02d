//! How much of the weather just before a season carries into it: damped persistence of the
//! lead-in residual anomaly, estimated from past seasons.
//!
//! For past season `j` with lead-in anomaly `A_j` (mean residual of the days before it, slow
//! term and ENSO effect removed) and pooled residual `z_jd` on day `d`, the model is
//! `z_jd = m_d + c phi^d (A_j - mean A) + e_jd`. For each `phi` on a grid, `c` is the least-
//! squares slope through the day means `m_d`; the `phi` with the smallest residual sum of
//! squares is kept. The standard error of `c` is season-clustered (any correlation within a
//! season, as the residual regression's). Persistence is used only when `c` is positive and
//! its 95 % interval excludes zero; otherwise the engine treats the lead-in as unknown, as
//! before (an honest default: no claim without evidence).

use serde::Serialize;

use super::engine::PoolDay;

/// The decay rates tried, per day.
const DECAYS: [f64; 10] = [0.5, 0.7, 0.8, 0.85, 0.9, 0.93, 0.95, 0.97, 0.98, 0.99];

/// Seasons with a lead-in anomaly needed to estimate persistence.
const MIN_SEASONS: usize = 8;

/// Estimated damped persistence of the lead-in anomaly.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Persistence {
    /// `c`: metres of residual per metre of lead-in anomaly on the first day.
    pub coefficient: f64,
    /// Its season-clustered standard error.
    pub std_error: f64,
    /// `phi`: the daily decay of the carried anomaly.
    pub decay: f64,
    /// The mean lead-in anomaly of the past seasons, m.
    pub mean_anomaly: f64,
}

/// Estimates persistence from pooled sequences (`lead[j]` the lead-in anomaly of sequence
/// `j`); `None` when there is too little evidence of it.
pub(crate) fn estimate(
    seasons: &[Vec<Option<PoolDay>>],
    lead: &[Option<f64>],
) -> Option<Persistence> {
    let with: Vec<(usize, f64)> = lead
        .iter()
        .enumerate()
        .filter_map(|(j, a)| a.map(|a| (j, a)))
        .collect();
    if with.len() < MIN_SEASONS {
        return None;
    }
    let mean_anomaly = with.iter().map(|(_, a)| a).sum::<f64>() / with.len() as f64;
    let longest = seasons.iter().map(Vec::len).max().unwrap_or(0);
    // Day means over the seasons that have a lead-in anomaly.
    let mut sums = vec![(0.0, 0usize); longest];
    for &(j, _) in &with {
        for (d, day) in seasons[j].iter().enumerate() {
            if let Some(day) = day {
                sums[d].0 += day.value;
                sums[d].1 += 1;
            }
        }
    }
    let day_mean: Vec<f64> = sums
        .iter()
        .map(|&(s, n)| if n > 0 { s / n as f64 } else { 0.0 })
        .collect();
    let mut best: Option<(f64, f64, f64)> = None; // (ssr, c, phi)
    for &phi in &DECAYS {
        let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
        for &(j, a) in &with {
            let mut weight = 1.0;
            for (d, day) in seasons[j].iter().enumerate() {
                if let Some(day) = day {
                    let x = weight * (a - mean_anomaly);
                    let y = day.value - day_mean[d];
                    sxy += x * y;
                    sxx += x * x;
                    syy += y * y;
                }
                weight *= phi;
            }
        }
        if !(sxx > 0.0) {
            continue;
        }
        let c = sxy / sxx;
        let ssr = syy - c * sxy;
        if best.is_none_or(|b| ssr < b.0) {
            best = Some((ssr, c, phi));
        }
    }
    let (_, c, phi) = best?;
    // Season-clustered error of c.
    let (mut sxx, mut meat) = (0.0, 0.0);
    for &(j, a) in &with {
        let mut weight = 1.0;
        let mut score = 0.0;
        for (d, day) in seasons[j].iter().enumerate() {
            if let Some(day) = day {
                let x = weight * (a - mean_anomaly);
                let e = day.value - day_mean[d] - c * x;
                score += x * e;
                sxx += x * x;
            }
            weight *= phi;
        }
        meat += score * score;
    }
    let g = with.len() as f64;
    let std_error = (meat * g / (g - 1.0)).sqrt() / sxx;
    (c > 0.0 && c > 1.96 * std_error).then_some(Persistence {
        coefficient: c,
        std_error,
        decay: phi,
        mean_anomaly,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;
    use rand_distr::{Distribution, Normal};

    /// Seasons whose first days continue an AR(1) from a known lead-in value: `z_0 = phi a +
    /// noise`, so the true persistence is `c = phi`-scaled with decay `phi`.
    fn seasons(
        phi: f64,
        carried: bool,
        seed: u64,
    ) -> (Vec<Vec<Option<PoolDay>>>, Vec<Option<f64>>) {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let normal = Normal::new(0.0, 0.1).expect("normal");
        let mut out = Vec::new();
        let mut leads = Vec::new();
        for _ in 0..40 {
            let a: f64 = normal.sample(&mut rng) * 2.0;
            let mut x = if carried { phi * a } else { 0.0 };
            let days = (0..90)
                .map(|_| {
                    let v = x + normal.sample(&mut rng);
                    x *= phi;
                    Some(PoolDay {
                        value: v,
                        enso: 0.0,
                        lead: 0.0,
                    })
                })
                .collect();
            out.push(days);
            leads.push(Some(a));
        }
        (out, leads)
    }

    #[test]
    fn a_carried_anomaly_is_found_and_none_is_invented() {
        // Known mechanics (common practice: damped persistence of an AR(1)).
        let (s, l) = seasons(0.9, true, 1);
        let p = estimate(&s, &l).expect("persistence found");
        assert!(
            (p.coefficient - 0.9).abs() < 3.0 * p.std_error + 0.05,
            "{p:?}"
        );
        assert!(p.decay >= 0.8 && p.decay <= 0.95, "{p:?}");
        let (s, l) = seasons(0.9, false, 2);
        assert_eq!(estimate(&s, &l), None);
    }
}
