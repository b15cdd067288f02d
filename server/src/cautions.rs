//! The plain cautions every served outlook carries, whatever the pipeline adds.

/// Says what an outlook is and is not.
pub const NOT_A_WARNING: &str = "This is a seasonal probability of high-tide flood days, \
not a warning or a forecast for any particular day.";

/// Defers to the people in charge.
pub const DEFER_TO_OFFICIALS: &str = "For flood warnings and emergency decisions, follow \
your local emergency managers and official forecasts.";

/// `cautions` with the two standard cautions appended when missing; never empty.
pub fn with_standard(mut cautions: Vec<String>) -> Vec<String> {
    for standard in [NOT_A_WARNING, DEFER_TO_OFFICIALS] {
        if !cautions.iter().any(|c| c == standard) {
            cautions.push(standard.to_owned());
        }
    }
    cautions
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn standard_cautions_are_added_once() {
        let once = with_standard(vec![]);
        assert_eq!(once, vec![NOT_A_WARNING, DEFER_TO_OFFICIALS]);
        assert_eq!(with_standard(once.clone()), once);
        let extra = with_standard(vec!["Record has a gap in 2011.".into()]);
        assert_eq!(extra.len(), 3);
        assert_eq!(extra[0], "Record has a gap in 2011.");
    }
}
