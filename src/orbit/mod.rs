//! Orbital elements, Kepler's equation, state vectors and two-body propagation.
//!
//! Elements are osculating, ecliptic and equinox J2000, heliocentric unless marked
//! barycentric. Inside, angles are radians and times TDB MJD.

pub mod constants;
pub mod elements;
pub mod kepler;
pub mod propagate;

pub use constants::*;
pub use elements::{Center, Elements};
pub use propagate::Orbit;
