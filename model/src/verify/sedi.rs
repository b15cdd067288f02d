//! Yes/no forecasts of an event: the 2x2 contingency table, its hit and false-alarm rates,
//! and the symmetric extremal dependence index (SEDI; Ferro and Stephenson 2011, Weather and
//! Forecasting 26):
//! `SEDI = (ln F - ln H - ln(1-F) + ln(1-H)) / (ln F + ln H + ln(1-F) + ln(1-H))`,
//! which stays informative as the event gets rare. 1 is perfect, 0 no skill.
//!
//! [`UpperDecileEvent`] makes the rare event of a flood season: a count above the reference's
//! 90th percentile, forecast "yes" when the forecast's probability of it exceeds the
//! reference's own (the climatological base rate).

use super::brier::exceedance_probability;
use super::{VerifyError, quantile_count, validate_pmf};

/// Counts of a 2x2 table of yes/no forecasts against what happened.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ContingencyTable {
    /// Event forecast and happened.
    pub hits: u64,
    /// Event forecast, did not happen.
    pub false_alarms: u64,
    /// Event not forecast, happened.
    pub misses: u64,
    /// Event not forecast, did not happen.
    pub correct_negatives: u64,
}

impl ContingencyTable {
    /// Adds one case.
    pub fn record(&mut self, forecast_yes: bool, happened: bool) {
        match (forecast_yes, happened) {
            (true, true) => self.hits += 1,
            (true, false) => self.false_alarms += 1,
            (false, true) => self.misses += 1,
            (false, false) => self.correct_negatives += 1,
        }
    }

    /// Table of probability forecasts turned to "yes" when `p > threshold`.
    ///
    /// # Errors
    /// Unequal lengths, no cases, or a probability outside `[0, 1]`.
    pub fn from_probabilities(
        probabilities: &[f64],
        outcomes: &[bool],
        threshold: f64,
    ) -> Result<Self, VerifyError> {
        super::check_event_forecasts("contingency table", probabilities, outcomes)?;
        let mut table = Self::default();
        for (&p, &o) in probabilities.iter().zip(outcomes) {
            table.record(p > threshold, o);
        }
        Ok(table)
    }

    /// Hit rate `H = hits / (hits + misses)`; `None` without events.
    pub fn hit_rate(&self) -> Option<f64> {
        ratio(self.hits, self.hits + self.misses)
    }

    /// False-alarm rate `F = false alarms / (false alarms + correct negatives)`; `None`
    /// without non-events.
    pub fn false_alarm_rate(&self) -> Option<f64> {
        ratio(
            self.false_alarms,
            self.false_alarms + self.correct_negatives,
        )
    }

    /// SEDI; `None` when `H` or `F` is undefined, 0 or 1 (a logarithm would be infinite).
    pub fn sedi(&self) -> Option<f64> {
        let h = self.hit_rate()?;
        let f = self.false_alarm_rate()?;
        if !(h > 0.0 && h < 1.0 && f > 0.0 && f < 1.0) {
            return None;
        }
        let (lf, lh, lnf, lnh) = (f.ln(), h.ln(), (1.0 - f).ln(), (1.0 - h).ln());
        Some((lf - lh - lnf + lnh) / (lf + lh + lnf + lnh))
    }
}

fn ratio(part: u64, whole: u64) -> Option<f64> {
    (whole > 0).then(|| part as f64 / whole as f64)
}

/// The upper-decile event of a reference climatology: a count above its 90th percentile.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UpperDecileEvent {
    /// The reference's 90th percentile count `q` (smallest `k` with `F(k) >= 0.9`); the event
    /// is `N > q`.
    pub percentile_90: u32,
    /// The reference's probability of the event, `P(N > q)`.
    pub base_rate: f64,
}

impl UpperDecileEvent {
    /// The event of a reference count distribution.
    ///
    /// # Errors
    /// The reference fails [`validate_pmf`].
    pub fn from_reference(reference: &[f64]) -> Result<Self, VerifyError> {
        validate_pmf(reference)?;
        let percentile_90 = quantile_count(reference, 0.9);
        Ok(Self {
            percentile_90,
            base_rate: exceedance_probability(reference, percentile_90 + 1),
        })
    }

