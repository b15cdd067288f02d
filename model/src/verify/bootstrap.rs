//! Case-resampling bootstrap of a skill score, and the verdict it supports.
//!
//! Per-case scores of the forecast and of the reference are computed once; each resample
//! draws `n` case indices with replacement (the same indices for the forecast and the
//! reference, so the pairing is kept) and recomputes `1 - mean(forecast) / mean(reference)`.
//! The 95 % interval is the 2.5 % and 97.5 % percentiles of the resampled skills (the
//! percentile method; Efron and Tibshirani 1993, An Introduction to the Bootstrap, ch. 13),
//! each by linear interpolation between order statistics. Randomness comes only from a
//! `ChaCha8Rng` seeded explicitly, so an interval is reproducible.
//!
//! A resample whose reference cases all scored zero has no room for skill: it counts as no
//! skill (0) when the forecast also scored zero and as minus infinity otherwise, which can
//! only pull the interval down.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use super::{VerifyError, mean, skill::skill_score};

/// Fewest resamples accepted for a 95 % percentile interval.
pub const MIN_RESAMPLES: usize = 1000;

/// Lower and upper percentile levels of the 95 % interval.
const INTERVAL_LEVELS: (f64, f64) = (0.025, 0.975);

/// A checked bootstrap configuration: how many resamples, from which seed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Bootstrap {
    resamples: usize,
    seed: u64,
}

impl Bootstrap {
    /// A bootstrap of `resamples` resamples seeded with `seed`.
    ///
    /// # Errors
    /// Fewer than [`MIN_RESAMPLES`] resamples.
    pub fn new(resamples: usize, seed: u64) -> Result<Self, VerifyError> {
        if resamples < MIN_RESAMPLES {
            return Err(VerifyError::TooFewResamples {
                resamples,
                min: MIN_RESAMPLES,
            });
        }
        Ok(Self { resamples, seed })
    }

    /// Number of resamples.
    pub fn resamples(&self) -> usize {
        self.resamples
    }

    /// The seed.
    pub fn seed(&self) -> u64 {
        self.seed
    }

    /// 95 % interval of the skill of `forecast` per-case scores against paired `reference`
    /// per-case scores (both negatively oriented).
    ///
    /// # Errors
    /// As [`Bootstrap::skill_intervals`].
    pub fn skill_interval(
        &self,
        forecast: &[f64],
        reference: &[f64],
    ) -> Result<SkillInterval, VerifyError> {
        let mut intervals = self.skill_intervals(reference, &[forecast])?;
        Ok(intervals.remove(0))
    }

    /// 95 % intervals of the skill of several forecasts against one reference, all from the
    /// same resampled cases (so the intervals of competing models are comparable).
    ///
    /// # Errors
    /// No cases, a forecast whose length differs from the reference's, a score that is not
    /// finite, or a reference whose mean score is not positive.
    pub fn skill_intervals(
        &self,
        reference: &[f64],
        forecasts: &[&[f64]],
    ) -> Result<Vec<SkillInterval>, VerifyError> {
        let estimates = check_group(reference, forecasts)?;
        let resamples = self.resample_cases(reference.len());
        Ok(resamples.intervals(reference, forecasts, estimates))
    }

    /// Skill intervals of many groups of per-case scores, each a reference with the
    /// forecasts scored against it (e.g. one group per score), all from one set of resampled
    /// case indices drawn once. Each group's intervals equal those of
    /// [`Bootstrap::skill_intervals`] on that group alone: both draw the same indices from
    /// the same seed.
    ///
    /// Each group answers on its own; a group fails as [`Bootstrap::skill_intervals`] does,
    /// and also when its case count differs from the first group's.
    pub fn skill_intervals_many(
        &self,
        groups: &[ScoreGroup<'_>],
    ) -> Vec<Result<Vec<SkillInterval>, VerifyError>> {
        let Some(first) = groups.first() else {
            return Vec::new();
        };
        let n = first.reference.len();
        let mut resamples: Option<Resamples> = None;
        groups
            .iter()
            .map(|group| {
                if group.reference.len() != n {
                    return Err(VerifyError::LengthMismatch {
                        what: "bootstrap skill interval groups",
                        left: group.reference.len(),
                        right: n,
                    });
                }
                let estimates = check_group(group.reference, group.forecasts)?;
                let drawn = resamples.get_or_insert_with(|| self.resample_cases(n));
                Ok(drawn.intervals(group.reference, group.forecasts, estimates))
            })
            .collect()
    }

    /// The case indices of every resample of `n` cases, in the order the seeded generator
    /// draws them (resample by resample, case by case).
    fn resample_cases(&self, n: usize) -> Resamples {
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
        let indices = (0..self.resamples * n)
            .map(|_| rng.gen_range(0..n))
            .collect();
        Resamples {
            cases: n,
            indices,
            resamples: self.resamples,
        }
    }
}

/// One group for [`Bootstrap::skill_intervals_many`]: per-case scores of a reference and of
/// the forecasts scored against it (all negatively oriented, paired case by case).
#[derive(Debug, Clone, Copy)]
pub struct ScoreGroup<'a> {
    /// The reference's per-case scores.
    pub reference: &'a [f64],
    /// Each forecast's per-case scores.
    pub forecasts: &'a [&'a [f64]],
}

