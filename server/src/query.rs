//! Parsers of query values: season labels and lists of exceedance days. Both return a
//! message fit for a `400` problem and never panic on any input.

use tidetally_model::season::{Season, SeasonSpec};

/// The most `k` values one request may ask for.
pub const MAX_K_VALUES: usize = 32;

/// Parses `LABEL` (e.g. `2026-DJF`) against a gauge's seasons.
pub fn parse_season(label: &str, specs: &[SeasonSpec]) -> Result<Season, String> {
    if label.len() > 32 {
        return Err(format!(
            "season {:?}... is too long to be a label",
            truncate(label)
        ));
    }
    Season::parse(label, specs).map_err(|err| err.to_string())
}

/// Checks the shape `<year>-<NAME>` of a label without a gauge's season list, returning the
/// canonical `(year, NAME)`.
pub fn parse_label_shape(label: &str) -> Result<(i32, String), String> {
    let bad = || {
        format!(
            "season {:?} is not of the form <year>-<season name>, e.g. 2026-DJF",
            truncate(label)
        )
    };
    let (year, name) = label.trim().split_once('-').ok_or_else(bad)?;
    let year: i32 = year.parse().map_err(|_| bad())?;
    SeasonSpec::new(name, 1, 1).map_err(|_| bad())?;
    if !(1800..=2200).contains(&year) {
        return Err(format!("season year {year} is outside 1800..=2200"));
    }
    Ok((year, name.to_ascii_uppercase()))
}

/// Parses `k=5,10,20`: distinct whole days 1 to `season_days`, at most [`MAX_K_VALUES`],
/// returned sorted.
pub fn parse_k_list(text: &str, season_days: u32) -> Result<Vec<u32>, String> {
    let mut days = Vec::new();
    for part in text.split(',') {
        let part = part.trim();
        let k: u32 = part
            .parse()
            .map_err(|_| format!("k value {:?} is not a whole number of days", truncate(part)))?;
        if k == 0 || k > season_days {
            return Err(format!(
                "k value {k} must be 1 to {season_days} (the season's days)"
            ));
        }
        days.push(k);
        if days.len() > MAX_K_VALUES {
            return Err(format!("at most {MAX_K_VALUES} k values per request"));
        }
    }
    days.sort_unstable();
    days.dedup();
    Ok(days)
}

fn truncate(text: &str) -> String {
    text.chars().take(32).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn k_lists_are_checked_and_sorted() {
        assert_eq!(parse_k_list("10, 5,10", 90).unwrap(), vec![5, 10]);
        assert!(parse_k_list("0", 90).is_err());
        assert!(parse_k_list("91", 90).is_err());
        assert!(parse_k_list("5,,6", 90).is_err());
        assert!(parse_k_list("-1", 90).is_err());
        let many = (1..=40)
            .map(|k| k.to_string())
            .collect::<Vec<_>>()
            .join(",");
        assert!(parse_k_list(&many, 90).unwrap_err().contains("at most"));
    }

    #[test]
    fn labels_are_checked() {
        let specs = SeasonSpec::meteorological();
        assert_eq!(
            parse_season("2026-DJF", &specs).unwrap().label(),
            "2026-DJF"
        );
        assert!(parse_season("2026-NDJ", &specs).is_err());
        assert_eq!(
            parse_label_shape("2026-ndjfm").unwrap(),
            (2026, "NDJFM".into())
        );
        assert!(parse_label_shape("DJF-2026").is_err());
        assert!(parse_label_shape("3000-DJF").is_err());
    }

    proptest! {
        #[test]
        fn parsers_never_panic(text in ".{0,80}", days in 0u32..400) {
            let _ = parse_k_list(&text, days);
            let _ = parse_label_shape(&text);
            let _ = parse_season(&text, &SeasonSpec::meteorological());
        }

        #[test]
        fn accepted_k_lists_are_in_range(ks in proptest::collection::vec(0u32..200, 1..10)) {
            let text = ks.iter().map(u32::to_string).collect::<Vec<_>>().join(",");
            if let Ok(parsed) = parse_k_list(&text, 90) {
                prop_assert!(parsed.iter().all(|&k| (1..=90).contains(&k)));
                prop_assert!(parsed.windows(2).all(|w| w[0] < w[1]));
            }
        }
    }
}
