//! Relative operating characteristic (ROC): hit rate against false-alarm rate as the
//! probability threshold for saying "yes" falls, and the area under that curve.
//!
//! Each distinct forecast probability `t` is a threshold: the forecast says "yes" when
//! `p >= t`. The curve runs from `(0, 0)` (never "yes") through one point per threshold, from
//! the highest down, to `(1, 1)`; the area is by the trapezoid rule over those points. With
//! every distinct value as a threshold the trapezoid area equals the Mann-Whitney statistic
//! `P(p_event > p_non-event) + P(tie) / 2` (Mason and Graham 2002, QJRMS 128).

use super::{VerifyError, check_event_forecasts};

/// One point of a ROC curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RocPoint {
    /// The forecast says "yes" when its probability is at least this (infinity for the
    /// never-"yes" starting point).
    pub threshold: f64,
    /// Share of events forecast "yes".
    pub hit_rate: f64,
    /// Share of non-events forecast "yes".
    pub false_alarm_rate: f64,
}

/// A ROC curve and its area.
#[derive(Debug, Clone, PartialEq)]
pub struct RocCurve {
    /// Points from `(0, 0)` to `(1, 1)` in order of falling threshold.
    pub points: Vec<RocPoint>,
    /// Trapezoid area under the curve: 0.5 for no discrimination, 1 for perfect.
    pub area: f64,
}

/// ROC curve of paired forecast probabilities and outcomes.
///
/// # Errors
/// Unequal lengths, no cases, a probability outside `[0, 1]`, or no events or no
/// non-events (the rates are then undefined).
pub fn roc_curve(probabilities: &[f64], outcomes: &[bool]) -> Result<RocCurve, VerifyError> {
    check_event_forecasts("ROC curve", probabilities, outcomes)?;
    let events = outcomes.iter().filter(|&&o| o).count();
    let non_events = outcomes.len() - events;
    if events == 0 || non_events == 0 {
        return Err(VerifyError::NoContrast { events, non_events });
    }
    let mut order: Vec<usize> = (0..probabilities.len()).collect();
    order.sort_by(|&a, &b| probabilities[b].total_cmp(&probabilities[a]));
    let mut points = vec![RocPoint {
        threshold: f64::INFINITY,
        hit_rate: 0.0,
        false_alarm_rate: 0.0,
    }];
    let (mut hits, mut false_alarms) = (0usize, 0usize);
    let mut area = 0.0;
    let mut i = 0;
    while i < order.len() {
        let threshold = probabilities[order[i]];
        // Every case tied at this threshold turns "yes" together.
        while i < order.len() && probabilities[order[i]] == threshold {
            if outcomes[order[i]] {
                hits += 1;
            } else {
                false_alarms += 1;
            }
            i += 1;
        }
        let point = RocPoint {
            threshold,
            hit_rate: hits as f64 / events as f64,
            false_alarm_rate: false_alarms as f64 / non_events as f64,
        };
        let previous = points[points.len() - 1];
        area += (point.false_alarm_rate - previous.false_alarm_rate)
            * (point.hit_rate + previous.hit_rate)
            / 2.0;
        points.push(point);
    }
    Ok(RocCurve { points, area })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Mann-Whitney form of the area (Mason and Graham 2002): share of event/non-event pairs
    /// the forecast ranks the right way, ties counting one half.
    fn mann_whitney(probs: &[f64], outcomes: &[bool]) -> f64 {
        let mut wins = 0.0;
        let mut pairs = 0.0;
        for (pe, _) in probs.iter().zip(outcomes).filter(|(_, o)| **o) {
            for (pn, _) in probs.iter().zip(outcomes).filter(|(_, o)| !**o) {
                pairs += 1.0;
                wins += if pe > pn {
                    1.0
                } else if pe == pn {
                    0.5
                } else {
                    0.0
                };
            }
        }
        wins / pairs
    }

    #[test]
    fn perfect_and_useless_discrimination() {
        let perfect = roc_curve(&[0.9, 0.8, 0.2, 0.1], &[true, true, false, false]).expect("ok");
        assert_eq!(perfect.area, 1.0);
        let constant = roc_curve(&[0.3; 4], &[true, false, true, false]).expect("ok");
        assert_eq!(constant.area, 0.5);
        assert_eq!(constant.points.len(), 2);
        let last = perfect.points[perfect.points.len() - 1];
        assert_eq!((last.hit_rate, last.false_alarm_rate), (1.0, 1.0));
    }

    #[test]
    fn trapezoid_area_equals_the_mann_whitney_statistic() {
        let probs = [0.1, 0.4, 0.35, 0.8, 0.4, 0.1, 0.65, 0.2, 0.4, 0.9, 0.05];
        let outcomes = [
            false, true, false, true, false, true, true, false, true, true, false,
        ];
        let curve = roc_curve(&probs, &outcomes).expect("ok");
        assert!((curve.area - mann_whitney(&probs, &outcomes)).abs() < 1e-15);
    }

    #[test]
    fn one_class_is_an_error() {
        assert!(matches!(
            roc_curve(&[0.2, 0.3], &[true, true]),
            Err(VerifyError::NoContrast {
                events: 2,
                non_events: 0
            })
        ));
    }
}
