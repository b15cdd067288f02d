//! The command line: one clap definition, one dispatch. Each command lives in its own module
//! and prints JSON to stdout unless it writes a file.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

mod counts;
mod fit;
mod glm;
mod hindcast;
mod outlook;
mod score;
mod serve;
mod tide;
mod tide_risk;

/// The season label convention, stated in `--help` and on every `--season` option.
pub const SEASON_LABELS: &str = "A season label is `YEAR-NAME` with YEAR the year of the season's first month: `1995-DJF` is December 1995 to February 1996.";

/// tidetally: seasonal outlooks of minor coastal flood days at tide gauges.
#[derive(Debug, Parser)]
#[command(name = "tidetally", version, about, after_help = SEASON_LABELS)]
pub struct Cli {
    /// The command to run.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Serve the JSON API and the web page.
    Serve(ServeArgs),
    /// Count flood days per season for a gauge.
    Counts(GaugeArgs),
    /// Fit a Poisson or negative-binomial GLM to any CSV table.
    Glm(GlmArgs),
    /// Tidal harmonic analysis and prediction.
    #[command(subcommand)]
    Tide(TideCommand),
    /// Tidal datums (MHHW, MHW, MSL, MTL, MLW, MLLW, GT) from a water-level record.
    Datums(DatumsArgs),
    /// Verification scores of given forecasts.
    Score(ScoreArgs),
    /// Fit the gauge's count model of each season name (coefficients, rate ratios, family
    /// test, fit period, seasons left out).
    Fit(FitArgs),
    /// The seasonal outlook of flood days for a target season.
    Outlook(OutlookArgs),
    /// Out-of-sample skill of the gauge's model against the climatology and the trend-only
    /// baseline (both schemes, every score, bootstrap intervals, verdicts).
    Hindcast(HindcastArgs),
}

/// Arguments of `serve`.
#[derive(Debug, Args)]
pub struct ServeArgs {
    /// Folder holding gauge TOML files to load when the store is empty (default: the demo
    /// coastline).
    #[arg(long)]
    pub data: Option<PathBuf>,
    /// SQLite store file (default: tidetally.db in the working directory).
    #[arg(long)]
    pub db: Option<PathBuf>,
    /// Address to listen on (default 127.0.0.1:8080).
    #[arg(long)]
    pub addr: Option<String>,
    /// TOML config file (keys: addr, db, data, token, cors_origins, log_format,
    /// request_timeout_secs, cache_max_age_secs, today); environment variables and flags
    /// override it (TIDETALLY_TODAY=YYYY-MM-DD fixes the date the service calls today).
    #[arg(long)]
    pub config: Option<PathBuf>,
}

/// Arguments of the per-gauge pipeline commands.
#[derive(Debug, Args)]
pub struct GaugeArgs {
    /// The gauge's TOML file; it names its data files relative to itself.
    #[arg(long)]
    pub gauge: PathBuf,
    /// Write the season table as CSV instead of JSON.
    #[arg(long, conflicts_with = "predictors")]
    pub csv: bool,
    /// Write the full predictor table the model is fitted on as CSV: every season, its flood
    /// days, observed days and ln(observed days), every predictor (the tidal one included),
    /// and whether the gauge's fit uses the row (`used_in_fit`), so the model can be refitted with
    /// other tools.
    #[arg(long)]
    pub predictors: bool,
}

/// Arguments of `fit` (JSON only).
#[derive(Debug, Args)]
pub struct FitArgs {
    /// The gauge's TOML file; it names its data files relative to itself.
    #[arg(long)]
    pub gauge: PathBuf,
}

/// Arguments of `hindcast`.
#[derive(Debug, Args)]
pub struct HindcastArgs {
    /// The gauge's TOML file; it names its data files relative to itself.
    #[arg(long)]
    pub gauge: PathBuf,
    /// How each past season's own ENSO is known to its forecast: `observed` (a perfect ENSO
    /// forecast, an upper bound), `at-issue` (the month before the season carried forward
    /// with its past error, as a real outlook would have known it) or `resampled` (no ENSO
    /// foresight).
    #[arg(long, value_enum, default_value_t = EnsoArg::Observed)]
    pub enso: EnsoArg,
}

/// The `--enso` choice of `hindcast`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum EnsoArg {
    /// The season's observed ENSO.
    Observed,
    /// ENSO as known when the outlook would have been issued.
    AtIssue,
    /// ENSO resampled from the training seasons.
    Resampled,
}

