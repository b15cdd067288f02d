//! tidetally's edge: the HTTP service, the store and the command-line tool. Depends on
//! `tidetally-model`; the model never depends on this crate.

pub mod api;
pub mod cli;
