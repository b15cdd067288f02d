//! The score table of a hindcast: every score of [`crate::verify`] for each forecast system,
//! computed once per case, and the bootstrap intervals of the skill scores.
//!
//! Per case, the tercile edges (with the verification module's tie rule) and the upper-decile
//! event come from that case's climatology forecast, which is fitted on the case's training
//! seasons only: the categories are those of the training-period climatology.

use serde::Serialize;

use super::HindcastError;
use super::baselines::ModelKind;
use crate::glm::Family;
use crate::verify::{
    self, Bootstrap, CaseScores, ContingencyTable, ProbabilityBins, ScoreGroup, SkillInterval,
    TercileEdges, UpperDecileEvent,
};

/// Width-0.1 probability bins for reliability diagrams and the Brier decomposition (common
/// practice for probability forecasts).
pub const RELIABILITY_BINS: usize = 10;

/// One bin of a reliability diagram.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BinReport {
    /// Lower edge of the forecast probability bin.
    pub lower: f64,
    /// Upper edge.
    pub upper: f64,
    /// Cases whose forecast probability falls in the bin.
    pub count: usize,
    /// Mean forecast probability of those cases (`None` when empty).
    pub mean_forecast: Option<f64>,
    /// Share of those cases in which the event happened (`None` when empty).
    pub observed_frequency: Option<f64>,
}

/// Brier score of `P(N >= days)` with its Murphy decomposition and reliability diagram.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BrierReport {
    /// The `k` of `P(N >= k)`.
    pub days: u32,
    /// Mean Brier score.
    pub score: f64,
    /// Reliability term (lower is better).
    pub reliability: f64,
    /// Resolution term (higher is better).
    pub resolution: f64,
    /// Uncertainty term (of the observations alone).
    pub uncertainty: f64,
    /// Share of cases in which `N >= k` happened.
    pub base_rate: f64,
    /// Reliability-diagram bins with their counts.
    pub bins: Vec<BinReport>,
}

/// ROC of `P(N >= days)`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RocReport {
    /// The `k` of `P(N >= k)`.
    pub days: u32,
    /// Area under the curve; `None` when the cases lack events or non-events.
    pub area: Option<f64>,
    /// Points of the curve.
    pub points: Vec<RocPointReport>,
    /// Why there is no curve, when there is none.
    pub note: Option<String>,
}

/// One point of a ROC curve.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RocPointReport {
    /// Probability threshold for "yes".
    pub threshold: f64,
    /// Hit rate.
    pub hit_rate: f64,
    /// False-alarm rate.
    pub false_alarm_rate: f64,
}

/// SEDI of the upper-decile event: a season above its training climatology's 90th percentile,
/// forecast "yes" when its probability exceeds the climatological 10 %.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SediReport {
    /// Event forecast and happened.
    pub hits: u64,
    /// Event forecast, did not happen.
    pub false_alarms: u64,
    /// Event not forecast, happened.
    pub misses: u64,
    /// Event not forecast, did not happen.
    pub correct_negatives: u64,
    /// The index; `None` when a hit or false-alarm rate is 0, 1 or undefined.
    pub sedi: Option<f64>,
}

/// Mean scores of one forecast system over a scheme's cases.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelScores {
    /// The system.
    pub model: ModelKind,
    /// Its count family (fixed by the full-record fit).
    pub family: Option<Family>,
    /// Mean CRPS, days.
    pub crps: f64,
    /// Mean RPS over the three tercile categories.
    pub rps: f64,
    /// Mean logarithmic score.
    pub log_score: f64,
    /// Mean absolute error of the forecast mean, days.
    pub mae: f64,
    /// Brier scores per `exceed_days` value.
    pub brier: Vec<BrierReport>,
    /// ROC per `exceed_days` value.
    pub roc: Vec<RocReport>,
    /// Upper-decile SEDI.
    pub sedi: SediReport,
}

/// One skill score with its bootstrap 95 % interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SkillEntry {
    /// `crpss`, `rpss`, `bss_<k>`, `log_skill` or `mae_skill`.
    pub score: String,
    /// Skill on all cases (`None` when it cannot be computed; see `note`).
    pub estimate: Option<f64>,
    /// 2.5 % bound of the bootstrap interval (`None` when minus infinity or not computed).
    pub lower: Option<f64>,
    /// 97.5 % bound.
    pub upper: Option<f64>,
    /// Whether the whole interval lies above zero.
    pub skilful: bool,
    /// Why there is no interval, when there is none.
    pub note: Option<String>,
}

