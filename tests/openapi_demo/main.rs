//! The OpenAPI document against the real demo service (started once, in-process, on a
//! loopback port over an in-memory store seeded with the demo coastline):
//! - `fields`: every field a real answer carries is documented and every documented field
//!   is served, with the document's structural rules (`structure`);
//! - `validator`: a general-purpose OpenAPI validator accepts the document;
//! - `client`: a client generated from the document reads the demo's outlooks.
//!
//! The validator and the client generator are Python tools pinned in
//! `tests/python/requirements.txt`; without them those tests print a skip message, or fail
//! when `CI` is set.
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod client;
mod demo;
mod fields;
mod python;
mod schema;
mod structure;
mod validator;
