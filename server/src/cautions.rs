//! The plain cautions every served outlook carries, whatever the pipeline adds.

/// Says what an outlook is and is not.
pub const NOT_A_WARNING: &str = "This is a seasonal probability of high-tide flood days, \
not a warning or a forecast for any particular day.";

/// Defers to the people in charge.
pub const DEFER_TO_OFFICIALS: &str = "For flood warnings and emergency decisions, follow \
your local emergency managers and official forecasts.";

/// Each standard caution with the words that show a caution already says the same thing.
const STANDARD: [(&str, &str); 2] = [
    (NOT_A_WARNING, "not a warning"),
    (DEFER_TO_OFFICIALS, "emergency managers"),
];

/// `cautions` with each standard caution appended unless one of them already says it (the
/// model's own cautions word both points for the gauge); never empty, no duplicates.
pub fn with_standard(cautions: Vec<String>) -> Vec<String> {
    let mut out: Vec<String> = Vec::with_capacity(cautions.len() + STANDARD.len());
    for caution in cautions {
        if !out.contains(&caution) {
            out.push(caution);
        }
    }
    for (standard, said_by) in STANDARD {
        if !out.iter().any(|c| c.to_lowercase().contains(said_by)) {
            out.push(standard.to_owned());
        }
    }
    out
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
        // A caution that already says one of the points stands in for the standard one.
        let own = "This is a seasonal probability, not a warning: it covers the whole season.";
        let merged = with_standard(vec![own.into(), own.into()]);
        assert_eq!(merged, vec![own, DEFER_TO_OFFICIALS]);
    }
}