/// Resampled case indices, drawn once and shared by every score evaluated from them.
struct Resamples {
    cases: usize,
    /// `resamples * cases` indices; resample `r` is `indices[r * cases..(r + 1) * cases]`.
    indices: Vec<usize>,
    resamples: usize,
}

impl Resamples {
    /// Percentile intervals of checked, equally long scores.
    fn intervals(
        &self,
        reference: &[f64],
        forecasts: &[&[f64]],
        estimates: Vec<f64>,
    ) -> Vec<SkillInterval> {
        let reference_sums = self.sums(reference);
        forecasts
            .iter()
            .zip(estimates)
            .map(|(forecast, estimate)| {
                let mut resampled: Vec<f64> = self
                    .sums(forecast)
                    .into_iter()
                    .zip(&reference_sums)
                    .map(|(sum, &reference_sum)| resampled_skill(sum, reference_sum))
                    .collect();
                resampled.sort_by(f64::total_cmp);
                SkillInterval {
                    estimate,
                    lower: percentile(&resampled, INTERVAL_LEVELS.0),
                    upper: percentile(&resampled, INTERVAL_LEVELS.1),
                    resamples: self.resamples,
                }
            })
            .collect()
    }

    /// The sum of `scores` over each resample's cases.
    fn sums(&self, scores: &[f64]) -> Vec<f64> {
        self.indices
            .chunks_exact(self.cases)
            .map(|cases| cases.iter().map(|&case| scores[case]).sum())
            .collect()
    }
}

/// Checks one reference with its forecasts and returns the skill estimates on all cases.
fn check_group(reference: &[f64], forecasts: &[&[f64]]) -> Result<Vec<f64>, VerifyError> {
    let n = reference.len();
    if n == 0 {
        return Err(VerifyError::NoCases {
            what: "bootstrap skill interval",
        });
    }
    check_finite(reference)?;
    for forecast in forecasts {
        if forecast.len() != n {
            return Err(VerifyError::LengthMismatch {
                what: "bootstrap skill interval",
                left: forecast.len(),
                right: n,
            });
        }
        check_finite(forecast)?;
    }
    let reference_mean = mean(reference);
    forecasts
        .iter()
        .map(|f| skill_score(mean(f), reference_mean))
        .collect()
}

fn check_finite(scores: &[f64]) -> Result<(), VerifyError> {
    match scores.iter().position(|s| !s.is_finite()) {
        Some(case) => Err(VerifyError::BadScore {
            case,
            value: scores[case],
        }),
        None => Ok(()),
    }
}

/// Skill of one resample from its score sums (the common `1/n` cancels).
fn resampled_skill(forecast_sum: f64, reference_sum: f64) -> f64 {
    if reference_sum > 0.0 {
        1.0 - forecast_sum / reference_sum
    } else if forecast_sum > 0.0 {
        f64::NEG_INFINITY
    } else {
        0.0
    }
}

/// Percentile `level` of sorted values by linear interpolation between order statistics
/// (position `level * (len - 1)`); an infinite neighbour wins rather than giving NaN.
fn percentile(sorted: &[f64], level: f64) -> f64 {
    let position = level * (sorted.len() - 1) as f64;
    let below = position.floor() as usize;
    let above = position.ceil() as usize;
    let (lo, hi) = (sorted[below], sorted[above]);
    if below == above || lo == hi || !lo.is_finite() {
        lo
    } else if !hi.is_finite() {
        hi
    } else {
        lo + (position - below as f64) * (hi - lo)
    }
}

/// A skill estimate with its bootstrap 95 % interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SkillInterval {
    /// Skill on all cases.
    pub estimate: f64,
    /// 2.5 % percentile of the resampled skills.
    pub lower: f64,
    /// 97.5 % percentile of the resampled skills.
    pub upper: f64,
    /// Number of resamples behind the interval.
    pub resamples: usize,
}

/// What a skill interval allows one to say.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verdict {
    /// The whole 95 % interval lies above zero: the forecast beats the reference.
    Skilful,
    /// The interval reaches zero or below: no better than the reference.
    NoBetterThan,
}

impl Verdict {
    /// The verdict in plain words, for a forecast compared with `reference` (e.g. "the
    /// long-term average").
    pub fn sentence(&self, reference: &str) -> String {
        match self {
            Self::Skilful => format!(
                "Out of sample the forecasts beat {reference}: the 95% interval of their skill lies above zero."
            ),
            Self::NoBetterThan => format!(
                "Out of sample the forecasts are no better than {reference}: the 95% interval of their skill reaches zero."
            ),
        }
    }
}

