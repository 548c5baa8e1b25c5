//! `seine`: forward-model what a sky survey of the distant solar system would detect.
//!
//! The library holds every stage (foundation: units, constants, the ecliptic rotation; time, orbits, sky, population, survey, engine, analysis,
//! I/O, report); the `seine` binary is a thin command-line layer over it.

pub mod analysis;
pub mod budget;
pub mod commands;
pub mod engine;
pub mod error;
pub mod fit;
pub mod foundation;
pub mod hideout;
pub mod interrupt;
pub mod io;
pub mod orbit;
pub mod population;
pub mod progress;
pub mod ranges;
pub mod report;
pub mod rng;
pub mod shard;
pub mod sky;
pub mod statistics;
pub mod survey;
pub mod time;

pub use error::{Error, Result};

/// The tool's version, as recorded in every output's provenance.
pub fn version() -> &'static str {
    env!("CARGO_PKG_VERSION")
}
