//! Two-body propagation of an object, with the orbit's axes precomputed in ICRS so that a
//! position costs one Kepler solve and a handful of multiplications.

use super::elements::{Center, Elements, perifocal_axes, plane_state};
use super::kepler::eccentric_anomaly;
use crate::foundation::ecliptic::ecliptic_to_icrs;
use nalgebra::Vector3;

/// What an apparent position needs of an orbit: its state at a TDB epoch (AU, AU/day, ICRS
/// axes, relative to its centre) and that centre. `Orbit` (elliptic elements) and `Conic`
/// (a state on any conic) are both.
pub trait TwoBody {
    fn state(&self, tdb_mjd: f64) -> (Vector3<f64>, Vector3<f64>);
    fn center(&self) -> Center;
}

/// An object's orbit ready for fast evaluation; positions are ICRS-oriented, AU and AU/day,
/// relative to the Sun (heliocentric) or the barycentre (barycentric elements).
#[derive(Debug, Clone, Copy)]
pub struct Orbit {
    pub elements: Elements,
    n: f64,
    p: Vector3<f64>,
    q: Vector3<f64>,
}

impl Orbit {
    pub fn new(elements: Elements) -> Self {
        let (p, q) = perifocal_axes(elements.inc_rad, elements.node_rad, elements.argperi_rad);
        Orbit {
            n: elements.mean_motion(),
            p: ecliptic_to_icrs(&p),
            q: ecliptic_to_icrs(&q),
            elements,
        }
    }

    pub fn center(&self) -> Center {
        self.elements.center
    }

    /// Position and velocity (ICRS axes) at a TDB MJD.
    #[inline]
    pub fn state(&self, tdb_mjd: f64) -> (Vector3<f64>, Vector3<f64>) {
        let el = &self.elements;
        let m = el.mean_anomaly_rad + self.n * (tdb_mjd - el.epoch_mjd_tdb);
        let big_e = eccentric_anomaly(m, el.e);
        plane_state(el.a_au, el.e, self.n, big_e, &self.p, &self.q)
    }

    #[inline]
    pub fn position(&self, tdb_mjd: f64) -> Vector3<f64> {
        self.state(tdb_mjd).0
    }
}

impl TwoBody for Orbit {
    #[inline]
    fn state(&self, tdb_mjd: f64) -> (Vector3<f64>, Vector3<f64>) {
        Orbit::state(self, tdb_mjd)
    }
    #[inline]
    fn center(&self) -> Center {
        Orbit::center(self)
    }
}
