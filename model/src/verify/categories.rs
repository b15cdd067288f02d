//! The ranked probability score over any number of ordered count categories.
//!
//! Edges `e_1 < e_2 < ... < e_{K-1}` cut the counts into `K` categories: `N < e_1`,
//! `e_1 <= N < e_2`, ..., `N >= e_{K-1}`. The ranked probability score (Epstein 1969,
//! J. Appl. Meteor. 8; Murphy 1971, J. Appl. Meteor. 10; cited from memory) is
//! `sum_j (F_j - O_j)^2 / (K - 1)` over the `K - 1` boundaries, where `F_j = P(N < e_j)` is
//! the forecast's and `O_j = 1{y < e_j}` the observation's cumulative probability, so it lies
//! in `[0, 1]`. With two edges it is the tercile score of [`super::TercileEdges`] with
//! explicit edges.

use super::VerifyError;

/// Strictly increasing category edges, in days.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CategoryEdges(Vec<u32>);

impl CategoryEdges {
    /// Checks the edges: at least one, strictly increasing.
    ///
    /// # Errors
    /// No edge, or an edge not above the one before it (named by its index from 0).
    pub fn new(edges: Vec<u32>) -> Result<Self, VerifyError> {
        if edges.is_empty() {
            return Err(VerifyError::NoCategoryEdges);
        }
        if let Some(index) = edges.windows(2).position(|w| w[1] <= w[0]) {
            return Err(VerifyError::EdgeNotIncreasing {
                index: index + 1,
                edge: edges[index + 1],
                previous: edges[index],
            });
        }
        Ok(Self(edges))
    }

    /// The edges.
    pub fn edges(&self) -> &[u32] {
        &self.0
    }

    /// Number of categories, one more than the edges.
    pub fn categories(&self) -> usize {
        self.0.len() + 1
    }

    /// Probability of each category under a count distribution.
    pub fn categorise(&self, pmf: &[f64]) -> Vec<f64> {
        let below = self.cumulative(pmf);
        let total: f64 = pmf.iter().sum();
        let mut out = Vec::with_capacity(self.categories());
        let mut previous = 0.0;
        for f in below.iter().chain(std::iter::once(&total)) {
            out.push(f - previous);
            previous = *f;
        }
        out
    }

    /// Ranked probability score of a count distribution against an observed count.
    pub fn rps(&self, pmf: &[f64], observed: u32) -> f64 {
        let squared: f64 = self
            .cumulative(pmf)
            .iter()
            .zip(&self.0)
            .map(|(f, &edge)| {
                let o = if observed < edge { 1.0 } else { 0.0 };
                (f - o) * (f - o)
            })
            .sum();
        squared / self.0.len() as f64
    }

    /// `P(N < e_j)` for each edge.
    fn cumulative(&self, pmf: &[f64]) -> Vec<f64> {
        self.0
            .iter()
            .map(|&edge| pmf.iter().take(edge as usize).sum())
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::verify::TercileEdges;

    #[test]
    fn four_edges_by_hand() {
        // Edges 1, 2, 4, 6: five categories. pmf over 0..=6 days; observed 3 lies in the
        // third category (2 <= N < 4). F = P(N<1), P(N<2), P(N<4), P(N<6) =
        // 0.1, 0.3, 0.7, 0.9; O = 0, 0, 1, 1. RPS = (0.01 + 0.09 + 0.09 + 0.01) / 4 = 0.05
        // (hand sum from the definition).
        let pmf = [0.1, 0.2, 0.2, 0.2, 0.1, 0.1, 0.1];
        let edges = CategoryEdges::new(vec![1, 2, 4, 6]).expect("increasing");
        assert_eq!(edges.categories(), 5);
        assert!((edges.rps(&pmf, 3) - 0.05).abs() < 1e-12);
        let p = edges.categorise(&pmf);
        let want = [0.1, 0.2, 0.4, 0.2, 0.1];
        assert!(
            p.iter().zip(want).all(|(a, b)| (a - b).abs() < 1e-12),
            "{p:?}"
        );
    }

    #[test]
    fn perfect_and_worst_forecasts_score_zero_and_one() {
        // The bounds of the normalised score (common practice).
        let edges = CategoryEdges::new(vec![2, 5, 9]).expect("increasing");
        let sure_low = [1.0];
        assert_eq!(edges.rps(&sure_low, 0), 0.0);
        assert!((edges.rps(&sure_low, 12) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn two_edges_agree_with_the_tercile_score() {
        let pmf = [0.05, 0.15, 0.3, 0.25, 0.15, 0.1];
        let k = CategoryEdges::new(vec![2, 4]).expect("increasing");
        let t = TercileEdges::from_counts(2, 4).expect("ordered");
        for observed in 0..8 {
            assert!((k.rps(&pmf, observed) - t.rps(&pmf, observed)).abs() < 1e-12);
        }
    }

    #[test]
    fn edges_must_increase() {
        assert!(matches!(
            CategoryEdges::new(vec![]),
            Err(VerifyError::NoCategoryEdges)
        ));
        let err = CategoryEdges::new(vec![1, 3, 3, 7]).expect_err("repeated edge");
        assert!(
            matches!(
                err,
                VerifyError::EdgeNotIncreasing {
                    index: 2,
                    edge: 3,
                    previous: 3
                }
            ),
            "{err:?}"
        );
    }
}
