//! Stored inputs -> the model's [`GaugeSources`]: the stored TOML (validated once when read
//! from the store) and the stored bytes of the gauge's levels, driver series and ENSO
//! forecast, each named for error messages. The model's `fit::prepare` parses them, exactly as
//! it parses the files a TOML names.

use tidetally_model::fit::{ByteSource, GaugeSources};
use tidetally_model::season::Season;

use super::{GaugeInputs, PipelineError};

/// The gauge's sources from its stored inputs, with the stored ENSO forecast for `target`
/// when one is given and stored (see [`forecast_for`]).
pub(super) fn sources(
    inputs: &GaugeInputs,
    target: Option<&Season>,
) -> Result<GaugeSources, PipelineError> {
    let id = &inputs.meta.id;
    let levels = inputs.levels.as_ref().ok_or_else(|| {
        PipelineError::MissingInput(format!(
            "gauge {id} has no water levels; PUT /api/v1/gauges/{id}/levels first"
        ))
    })?;
    let bytes = |name: String, stored: &Option<Vec<u8>>| {
        stored.as_ref().map(|bytes| ByteSource {
            name,
            bytes: bytes.clone(),
        })
    };
    Ok(GaugeSources {
        toml: inputs.toml.clone(),
        levels: ByteSource {
            name: format!("water levels of gauge {id}"),
            bytes: levels.csv.clone(),
        },
        enso: bytes("stored ENSO index".to_owned(), &inputs.enso),
        rmm: bytes("stored RMM index".to_owned(), &inputs.rmm),
        wind: bytes(format!("stored wind of gauge {id}"), &inputs.wind),
        enso_forecast: target.and_then(|t| forecast_for(inputs, t)),
    })
}

/// The stored ENSO forecast for `target` (the store keeps one per season), as stored.
pub(super) fn forecast_for(inputs: &GaugeInputs, target: &Season) -> Option<ByteSource> {
    let label = target.label();
    inputs
        .enso_forecasts
        .iter()
        .find(|f| f.season == label)
        .map(|f| ByteSource {
            name: format!("stored ENSO forecast for {label}"),
            bytes: f.json.clone(),
        })
}
