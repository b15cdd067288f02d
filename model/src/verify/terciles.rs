//! Tercile categories against a reference climatology, and the ranked probability score.
//!
//! Counts of flood days are discrete and often zero-heavy, so the reference's 1/3 and 2/3
//! quantiles usually fall on a count that carries more than the missing mass: the edges tie.
//! [`TercileEdges::from_reference`] keeps the edge counts `e1 <= e2` (the smallest counts whose
//! reference cumulative probability reaches 1/3 and 2/3) and, for each edge, the share of the
//! mass *at* that count that belongs at or below the boundary: exactly the share that makes the
//! reference itself give 1/3, 1/3, 1/3. A forecast's category probabilities split its own mass
//! at the edge counts in the same proportions, so "near normal" keeps its meaning even when a
//! third of past seasons had no flood day at all.
//!
//! An observed count that lands on a split edge counts fractionally: its score is the
//! weighted mean of the scores it would get in each adjacent category, weighted by the split
//! shares. This is the same as breaking the tie at random, so the reference scored against
//! observations drawn from itself has the expected ranked probability score of three
//! equiprobable categories, 2/9 (in the normalisation below).
//!
//! Explicit edges ([`TercileEdges::from_counts`], as in the `score` command's
//! `category_edges: [e1, e2]`) split nothing: below is `N < e1`, near `e1 <= N < e2`, above
//! `N >= e2`.
//!
//! The ranked probability score (Epstein 1969, J. Appl. Meteor. 8; Murphy 1971, J. Appl.
//! Meteor. 10) over `K = 3` ordered categories is the sum over the first `K - 1` boundaries
//! of the squared difference between the forecast's and the observation's cumulative
//! probabilities, divided by `K - 1 = 2` so that it lies in `[0, 1]`. The ranked probability
//! skill score is `RPSS = 1 - RPS / RPS_reference` ([`super::skill_score`]); the
//! normalisation cancels in it. (The papers and the textbook are cited from memory.)

use super::{QUANTILE_TOLERANCE, VerifyError, empirical_pmf, validate_pmf};

/// Number of categories.
const CATEGORIES: usize = 3;

/// Two category edges and, for each, the share of the mass at the edge count that falls at or
/// below the boundary (into the lower categories).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TercileEdges {
    edges: [u32; 2],
    lower_share: [f64; 2],
}

impl TercileEdges {
    /// Edges from a reference climatology given as a count distribution (index = days), with
    /// the tie-splitting shares that give the reference exactly 1/3 in each category.
    ///
    /// # Errors
    /// The reference fails [`validate_pmf`].
    pub fn from_reference(reference: &[f64]) -> Result<Self, VerifyError> {
        validate_pmf(reference)?;
        let total: f64 = reference.iter().sum();
        let mut edges = [0u32; 2];
        let mut lower_share = [0.0; 2];
        for (boundary, level) in [1.0 / 3.0, 2.0 / 3.0].into_iter().enumerate() {
            let target = level * total;
            let mut below = 0.0;
            let mut found = false;
            for (k, &p) in reference.iter().enumerate() {
                if below + p >= target - QUANTILE_TOLERANCE && p > 0.0 {
                    edges[boundary] = k as u32;
                    lower_share[boundary] = ((target - below) / p).clamp(0.0, 1.0);
                    found = true;
                    break;
                }
                below += p;
            }
            if !found {
                // Only rounding can leave the target unreached: put the edge on the last count
                // with mass and give it wholly to the lower side.
                let last = reference.iter().rposition(|&p| p > 0.0).unwrap_or(0);
                edges[boundary] = last as u32;
                lower_share[boundary] = 1.0;
            }
        }
        Ok(Self { edges, lower_share })
    }

    /// Edges from an empirical sample of past counts (its empirical distribution as the
    /// reference).
    ///
    /// # Errors
    /// An empty sample.
    pub fn from_sample(counts: &[u32]) -> Result<Self, VerifyError> {
        if counts.is_empty() {
            return Err(VerifyError::NoCases {
                what: "tercile edges from a sample",
            });
        }
        Self::from_reference(&empirical_pmf(counts))
    }

    /// Explicit edges without splitting: below `N < lower`, near `lower <= N < upper`, above
    /// `N >= upper`.
    ///
    /// # Errors
    /// `lower > upper`.
    pub fn from_counts(lower: u32, upper: u32) -> Result<Self, VerifyError> {
        if lower > upper {
            return Err(VerifyError::EdgesOutOfOrder { lower, upper });
        }
        Ok(Self {
            edges: [lower, upper],
            lower_share: [0.0, 0.0],
        })
    }

