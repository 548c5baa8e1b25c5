//! The foundation every other module stands on: units, physical and astronomical constants
//! (each with its source), and the rotation between the ecliptic and equatorial frames of
//! J2000. It uses nothing else of the crate; `orbit` and `sky` both build on it, so the
//! two-body core needs no observer. Epochs and time scales are in `crate::time`, at the same level.

pub mod constants;
pub mod ecliptic;
pub mod units;