/// Arguments of `glm`.
#[derive(Debug, Args)]
pub struct GlmArgs {
    /// The CSV table (header row required).
    #[arg(long)]
    pub csv: PathBuf,
    /// The response column (non-negative counts).
    #[arg(long)]
    pub response: String,
    /// Predictor columns, comma separated.
    #[arg(long, value_delimiter = ',')]
    pub predictors: Vec<String>,
    /// Offset column, added to the linear predictor as is.
    #[arg(long)]
    pub offset: Option<String>,
    /// Add ln(offset column) instead of the column itself.
    #[arg(long, requires = "offset")]
    pub log_offset: bool,
    /// Count family: poisson, negbin or auto (a boundary-corrected likelihood-ratio test
    /// picks one).
    #[arg(long, default_value = "auto")]
    pub family: String,
}

/// The `tide` subcommands.
#[derive(Debug, Subcommand)]
pub enum TideCommand {
    /// Harmonic analysis of a water-level record.
    Analyze(TideAnalyzeArgs),
    /// Tide prediction from constituents.
    Predict(TidePredictArgs),
    /// Tide-driven flood-risk days of a gauge's coming season.
    Risk(TideRiskArgs),
}

/// Arguments of `tide analyze`.
#[derive(Debug, Args)]
pub struct TideAnalyzeArgs {
    /// Water-level CSV (`time,level[,flag]`, plain or gzip).
    #[arg(long)]
    pub csv: PathBuf,
    /// Latitude of the gauge in degrees north (for the nodal corrections' reporting).
    #[arg(long)]
    pub latitude: Option<f64>,
    /// Fit a linear trend along with the mean.
    #[arg(long)]
    pub trend: bool,
}

/// Arguments of `tide predict`.
#[derive(Debug, Args)]
pub struct TidePredictArgs {
    /// Constituents as written by `tide analyze`.
    #[arg(long)]
    pub constituents: PathBuf,
    /// First time to predict (ISO 8601).
    #[arg(long)]
    pub start: String,
    /// Last time to predict (ISO 8601).
    #[arg(long)]
    pub end: String,
    /// Step between predictions in minutes.
    #[arg(long, default_value_t = 60)]
    pub step_minutes: u32,
}

/// Arguments of `tide risk`.
#[derive(Debug, Args)]
pub struct TideRiskArgs {
    /// The gauge's TOML file; it names its level file relative to itself.
    #[arg(long)]
    pub gauge: PathBuf,
    /// The season, e.g. `2026-DJF` (default: the first season after the record ends).
    #[arg(long, long_help = format!("The season, e.g. 2026-DJF (default: the first season after the record ends). {SEASON_LABELS}"))]
    pub season: Option<String>,
    /// A day is a tide risk day when its predicted high water comes within this many metres
    /// of the threshold.
    #[arg(long, default_value_t = 0.25)]
    pub margin: f64,
}

/// Arguments of `datums`.
#[derive(Debug, Args)]
pub struct DatumsArgs {
    /// Water-level CSV (`time,level[,flag]`, plain or gzip).
    #[arg(long)]
    pub csv: PathBuf,
    /// A control gauge's water-level CSV covering the same period, for the modified range
    /// ratio adjustment of a short record to the control's epoch.
    #[arg(long, requires = "control_datums")]
    pub control: Option<PathBuf>,
    /// The control gauge's accepted epoch datums (JSON as written by `datums`).
    #[arg(long, requires = "control")]
    pub control_datums: Option<PathBuf>,
}

/// Arguments of `score`.
#[derive(Debug, Args)]
pub struct ScoreArgs {
    /// JSON file of cases: `{"cases": [{"pmf": [...], "observed": n}], ...}`.
    #[arg(long)]
    pub input: PathBuf,
}

/// Arguments of `outlook`.
#[derive(Debug, Args)]
pub struct OutlookArgs {
    /// The gauge's TOML file; it names its data files relative to itself.
    #[arg(long)]
    pub gauge: PathBuf,
    /// Target season label, e.g. 2026-DJF (default: the first season starting after the
    /// record's last observed day).
    #[arg(long, long_help = format!("Target season label, e.g. 2026-DJF (default: the first season starting after the record's last observed day). {SEASON_LABELS}"))]
    pub season: Option<String>,
    /// Mixture components (driver scenario x parameter draw pairs).
    #[arg(long, default_value_t = tidetally_model::outlook::DEFAULT_DRAWS)]
    pub draws: usize,
    /// Seed of the random streams (the same seed gives the same outlook).
    #[arg(long, default_value_t = tidetally_model::outlook::DEFAULT_SEED)]
    pub seed: u64,
    /// Resample MJO and wind only from past seasons of each scenario's ENSO category.
    #[arg(long)]
    pub condition_on_enso: bool,
    /// Which engine leads: `auto` (the one with the lower out-of-sample CRPS, ENSO as known at
    /// issue time), `water` (daily high waters on the known tide) or `count` (the seasonal
    /// count model).
    #[arg(long, value_enum, default_value_t = EngineArg::Auto)]
    pub engine: EngineArg,
}