    /// Edges as reported by [`TercileEdges::edges`] and [`TercileEdges::lower_shares`] (to
    /// categorise another distribution against the same reference).
    pub fn from_parts(edges: [u32; 2], lower_share: [f64; 2]) -> Self {
        Self { edges, lower_share }
    }

    /// The edge counts `[e1, e2]`.
    pub fn edges(&self) -> [u32; 2] {
        self.edges
    }

    /// For each edge, the share of the mass at the edge count counted at or below the
    /// boundary (zero for explicit edges).
    pub fn lower_shares(&self) -> [f64; 2] {
        self.lower_share
    }

    /// Probabilities of below, near and above normal for a count distribution.
    pub fn categorise(&self, pmf: &[f64]) -> [f64; 3] {
        let [c1, c2] = self.cumulative(|k| pmf.get(k).copied().unwrap_or(0.0), pmf.len());
        let total: f64 = pmf.iter().sum();
        [c1, c2 - c1, total - c2]
    }

    /// Category weights of an observed count: one category, or two adjacent categories
    /// sharing the weight when the count lies on a split edge.
    pub fn observed_weights(&self, observed: u32) -> [f64; 3] {
        let y = observed as usize;
        let [c1, c2] = self.cumulative(|k| if k == y { 1.0 } else { 0.0 }, y + 1);
        [c1, c2 - c1, 1.0 - c2]
    }

    /// Ranked probability score of a count distribution against an observed count, both put
    /// into these categories.
    pub fn rps(&self, pmf: &[f64], observed: u32) -> f64 {
        rps(self.categorise(pmf), self.observed_weights(observed))
    }

    /// Cumulative probability at or below each boundary for a mass function given by `mass`
    /// over `0..len`.
    fn cumulative(&self, mass: impl Fn(usize) -> f64, len: usize) -> [f64; 2] {
        let mut out = [0.0; 2];
        for (boundary, out) in out.iter_mut().enumerate() {
            let edge = self.edges[boundary] as usize;
            let below: f64 = (0..edge.min(len)).map(&mass).sum();
            *out = below + self.lower_share[boundary] * mass(edge);
        }
        out
    }
}

