//! ENSO forecast JSON for a target season (DEVELOPERS.md, "Driver series"), checked by the
//! model's `drivers::EnsoForecast::parse` and converted to the wire type that is stored.

use tidetally_model::drivers::{EnsoForecast as ModelForecast, ForecastContent, ForecastError};
use tidetally_model::season::SeasonSpec;

use crate::api::{EnsoForecast, EnsoForecastModel, EnsoProbabilities};

use super::UploadError;

const WHAT: &str = "ENSO forecast JSON";

/// Parses and checks an ENSO forecast with the model's parser: a season label, an issue date,
/// and either non-empty finite ensemble members per model or three category probabilities
/// summing to 1.
///
/// A top-level free-text `note` is allowed (the body is stored as uploaded, so the pipeline
/// shows the note); other unknown fields are refused, as the model refuses them. A forecast is not tied to one gauge, so its season name is
/// checked for shape only (any valid season name, e.g. a gauge's custom `NDJFM`); the
/// pipeline checks it against a gauge's seasons when it uses the forecast.
pub fn parse_enso_forecast(bytes: &[u8]) -> Result<EnsoForecast, UploadError> {
    let doc = |message: String| UploadError::Document {
        what: WHAT.to_owned(),
        message,
    };
    let forecast = ModelForecast::parse(bytes, WHAT, &label_specs(bytes)).map_err(|e| match e {
        // serde_json's message names the line and column.
        ForecastError::Json { message, .. } => doc(message),
        ForecastError::Invalid { field, problem, .. } => doc(format!("field {field}: {problem}")),
    })?;
    Ok(to_wire(&forecast))
}

/// The season definitions to read the label against: the label's own name when it is
/// written as season names are, in capital letters (as a one-month season; only the name
/// matters here), or the default seasons otherwise, so that the model's parser names the
/// problem (`2025-12` and `2026-djf` are refused: labels must be exact).
fn label_specs(bytes: &[u8]) -> Vec<SeasonSpec> {
    serde_json::from_slice::<serde_json::Value>(bytes)
        .ok()
        .as_ref()
        .and_then(|value| value.get("season"))
        .and_then(serde_json::Value::as_str)
        .and_then(|label| label.trim().split_once('-'))
        .filter(|(_, name)| name.bytes().all(|b| b.is_ascii_uppercase()))
        .and_then(|(_, name)| SeasonSpec::new(name, 1, 1).ok())
        .map_or_else(SeasonSpec::meteorological, |spec| vec![spec])
}

fn to_wire(forecast: &ModelForecast) -> EnsoForecast {
    let (models, probabilities) = match &forecast.content {
        ForecastContent::Members(models) => (
            Some(
                models
                    .iter()
                    .map(|m| EnsoForecastModel {
                        name: m.name.clone(),
                        members: m.members.clone(),
                    })
                    .collect(),
            ),
            None,
        ),
        ForecastContent::Probabilities(p) => (
            None,
            Some(EnsoProbabilities {
                la_nina: p.la_nina,
                neutral: p.neutral,
                el_nino: p.el_nino,
            }),
        ),
    };
    EnsoForecast {
        season: forecast.season.to_string(),
        issued: forecast.issued.format("%Y-%m-%d").to_string(),
        models,
        probabilities,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_documented_shapes_parse() {
        let members = br#"{"season": "2026-DJF", "issued": "2026-11-15",
            "models": [{"name": "model-a", "members": [-0.8, -1.1]}]}"#;
        let f = parse_enso_forecast(members).unwrap();
        assert_eq!(
            (f.season.as_str(), f.issued.as_str()),
            ("2026-DJF", "2026-11-15")
        );
        assert_eq!(f.models.unwrap()[0].members, vec![-0.8, -1.1]);
        let probs = br#"{"season": "2026-DJF", "issued": "2026-11-15",
            "probabilities": {"la_nina": 0.55, "neutral": 0.40, "el_nino": 0.05}}"#;
        let f = parse_enso_forecast(probs).unwrap();
        assert_eq!(f.probabilities.unwrap().la_nina, 0.55);
        let noted = br#"{"season": "2026-NDJFM", "issued": "2026-11-15", "note": "invented",
            "models": [{"name": "model-a", "members": [-0.8]}]}"#;
        assert_eq!(parse_enso_forecast(noted).unwrap().season, "2026-NDJFM");
    }

    #[test]
    fn bad_forecasts_are_named() {
        let cases: [(&[u8], &str); 6] = [
            (br#"{"season": "2026DJF", "issued": "2026-11-15", "models": [{"name": "a", "members": [1.0]}]}"#, "field season"),
            (br#"{"season": "2026-DJF", "issued": "15/11/2026", "models": [{"name": "a", "members": [1.0]}]}"#, "field issued"),
            (br#"{"season": "2026-DJF", "issued": "2026-11-15", "models": [{"name": "a", "members": []}]}"#, "field models[0].members"),
            (br#"{"season": "2026-DJF", "issued": "2026-11-15", "probabilities": {"la_nina": 0.9, "neutral": 0.4, "el_nino": 0.05}}"#, "field probabilities"),
            (b"{\"season\": \"2026-DJF\",\n \"issued\": }", "line 2"),
            (br#"{"season": "2026-DJF", "issued": "2026-11-15", "models": [{"name": "a", "members": ["x"]}]}"#, "invalid type"),
        ];
        for (body, expected) in cases {
            let err = parse_enso_forecast(body).unwrap_err().to_string();
            assert!(err.starts_with("ENSO forecast JSON: "), "{err}");
            assert!(err.contains(expected), "{expected}: {err}");
        }
        let extra = br#"{"season": "2026-DJF", "issued": "2026-11-15", "colour": "blue",
            "models": [{"name": "a", "members": [1.0]}]}"#;
        let err = parse_enso_forecast(extra).unwrap_err().to_string();
        assert!(err.contains("colour"), "{err}");
        // The model's tolerance on the sum applies: a forecast the pipeline would refuse is
        // refused on upload (rounded percentages summing to 99 included).
        let rounded = br#"{"season": "2026-DJF", "issued": "2026-11-15",
            "probabilities": {"la_nina": 0.33, "neutral": 0.33, "el_nino": 0.33}}"#;
        assert!(parse_enso_forecast(rounded).is_err());
    }
}
