//! Frames, the Earth and the observer, apparent positions with light time, rates of motion,
//! and photometry.

pub mod apparent;
pub mod earth;
pub mod frames;
pub mod horizon;
pub mod moon;
pub mod observer;
pub mod photometry;
