//! The service's date.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// `GET /api/v1/clock`: what "today" is for this service (the real UTC date, or the date it
/// was configured with), so the page judges an outlook's freshness by the same clock as the
/// service and tests can set it.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
pub struct Clock {
    /// Today, `YYYY-MM-DD`.
    #[schema(example = "2026-12-01")]
    pub today: String,
}
