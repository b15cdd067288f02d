//! tidetally's computation: from tide-gauge water levels and climate drivers to a calibrated
//! distribution of next season's minor flood days, and its out-of-sample skill.
//!
//! Modules follow the data flow (see DEVELOPERS.md):
//! [`gauge`] (a gauge's description) -> [`ingest`] (water-level files) -> [`daily`] (daily
//! maxima and flood days) -> [`season`] (season calendar and season table) -> [`tide`]
//! (harmonic analysis, prediction, datums) -> [`drivers`] (seasonal predictors) -> [`glm`]
//! (count models) -> [`outlook`] (predictive distribution for a target season) ->
//! [`verify`] (scores) and [`hindcast`] (out-of-sample skill).
//!
//! The crate knows nothing of HTTP, async runtimes, environment variables or sockets: parsers
//! take `impl BufRead` or `&str`; opening files is left to the caller except where a gauge's
//! TOML names its data files relative to itself.

pub mod daily;
pub mod drivers;
pub mod fit;
pub mod gauge;
pub mod glm;
pub mod hindcast;
pub mod ingest;
pub mod outlook;
pub mod predictor;
pub mod season;
pub mod tide;
pub mod verify;
pub mod water;
