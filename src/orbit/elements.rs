//! Keplerian elements and their conversion to and from state vectors.
//!
//! The formulas are the standard two-body relations (e.g. Murray & Dermott, *Solar System
//! Dynamics*, 1999, ch. 2). State vectors here are in the same frame as the elements
//! (ecliptic J2000), in AU and AU/day.

use super::kepler::{eccentric_anomaly, mean_from_eccentric};
use crate::foundation::constants::{GM_SUN, gm_total};
use crate::foundation::units::TAU;
use nalgebra::Vector3;
use serde::{Deserialize, Serialize};

/// What the elements are relative to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Center {
    /// Relative to the Sun, with GM = GM_sun (the default).
    #[default]
    Heliocentric,
    /// Relative to the solar-system barycentre, with GM = GM_sun (1 + Σ m_planet / m_sun):
    /// for objects far beyond the planets these elements do not wobble with Jupiter's period.
    Barycentric,
}

impl Center {
    pub fn gm(self) -> f64 {
        match self {
            Center::Heliocentric => GM_SUN,
            Center::Barycentric => gm_total(),
        }
    }
    pub fn parse(s: &str) -> Option<Self> {
        match s.trim().to_ascii_lowercase().as_str() {
            "heliocentric" | "helio" | "" => Some(Center::Heliocentric),
            "barycentric" | "bary" => Some(Center::Barycentric),
            _ => None,
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Center::Heliocentric => "heliocentric",
            Center::Barycentric => "barycentric",
        }
    }
}

/// Osculating elliptic elements; angles in radians (the tables' `inc_deg`… are converted on
/// reading), epoch a TDB MJD.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Elements {
    pub a_au: f64,
    pub e: f64,
    /// Inclination to the ecliptic J2000, radians, [0, π].
    pub inc_rad: f64,
    /// Longitude of the ascending node, radians, [0, 2π).
    pub node_rad: f64,
    /// Argument of perihelion, radians, [0, 2π).
    pub argperi_rad: f64,
    /// Mean anomaly at the epoch, radians, [0, 2π).
    pub mean_anomaly_rad: f64,
    pub epoch_mjd_tdb: f64,
    pub center: Center,
}

impl Elements {
    pub fn q_au(&self) -> f64 {
        self.a_au * (1.0 - self.e)
    }
    pub fn aphelion_au(&self) -> f64 {
        self.a_au * (1.0 + self.e)
    }
    /// Mean motion, rad/day.
    pub fn mean_motion(&self) -> f64 {
        (self.center.gm() / self.a_au.powi(3)).sqrt()
    }
    /// The six elements in their usual order: a (AU), e, i, Ω, ω, M (radians).
    pub fn to_array(&self) -> [f64; 6] {
        let el = self;
        [
            el.a_au,
            el.e,
            el.inc_rad,
            el.node_rad,
            el.argperi_rad,
            el.mean_anomaly_rad,
        ]
    }

    /// Longitude of perihelion ϖ = Ω + ω, in [0, 2π).
    pub fn varpi(&self) -> f64 {
        (self.node_rad + self.argperi_rad).rem_euclid(TAU)
    }

    /// Why these elements cannot describe a bound orbit, naming the offending element.
    pub fn problem(&self) -> Option<(&'static str, String)> {
        let finite = [
            ("a_au", self.a_au),
            ("e", self.e),
            ("inc_deg", self.inc_rad),
            ("node_deg", self.node_rad),
            ("argperi_deg", self.argperi_rad),
            ("mean_anomaly_deg", self.mean_anomaly_rad),
            ("epoch_mjd", self.epoch_mjd_tdb),
        ];
        for (name, v) in finite {
            if !v.is_finite() {
                return Some((name, format!("a finite number, found {v}")));
            }
        }
        if self.a_au <= 0.0 {
            return Some(("a_au", format!("a > 0 AU, found {}", self.a_au)));
        }
        if !(0.0..1.0).contains(&self.e) {
            return Some(("e", format!("0 ≤ e < 1 (bound orbits only), found {}", self.e)));
        }
        if !(0.0..=std::f64::consts::PI).contains(&self.inc_rad) {
            return Some((
                "inc_deg",
                format!("0 ≤ inc ≤ 180 deg, found {}", self.inc_rad.to_degrees()),
            ));
        }
        None
    }

    /// Heliocentric (or barycentric) state at the epoch, in the elements' frame.
    pub fn to_state(&self) -> (Vector3<f64>, Vector3<f64>) {
        let (p, q) = perifocal_axes(self.inc_rad, self.node_rad, self.argperi_rad);
        let big_e = eccentric_anomaly(self.mean_anomaly_rad, self.e);
        plane_state(self.a_au, self.e, self.mean_motion(), big_e, &p, &q)
    }