    /// Probability a count distribution gives the event.
    pub fn probability(&self, pmf: &[f64]) -> f64 {
        exceedance_probability(pmf, self.percentile_90 + 1)
    }

    /// Whether an observed count is the event.
    pub fn happened(&self, observed: u32) -> bool {
        observed > self.percentile_90
    }

    /// Contingency table of count forecasts: "yes" when the forecast's probability of the
    /// event exceeds the base rate.
    pub fn table<'a>(&self, cases: impl IntoIterator<Item = (&'a [f64], u32)>) -> ContingencyTable {
        let mut table = ContingencyTable::default();
        for (pmf, observed) in cases {
            table.record(
                self.probability(pmf) > self.base_rate,
                self.happened(observed),
            );
        }
        table
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Finley's tornado forecasts of 1884 as tabulated by Wilks (Statistical Methods in the
    /// Atmospheric Sciences, 2x2 verification example; counts recalled from memory):
    /// 28 hits, 72 false alarms, 23 misses, 2680 correct negatives.
    fn finley() -> ContingencyTable {
        ContingencyTable {
            hits: 28,
            false_alarms: 72,
            misses: 23,
            correct_negatives: 2680,
        }
    }

    #[test]
    fn finley_rates_and_sedi() {
        let t = finley();
        // H = 28 / 51 = 0.549, F = 72 / 2752 = 0.0262 (Wilks).
        let h = t.hit_rate().expect("events present");
        let f = t.false_alarm_rate().expect("non-events present");
        assert!((h - 0.549).abs() < 5e-4);
        assert!((f - 0.0262).abs() < 5e-5);
        // By hand: ln F = ln(72/2752) = -3.643417, ln H = ln(28/51) = -0.599621,
        // ln(1-F) = ln(2680/2752) = -0.026511, ln(1-H) = ln(23/51) = -0.796331.
        // Numerator -3.643417 + 0.599621 + 0.026511 - 0.796331 = -3.813616;
        // denominator -3.643417 - 0.599621 - 0.026511 - 0.796331 = -5.065880;
        // SEDI = 3.813616 / 5.065880 = 0.752804 (six decimals of hand arithmetic).
        let sedi = t.sedi().expect("rates strictly between 0 and 1");
        assert!((sedi - 0.752804).abs() < 1e-6, "SEDI {sedi}");
    }

    #[test]
    fn sedi_undefined_at_the_corners() {
        let perfect = ContingencyTable {
            hits: 5,
            false_alarms: 0,
            misses: 0,
            correct_negatives: 20,
        };
        assert_eq!(perfect.sedi(), None);
        assert_eq!(ContingencyTable::default().hit_rate(), None);
    }

    #[test]
    fn sedi_of_random_forecasts_is_zero() {
        // H = F: the numerator's terms cancel (Ferro and Stephenson 2011, base property).
        let t = ContingencyTable {
            hits: 10,
            false_alarms: 40,
            misses: 10,
            correct_negatives: 40,
        };
        assert!(t.sedi().expect("defined").abs() < 1e-15);
    }

    #[test]
    fn upper_decile_event_of_a_reference() {
        // F(3) = 0.85 < 0.9 <= F(4) = 0.95: q = 4, base rate P(N > 4) = 0.05.
        let reference = [0.4, 0.2, 0.15, 0.1, 0.1, 0.05];
        let event = UpperDecileEvent::from_reference(&reference).expect("valid");
        assert_eq!(event.percentile_90, 4);
        assert!((event.base_rate - 0.05).abs() < 1e-12);
        assert!(event.happened(5) && !event.happened(4));
        let wet = [0.0, 0.0, 0.2, 0.2, 0.2, 0.4];
        let cases: Vec<(&[f64], u32)> =
            vec![(&wet, 5), (&wet, 1), (&reference, 5), (&reference, 0)];
        let table = event.table(cases);
        assert_eq!(
            table,
            ContingencyTable {
                hits: 1,
                false_alarms: 1,
                misses: 1,
                correct_negatives: 1
            }
        );
    }
}