/// The skill of one system against a reference system, every score.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SkillReport {
    /// The system scored.
    pub model: ModelKind,
    /// The reference.
    pub reference: ModelKind,
    /// Bootstrap resamples behind each interval.
    pub resamples: usize,
    /// One entry per score.
    pub scores: Vec<SkillEntry>,
}

impl SkillReport {
    /// The entry of `score` (e.g. `crpss`).
    pub fn entry(&self, score: &str) -> Option<&SkillEntry> {
        self.scores.iter().find(|e| e.score == score)
    }
}

/// The forecasts of one scheme, case by case, ready to score.
pub(crate) struct CaseSet {
    /// Observed flood days per case.
    pub observed: Vec<u32>,
    /// Per system (by [`ModelKind::index`]), the forecast pmf of each case.
    pub pmfs: Vec<Vec<Vec<f64>>>,
}

/// Per-case scores of every system, computed once.
pub(crate) struct Scored {
    pub cases: Vec<CaseScores>,
    pub table: Vec<ModelScores>,
}

/// Scores every present system of `set` (`kinds` with their families).
pub(crate) fn score(
    set: &CaseSet,
    kinds: &[(ModelKind, Option<Family>)],
    exceed_days: &[u32],
) -> Result<Scored, HindcastError> {
    let climatology = &set.pmfs[ModelKind::Climatology.index()];
    let edges = climatology
        .iter()
        .map(|pmf| TercileEdges::from_reference(pmf))
        .collect::<Result<Vec<_>, _>>()?;
    let deciles = climatology
        .iter()
        .map(|pmf| UpperDecileEvent::from_reference(pmf))
        .collect::<Result<Vec<_>, _>>()?;
    let bins = ProbabilityBins::equal_width(RELIABILITY_BINS)?;
    let mut cases = Vec::new();
    let mut table = Vec::new();
    for &(kind, family) in kinds {
        let pmfs = &set.pmfs[kind.index()];
        let scores = case_scores(pmfs, &set.observed, &edges, exceed_days)?;
        let mut brier = Vec::new();
        let mut roc = Vec::new();
        for &k in exceed_days {
            let p: Vec<f64> = pmfs
                .iter()
                .map(|pmf| verify::exceedance_probability(pmf, k))
                .collect();
            let o: Vec<bool> = set.observed.iter().map(|&y| y >= k).collect();
            let d = verify::brier_decomposition(&p, &o, bins)?;
            brier.push(BrierReport {
                days: k,
                score: d.score,
                reliability: d.reliability,
                resolution: d.resolution,
                uncertainty: d.uncertainty,
                base_rate: d.base_rate,
                bins: d
                    .bins
                    .iter()
                    .map(|b| BinReport {
                        lower: b.lower,
                        upper: b.upper,
                        count: b.count,
                        mean_forecast: b.mean_forecast,
                        observed_frequency: b.observed_frequency,
                    })
                    .collect(),
            });
            roc.push(match verify::roc_curve(&p, &o) {
                Ok(curve) => RocReport {
                    days: k,
                    area: Some(curve.area),
                    points: curve
                        .points
                        .iter()
                        .map(|q| RocPointReport {
                            threshold: q.threshold,
                            hit_rate: q.hit_rate,
                            false_alarm_rate: q.false_alarm_rate,
                        })
                        .collect(),
                    note: None,
                },
                Err(e) => RocReport {
                    days: k,
                    area: None,
                    points: Vec::new(),
                    note: Some(e.to_string()),
                },
            });
        }
        let mut contingency = ContingencyTable::default();
        for ((pmf, &y), event) in pmfs.iter().zip(&set.observed).zip(&deciles) {
            contingency.record(event.probability(pmf) > event.base_rate, event.happened(y));
        }
        table.push(ModelScores {
            model: kind,
            family,
            crps: mean(&scores.crps),
            rps: mean(&scores.rps),
            log_score: mean(&scores.log),
            mae: mean(&scores.absolute_error),
            brier,
            roc,
            sedi: SediReport {
                hits: contingency.hits,
                false_alarms: contingency.false_alarms,
                misses: contingency.misses,
                correct_negatives: contingency.correct_negatives,
                sedi: contingency.sedi(),
            },
        });
        cases.push(scores);
    }
    Ok(Scored { cases, table })
}

