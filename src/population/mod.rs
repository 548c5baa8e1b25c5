//! Populations: distributions, the population spec, the sampler (`seine draw`), and the
//! import and cloning of simulation particles (resonance-keeping
//! cloning), the heliocentric ↔ barycentric conversion of elements, and the ephemerides of
//! an objects table (`seine ephemeris`).

pub mod clone;
pub mod distribution;
pub mod ephemeris;
pub mod objects;
pub mod prepared;
pub mod recenter;
pub mod resonance;
pub mod sampler;
pub mod spec;

pub use distribution::Distribution;
pub use spec::{Population, Spec};
