//! Threshold.
