//! `tidetally hindcast --gauge FILE`: out-of-sample skill of the gauge's model of each season
//! name against the climatology and the trend-only baseline, as JSON (per scheme, per model:
//! scores, skill intervals, reliability bins, ROC, and the verdict sentences).

use anyhow::Context;
use tidetally_model::fit;
use tidetally_model::gauge::GaugeConfig;
use tidetally_model::hindcast::{self, HindcastOptions};

pub(super) fn run(args: super::GaugeArgs) -> anyhow::Result<()> {
    if args.csv {
        anyhow::bail!("`hindcast` prints JSON only; --csv applies to `counts`");
    }
    let config = GaugeConfig::load(&args.gauge)?;
    let prepared = fit::prepare(&config)
        .with_context(|| format!("preparing gauge {}", args.gauge.display()))?;
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
