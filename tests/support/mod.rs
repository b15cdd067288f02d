//! Shared helpers for tidetally's end-to-end and reference-check tests.
