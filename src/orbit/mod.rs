//! Orbital elements, Kepler's equation, state vectors and two-body propagation (of elliptic
//! elements, `propagate`; of a state on any conic in universal variables, `universal`).
//!
//! Elements are osculating, ecliptic and equinox J2000, heliocentric unless marked
//! barycentric. Inside, angles are radians and times TDB MJD.
//!
//! The two-body core knows no observer: it builds on `crate::foundation` (constants, the
//! ecliptic → ICRS rotation) and `crate::time` only; `sky` builds on it.

pub mod elements;
pub mod kepler;
pub mod propagate;
pub mod universal;

pub use elements::{Center, Elements};
pub use propagate::{Orbit, TwoBody};
pub use universal::Conic;
