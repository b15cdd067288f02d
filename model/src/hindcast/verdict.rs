//! The verdict of a hindcast in plain words.
//!
//! The headline score is the CRPS skill score (CRPSS) of the driver model: it judges the whole
//! count distribution, not one category or threshold. Skill over a reference is claimed only
//! when the bootstrap 95 % interval of the CRPSS lies wholly above zero
//! ([`crate::verify::verdict`]), and for a season name only when that holds in both schemes
//! (leave-one-year-out and rolling origin). Otherwise the verdict says that at this gauge the
//! outlook is no better than the long-term average (or than the trend alone), and the outlook
//! is still shown.

use serde::Serialize;

use super::baselines::ModelKind;
use super::schemes::Scheme;
use super::scoring::SkillEntry;
use crate::verify::Verdict;

/// The score a verdict rests on.
pub const HEADLINE_SCORE: &str = "crpss";

/// What a hindcast allows one to say against one reference.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum VerdictKind {
    /// The 95 % interval of the skill lies above zero.
    Skilful,
    /// The interval reaches zero or below (or could not be computed).
    NoBetter,
}

impl From<Verdict> for VerdictKind {
    fn from(v: Verdict) -> Self {
        match v {
            Verdict::Skilful => VerdictKind::Skilful,
            Verdict::NoBetterThan => VerdictKind::NoBetter,
        }
    }
}

/// A verdict against one reference, with its sentence.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VerdictReport {
    /// The reference the driver model is judged against.
    pub reference: ModelKind,
    /// The score the verdict rests on (`crpss`).
    pub score: &'static str,
    /// The verdict.
    pub verdict: VerdictKind,
    /// The verdict in plain words.
    pub sentence: String,
}

fn numbers(entry: &SkillEntry) -> String {
    let show =
        |v: Option<f64>| v.map_or_else(|| "minus infinity".to_owned(), |v| format!("{v:.2}"));
    match entry.estimate {
        Some(estimate) => format!(
            "CRPSS {estimate:.2}, 95% interval {} to {}",
            show(entry.lower),
            show(entry.upper)
        ),
        None => format!(
            "no CRPSS: {}",
            entry.note.as_deref().unwrap_or("not computed")
        ),
    }
}

/// The verdict of one scheme against `reference`, from the driver model's CRPSS entry.
pub fn scheme_verdict(reference: ModelKind, entry: &SkillEntry, cases: usize) -> VerdictReport {
    let verdict = if entry.skilful {
        Verdict::Skilful
    } else {
        Verdict::NoBetterThan
    };
    VerdictReport {
        reference,
        score: HEADLINE_SCORE,
        verdict: verdict.into(),
        sentence: format!(
            "{} ({}, {cases} seasons)",
            verdict.sentence(reference.words()).trim_end_matches('.'),
            numbers(entry)
        ),
    }
}

/// The verdict of a season name at a gauge against `reference`, from each scheme's CRPSS
/// entry: skilful only when every scheme is.
pub fn overall_verdict(
    gauge_name: &str,
    season_name: &str,
    reference: ModelKind,
    schemes: &[(Scheme, &SkillEntry)],
) -> VerdictReport {
    let skilful = !schemes.is_empty() && schemes.iter().all(|(_, e)| e.skilful);
    let detail: Vec<String> = schemes
        .iter()
        .map(|(s, e)| {
            let name = match s {
                Scheme::LeaveOneYearOut { .. } => "leaving years out",
                Scheme::RollingOrigin { .. } => "from rolling origins",
            };
            format!("{} {name}", numbers(e))
        })
        .collect();
    let detail = if detail.is_empty() {
        "no season could be forecast out of sample".to_owned()
    } else {
        detail.join("; ")
    };
    let words = reference.words();
    let sentence = if skilful {
        format!(
            "At {gauge_name}, {season_name} outlooks beat {words} out of sample: the 95% \
             interval of their skill lies above zero in both hindcasts ({detail})."
        )
    } else {
        let read_as = match reference {
            ModelKind::TrendOnly => "the trend-only expectation",
            _ => "the long-term average",
        };
        format!(
            "At {gauge_name}, {season_name} outlooks are no better than {words} out of sample: \
             the 95% interval of their skill reaches zero ({detail}). The outlook is still \
             shown; read it as {read_as}."
        )
    };
    VerdictReport {
        reference,
        score: HEADLINE_SCORE,
        verdict: if skilful {
            VerdictKind::Skilful
        } else {
            VerdictKind::NoBetter
        },
        sentence,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn entry(lower: f64, skilful: bool) -> SkillEntry {
        SkillEntry {
            score: HEADLINE_SCORE.to_owned(),
            estimate: Some(0.2),
            lower: Some(lower),
            upper: Some(0.4),
            skilful,
            note: None,
        }
    }

    #[test]
    fn skill_needs_every_scheme() {
        let loyo = Scheme::LeaveOneYearOut { neighbour_years: 1 };
        let roll = Scheme::RollingOrigin { min_training: 15 };
        let (good, bad) = (entry(0.05, true), entry(-0.01, false));
        let both = overall_verdict(
            "Port X",
            "DJF",
            ModelKind::Climatology,
            &[(loyo, &good), (roll, &good)],
        );
        assert_eq!(both.verdict, VerdictKind::Skilful);
        assert!(both.sentence.contains("beat the long-term average"));
        let one = overall_verdict(
            "Port X",
            "DJF",
            ModelKind::Climatology,
            &[(loyo, &good), (roll, &bad)],
        );
        assert_eq!(one.verdict, VerdictKind::NoBetter);
        assert!(
            one.sentence
                .contains("no better than the long-term average")
        );
        assert!(one.sentence.contains("still shown"));
        let none = overall_verdict("Port X", "DJF", ModelKind::TrendOnly, &[]);
        assert_eq!(none.verdict, VerdictKind::NoBetter);
        assert!(none.sentence.contains("sea-level trend alone"));
    }
}
