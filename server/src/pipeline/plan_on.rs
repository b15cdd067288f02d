//! The one number to plan with: the outlook's own answer when it beat its references out of
//! sample, otherwise the reference it could not beat, each with its own 80% range, and the
//! choice in plain words.

use crate::api::{PlanBasis, PlanOn, Verdict};

/// One distribution the number can come from: its mean and 10th-90th percentile range.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Answer {
    /// Expected flood days.
    pub mean: f64,
    /// 10th and 90th percentile, days.
    pub range: [u32; 2],
}

/// Everything the choice is made from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlanInputs<'a> {
    /// The skill verdict of the outlook.
    pub verdict: Verdict,
    /// Seasons scored out of sample.
    pub seasons_scored: u32,
    /// The season name, e.g. `DJF`.
    pub season_name: &'a str,
    /// The outlook's own answer.
    pub outlook: Answer,
    /// The climatology reference's answer.
    pub climatology: Answer,
    /// Whether the climatology is the whole record's (the 1991-2020 period had too few
    /// usable seasons).
    pub climatology_is_whole_record: bool,
    /// The trend-only reference's answer, when the gauge has a sea-level trend.
    pub trend_only: Option<Answer>,
}

/// Chooses the number to plan with and says why.
pub fn plan_on(inputs: &PlanInputs<'_>) -> PlanOn {
    let (basis, answer) = match (inputs.verdict, inputs.trend_only) {
        (Verdict::BeatsClimatology, _) => (PlanBasis::Outlook, inputs.outlook),
        (Verdict::TrendOnly, Some(trend)) => (PlanBasis::TrendOnly, trend),
        _ if inputs.climatology_is_whole_record => (PlanBasis::RecordAverage, inputs.climatology),
        _ => (PlanBasis::Climatology, inputs.climatology),
    };
    let past = past_seasons(inputs.seasons_scored, inputs.season_name);
    let average = if inputs.climatology_is_whole_record {
        "the average of this gauge's whole record"
    } else {
        "the 1991-2020 average"
    };
    let reason = match (inputs.verdict, basis) {
        (Verdict::BeatsClimatology, _) => format!(
            "In {past} this outlook did better than both {average} and the sea-level trend \
             alone, so plan on its own answer"
        ),
        (Verdict::TrendOnly, PlanBasis::TrendOnly) => format!(
            "In {past} this outlook did better than {average} but no better than the \
             sea-level trend alone, so plan on what the trend alone expects"
        ),
        (Verdict::NotMeasured, _) => format!(
            "This outlook could not yet be checked against past {} seasons, so plan on \
             {average}",
            season_words(inputs.season_name)
        ),
        _ => format!("In {past} this outlook did about as well as {average}, so plan on it"),
    };
    PlanOn {
        days: answer.mean,
        range: answer.range,
        basis,
        sentence: format!(
            "{reason}: {}, {} in 8 seasons out of 10.",
            about_days(answer.mean),
            range_words(answer.range)
        ),
    }
}

/// `3.2` -> `about 3 days`; below one day -> `fewer than 1 day`.
pub fn about_days(mean: f64) -> String {
    if mean < 1.0 {
        "fewer than 1 day".to_owned()
    } else {
        format!("about {}", days_word(mean.round() as u32))
    }
}

/// `1` -> `1 day`, `0` and `2` -> `N days`.
pub fn days_word(n: u32) -> String {
    if n == 1 {
        "1 day".to_owned()
    } else {
        format!("{n} days")
    }
}

fn range_words([low, high]: [u32; 2]) -> String {
    if low == high {
        format!("exactly {}", days_word(low))
    } else {
        format!("{low} to {}", days_word(high))
    }
}

