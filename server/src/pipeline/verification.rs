//! Scoring an issued outlook against the season as observed, with the model's verification
//! scores (CRPS, log score, RPS over the outlook's own climatology terciles, Brier of each
//! `P(N >= k)`).

use tidetally_model::verify::{self, brier_case, crps_count, exceedance_probability, log_score};

use super::PipelineError;
use crate::api;

/// Weight of "at or below boundary `b`" for an observed count, with the reference's tie rule:
/// a count on an edge counts below it by the edge's lower share.
fn below_boundary(observed: u32, edge: u32, lower_share: f64) -> f64 {
    match observed.cmp(&edge) {
        std::cmp::Ordering::Less => 1.0,
        std::cmp::Ordering::Equal => lower_share,
        std::cmp::Ordering::Greater => 0.0,
    }
}

/// The observed count's weights in the three categories of `terciles`.
fn observed_weights(t: &api::Terciles, observed: u32) -> [f64; 3] {
    let b0 = below_boundary(observed, t.edges[0], t.edge_lower_shares[0]);
    let b1 = below_boundary(observed, t.edges[1], t.edge_lower_shares[1]).max(b0);
    [b0, b1 - b0, 1.0 - b1]
}

/// How an issued outlook fared against the observed season. The season must be complete
/// enough to enter a fit (otherwise its count is not comparable with the outlook's).
pub fn verify_issued(
    outlook: &api::Outlook,
    observed: &api::SeasonRow,
) -> Result<api::SeasonVerification, PipelineError> {
    if !observed.used_in_fit {
        return Err(PipelineError::MissingInput(format!(
            "season {} is not complete enough in the record to verify its outlook \
             (completeness {:.2})",
            observed.season, observed.completeness
        )));
    }
    verify::validate_pmf(&outlook.pmf).map_err(|e| PipelineError::Invalid(e.to_string()))?;
    let n = observed.flood_days;
    let terciles = outlook
        .terciles
        .iter()
        .find(|t| t.reference == api::TercileReference::Climatology1991To2020)
        .ok_or_else(|| {
            PipelineError::Invalid(format!(
                "the outlook of {} carries no climatology terciles",
                outlook.season
            ))
        })?;
    let weights = observed_weights(terciles, n);
    let forecast = [terciles.below, terciles.near, terciles.above];
    let observed_category_probability = forecast.iter().zip(weights).map(|(p, w)| p * w).sum();
    let brier = outlook
        .exceedance
        .iter()
        .map(|e| api::BrierScore {
            days: e.days,
            score: brier_case(exceedance_probability(&outlook.pmf, e.days), n >= e.days),
        })
        .collect();
    Ok(api::SeasonVerification {
        observed: n,
        observed_days: observed.observed_days,
        crps: crps_count(&outlook.pmf, n),
        log_score: log_score(&outlook.pmf, n),
        observed_category_probability,
        rps: verify::rps(forecast, weights),
        brier,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Allowance for sums of a few products of exact decimal inputs in f64.
    const TOL: f64 = 1e-12;

    fn outlook(pmf: Vec<f64>, edges: [u32; 2], lower_shares: [f64; 2], k: &[u32]) -> api::Outlook {
        let cats = {
            let below_b = |b: usize| -> f64 {
                let e = edges[b] as usize;
                pmf[..e].iter().sum::<f64>() + lower_shares[b] * pmf[e]
            };
            let (b0, b1) = (below_b(0), below_b(1));
            [b0, b1 - b0, 1.0 - b1]
        };
        let fake = tidetally_test_support::fixtures::fake_outlook("g", &pmf);
        let mut outlook: api::Outlook = serde_json::from_value(fake).unwrap();
        outlook.season_days = u32::try_from(pmf.len() - 1).unwrap();
        outlook.exceedance = api::exceedance_from_pmf(&pmf, k);
        outlook.terciles = vec![api::Terciles {
            reference: api::TercileReference::Climatology1991To2020,
            edges,
            below: cats[0],
            near: cats[1],
            above: cats[2],
            edge_lower_shares: lower_shares,
            reference_mean: 1.0,
        }];
        outlook
    }

    fn row(flood_days: u32, used_in_fit: bool) -> api::SeasonRow {
        api::SeasonRow {
            season: "2026-DJF".into(),
            first_day: "2026-12-01".into(),
            last_day: "2027-02-28".into(),
            calendar_days: 90,
            observed_days: 90,
            flood_days,
            completeness: 1.0,
            used_in_fit,
            predictors: Default::default(),
            enso_category: None,
        }
    }

    #[test]
    fn scores_follow_their_published_definitions() {
        // pmf (0.5, 0.3, 0.2), observed 1, categories N < 1, 1 <= N < 2, N >= 2.
        let o = outlook(vec![0.5, 0.3, 0.2], [1, 2], [0.0, 0.0], &[1, 2]);
        let v = verify_issued(&o, &row(1, true)).unwrap();
        // CRPS of a count forecast = sum_k (F(k) - 1{k >= y})^2 (Gneiting & Raftery 2007,
        // JASA 102, discretised over counts; recalled from memory):
        // (0.5 - 0)^2 + (0.8 - 1)^2 + (1 - 1)^2 = 0.29.
        assert!((v.crps - 0.29).abs() < TOL, "{}", v.crps);
        // Logarithmic score -ln p(y) (Good 1952): -ln 0.3.
        assert!((v.log_score + 0.3_f64.ln()).abs() < TOL);
        // RPS over K = 3 categories (Epstein 1969; Wilks, Statistical Methods in the
        // Atmospheric Sciences, normalised by K - 1 as model::verify does; recalled from
        // memory): cumulative forecast (0.5, 0.8), observed (0, 1): (0.25 + 0.04) / 2 = 0.145.
        assert!((v.rps - 0.145).abs() < TOL, "{}", v.rps);
        assert!((v.observed_category_probability - 0.3).abs() < TOL);
        // Brier score (p - o)^2 (Brier 1950): P(N >= 1) = 0.5 happened, P(N >= 2) = 0.2 did not.
        assert_eq!(v.brier.len(), 2);
        assert!((v.brier[0].score - 0.25).abs() < TOL);
        assert!((v.brier[1].score - 0.04).abs() < TOL);
        assert_eq!((v.observed, v.observed_days), (1, 90));
    }

    #[test]
    fn a_count_on_a_split_edge_shares_its_category_weight() {
        // Edge count 1 with 40% of its mass counted below: an observed 1 weighs 0.4 "below"
        // and 0.6 "near" (the tie rule of model::verify::terciles).
        let o = outlook(vec![0.5, 0.3, 0.2], [1, 2], [0.4, 0.0], &[1]);
        let t = &o.terciles[0];
        let v = verify_issued(&o, &row(1, true)).unwrap();
        let want = 0.4 * t.below + 0.6 * t.near;
        assert!((v.observed_category_probability - want).abs() < TOL);
        let want_rps = 0.4 * verify::rps([t.below, t.near, t.above], [1.0, 0.0, 0.0])
            + 0.6 * verify::rps([t.below, t.near, t.above], [0.0, 1.0, 0.0]);
        assert!((v.rps - want_rps).abs() < TOL);
    }

    #[test]
    fn an_incomplete_season_is_not_scored() {
        let o = outlook(vec![0.5, 0.3, 0.2], [1, 2], [0.0, 0.0], &[1]);
        let err = verify_issued(&o, &row(1, false)).unwrap_err();
        assert!(err.to_string().contains("not complete enough"), "{err}");
    }
}
