//! The headline numbers of an outlook, taken from it by one function: what a map colours a
//! gauge by (GeoJSON properties) and what a spreadsheet row of the outlook set holds (CSV).

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use super::{Outlook, PlanOn, TercileReference, Verdict};

/// An outlook's headline numbers, each equal to the outlook's own field it is named for.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct OutlookSummary {
    /// Season label of the outlook, e.g. `2026-DJF` (December 2026 to February 2027).
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// Mean number of flood days (the outlook's `mean`), days.
    pub mean: f64,
    /// The 80% range `[p10, p90]` (the outlook's `p10` and `p90`), days.
    pub range_80: [u32; 2],
    /// The number to plan with (the outlook's `plan_on`).
    pub plan_on: PlanOn,
    /// The exceedance the outlook headlines, `P(N >= k)` for the gauge's `k`; null when the
    /// outlook lists no exceedance.
    #[schema(required = true)]
    pub at_least_k: Option<AtLeastK>,
    /// Odds of the below / near / above normal terciles of the 1991-2020 climatology; null
    /// when the outlook has no climatology terciles.
    #[schema(required = true)]
    pub terciles: Option<TercileOdds>,
    /// The out-of-sample skill verdict (the outlook's `skill.verdict`).
    pub verdict: Verdict,
    /// The engine the outlook leads with: `water` or `count`.
    #[schema(value_type = crate::openapi::Engine)]
    pub engine: String,
}

/// `P(N >= k)` with its `k`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct AtLeastK {
    /// The count of days `k`, days: the smallest of the outlook's exceedance days above its
    /// median, else the largest (the one the web page states in words).
    pub k: u32,
    /// `P(N >= k)`, a probability from 0 to 1 (the outlook's `exceedance` entry for `k`).
    pub probability: f64,
}

/// The tercile probabilities of one reference.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct TercileOdds {
    /// The reference the category edges come from.
    pub reference: TercileReference,
    /// `P(N < e1)`, below normal, a probability from 0 to 1.
    pub below: f64,
    /// `P(e1 <= N < e2)`, near normal, a probability from 0 to 1.
    pub near: f64,
    /// `P(N >= e2)`, above normal, a probability from 0 to 1.
    pub above: f64,
}

impl OutlookSummary {
    /// The summary of `outlook`: every number copied from the outlook, none recomputed.
    pub fn of(outlook: &Outlook) -> Self {
        Self {
            season: outlook.season.clone(),
            mean: outlook.mean,
            range_80: [outlook.p10, outlook.p90],
            plan_on: outlook.plan_on.clone(),
            at_least_k: headline_exceedance(outlook),
            terciles: outlook
                .terciles
                .iter()
                .find(|t| t.reference == TercileReference::Climatology1991To2020)
                .map(|t| TercileOdds {
                    reference: t.reference,
                    below: t.below,
                    near: t.near,
                    above: t.above,
                }),
            verdict: outlook.skill.verdict,
            engine: outlook.engine.clone(),
        }
    }
}

/// The smallest exceedance day above the median, else the largest listed.
fn headline_exceedance(outlook: &Outlook) -> Option<AtLeastK> {
    let mut listed = outlook.exceedance.clone();
    listed.sort_by_key(|e| e.days);
    listed
        .iter()
        .find(|e| e.days > outlook.median)
        .or(listed.last())
        .map(|e| AtLeastK {
            k: e.days,
            probability: e.probability,
        })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::api::Exceedance;

    fn exceedance(days: &[(u32, f64)]) -> Vec<Exceedance> {
        days.iter()
            .map(|&(days, probability)| Exceedance { days, probability })
            .collect()
    }

    fn outlook_with(median: u32, listed: &[(u32, f64)]) -> Outlook {
        let fake = tidetally_test_support::fixtures::fake_outlook("a", &[0.5, 0.3, 0.2]);
        let mut outlook: Outlook = serde_json::from_value(fake).expect("wire shape");
        outlook.median = median;
        outlook.exceedance = exceedance(listed);
        outlook
    }

    #[test]
    fn the_headline_k_is_the_first_listed_above_the_median_else_the_last() {
        let listed = [(10, 0.1), (3, 0.6), (5, 0.4)];
        let at = |median| headline_exceedance(&outlook_with(median, &listed));
        assert_eq!(at(0).map(|e| e.k), Some(3));
        assert_eq!(at(3).map(|e| e.k), Some(5));
        assert_eq!(
            at(4),
            Some(AtLeastK {
                k: 5,
                probability: 0.4
            })
        );
        assert_eq!(at(12).map(|e| e.k), Some(10));
        assert_eq!(headline_exceedance(&outlook_with(0, &[])), None);
    }

    #[test]
    fn a_summary_copies_the_outlook_and_skips_missing_climatology_terciles() {
        let outlook = outlook_with(1, &[(5, 0.0)]);
        let summary = OutlookSummary::of(&outlook);
        assert_eq!(summary.season, outlook.season);
        assert_eq!(summary.mean, outlook.mean);
        assert_eq!(summary.range_80, [outlook.p10, outlook.p90]);
        assert_eq!(summary.plan_on, outlook.plan_on);
        assert_eq!(summary.verdict, outlook.skill.verdict);
        assert_eq!(summary.terciles, None, "the fake outlook has no terciles");
    }

    #[test]
    fn the_tercile_odds_are_the_climatology_references() {
        let terciles = |reference, below| crate::api::Terciles {
            reference,
            edges: [1, 2],
            below,
            near: 0.25,
            above: 0.75 - below,
            edge_lower_shares: [0.5, 0.5],
            reference_mean: 1.0,
        };
        let mut outlook = outlook_with(0, &[]);
        outlook.terciles = vec![
            terciles(TercileReference::TrendOnly, 0.5),
            terciles(TercileReference::Climatology1991To2020, 0.125),
        ];
        let odds = OutlookSummary::of(&outlook)
            .terciles
            .expect("climatology terciles");
        assert_eq!(odds.reference, TercileReference::Climatology1991To2020);
        assert_eq!((odds.below, odds.near, odds.above), (0.125, 0.25, 0.625));
        assert_eq!(OutlookSummary::of(&outlook).at_least_k, None);
    }
}
