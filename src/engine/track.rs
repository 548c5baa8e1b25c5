//! A coarse track of one object for the visit index: its position about the centre of its
//! elements from a second-order Taylor expansion about a few anchor epochs, with a bound on
//! the error, so that the index's node positions need no Kepler solve per time block.
//!
//! Two-body motion with mass parameter μ has acceleration a = −μ r/|r|³ and jerk
//! j = −μ (v − 3 r̂ (r̂·v)) / |r|³. Writing v = v_r r̂ + v_⊥, |v − 3 v_r r̂|² = 4 v_r² + v_⊥²
//! ≤ 4 |v|², so |j| ≤ 2 μ |v| / |r|³ ≤ J = 2 μ v_q / q³, with q the perihelion distance
//! (r ≥ q on the orbit) and v_q the perihelion speed (the largest, by vis-viva). The
//! remainder of p(t₀ + s) ≈ p₀ + v₀ s + ½ a₀ s² is then at most J |s|³ / 6 (Taylor's
//! remainder in integral form, which holds for vector functions).
//!
//! Anchors are spaced so that this bound stays below `TOLERANCE_REL` × q (a few tenths of an
//! arcsecond as seen from the observer); for a perihelion beyond 30 AU one anchor covers
//! more than a year. Where that spacing would be shorter than a time block (perihelia
//! inside a few AU) the track is exact: every position is a Kepler solve, with error 0.
//!
//! The index asks for positions at emission times, t − τ with τ the light time, and works τ
//! out by iterating from τ = 0 at the first node: a new anchor is therefore placed a light
//! time (its bound, `lead`) short of a full reach ahead, so that the whole iteration, and the
//! first node after it, stay on one anchor (one Kepler solve instead of one per iterate). A
//! caller that needs one exact position of the object anyway (the reach test) takes the first
//! anchor's (`Track::anchor_near`).

use nalgebra::Vector3;

use super::motion::{BLOCK_DAYS, OBSERVER_REACH_AU};
use crate::foundation::constants::C_AU_PER_DAY;
use crate::orbit::Orbit;

/// Error budget of the expansion, relative to the perihelion distance.
const TOLERANCE_REL: f64 = 1e-6;
/// Longest reach of one anchor, days (keeps |s|³ far from overflow and rounding).
const MAX_HALF_SPAN_DAYS: f64 = 1000.0;

#[derive(Debug, Clone, Copy)]
struct Anchor {
    tdb: f64,
    p: Vector3<f64>,
    v: Vector3<f64>,
    half_a: Vector3<f64>,
}

/// An object's coarse track; query it with times in (roughly) increasing order.
#[derive(Debug, Clone)]
pub struct Track<'a> {
    orbit: &'a Orbit,
    /// Reach of an anchor, days (0: exact positions).
    half_span: f64,
    /// J / 6, AU/day³.
    jerk_sixth: f64,
    /// How far short of a full reach ahead a new anchor is placed, days: a bound on the light
    /// time (aphelion plus the observer's reach, over c), at most a quarter of the reach.
    lead: f64,
    anchor: Option<Anchor>,
}

impl<'a> Track<'a> {
    pub fn new(orbit: &'a Orbit) -> Self {
        let el = &orbit.elements;
        let (q, mu) = (el.q_au(), el.center.gm());
        let v_q = (mu * (1.0 + el.e) / q).sqrt();
        let jerk_sixth = 2.0 * mu * v_q / (q * q * q) / 6.0;
        let half_span = (TOLERANCE_REL * q / jerk_sixth).cbrt().min(MAX_HALF_SPAN_DAYS);
        let usable = half_span.is_finite() && half_span >= BLOCK_DAYS;
        let half_span = if usable { half_span } else { 0.0 };
        let light_time = (el.aphelion_au() + OBSERVER_REACH_AU) / C_AU_PER_DAY;
        Track {
            orbit,
            half_span,
            jerk_sixth,
            lead: light_time.min(0.25 * half_span),
            anchor: None,
        }
    }

    /// The epoch of the anchor that serves `tdb` (made if need be) and the object's exact
    /// position then (about the centre of the elements, ICRS axes, AU): one Kepler solve that a
    /// caller wanting an exact position of the object somewhere in the span (the reach test)
    /// shares with the track. An exact track has no anchors: `tdb` and the position then.
    pub fn anchor_near(&mut self, tdb: f64) -> (f64, Vector3<f64>) {
        if self.half_span == 0.0 {
            return (tdb, self.orbit.position(tdb));
        }
        let a = self.anchor_serving(tdb);
        (a.tdb, a.p)
    }

