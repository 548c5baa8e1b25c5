//! Kepler's equation E − e sin E = M for elliptic orbits, 0 ≤ e < 1.
//!
//! Starter: Danby (1987) E0 = M + 0.85 e sign(sin M); for e > 0.9 near perihelion the
//! exact root of the cubic M = (1 − e) E + e E³/6 (the series of sin E to third order),
//! which is close where Danby's starter is poor. Iteration: Danby's quartic (fourth-order
//! Newton) update, kept inside the bracket [M, M + e] (for M ≥ 0; f is increasing since
//! f' = 1 − e cos E > 0), with bisection as a safeguard. Stops after a quartic step below 1e-6 rad (its
//! error is then of order 1e-24 rad); the tests hold the residual below 1e-12 rad.

use std::f64::consts::PI;

/// Reduce an angle to (−π, π].
pub fn wrap_pi(x: f64) -> f64 {
    let mut y = x.rem_euclid(std::f64::consts::TAU);
    if y > PI {
        y -= std::f64::consts::TAU;
    }
    y
}

/// Solve Kepler's equation; returns the eccentric anomaly E in (−π, π].
pub fn eccentric_anomaly(mean_anomaly: f64, e: f64) -> f64 {
    let m = wrap_pi(mean_anomaly);
    if e == 0.0 {
        return m;
    }
    let sign = if m < 0.0 { -1.0 } else { 1.0 };
    let m = m.abs(); // solve for M in [0, π] and restore the sign: E(−M) = −E(M)
    let (mut lo, mut hi) = (m, (m + e).min(PI));
    let mut x = starter(m, e).clamp(lo, hi);
    for _ in 0..60 {
        let (s, c) = x.sin_cos();
        let f = x - e * s - m;
        if f == 0.0 {
            break;
        }
        if f > 0.0 {
            hi = x;
        } else {
            lo = x;
        }
        let f1 = 1.0 - e * c;
        let f2 = e * s;
        let f3 = e * c;
        // Danby's quartic correction.
        let d1 = -f / f1;
        let d2 = -f / (f1 + 0.5 * d1 * f2);
        let d3 = -f / (f1 + 0.5 * d2 * f2 + d2 * d2 * f3 / 6.0);
        let mut next = x + d3;
        if !(next >= lo && next <= hi) {
            next = 0.5 * (lo + hi);
        }
        let step = (next - x).abs();
        x = next;
        // The quartic update leaves an error of order step⁴: a step below 1e-6 rad is final.
        if step < 1e-6 || hi - lo < 1e-15 {
            break;
        }
    }
    sign * x
}

fn starter(m: f64, e: f64) -> f64 {
    if e > 0.9 && m < 0.5 {
        // Real root of (e/6) E³ + (1 − e) E − M = 0 (Cardano): E³ + p E − q = 0.
        let p = 6.0 * (1.0 - e) / e;
        let q = 6.0 * m / e;
        let disc = (0.25 * q * q + p * p * p / 27.0).sqrt();
        (0.5 * q + disc).cbrt() + (0.5 * q - disc).cbrt()
    } else {
        m + 0.85 * e
    }
}

/// Mean anomaly from the eccentric anomaly.
pub fn mean_from_eccentric(ecc_anomaly: f64, e: f64) -> f64 {
    ecc_anomaly - e * ecc_anomaly.sin()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn residual_below_1e12_over_e_and_m() {
        for ie in 0..=400 {
            let e = (ie as f64 / 400.0) * 0.9999;
            for im in -500..=500 {
                let m = im as f64 / 500.0 * PI * 1.3;
                let big_e = eccentric_anomaly(m, e);
                let r = wrap_pi(big_e - e * big_e.sin() - m);
                assert!(r.abs() < 1e-12, "e={e} M={m} residual {r}");
            }
        }
    }

    #[test]
    fn handbook_worked_example() {
        // Meeus, Astronomical Algorithms (2nd ed.), example 30.a: e = 0.100, M = 5°
        // gives E = 5.554589° (from memory).
        let big_e = eccentric_anomaly(5f64.to_radians(), 0.1).to_degrees();
        assert!((big_e - 5.554589).abs() < 1e-6, "{big_e}");
    }
}
