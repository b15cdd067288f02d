//! Risk.
