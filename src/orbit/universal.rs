//! Two-body propagation of a state vector in universal variables: one formula for ellipses,
//! parabolas and hyperbolas, so that an orbit fit may try unbound states on its way to a
//! bound minimum (`fit`).
//!
//! Method: the universal Kepler equation in the universal anomaly χ with Stumpff's functions
//! c₂, c₃ and the Lagrange f and g coefficients (Goodyear 1965, AJ 70, 189; Danby,
//! *Fundamentals of Celestial Mechanics*, 2nd ed. 1988, §6.9):
//!   √μ Δt = σ₀ χ² c₂(z) + (1 − α r₀) χ³ c₃(z) + r₀ χ,   z = α χ²,
//! with α = 2/r₀ − v₀²/μ (1/a; zero for a parabola, negative for a hyperbola) and
//! σ₀ = r₀·v₀/√μ. Its derivative in χ is the radius r > 0, so the equation has one root, found by
//! Newton's method kept inside a bracket (bisection as a safeguard). Checked against rebound's
//! IAS15 integrator on elliptic, near-parabolic and hyperbolic states (`tests/numerics.rs`).

use nalgebra::Vector3;

use super::elements::Center;

/// A two-body orbit given by its state at an epoch, bound or not.
#[derive(Debug, Clone, Copy)]
pub struct Conic {
    pub pos: Vector3<f64>,
    pub vel: Vector3<f64>,
    pub epoch_mjd_tdb: f64,
    pub center: Center,
    sqrt_mu: f64,
    r0: f64,
    /// 1/a = 2/r₀ − v₀²/μ, AU⁻¹.
    alpha: f64,
    /// r₀·v₀/√μ.
    sigma0: f64,
}

impl Conic {
    /// The orbit through position `pos` (AU) and velocity `vel` (AU/day) relative to `center`
    /// at a TDB epoch; any frame (the states it gives are in the same one; ICRS axes where it is
    /// used as a `TwoBody`).
    pub fn new(pos: Vector3<f64>, vel: Vector3<f64>, epoch_mjd_tdb: f64, center: Center) -> Self {
        let mu = center.gm();
        let r0 = pos.norm();
        Conic {
            pos,
            vel,
            epoch_mjd_tdb,
            center,
            sqrt_mu: mu.sqrt(),
            r0,
            alpha: 2.0 / r0 - vel.norm_squared() / mu,
            sigma0: pos.dot(&vel) / mu.sqrt(),
        }
    }

    /// Whether the orbit is an ellipse (v² < 2μ/r).
    pub fn is_bound(&self) -> bool {
        self.alpha > 0.0
    }

    /// Position and velocity at a TDB MJD (NaN where no finite state exists, e.g. a
    /// hyperbola followed so far that its distance overflows).
    pub fn state(&self, tdb_mjd: f64) -> (Vector3<f64>, Vector3<f64>) {
        let dt = tdb_mjd - self.epoch_mjd_tdb;
        if dt == 0.0 {
            return (self.pos, self.vel);
        }
        let chi = self.universal_anomaly(dt);
        let z = self.alpha * chi * chi;
        let (c2, c3) = stumpff(z);
        let chi2 = chi * chi;
        let r = self.radius(chi, z, c2, c3);
        let f = 1.0 - chi2 * c2 / self.r0;
        let g = dt - chi2 * chi * c3 / self.sqrt_mu;
        let fdot = self.sqrt_mu * chi * (z * c3 - 1.0) / (r * self.r0);
        let gdot = 1.0 - chi2 * c2 / r;
        (self.pos * f + self.vel * g, self.pos * fdot + self.vel * gdot)
    }

    /// The radius at universal anomaly χ: also dF/dχ of the universal Kepler equation.
    #[inline]
    fn radius(&self, chi: f64, z: f64, c2: f64, c3: f64) -> f64 {
        chi * chi * c2 + self.sigma0 * chi * (1.0 - z * c3) + self.r0 * (1.0 - z * c2)
    }

    /// F(χ) = σ₀ χ² c₂ + (1 − α r₀) χ³ c₃ + r₀ χ − √μ Δt.
    #[inline]
    fn kepler_residual(&self, chi: f64, dt: f64) -> (f64, f64) {
        let z = self.alpha * chi * chi;
        let (c2, c3) = stumpff(z);
        let chi2 = chi * chi;
        let f = self.sigma0 * chi2 * c2 + (1.0 - self.alpha * self.r0) * chi2 * chi * c3 + self.r0 * chi
            - self.sqrt_mu * dt;
        (f, self.radius(chi, z, c2, c3))
    }

    /// The root χ of the universal Kepler equation for a time step `dt` (days).
    fn universal_anomaly(&self, dt: f64) -> f64 {
        if !(dt.is_finite() && self.alpha.is_finite() && self.r0 > 0.0) {
            return f64::NAN;
        }
        // F is increasing (F' = r > 0) and F(0) = −√μ Δt: the root has the sign of Δt. The
        // first guess takes the radius as constant, which distant orbits nearly keep.
        let mut chi = self.sqrt_mu * dt / self.r0;
        let (mut lo, mut hi) = if dt > 0.0 {
            (0.0, f64::INFINITY)
        } else {
            (f64::NEG_INFINITY, 0.0)
        };
        for _ in 0..100 {
            let (f, r) = self.kepler_residual(chi, dt);
            if !f.is_finite() {
                // Overflow (a far hyperbolic guess): χ lies beyond the root; halve the way.
                if dt > 0.0 {
                    hi = chi;
                } else {
                    lo = chi;
                }
                chi = 0.5 * (lo + hi);
                continue;
            }
            if f == 0.0 {
                return chi;
            }
            if f < 0.0 {
                lo = chi;
            } else {
                hi = chi;
            }
            let mut next = chi - f / r;
            if !(next > lo && next < hi) {
                // Outside the bracket: bisect it, or widen it while one side is still open
                // (χ is then that side's finite end, of the sign of Δt).
                next = if lo.is_finite() && hi.is_finite() {
                    0.5 * (lo + hi)
                } else {
                    2.0 * chi
                };
            }
            if (next - chi).abs() <= 1e-15 * chi.abs() {
                return next;
            }
            chi = next;
        }
        chi
    }
}