/// Skill is claimed only when the interval lies wholly above zero.
pub fn verdict(interval: &SkillInterval) -> Verdict {
    if interval.lower > 0.0 {
        Verdict::Skilful
    } else {
        Verdict::NoBetterThan
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn too_few_resamples_are_refused() {
        assert!(Bootstrap::new(999, 1).is_err());
        assert!(Bootstrap::new(1000, 1).is_ok());
    }

    #[test]
    fn identical_scores_give_a_zero_width_interval_at_zero() {
        let scores = [0.3, 0.1, 0.7, 0.2];
        let interval = Bootstrap::new(1000, 7)
            .expect("enough")
            .skill_interval(&scores, &scores)
            .expect("valid");
        assert_eq!(
            (interval.estimate, interval.lower, interval.upper),
            (0.0, 0.0, 0.0)
        );
        assert_eq!(verdict(&interval), Verdict::NoBetterThan);
    }

    #[test]
    fn a_forecast_better_in_every_case_is_skilful() {
        let reference: Vec<f64> = (0..40).map(|i| 1.0 + (i % 5) as f64).collect();
        let forecast: Vec<f64> = reference.iter().map(|r| 0.5 * r).collect();
        let interval = Bootstrap::new(2000, 3)
            .expect("enough")
            .skill_interval(&forecast, &reference)
            .expect("valid");
        // Every resample gives exactly 1 - 0.5 = 0.5.
        assert!((interval.lower - 0.5).abs() < 1e-12 && (interval.upper - 0.5).abs() < 1e-12);
        assert_eq!(verdict(&interval), Verdict::Skilful);
    }

    #[test]
    fn interval_brackets_the_estimate_and_is_reproducible() {
        let reference: Vec<f64> = (0..45)
            .map(|i| ((i * 37) % 11) as f64 / 10.0 + 0.1)
            .collect();
        let forecast: Vec<f64> = (0..45).map(|i| ((i * 53) % 13) as f64 / 12.0).collect();
        let boot = Bootstrap::new(1000, 42).expect("enough");
        let a = boot.skill_interval(&forecast, &reference).expect("valid");
        let b = boot.skill_interval(&forecast, &reference).expect("valid");
        assert_eq!(a, b);
        assert!(a.lower < a.estimate && a.estimate < a.upper);
        let other = Bootstrap::new(1000, 43).expect("enough");
        assert_ne!(
            other.skill_interval(&forecast, &reference).expect("valid"),
            a
        );
    }

    #[test]
    fn percentile_interpolates_and_respects_infinity() {
        let v = [0.0, 1.0, 2.0, 3.0, 4.0];
        assert_eq!(percentile(&v, 0.5), 2.0);
        assert!((percentile(&v, 0.1) - 0.4).abs() < 1e-15);
        assert_eq!(
            percentile(&[f64::NEG_INFINITY, 1.0], 0.5),
            f64::NEG_INFINITY
        );
    }

    #[test]
    fn many_groups_share_indices_and_match_one_group_at_a_time() {
        let reference: Vec<f64> = (0..45)
            .map(|i| ((i * 37) % 11) as f64 / 10.0 + 0.1)
            .collect();
        let a: Vec<f64> = (0..45).map(|i| ((i * 53) % 13) as f64 / 12.0).collect();
        let b: Vec<f64> = (0..45).map(|i| ((i * 29) % 7) as f64 / 6.0).collect();
        let other_reference: Vec<f64> = reference.iter().map(|r| r + 0.2).collect();
        let boot = Bootstrap::new(1000, 42).expect("enough");
        let both: [&[f64]; 2] = [&a, &b];
        let one: [&[f64]; 1] = [&b];
        let short = [1.0, 2.0];
        let groups = [
            ScoreGroup {
                reference: &reference,
                forecasts: &both,
            },
            ScoreGroup {
                reference: &short,
                forecasts: &[],
            },
            ScoreGroup {
                reference: &other_reference,
                forecasts: &one,
            },
        ];
        let many = boot.skill_intervals_many(&groups);
        assert_eq!(many.len(), 3);
        assert_eq!(
            many[0].as_ref().expect("valid"),
            &boot.skill_intervals(&reference, &both).expect("valid")
        );
        assert!(many[1].is_err(), "a group of another length is refused");
        assert_eq!(
            many[2].as_ref().expect("valid"),
            &boot.skill_intervals(&other_reference, &one).expect("valid")
        );
        assert!(boot.skill_intervals_many(&[]).is_empty());
    }

    #[test]
    fn bad_inputs_are_errors() {
        let boot = Bootstrap::new(1000, 1).expect("enough");
        assert!(boot.skill_interval(&[], &[]).is_err());
        assert!(boot.skill_interval(&[1.0], &[1.0, 2.0]).is_err());
        assert!(boot.skill_interval(&[f64::NAN], &[1.0]).is_err());
        assert!(boot.skill_interval(&[1.0], &[0.0]).is_err());
    }
}
