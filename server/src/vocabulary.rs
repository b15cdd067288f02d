//! One vocabulary for the command line and the API: the field names both use for the things
//! they share, each with the synonyms that neither may use. A researcher who scripts
//! `tidetally fit` and a dashboard that reads `GET .../outlook` see the same word for the same
//! quantity. `server/tests/vocabulary.rs` walks every command's JSON and every read
//! endpoint's response and fails on a retired synonym or an unknown family name.

/// A field name shared by the command line and the API.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Term {
    /// The one name, as it appears in JSON and CSV headers.
    pub name: &'static str,
    /// What it holds, with its unit.
    pub meaning: &'static str,
    /// Synonyms that must not appear as a field name anywhere.
    pub not: &'static [&'static str],
}

/// The shared field names.
pub const TERMS: &[Term] = &[
    Term {
        name: "gauge",
        meaning: "the id of the gauge an object belongs to (a gauge's own record calls it `id`)",
        not: &["gauge_id", "station", "station_id"],
    },
    Term {
        name: "season",
        meaning: "a season label `YEAR-NAME`, e.g. `2026-DJF` (December 2026 to February 2027)",
        not: &["season_label"],
    },
    Term {
        name: "flood_threshold_m",
        meaning: "the gauge's minor flood threshold, metres above its datum",
        not: &["threshold_m", "flood_level_m"],
    },
    Term {
        name: "flood_days",
        meaning: "observed days whose highest water reached the flood threshold, days",
        not: &["n_flood_days", "flood_day_count"],
    },
    Term {
        name: "observed_days",
        meaning: "days with enough readings to count (the exposure), days",
        not: &["valid_days", "exposure_days"],
    },
    Term {
        name: "used_in_fit",
        meaning: "whether a season enters the count model's fit",
        not: &["included", "in_fit"],
    },
    Term {
        name: "left_out_reason",
        meaning: "why a season does not enter the fit, in words (empty or absent when it does)",
        not: &["exclusion", "excluded_because"],
    },
    Term {
        name: "chance",
        meaning: "the chance that a given day is a flood day, a probability from 0 to 1",
        not: &["flood_probability", "flood_chance"],
    },
    Term {
        name: "predicted_high_m",
        meaning: "a day's predicted high water (tide plus projected mean sea level), metres",
        not: &["predicted_high_water_m", "predicted_high_water"],
    },
    Term {
        name: "value_range",
        meaning: "10th and 90th percentiles `[low, high]` of a driver's value over the scenarios",
        not: &["value_p10", "value_p90"],
    },
    Term {
        name: "family",
        meaning: "the count family: one of `FAMILY_NAMES`",
        not: &["distribution"],
    },
];

/// The names of the count families, as the `--family` option, the gauge TOML and every JSON
/// answer spell them (`auto` is only a request: the answer names the family chosen).
pub const FAMILY_NAMES: [&str; 2] = ["poisson", "negbin"];

/// The shared term a field name retires, if it is a retired synonym.
pub fn retired(field: &str) -> Option<&'static Term> {
    TERMS.iter().find(|t| t.not.contains(&field))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_name_is_both_a_term_and_a_synonym() {
        for term in TERMS {
            assert!(
                retired(term.name).is_none(),
                "{} is also retired",
                term.name
            );
            assert_eq!(TERMS.iter().filter(|t| t.name == term.name).count(), 1);
        }
    }

    #[test]
    fn a_synonym_names_its_term() {
        assert_eq!(retired("gauge_id").map(|t| t.name), Some("gauge"));
        assert_eq!(retired("value_p90").map(|t| t.name), Some("value_range"));
        assert_eq!(retired("gauge"), None);
    }
}