/// Ranked probability score of category probabilities `forecast` against observed category
/// `weights` (one-hot, or split between adjacent categories as explained in the module
/// notes): the weighted mean over categories `c` of
/// `sum_{j < K-1} (F_j - 1{c <= j})^2 / (K - 1)`, with `F` the forecast's cumulative sums.
pub fn rps(forecast: [f64; 3], weights: [f64; 3]) -> f64 {
    let cumulative = [forecast[0], forecast[0] + forecast[1]];
    let mut score = 0.0;
    for (category, &weight) in weights.iter().enumerate() {
        if weight == 0.0 {
            continue;
        }
        let mut squared = 0.0;
        for (boundary, &f) in cumulative.iter().enumerate() {
            let observed = if category <= boundary { 1.0 } else { 0.0 };
            squared += (f - observed) * (f - observed);
        }
        score += weight * squared / (CATEGORIES - 1) as f64;
    }
    score
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    const TIGHT: f64 = 1e-12;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() < TIGHT
    }

    #[test]
    fn zero_heavy_reference_splits_its_edges() {
        // Half the seasons had no flood day: both boundaries need shares of tied counts.
        let reference = [0.5, 0.2, 0.1, 0.1, 0.1];
        let edges = TercileEdges::from_reference(&reference).expect("valid reference");
        assert_eq!(edges.edges(), [0, 1]);
        let [s1, s2] = edges.lower_shares();
        assert!(close(s1, (1.0 / 3.0) / 0.5));
        assert!(close(s2, (2.0 / 3.0 - 0.5) / 0.2));
        for p in edges.categorise(&reference) {
            assert!(close(p, 1.0 / 3.0));
        }
    }

    #[test]
    fn one_count_holding_both_boundaries_gives_near_normal_a_share() {
        let reference = [0.8, 0.1, 0.1];
        let edges = TercileEdges::from_reference(&reference).expect("valid reference");
        assert_eq!(edges.edges(), [0, 0]);
        for p in edges.categorise(&reference) {
            assert!(close(p, 1.0 / 3.0));
        }
        // An observed zero is split over all three categories in the reference's proportions.
        let w = edges.observed_weights(0);
        assert!(close(w[0], (1.0 / 3.0) / 0.8));
        assert!(close(w[1], (1.0 / 3.0) / 0.8));
        assert!(close(w[2], 1.0 - (2.0 / 3.0) / 0.8));
        assert_eq!(edges.observed_weights(1), [0.0, 0.0, 1.0]);
    }

    #[test]
    fn untied_reference_needs_no_split() {
        // Equal thirds on counts 0, 1, 2: each boundary falls exactly at the end of a count.
        let edges = TercileEdges::from_reference(&[1.0 / 3.0; 3]).expect("valid reference");
        assert_eq!(edges.edges(), [0, 1]);
        assert_eq!(edges.observed_weights(0), [1.0, 0.0, 0.0]);
        assert_eq!(edges.observed_weights(1), [0.0, 1.0, 0.0]);
        assert_eq!(edges.observed_weights(2), [0.0, 0.0, 1.0]);
    }

    #[test]
    fn explicit_edges_follow_the_design_rule() {
        // Categories N < e1, e1 <= N < e2, N >= e2 (DESIGN, `score` command).
        let edges = TercileEdges::from_counts(2, 5).expect("ordered edges");
        let pmf = [0.1, 0.1, 0.2, 0.2, 0.1, 0.1, 0.2];
        let [b, n, a] = edges.categorise(&pmf);
        assert!(close(b, 0.2) && close(n, 0.5) && close(a, 0.3));
        assert_eq!(edges.observed_weights(1), [1.0, 0.0, 0.0]);
        assert_eq!(edges.observed_weights(2), [0.0, 1.0, 0.0]);
        assert_eq!(edges.observed_weights(5), [0.0, 0.0, 1.0]);
        assert!(TercileEdges::from_counts(5, 2).is_err());
    }

    #[test]
    fn rps_of_certain_forecasts() {
        // Sure and right: 0. Sure of below, observed above: both cumulative terms are off by
        // one, (1 + 1) / 2 = 1 (Wilks, Statistical Methods in the Atmospheric Sciences,
        // ranked probability score, maximum for K categories normalised by K - 1).
        assert_eq!(rps([1.0, 0.0, 0.0], [1.0, 0.0, 0.0]), 0.0);
        assert_eq!(rps([1.0, 0.0, 0.0], [0.0, 0.0, 1.0]), 1.0);
        // Climatology against any single category, e.g. below: ((1/3 - 1)^2 + (2/3 - 1)^2)/2.
        let below = rps([1.0 / 3.0; 3], [1.0, 0.0, 0.0]);
        assert!(close(below, (4.0 / 9.0 + 1.0 / 9.0) / 2.0));
    }

    /// Expected RPS of a reference scored against observations drawn from itself.
    fn expected_self_rps(reference: &[f64]) -> f64 {
        let edges = TercileEdges::from_reference(reference).expect("valid reference");
        reference
            .iter()
            .enumerate()
            .map(|(y, &p)| p * edges.rps(reference, y as u32))
            .sum()
    }

    #[test]
    fn reference_against_itself_has_the_equiprobable_expected_rps() {
        // Three equiprobable categories: E[RPS] = (2/9 + 2/9) / 2 = 2/9, since each cumulative
        // boundary is a Bernoulli(1/3 or 2/3) with variance 2/9.
        for reference in [
            vec![0.5, 0.2, 0.1, 0.1, 0.1],
            vec![0.8, 0.1, 0.1],
            vec![1.0],
            vec![0.05, 0.1, 0.2, 0.3, 0.2, 0.1, 0.05],
        ] {
            assert!(
                close(expected_self_rps(&reference), 2.0 / 9.0),
                "{reference:?}"
            );
        }
    }

    proptest! {
        #[test]
        fn any_reference_gets_thirds_and_the_expected_rps(
            raw in proptest::collection::vec(0.0f64..1.0, 1..30),
            zero_mass in 0.0f64..0.95,
        ) {
            // A zero-heavy reference: `zero_mass` at 0, the rest spread by `raw`.
            let spread: f64 = raw.iter().sum();
            prop_assume!(spread > 1e-6);
            let mut reference = vec![zero_mass];
            reference.extend(raw.iter().map(|r| (1.0 - zero_mass) * r / spread));
            let edges = TercileEdges::from_reference(&reference).expect("valid reference");
            for p in edges.categorise(&reference) {
                prop_assert!((p - 1.0 / 3.0).abs() < 1e-9);
            }
            prop_assert!((expected_self_rps(&reference) - 2.0 / 9.0).abs() < 1e-9);
        }
    }
}
