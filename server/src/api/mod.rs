//! The JSON schema of the HTTP API: wire types only, kept apart from the model's types and
//! filled by explicit conversions, so the model can change without breaking dashboards.
//!
//! Every type here is plain data that serializes to the shapes documented in DEVELOPERS.md
//! ("HTTP API"); field names are part of the stable interface.

mod calendar;
mod clock;
mod gauge;
mod outlook;
mod problem;
mod skill;
mod summary;
mod upload;

pub use calendar::{CalendarDay, CalendarWeek, SeasonCalendar, WatchRule};
pub use clock::Clock;
pub use gauge::{
    Feature, FeatureCollection, Gauge, GaugeList, GaugeProperties, Point, RecordSpan,
    SeasonHistory, SeasonRow,
};
pub use outlook::{
    BrierScore, DayChance, DriverUse, EngineSummary, Exceedance, FitPeriod, IssuedOutlook,
    IssuedOutlookList, LastSeason, Outlook, OutlookSet, PlanBasis, PlanOn, SeasonVerification,
    TercileReference, Terciles, Unavailable, WaterEffect, exceedance_from_pmf,
};
pub use problem::Problem;
pub use skill::{EngineSkill, Hindcast, HindcastCase, ScoreRow, Skill, Verdict};
pub use summary::{AtLeastK, OutlookSummary, TercileOdds};
pub use upload::{
    EnsoForecast, EnsoForecastModel, EnsoProbabilities, InputVersion, SeriesEntry, SeriesList,
    UploadReceipt, VersionList,
};
