//! `tidetally outlook --gauge FILE [--season LABEL] [--draws N] [--seed S]
//! [--condition-on-enso]`: the seasonal outlook of flood days for one gauge, as JSON.

use anyhow::Context;
use tidetally_model::fit::{self, FitOptions};
use tidetally_model::outlook::{self, OutlookOptions};
use tidetally_model::season::Season;

pub(super) fn run(args: super::OutlookArgs) -> anyhow::Result<()> {
    let prepared = super::prepare_gauge(&args.gauge)?;
    let target = match &args.season {
        Some(label) => Season::parse(label, &prepared.config.seasons.specs)?,
        None => prepared.default_target().context(
            "the level record has no observed day, so there is no default season; give --season",
        )?,
    };
    let model = fit::fit_gauge(&prepared, target.spec().name(), &FitOptions::default())?;
    let options = OutlookOptions {
        draws: args.draws,
        seed: args.seed,
        condition_on_enso: args.condition_on_enso,
        ..OutlookOptions::default()
    };
    let outlook = outlook::build(&model, &prepared, &target, &options)?;
    super::print_json(&outlook)
}
