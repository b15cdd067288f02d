//! ENSO forecast JSON for a target season (DEVELOPERS.md, "Driver series").

use crate::api::EnsoForecast;

use super::UploadError;

/// Parses and checks an ENSO forecast: a season label, an issue date, and either non-empty
/// finite ensemble members per model or three category probabilities summing to 1.
pub fn parse_enso_forecast(bytes: &[u8]) -> Result<EnsoForecast, UploadError> {
    let doc = |message: String| UploadError::Document {
        what: "ENSO forecast JSON".into(),
        message,
    };
    let forecast: EnsoForecast =
        serde_json::from_slice(bytes).map_err(|err| doc(err.to_string()))?;
    label_shape(&forecast.season).map_err(|message| doc(format!("field season: {message}")))?;
    if chrono::NaiveDate::parse_from_str(&forecast.issued, "%Y-%m-%d").is_err() {
        return Err(doc(format!(
            "field issued: {:?} is not a date YYYY-MM-DD",
            forecast.issued
        )));
    }
    match (&forecast.models, &forecast.probabilities) {
        (Some(models), None) => {
            if models.is_empty() {
                return Err(doc("field models: must list at least one model".into()));
            }
            for (i, model) in models.iter().enumerate() {
                if model.members.is_empty() || model.members.iter().any(|m| !m.is_finite()) {
                    return Err(doc(format!(
                        "field models[{i}].members: must be a non-empty list of finite anomalies"
                    )));
                }
            }
        }
        (None, Some(p)) => {
            let parts = [p.la_nina, p.neutral, p.el_nino];
            let sum: f64 = parts.iter().sum();
            // Published category forecasts are rounded to whole percent: allow 1.5% slack.
            if parts.iter().any(|x| !(0.0..=1.0).contains(x)) || (sum - 1.0).abs() > 0.015 {
                return Err(doc(format!(
                    "field probabilities: each must be in 0..=1 and they must sum to 1 (sum {sum})"
                )));
            }
        }
        _ => {
            return Err(doc(
                "exactly one of \"models\" or \"probabilities\" must be given".into(),
            ));
        }
    }
    Ok(forecast)
}

/// Accepts any `<year>-<NAME>` label (custom seasons are defined per gauge).
fn label_shape(label: &str) -> Result<tidetally_model::season::Season, String> {
    let (year, name) = label
        .split_once('-')
        .ok_or_else(|| format!("{label:?} is not <year>-<season name>"))?;
    let year: i32 = year
        .parse()
        .map_err(|_| format!("{label:?} is not <year>-<season name>"))?;
    let spec = tidetally_model::season::SeasonSpec::new(name, 1, 1).map_err(|e| e.to_string())?;
    tidetally_model::season::Season::new(year, spec).map_err(|e| e.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_documented_shapes_parse() {
        let members = br#"{"season": "2026-DJF", "issued": "2026-11-15",
            "models": [{"name": "model-a", "members": [-0.8, -1.1]}]}"#;
        assert!(parse_enso_forecast(members).is_ok());
        let probs = br#"{"season": "2026-DJF", "issued": "2026-11-15",
            "probabilities": {"la_nina": 0.55, "neutral": 0.40, "el_nino": 0.05}}"#;
        assert!(parse_enso_forecast(probs).is_ok());
        let noted = br#"{"season": "2026-DJF", "issued": "2026-11-15", "note": "invented",
            "models": [{"name": "model-a", "members": [-0.8]}]}"#;
        assert!(parse_enso_forecast(noted).is_ok());
    }

    #[test]
    fn bad_forecasts_are_named() {
        let cases: [(&[u8], &str); 4] = [
            (br#"{"season": "2026DJF", "issued": "2026-11-15", "models": [{"name": "a", "members": [1.0]}]}"#, "field season"),
            (br#"{"season": "2026-DJF", "issued": "15/11/2026", "models": [{"name": "a", "members": [1.0]}]}"#, "field issued"),
            (br#"{"season": "2026-DJF", "issued": "2026-11-15", "models": [{"name": "a", "members": []}]}"#, "members"),
            (br#"{"season": "2026-DJF", "issued": "2026-11-15", "probabilities": {"la_nina": 0.9, "neutral": 0.4, "el_nino": 0.05}}"#, "sum to 1"),
        ];
        for (body, expected) in cases {
            let err = parse_enso_forecast(body).unwrap_err().to_string();
            assert!(err.contains(expected), "{err}");
        }
    }
}
