//! Populations: distributions, the population spec, the sampler (`seine draw`), and the
//! import and cloning of simulation particles (resonance-keeping
//! cloning), and the heliocentric ↔ barycentric conversion of elements.

pub mod clone;
pub mod distribution;
pub mod prepared;
pub mod recenter;
pub mod resonance;
pub mod sampler;
pub mod spec;

pub use distribution::Distribution;
pub use spec::{Population, Spec};
