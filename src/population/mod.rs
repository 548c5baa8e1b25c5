//! Populations: distributions, the population spec, the sampler (`seine draw`), and the
//! import and cloning of simulation particles.

pub mod clone;
pub mod distribution;
pub mod prepared;
pub mod sampler;
pub mod spec;

pub use distribution::Distribution;
pub use spec::{Population, Spec};
