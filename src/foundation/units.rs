//! Angle units: multiply a value in the named unit by the constant to get radians
//! (`x_deg * DEG`), divide radians by it to get the unit back. Days are the time unit of
//! the math; conversions to seconds are in `crate::time`.

/// One degree in radians.
pub const DEG: f64 = std::f64::consts::PI / 180.0;
/// One arcsecond in radians.
pub const ARCSEC: f64 = DEG / 3600.0;
/// A full turn in radians (2π).
pub const TAU: f64 = std::f64::consts::TAU;