/// The `--engine` choice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum EngineArg {
    /// The engine that scored better out of sample.
    Auto,
    /// The water-level engine.
    Water,
    /// The seasonal count model.
    Count,
}

/// Runs one parsed command.
pub fn run(cli: Cli) -> anyhow::Result<()> {
    match cli.command {
        Command::Serve(args) => serve::run(args),
        Command::Counts(args) => counts::run(args),
        Command::Glm(args) => glm::run(args),
        Command::Tide(TideCommand::Analyze(args)) => tide::analyze(args),
        Command::Tide(TideCommand::Predict(args)) => tide::predict(args),
        Command::Tide(TideCommand::Risk(args)) => tide_risk::run(args),
        Command::Datums(args) => tide::datums(args),
        Command::Score(args) => score::run(args),
        Command::Fit(args) => fit::run(args),
        Command::Outlook(args) => outlook::run(args),
        Command::Hindcast(args) => hindcast::run(args),
    }
}

/// Reads a gauge TOML and every file it names, and prepares the gauge (the `fit`,
/// `hindcast` and `outlook` commands).
pub(crate) fn prepare_gauge(
    path: &std::path::Path,
) -> anyhow::Result<tidetally_model::fit::PreparedGauge> {
    use anyhow::Context;
    use tidetally_model::fit::{self, FilesNeeded, GaugeSources, TideAnalysis};
    let sources = GaugeSources::read(path, FilesNeeded::All)?;
    fit::prepare(&sources, TideAnalysis::AsConfigured)
        .with_context(|| format!("preparing gauge {}", path.display()))
}

/// Prints a value as pretty JSON on stdout.
pub(crate) fn print_json<T: serde::Serialize>(value: &T) -> anyhow::Result<()> {
    let mut text = serde_json::to_string_pretty(value)?;
    text.push('\n');
    print_text(&text)
}

/// Writes text to stdout; a reader that closes the pipe early (`| head`) is not an error.
pub(crate) fn print_text(text: &str) -> anyhow::Result<()> {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Err(err) if err.kind() != std::io::ErrorKind::BrokenPipe => Err(err.into()),
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use clap::Parser;

    use super::{Cli, Command};

    #[test]
    fn glm_family_defaults_to_auto_as_the_readme_shows() {
        let cli = Cli::try_parse_from([
            "tidetally",
            "glm",
            "--csv",
            "t.csv",
            "--response",
            "n",
            "--predictors",
            "x",
        ])
        .expect("parses without --family");
        let Command::Glm(args) = cli.command else {
            panic!("parsed as another command");
        };
        assert_eq!(args.family, "auto");
    }

    #[test]
    fn help_states_the_season_label_convention() {
        use clap::CommandFactory;
        let top = Cli::command().render_help().to_string();
        assert!(
            top.contains("`1995-DJF` is December 1995 to February 1996"),
            "{top}"
        );
        let mut cli = Cli::command();
        let outlook = cli
            .find_subcommand_mut("outlook")
            .expect("outlook command")
            .render_long_help()
            .to_string();
        assert!(
            outlook.contains("December 1995 to February 1996"),
            "{outlook}"
        );
    }

    #[test]
    fn fit_offers_no_csv_flag_it_would_refuse() {
        let err = Cli::try_parse_from(["tidetally", "fit", "--gauge", "g.toml", "--csv"])
            .expect_err("fit prints JSON only");
        assert_eq!(err.kind(), clap::error::ErrorKind::UnknownArgument);
        Cli::try_parse_from(["tidetally", "counts", "--gauge", "g.toml", "--csv"])
            .expect("counts writes CSV");
    }

    #[test]
    fn hindcast_offers_no_csv_flag() {
        let err = Cli::try_parse_from(["tidetally", "hindcast", "--gauge", "g.toml", "--csv"])
            .expect_err("hindcast has no --csv");
        assert_eq!(err.kind(), clap::error::ErrorKind::UnknownArgument);
    }
}
