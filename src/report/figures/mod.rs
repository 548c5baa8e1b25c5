//! One file per figure family. Every figure function takes tidy tables (`report::tables`)
//! and returns a `Figure` (SVG text, title, caption); none reads files.

pub mod axes;
pub mod bias;
pub mod cadence;
pub mod catalogue_map;
pub mod cluster;
pub mod detectability;
pub mod distributions;
pub mod hideout;
pub mod models;
pub mod rose;
pub mod sky;
pub mod survey;
pub mod svg;