    /// Elements from a state vector (frame of the state), with GM of `center`.
    pub fn from_state(r: &Vector3<f64>, v: &Vector3<f64>, epoch_mjd_tdb: f64, center: Center) -> Self {
        let mu = center.gm();
        let rn = r.norm();
        let h = r.cross(v);
        let hn = h.norm();
        let inc = (h.z / hn).clamp(-1.0, 1.0).acos();
        let e_vec = v.cross(&h) / mu - r / rn;
        let e = e_vec.norm();
        // a = p / (1 − e²) with p = h²/μ, and 1 − e² as (1 − e)(1 + e): near e = 1 this keeps
        // the precision that the vis-viva form 1/a = 2/r − v²/μ loses to cancellation.
        let a = hn * hn / mu / ((1.0 - e) * (1.0 + e));
        let h_hat = h / hn;
        // Node line; an equatorial orbit takes Ω = 0 by convention.
        let n_vec = Vector3::new(-h.y, h.x, 0.0);
        let (node, n_hat) = if n_vec.norm() > 1e-14 * hn {
            (h.x.atan2(-h.y).rem_euclid(TAU), n_vec.normalize())
        } else {
            (0.0, Vector3::new(1.0, 0.0, 0.0))
        };
        let m_hat = h_hat.cross(&n_hat);
        // Periapsis direction; a circular orbit takes ω = 0 (periapsis at the node).
        let (argperi, p_hat) = if e > 1e-14 {
            let w = e_vec.dot(&m_hat).atan2(e_vec.dot(&n_hat)).rem_euclid(TAU);
            (w, e_vec / e)
        } else {
            (0.0, n_hat)
        };
        let q_hat = h_hat.cross(&p_hat);
        let nu = r.dot(&q_hat).atan2(r.dot(&p_hat));
        let big_e = (((1.0 - e) * (1.0 + e)).sqrt() * nu.sin()).atan2(e + nu.cos());
        let mean_anomaly = mean_from_eccentric(big_e, e).rem_euclid(TAU);
        Elements {
            a_au: a,
            e,
            inc_rad: inc,
            node_rad: node,
            argperi_rad: argperi,
            mean_anomaly_rad: mean_anomaly,
            epoch_mjd_tdb,
            center,
        }
    }
}

/// Unit vectors P (to perihelion) and Q (90° ahead in the orbit plane), in the elements' frame.
pub fn perifocal_axes(inc: f64, node: f64, argperi: f64) -> (Vector3<f64>, Vector3<f64>) {
    let (si, ci) = inc.sin_cos();
    let (sn, cn) = node.sin_cos();
    let (sw, cw) = argperi.sin_cos();
    let p = Vector3::new(cw * cn - sw * sn * ci, cw * sn + sw * cn * ci, sw * si);
    let q = Vector3::new(-sw * cn - cw * sn * ci, -sw * sn + cw * cn * ci, cw * si);
    (p, q)
}

/// Position and velocity in the orbit plane at eccentric anomaly E, mapped by P and Q.
#[inline]
pub fn plane_state(
    a: f64,
    e: f64,
    n: f64,
    big_e: f64,
    p: &Vector3<f64>,
    q: &Vector3<f64>,
) -> (Vector3<f64>, Vector3<f64>) {
    let (s, c) = big_e.sin_cos();
    let b = a * ((1.0 - e) * (1.0 + e)).sqrt(); // (1 − e)(1 + e): exact near e = 1
    let edot = n / (1.0 - e * c);
    let pos = p * (a * (c - e)) + q * (b * s);
    let vel = p * (-a * s * edot) + q * (b * c * edot);
    (pos, vel)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn detached_object_fact_of_the_trade() {
        // q = 76 AU, Q = 936 AU gives a = (q + Q)/2 = 506 AU and e = (Q − q)/(Q + q) ≈ 0.850.
        let (q, big_q) = (76.0, 936.0);
        let a = 0.5 * (q + big_q);
        let e = (big_q - q) / (big_q + q);
        let el = Elements {
            a_au: a,
            e,
            inc_rad: 0.2,
            node_rad: 1.0,
            argperi_rad: 5.0,
            mean_anomaly_rad: 0.0,
            epoch_mjd_tdb: 60000.0,
            center: Center::Heliocentric,
        };
        assert_eq!(el.a_au, 506.0);
        assert!((el.e - 0.850).abs() < 5e-4);
        assert!((el.q_au() - 76.0).abs() < 1e-9 && (el.aphelion_au() - 936.0).abs() < 1e-9);
        // At perihelion the distance is q.
        let (r, _) = el.to_state();
        assert!((r.norm() - 76.0).abs() < 1e-9);
    }
}
