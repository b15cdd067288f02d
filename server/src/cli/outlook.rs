//! `tidetally outlook --gauge FILE [--season LABEL] [--engine auto|water|count] [--draws N]
//! [--seed S] [--condition-on-enso]`: the seasonal outlook of flood days for one gauge, as
//! JSON, in the service's schema and through the service's own path
//! ([`crate::pipeline::issue_outlook`]), so the command line and `GET .../outlook` agree.

use anyhow::Context;
use tidetally_model::outlook::{EngineRequest, IssueOptions, OutlookOptions};
use tidetally_model::season::Season;

use super::EngineArg;
use crate::pipeline::{self, IssueStamp};

pub(super) fn run(args: super::OutlookArgs) -> anyhow::Result<()> {
    let prepared = super::prepare_gauge(&args.gauge)?;
    let target = match &args.season {
        Some(label) => Season::parse(label, &prepared.config.seasons.specs)?,
        None => prepared.default_target().context(
            "the level record has no observed day, so there is no default season; give --season",
        )?,
    };
    let options = IssueOptions {
        outlook: OutlookOptions {
            draws: args.draws,
            seed: args.seed,
            condition_on_enso: args.condition_on_enso,
            ..OutlookOptions::default()
        },
        engine: match args.engine {
            EngineArg::Auto => EngineRequest::Auto,
            EngineArg::Water => EngineRequest::Water,
            EngineArg::Count => EngineRequest::Count,
        },
        ..IssueOptions::default()
    };
    let issued_at = crate::store::now_rfc3339();
    let version = format!("{}+local", env!("CARGO_PKG_VERSION"));
    let stamp = IssueStamp {
        issued_at: &issued_at,
        model_version: &version,
    };
    let wire = pipeline::issue_outlook(&prepared, &target, &options, &stamp)
        .map_err(|e| anyhow::anyhow!("{e}"))?;
    super::print_json(&wire.outlook)
}
