//! The plain cautions every outlook carries. The list is never empty: the first four always
//! appear, whatever the gauge.

/// What the cautions need to know about the gauge and its threshold.
#[derive(Debug, Clone, PartialEq)]
pub struct CautionContext<'a> {
    /// The gauge's name, as people know it.
    pub gauge_name: &'a str,
    /// The flood threshold, metres above `datum`.
    pub threshold_m: f64,
    /// The datum the threshold is relative to.
    pub datum: &'a str,
    /// Whether the threshold was derived from the tidal range rather than set locally.
    pub threshold_derived: bool,
    /// Whether the reference climatology fell back to the whole record.
    pub climatology_fallback: bool,
}

/// The cautions for an outlook at the gauge in `context`, in plain sentences.
pub fn cautions(context: &CautionContext<'_>) -> Vec<String> {
    let mut out = vec![
        "This is a seasonal probability, not a warning: it says how likely different numbers \
         of flood days are over the whole season. The chance shown for each day is a seasonal \
         estimate from the predicted tide and past weather, not a forecast or a warning for \
         that day."
            .to_owned(),
        format!(
            "It counts days when the water at the {} gauge reaches {:.2} m above {}; it does not \
             say which streets flood, for how long, or how deep.",
            context.gauge_name, context.threshold_m, context.datum
        ),
    ];
    if context.threshold_derived {
        out.push(
            "No locally set flood threshold was given for this gauge: the one used here is \
             derived from the tidal range by a general formula. A threshold set by the local \
             authorities always comes first."
                .to_owned(),
        );
    } else {
        out.push(
            "The flood threshold is the one set locally for this gauge; where water starts to \
             reach streets can differ from place to place around it."
                .to_owned(),
        );
    }
    out.push(
        "For decisions, follow your local emergency managers and the official forecasts and \
         warnings."
            .to_owned(),
    );
    if context.climatology_fallback {
        out.push(
            "This gauge's record does not cover enough of 1991-2020, so \"normal\" here means \
             the gauge's whole record instead."
                .to_owned(),
        );
    }
    out
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    fn context(derived: bool) -> CautionContext<'static> {
        CautionContext {
            gauge_name: "Test Harbour",
            threshold_m: 0.85,
            datum: "VBZ",
            threshold_derived: derived,
            climatology_fallback: false,
        }
    }

    #[test]
    fn cautions_cover_the_four_points_and_name_a_derived_threshold() {
        let set = cautions(&context(false));
        assert!(set.len() >= 4);
        let all = set.join(" ");
        assert!(all.contains("not a warning"));
        assert!(all.contains("0.85 m above VBZ"));
        assert!(all.contains("set locally"));
        assert!(all.contains("emergency managers"));
        let derived = cautions(&context(true)).join(" ");
        assert!(derived.contains("derived"));
        assert!(!all.contains("derived"));
    }
}
