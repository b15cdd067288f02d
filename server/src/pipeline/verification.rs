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
