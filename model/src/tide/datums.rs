//! Tidal datums.
