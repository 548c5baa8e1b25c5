//! Frames, the Earth and the observer, apparent positions with light time, rates of motion,
//! photometry, the horizon and the Moon, and HEALPix cells (areas, cells in a region, MOCs).

pub mod apparent;
pub mod earth;
pub mod frames;
pub mod healpix;
pub mod horizon;
pub mod moon;
pub mod observer;
pub mod photometry;
