//! The outlook's plain explanation: one sentence per driver saying what it is expected to do
//! to the count, and a summary sentence against the references.

use serde::Serialize;

use crate::fit::Predictor;

/// ENSO category boundary in deg C (common practice: El Nino at or above +0.5, La Nina at or
/// below -0.5, boundaries inclusive).
const ENSO_BOUNDARY_C: f64 = 0.5;

/// Effects smaller than this share are called "little change".
const SMALL_EFFECT: f64 = 0.05;

/// One driver of an outlook: its expected value for the target season and what it does to the
/// expected count.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriverEffect {
    /// The predictor.
    pub name: Predictor,
    /// Its unit.
    pub unit: &'static str,
    /// Mean of the driver over the outlook's scenarios.
    pub value: f64,
    /// 10th percentile over the scenarios.
    pub value_p10: f64,
    /// 90th percentile over the scenarios.
    pub value_p90: f64,
    /// Mean of the driver over the fitted seasons.
    pub fit_mean: f64,
    /// The fitted rate ratio per [`DriverEffect::per`].
    pub rate_ratio: f64,
    /// Its 95% confidence interval.
    pub rate_ratio_ci: [f64; 2],
    /// The step the rate ratio is per, in words.
    pub per: &'static str,
    /// The expected count's multiplier from this driver's value against its fit-period mean:
    /// `exp(beta * (value - fit_mean))`.
    pub effect: f64,
    /// Where the scenario values come from, in words.
    pub source: String,
}

/// The shares of ENSO scenarios in each category: La Nina, neutral, El Nino.
pub fn enso_category_shares(values: &[f64]) -> [f64; 3] {
    let mut counts = [0usize; 3];
    for &v in values {
        let i = if v <= -ENSO_BOUNDARY_C {
            0
        } else if v >= ENSO_BOUNDARY_C {
            2
        } else {
            1
        };
        counts[i] += 1;
    }
    let n = values.len().max(1) as f64;
    counts.map(|c| c as f64 / n)
}

fn change_words(effect: f64) -> String {
    let change = effect - 1.0;
    if !change.is_finite() {
        return "has an effect that cannot be estimated".to_owned();
    }
    if change.abs() < SMALL_EFFECT {
        return "changes the expected count little (under 5%)".to_owned();
    }
    let verb = if change > 0.0 { "raises" } else { "lowers" };
    let pct = (change.abs() * 100.0).round();
    if pct >= 100.0 {
        format!("{verb} the expected count about {effect:.1}-fold")
    } else {
        format!("{verb} the expected count by about {pct:.0}%")
    }
}

/// The sentence for one driver.
pub fn driver_sentence(effect: &DriverEffect, enso_shares: Option<[f64; 3]>) -> String {
    let change = change_words(effect.effect);
    match effect.name {
        Predictor::Enso => {
            let shares = enso_shares.unwrap_or([0.0, 1.0, 0.0]);
            let names = ["La Nina", "ENSO-neutral conditions", "El Nino"];
            let (best, share) =
                shares.iter().enumerate().fold(
                    (1, 0.0),
                    |acc, (i, &s)| if s > acc.1 { (i, s) } else { acc },
                );
            format!(
                "{} expected ({:.0}% of scenarios; mean ENSO index {:+.1} degC): ENSO {change}.",
                names[best],
                share * 100.0,
                effect.value
            )
        }
        Predictor::Mjo | Predictor::Wind => format!(
            "{} carries no useful skill a season ahead, so it is drawn from past seasons ({}): \
             it {change}.",
            capitalise(effect.name.plain_name()),
            effect.source
        ),
        Predictor::SeaLevel => {
            let cm = (effect.value - effect.fit_mean) * 100.0;
            let side = if cm >= 0.0 { "above" } else { "below" };
            format!(
                "Mean sea level is projected about {:.0} cm {side} its average over the fitted \
                 seasons: it {change}.",
                cm.abs()
            )
        }
        Predictor::Tide => format!(
            "The astronomical tide brings about {:.0} days near the threshold (about {:.0} in an \
             average fitted season): it {change}.",
            effect.value, effect.fit_mean
        ),
    }
}

fn capitalise(text: &str) -> String {
    let mut chars = text.chars();
    chars
        .next()
        .map(|c| c.to_uppercase().chain(chars).collect())
        .unwrap_or_default()
}

/// The summary sentence: the expected count and its 80% range against the two references.
pub fn summary_sentence(
    mean: f64,
    p10: u32,
    p90: u32,
    climatology_mean: f64,
    climatology_name: &str,
    trend_mean: Option<f64>,
) -> String {
    let trend = trend_mean.map_or_else(String::new, |t| {
        format!(" and {t:.1} expected from the sea-level trend alone")
    });
    format!(
        "Expected about {mean:.1} flood days (8 in 10 chance of {p10} to {p90}), against \
         {climatology_mean:.1} in the {climatology_name}{trend}."
    )
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    fn effect(name: Predictor, value: f64, effect: f64) -> DriverEffect {
        DriverEffect {
            name,
            unit: name.unit(),
            value,
            value_p10: value,
            value_p90: value,
            fit_mean: 0.0,
            rate_ratio: 1.2,
            rate_ratio_ci: [1.1, 1.3],
            per: name.step_words(),
            effect,
            source: "past DJF seasons".into(),
        }
    }

    #[test]
    fn la_nina_lowering_the_count_reads_plainly() {
        let e = effect(Predictor::Enso, -1.1, 0.8);
        let shares = enso_category_shares(&[-1.2, -0.9, -0.5, 0.1]);
        assert_eq!(shares, [0.75, 0.25, 0.0]);
        let s = driver_sentence(&e, Some(shares));
        assert!(s.starts_with("La Nina expected (75% of scenarios"), "{s}");
        assert!(s.contains("lowers the expected count by about 20%"), "{s}");
    }

    #[test]
    fn small_and_large_effects_have_their_own_words() {
        let s = driver_sentence(&effect(Predictor::Wind, 0.1, 1.02), None);
        assert!(s.contains("little"), "{s}");
        let s = driver_sentence(&effect(Predictor::SeaLevel, 0.12, 2.5), None);
        assert!(s.contains("12 cm above") && s.contains("2.5-fold"), "{s}");
    }
}