impl super::propagate::TwoBody for Conic {
    #[inline]
    fn state(&self, tdb_mjd: f64) -> (Vector3<f64>, Vector3<f64>) {
        Conic::state(self, tdb_mjd)
    }
    #[inline]
    fn center(&self) -> Center {
        self.center
    }
}

/// Stumpff's functions c₂(z) = (1 − cos √z)/z and c₃(z) = (√z − sin √z)/z^{3/2}, continued to
/// z ≤ 0 by their series (cosh and sinh for z < 0); the series near zero avoids the
/// cancellation of the closed forms.
#[inline]
pub fn stumpff(z: f64) -> (f64, f64) {
    if z.abs() < 1.0 {
        // c₂ = Σ (−z)^k/(2k + 2)!, c₃ = Σ (−z)^k/(2k + 3)!; ten terms leave < 10⁻²⁰.
        let mut c2 = 0.0;
        let mut c3 = 0.0;
        let mut t2 = 0.5; // (−z)^k/(2k + 2)!
        let mut t3 = 1.0 / 6.0; // (−z)^k/(2k + 3)!
        for k in 0..10 {
            c2 += t2;
            c3 += t3;
            let k = k as f64;
            t2 *= -z / ((2.0 * k + 3.0) * (2.0 * k + 4.0));
            t3 *= -z / ((2.0 * k + 4.0) * (2.0 * k + 5.0));
        }
        (c2, c3)
    } else if z > 0.0 {
        let s = z.sqrt();
        let half = (0.5 * s).sin();
        (2.0 * half * half / z, (s - s.sin()) / (z * s))
    } else {
        let s = (-z).sqrt();
        ((s.cosh() - 1.0) / -z, (s.sinh() - s) / (-z * s))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::orbit::{Elements, Orbit};

    #[test]
    fn an_ellipse_matches_the_kepler_propagator() {
        // The same bound orbit through Kepler's equation (orbit::kepler) and universal
        // variables: two independent routes to one position.
        let el = Elements {
            a_au: 250.0,
            e: 0.85,
            inc_rad: 0.3,
            node_rad: 1.0,
            argperi_rad: 2.0,
            mean_anomaly_rad: 0.05,
            epoch_mjd_tdb: 60000.0,
            center: Center::Heliocentric,
        };
        let orbit = Orbit::new(el);
        let (r0, v0) = orbit.state(60000.0);
        let conic = Conic::new(r0, v0, 60000.0, Center::Heliocentric);
        for dt in [-3000.0, -365.25, -1.0, 0.5, 30.0, 700.0, 20000.0] {
            let (r, v) = conic.state(60000.0 + dt);
            let (rk, vk) = orbit.state(60000.0 + dt);
            assert!((r - rk).norm() < 1e-10 * rk.norm(), "dt {dt}: {r:?} vs {rk:?}");
            assert!((v - vk).norm() < 1e-10 * vk.norm(), "dt {dt}");
        }
    }

    #[test]
    fn energy_and_angular_momentum_are_kept_on_a_hyperbola() {
        let c = Conic::new(
            Vector3::new(30.0, 5.0, -2.0),
            Vector3::new(0.001, 0.006, 0.001),
            0.0,
            Center::Heliocentric,
        );
        assert!(!c.is_bound());
        let mu = Center::Heliocentric.gm();
        let energy = |r: &Vector3<f64>, v: &Vector3<f64>| 0.5 * v.norm_squared() - mu / r.norm();
        let (e0, h0) = (energy(&c.pos, &c.vel), c.pos.cross(&c.vel));
        for dt in [-5000.0, -10.0, 10.0, 5000.0, 1e5] {
            let (r, v) = c.state(dt);
            assert!(((energy(&r, &v) - e0) / e0).abs() < 1e-11, "dt {dt}");
            assert!((r.cross(&v) - h0).norm() < 1e-11 * h0.norm(), "dt {dt}");
        }
    }

    #[test]
    fn stumpff_series_agrees_with_the_closed_forms() {
        // Inside |z| < 1 the series is used; the closed forms (cos, sin; cosh, sinh) hold
        // there too and lose little to cancellation at |z| ≥ 0.3.
        for z in [0.3f64, -0.3, 0.999_999, -0.999_999] {
            let (c2, c3) = stumpff(z);
            let s = z.abs().sqrt();
            let (e2, e3) = if z > 0.0 {
                ((1.0 - s.cos()) / z, (s - s.sin()) / (z * s))
            } else {
                ((s.cosh() - 1.0) / -z, (s.sinh() - s) / (-z * s))
            };
            assert!(
                (c2 - e2).abs() < 1e-14 && (c3 - e3).abs() < 1e-14,
                "z {z}: {c2} {e2}, {c3} {e3}"
            );
        }
        assert_eq!(stumpff(0.0), (0.5, 1.0 / 6.0));
    }
}
