//! `tidetally hindcast --gauge FILE [--enso observed|at-issue|resampled]`: out-of-sample skill
//! of both engines (the count model and the water-level engine) of each season name against
//! the climatology and the trend-only baseline, as JSON (per scheme, per model: scores, skill
//! intervals, reliability bins, ROC, and the verdict sentences).

use tidetally_model::hindcast::{self, ConcurrentEnso, HindcastOptions};

use super::EnsoArg;

pub(super) fn run(args: super::HindcastArgs) -> anyhow::Result<()> {
    let prepared = super::prepare_gauge(&args.gauge)?;
    let options = HindcastOptions {
        concurrent_enso: match args.enso {
            EnsoArg::Observed => ConcurrentEnso::Observed,
            EnsoArg::AtIssue => ConcurrentEnso::AtIssue,
            EnsoArg::Resampled => ConcurrentEnso::Resampled,
        },
        ..HindcastOptions::default()
    };
    let report = hindcast::hindcast_gauge(&prepared, &options)?;
    if report.seasons.is_empty() {
        let reasons: Vec<String> = report
            .not_run
            .iter()
            .map(|n| format!("{}: {}", n.season_name, n.error))
            .collect();
        anyhow::bail!("no season could be hindcast: {}", reasons.join("; "));
    }
    super::print_json(&report)
}
