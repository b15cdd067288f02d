//! RFC 9457 problem details, the body of every error response.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// An `application/problem+json` body (RFC 9457 section 3.1).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Problem {
    /// A URI reference naming the problem type.
    #[serde(rename = "type")]
    #[schema(value_type = crate::openapi::ProblemType)]
    pub kind: String,
    /// A short summary of the problem type.
    pub title: String,
    /// The HTTP status code.
    pub status: u16,
    /// What went wrong with this request, in plain words.
    pub detail: String,
    /// The request path this occurrence belongs to.
    pub instance: String,
}
