//! `tidetally hindcast --gauge FILE`: out-of-sample skill of the gauge's model of each season
//! name against the climatology and the trend-only baseline, as JSON (per scheme, per model:
//! scores, skill intervals, reliability bins, ROC, and the verdict sentences).

use tidetally_model::hindcast::{self, HindcastOptions};

pub(super) fn run(args: super::GaugeArgs) -> anyhow::Result<()> {
    if args.csv {
        anyhow::bail!("`hindcast` prints JSON only; --csv applies to `counts`");
    }
    let prepared = super::prepare_gauge(&args.gauge)?;
    let report = hindcast::hindcast_gauge(&prepared, &HindcastOptions::default())?;
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
