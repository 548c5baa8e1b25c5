//! Kepler's equation E − e sin E = M for elliptic orbits, 0 ≤ e < 1.
//!
//! Starter: Danby (1987) E0 = M + 0.85 e sign(sin M); for e > 0.9 near perihelion the
//! exact root of the cubic M = (1 − e) E + e E³/6 (the series of sin E to third order),
//! which is close where Danby's starter is poor. Iteration: Danby's quartic (fourth-order
//! Newton) update for E ≥ 0.5 rad, Newton's (written without cancellation) below, kept inside
//! the bracket [M, M + e] (for M ≥ 0; f is increasing since f' = 1 − e cos E > 0), with
//! bisection as a safeguard. Stops after a quartic step below 1e-6 rad (its error is then of
//! order 1e-24 rad) or a Newton step below 1e-9 of E; the tests hold the residual below 1e-12 rad.
//!
//! Total: the residual is evaluated as (1 − e) E + e (E − sin E), with E − sin E from its
//! series for small E, so that near-parabolic orbits (e up to 1 − 1e-12) near perihelion keep
//! their precision (checked against mpmath in tests/numerics.rs); a non-finite M or an e
//! outside [0, 1) gives NaN instead of a panic (the loaders refuse such elements first).

use std::f64::consts::PI;

/// Reduce an angle to (−π, π].
pub fn wrap_pi(x: f64) -> f64 {
    if x > -PI && x <= PI {
        return x; // already reduced: keep every digit (a tiny negative angle would lose them)
    }
    let mut y = x.rem_euclid(std::f64::consts::TAU);
    if y > PI {
        y -= std::f64::consts::TAU;
    }
    y
}

/// Solve Kepler's equation; returns the eccentric anomaly E in (−π, π].
pub fn eccentric_anomaly(mean_anomaly: f64, e: f64) -> f64 {
    if !mean_anomaly.is_finite() || !(0.0..1.0).contains(&e) {
        return f64::NAN;
    }
    let m = wrap_pi(mean_anomaly);
    if e == 0.0 {
        return m;
    }
    let sign = if m < 0.0 { -1.0 } else { 1.0 };
    let m = m.abs(); // solve for M in [0, π] and restore the sign: E(−M) = −E(M)
    let (mut lo, mut hi) = (m, (m + e).min(PI));
    let mut x = starter(m, e).clamp(lo, hi);
    if !x.is_finite() {
        x = 0.5 * (lo + hi);
    }
    for _ in 0..100 {
        let f = (1.0 - e) * x + e * x_minus_sin(x) - m;
        if f == 0.0 {
            break;
        }
        if f > 0.0 {
            hi = x;
        } else {
            lo = x;
        }
        let small = x < 0.5;
        // 1 − e cos E as (1 − e) + e (1 − cos E), with 1 − cos E = 2 sin²(E/2) for small E.
        let (s, c) = x.sin_cos();
        let one_minus_cos = if small { 2.0 * (0.5 * x).sin().powi(2) } else { 1.0 - c };
        let f1 = (1.0 - e) + e * one_minus_cos;
        let mut next = if small {
            // Newton's step written without the difference x − f/f′: near perihelion the root
            // may be far below x (M of 1e-300 rad), and that difference would lose it.
            (m + e * (x * one_minus_cos - x_minus_sin(x))) / f1
        } else {
            // Danby's quartic correction.
            let (f2, f3) = (e * s, e * c);
            let d1 = -f / f1;
            let d2 = -f / (f1 + 0.5 * d1 * f2);
            let d3 = -f / (f1 + 0.5 * d2 * f2 + d2 * d2 * f3 / 6.0);
            x + d3
        };
        // The quartic step leaves an error of order step⁴, Newton's of order step²/E here:
        // a step below 1e-6 rad (quartic) or 1e-9 of E (Newton) is final. Tested before the
        // bracket, so that a last step a rounding outside it ends the search instead of
        // restarting it by bisection.
        let tol = if small { 1e-9 * x.abs() } else { 1e-6 };
        if (next - x).abs() < tol {
            x = next.clamp(lo, hi);
            break;
        }
        if !(next >= lo && next <= hi) {
            next = 0.5 * (lo + hi);
        }
        x = next;
        if hi - lo <= 1e-15 * hi {
            break;
        }
    }
    sign * x
}

/// x − sin x without the cancellation of the difference for small x (Taylor series, nine
/// terms: the first omitted term is below 1e-17 of the sum for |x| < 0.5).
fn x_minus_sin(x: f64) -> f64 {
    if x.abs() >= 0.5 {
        return x - x.sin();
    }
    // ±1/(2k+1)! for k = 1..9: x³/3! − x⁵/5! + x⁷/7! − …
    const C: [f64; 9] = [
        1.0 / 6.0,
        -1.0 / 120.0,
        1.0 / 5040.0,
        -1.0 / 362880.0,
        1.0 / 39916800.0,
        -1.0 / 6227020800.0,
        1.0 / 1307674368000.0,
        -1.0 / 355687428096000.0,
        1.0 / 121645100408832000.0,
    ];
    let x2 = x * x;
    C.iter().rev().fold(0.0, |sum, c| sum * x2 + c) * x2 * x
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