    pub fn center(&self) -> crate::orbit::Center {
        self.orbit.center()
    }

    /// The position about the centre of the elements (ICRS axes, AU) at `tdb`, and a bound
    /// on its error, AU.
    #[inline]
    pub fn position(&mut self, tdb: f64) -> (Vector3<f64>, f64) {
        if self.half_span == 0.0 {
            return (self.orbit.position(tdb), 0.0);
        }
        let a = self.anchor_serving(tdb);
        let s = tdb - a.tdb;
        let p = a.p + (a.v + a.half_a * s) * s;
        (p, self.jerk_sixth * (s * s * s).abs())
    }

    /// The current anchor if it reaches `tdb`, else a new one a full reach ahead less the lead.
    #[inline]
    fn anchor_serving(&mut self, tdb: f64) -> Anchor {
        match self.anchor {
            Some(a) if (tdb - a.tdb).abs() <= self.half_span => a,
            _ => self.anchor_at(tdb + self.half_span - self.lead),
        }
    }

    fn anchor_at(&mut self, tdb: f64) -> Anchor {
        let (p, v) = self.orbit.state(tdb);
        let r = p.norm();
        let a = Anchor {
            tdb,
            p,
            v,
            half_a: p * (-0.5 * self.orbit.elements.center.gm() / (r * r * r)),
        };
        self.anchor = Some(a);
        a
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::orbit::{Center, Elements};

    /// The first node's light-time iteration (a query at t, then back by up to the light time
    /// and forth again) stays on one anchor, whose epoch and exact position `anchor_near` gives.
    #[test]
    fn light_time_iteration_keeps_the_first_anchor() {
        for (a_au, e) in [(40.0, 0.05), (300.0, 0.9), (1000.0, 0.97)] {
            let el = Elements {
                a_au,
                e,
                inc_rad: 0.4,
                node_rad: 1.0,
                argperi_rad: 2.0,
                mean_anomaly_rad: 0.3,
                epoch_mjd_tdb: 60000.0,
                center: Center::Barycentric,
            };
            let orbit = Orbit::new(el);
            let mut track = Track::new(&orbit);
            let t = 60100.0;
            let (epoch, p) = track.anchor_near(t);
            assert_eq!(
                p,
                orbit.position(epoch),
                "a {a_au}: the anchor's position is the exact one"
            );
            // Just under the bound on the light time (at the bound itself rounding decides).
            let tau = 0.999 * (el.aphelion_au() + OBSERVER_REACH_AU) / C_AU_PER_DAY;
            for dt in [0.0, -tau, -0.5 * tau, -tau, 0.0] {
                track.position(t + dt);
                assert_eq!(track.anchor.map(|a| a.tdb), Some(epoch), "a {a_au}: moved at {dt}");
            }
        }
    }

    /// The bound holds against exact positions over several years, for distant and near,
    /// circular and eccentric orbits, with times that run forward and jump back.
    #[test]
    fn error_bound_holds() {
        for (a_au, e) in [
            (40.0, 0.05),
            (45.0, 0.3),
            (300.0, 0.9),
            (8.0, 0.2),
            (2.5, 0.1),
            (1000.0, 0.97),
        ] {
            for k in 0..8 {
                let el = Elements {
                    a_au,
                    e,
                    inc_rad: 0.3 * k as f64,
                    node_rad: 0.8 * k as f64,
                    argperi_rad: 1.1 * k as f64,
                    mean_anomaly_rad: 0.77 * k as f64,
                    epoch_mjd_tdb: 60000.0,
                    center: if k % 2 == 0 {
                        Center::Heliocentric
                    } else {
                        Center::Barycentric
                    },
                };
                let orbit = Orbit::new(el);
                let mut track = Track::new(&orbit);
                let mut worst: f64 = 0.0;
                for i in 0..2000 {
                    let t = 60000.0 + 0.55 * i as f64 - if i % 97 == 0 { 3.0 } else { 0.0 };
                    let (p, err) = track.position(t);
                    let miss = (p - orbit.position(t)).norm();
                    assert!(
                        miss <= err + 1e-12 * p.norm(),
                        "a {a_au} e {e} k {k} t {t}: {miss} > {err}"
                    );
                    worst = worst.max(err / el.q_au());
                }
                assert!(
                    worst <= TOLERANCE_REL * 1.0001,
                    "a {a_au} e {e}: bound {worst} beyond the budget"
                );
            }
        }
    }
}
