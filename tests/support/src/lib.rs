//! Helpers shared by the `server` crate's tests and the root package's end-to-end tests (a
//! dev-dependency of both; it depends on neither, so both compile it once):
//! - [`http`]: one HTTP/1.1 client over `std::net::TcpStream`, for tests on a real socket;
//! - [`webdriver`]: a small W3C WebDriver client on top of it, for the page's browser test;
//! - [`table`]: a CSV body read into its header and records;
//! - [`fixtures`]: the example gauge TOML and a fake outlook (wire-shaped JSON, to be read
//!   into the service's own types) for wiring tests.
#![allow(clippy::unwrap_used, clippy::missing_panics_doc)]

pub mod fixtures;
pub mod http;
pub mod table;
pub mod webdriver;
