//! The end-to-end and reference-check test package: its tests are the files in `tests/`;
//! the helpers they share with the service's tests are in `tidetally-test-support`
//! (`tests/support/`).
