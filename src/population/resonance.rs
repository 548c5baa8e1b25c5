//! Resonance-keeping clones: a particle in a p:q mean-motion resonance with Neptune (object
//! period : Neptune period = p : q) keeps its resonant angle φ = p λ − q λ_N − (p − q) ϖ in every
//! clone, with λ_N Neptune's mean longitude at the epoch from VSOP87 (the series' elliptic
//! elements, through the `vsop87` crate). Derivation in methods.md, "Resonance-keeping clones".

use std::f64::consts::TAU;

use serde::Deserialize;

use crate::orbit::Elements;
use crate::time::JD_MINUS_MJD;

/// A p:q mean-motion resonance with Neptune.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Resonance {
    pub p: u32,
    pub q: u32,
}

impl Resonance {
    /// Why these integers are not a resonance the cloning can keep.
    pub fn problem(&self) -> Option<String> {
        let gcd = |mut a: u32, mut b: u32| {
            while b != 0 {
                (a, b) = (b, a % b);
            }
            a
        };
        if self.p == 0 || self.q == 0 || self.p == self.q || gcd(self.p, self.q) != 1 {
            return Some(format!(
                "p = {}, q = {}: expected two different positive integers without a common factor (e.g. p = 3, q = 2)",
                self.p, self.q
            ));
        }
        None
    }

    /// φ = p λ − q λ_N − (p − q) ϖ in [0, 2π).
    pub fn angle(&self, el: &Elements, lambda_neptune: f64) -> f64 {
        let varpi = el.node_rad + el.argperi_rad;
        let lambda = varpi + el.mean_anomaly_rad;
        let (p, q) = (self.p as f64, self.q as f64);
        (p * lambda - q * lambda_neptune - (p - q) * varpi).rem_euclid(TAU)
    }

    /// A clone with resonant angle `phi`: Ω and ϖ rotated by −ψ (ω kept), and one of the p mean
    /// longitudes that give φ, chosen by `u_branch` ∈ [0, 1).
    pub fn clone_at(&self, el: &Elements, phi: f64, lambda_neptune: f64, psi: f64, u_branch: f64) -> Elements {
        let (p, q) = (self.p as f64, self.q as f64);
        let mut out = *el;
        out.node_rad = (el.node_rad - psi).rem_euclid(TAU);
        let varpi = out.node_rad + out.argperi_rad;
        let j = (u_branch * p).floor().min(p - 1.0);
        let lambda = (phi + q * lambda_neptune + (p - q) * varpi + TAU * j) / p;
        out.mean_anomaly_rad = (lambda - varpi).rem_euclid(TAU);
        out
    }
}

/// Neptune's mean longitude (rad, ecliptic and equinox J2000) at a TDB MJD, from the VSOP87
/// elliptic elements.
pub fn neptune_mean_longitude(tdb_mjd: f64) -> f64 {
    vsop87::neptune(tdb_mjd + JD_MINUS_MJD).l.rem_euclid(TAU)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::orbit::Center;

    #[test]
    fn clones_keep_the_resonant_angle() {
        let r = Resonance { p: 3, q: 2 };
        let el = Elements {
            a_au: 39.4,
            e: 0.25,
            inc_rad: 0.3,
            node_rad: 1.0,
            argperi_rad: 2.0,
            mean_anomaly_rad: 0.5,
            epoch_mjd_tdb: 60676.0,
            center: Center::Heliocentric,
        };
        let ln = neptune_mean_longitude(el.epoch_mjd_tdb);
        let phi = r.angle(&el, ln);
        for k in 0..20 {
            let c = r.clone_at(&el, phi, ln, 0.37 * k as f64, (k as f64 * 0.173) % 1.0);
            let d = (r.angle(&c, ln) - phi).rem_euclid(TAU);
            assert!(d.min(TAU - d) < 1e-9, "{k}: {d}");
        }
        assert!(Resonance { p: 4, q: 2 }.problem().is_some());
    }
}