/// A three-letter meteorological season name in months, e.g. `DJF` -> `December to
/// February`; any other name as given.
fn season_words(name: &str) -> String {
    const MONTHS: [(&str, &str); 4] = [
        ("DJF", "December to February"),
        ("MAM", "March to May"),
        ("JJA", "June to August"),
        ("SON", "September to November"),
    ];
    MONTHS
        .iter()
        .find(|(code, _)| code.eq_ignore_ascii_case(name))
        .map_or_else(|| name.to_owned(), |(_, words)| (*words).to_owned())
}

fn past_seasons(n: u32, name: &str) -> String {
    let what = season_words(name);
    if n == 1 {
        format!("1 past {what} season")
    } else {
        format!("{n} past {what} seasons")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn inputs(verdict: Verdict, whole_record: bool, trend: bool) -> PlanInputs<'static> {
        PlanInputs {
            verdict,
            seasons_scored: 29,
            season_name: "DJF",
            outlook: Answer {
                mean: 6.04,
                range: [2, 11],
            },
            climatology: Answer {
                mean: 2.8,
                range: [1, 6],
            },
            climatology_is_whole_record: whole_record,
            trend_only: trend.then_some(Answer {
                mean: 10.7,
                range: [5, 17],
            }),
        }
    }

    #[test]
    fn an_outlook_that_beats_its_references_is_planned_on() {
        let p = plan_on(&inputs(Verdict::BeatsClimatology, false, true));
        assert_eq!(p.basis, PlanBasis::Outlook);
        assert_eq!((p.days, p.range), (6.04, [2, 11]));
        assert_eq!(
            p.sentence,
            "In 29 past December to February seasons this outlook did better than both the \
             1991-2020 average and the sea-level trend alone, so plan on its own answer: \
             about 6 days, 2 to 11 days in 8 seasons out of 10."
        );
    }

    #[test]
    fn an_outlook_no_better_than_climatology_gives_the_climatology_and_its_own_range() {
        let p = plan_on(&inputs(Verdict::NoBetterThanClimatology, false, true));
        assert_eq!(p.basis, PlanBasis::Climatology);
        assert_eq!((p.days, p.range), (2.8, [1, 6]));
        assert!(
            p.sentence.starts_with(
                "In 29 past December to February seasons this outlook did about as well as \
                 the 1991-2020 average, so plan on it: about 3 days, 1 to 6 days"
            ),
            "{}",
            p.sentence
        );
    }

    #[test]
    fn a_record_short_of_1991_2020_plans_on_the_whole_record_average() {
        let p = plan_on(&inputs(Verdict::NoBetterThanClimatology, true, false));
        assert_eq!(p.basis, PlanBasis::RecordAverage);
        assert!(
            p.sentence
                .contains("the average of this gauge's whole record")
        );
        assert!(!p.sentence.contains("1991-2020"), "{}", p.sentence);
    }

    #[test]
    fn an_outlook_beaten_by_the_trend_plans_on_the_trend() {
        let p = plan_on(&inputs(Verdict::TrendOnly, false, true));
        assert_eq!(p.basis, PlanBasis::TrendOnly);
        assert_eq!((p.days, p.range), (10.7, [5, 17]));
        assert!(
            p.sentence
                .contains("what the trend alone expects: about 11 days, 5 to 17")
        );
    }

    #[test]
    fn an_unchecked_outlook_plans_on_the_average() {
        let p = plan_on(&inputs(Verdict::NotMeasured, false, true));
        assert_eq!(p.basis, PlanBasis::Climatology);
        assert!(
            p.sentence
                .starts_with("This outlook could not yet be checked")
        );
    }

    #[test]
    fn plurals_and_small_counts_read_as_words() {
        assert_eq!(about_days(0.4), "fewer than 1 day");
        assert_eq!(about_days(1.2), "about 1 day");
        assert_eq!(about_days(2.5), "about 3 days");
        assert_eq!(range_words([0, 1]), "0 to 1 day");
        assert_eq!(range_words([2, 2]), "exactly 2 days");
        assert_eq!(
            past_seasons(1, "SON"),
            "1 past September to November season"
        );
        assert_eq!(past_seasons(3, "wet"), "3 past wet seasons");
    }
}