/// Per-case scores with each case's own tercile edges.
fn case_scores(
    pmfs: &[Vec<f64>],
    observed: &[u32],
    edges: &[TercileEdges],
    exceed_days: &[u32],
) -> Result<CaseScores, HindcastError> {
    let n = pmfs.len();
    let mut all = CaseScores {
        crps: Vec::with_capacity(n),
        rps: Vec::with_capacity(n),
        log: Vec::with_capacity(n),
        absolute_error: Vec::with_capacity(n),
        brier: vec![Vec::with_capacity(n); exceed_days.len()],
        exceed_days: exceed_days.to_vec(),
    };
    for ((pmf, &y), e) in pmfs.iter().zip(observed).zip(edges) {
        let one = CaseScores::compute(std::slice::from_ref(pmf), &[y], e, exceed_days)?;
        all.crps.extend(one.crps);
        all.rps.extend(one.rps);
        all.log.extend(one.log);
        all.absolute_error.extend(one.absolute_error);
        for (to, from) in all.brier.iter_mut().zip(one.brier) {
            to.extend(from);
        }
    }
    Ok(all)
}

fn mean(values: &[f64]) -> f64 {
    values.iter().sum::<f64>() / values.len() as f64
}

/// The named per-case arrays of one system, in report order.
fn named(scores: &CaseScores) -> Vec<(String, &[f64])> {
    let mut out: Vec<(String, &[f64])> = vec![
        ("crpss".to_owned(), &scores.crps),
        ("rpss".to_owned(), &scores.rps),
    ];
    for (k, brier) in scores.exceed_days.iter().zip(&scores.brier) {
        out.push((format!("bss_{k}"), brier));
    }
    out.push(("log_skill".to_owned(), &scores.log));
    out.push(("mae_skill".to_owned(), &scores.absolute_error));
    out
}

/// One comparison: the skill of each of `models` against `reference`.
pub(crate) struct Comparison<'a> {
    /// The systems scored.
    pub models: &'a [ModelKind],
    /// The system they are scored against.
    pub reference: ModelKind,
}

/// The skill of every comparison, every score, all from one set of resampled cases (drawn
/// once, so the intervals of competing systems and scores are comparable).
pub(crate) fn skill(
    scored: &Scored,
    kinds: &[(ModelKind, Option<Family>)],
    comparisons: &[Comparison<'_>],
    bootstrap: &Bootstrap,
) -> Vec<SkillReport> {
    let position = |kind: ModelKind| kinds.iter().position(|(k, _)| *k == kind);
    let mut reports: Vec<SkillReport> = Vec::new();
    // Per group (one per comparison and score): its name, the reports it fills, its arrays.
    let mut names: Vec<(String, std::ops::Range<usize>)> = Vec::new();
    let mut arrays: Vec<(&[f64], Vec<&[f64]>)> = Vec::new();
    for comparison in comparisons {
        let Some(r) = position(comparison.reference) else {
            continue;
        };
        let present: Vec<(ModelKind, usize)> = comparison
            .models
            .iter()
            .filter_map(|&m| position(m).map(|i| (m, i)))
            .collect();
        let first = reports.len();
        reports.extend(present.iter().map(|&(model, _)| SkillReport {
            model,
            reference: comparison.reference,
            resamples: bootstrap.resamples(),
            scores: Vec::new(),
        }));
        let model_arrays: Vec<Vec<(String, &[f64])>> = present
            .iter()
            .map(|&(_, i)| named(&scored.cases[i]))
            .collect();
        for (s, (name, reference_scores)) in named(&scored.cases[r]).into_iter().enumerate() {
            let forecasts: Vec<&[f64]> = model_arrays.iter().map(|a| a[s].1).collect();
            names.push((name, first..reports.len()));
            arrays.push((reference_scores, forecasts));
        }
    }
    let groups: Vec<ScoreGroup<'_>> = arrays
        .iter()
        .map(|(reference, forecasts)| ScoreGroup {
            reference,
            forecasts,
        })
        .collect();
    let results = bootstrap.skill_intervals_many(&groups);
    for ((name, range), result) in names.into_iter().zip(results) {
        let targets = &mut reports[range];
        match result {
            Ok(intervals) => {
                for (report, interval) in targets.iter_mut().zip(intervals) {
                    report.scores.push(entry(&name, &interval));
                }
            }
            Err(e) => {
                for report in targets {
                    report.scores.push(SkillEntry {
                        score: name.clone(),
                        estimate: None,
                        lower: None,
                        upper: None,
                        skilful: false,
                        note: Some(e.to_string()),
                    });
                }
            }
        }
    }
    reports
}

fn entry(name: &str, interval: &SkillInterval) -> SkillEntry {
    let finite = |v: f64| v.is_finite().then_some(v);
    SkillEntry {
        score: name.to_owned(),
        estimate: finite(interval.estimate),
        lower: finite(interval.lower),
        upper: finite(interval.upper),
        skilful: verify::verdict(interval) == verify::Verdict::Skilful,
        note: None,
    }
}
