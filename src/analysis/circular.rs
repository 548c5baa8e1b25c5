//! Circular and spherical statistics of orbital angles: the Rayleigh test, Kuiper's test of
//! uniformity, and the mean orbital pole and mean perihelion direction (3-D unit vectors).
//!
//! Sources: Rayleigh test and Zar's approximation to its p-value, Zar, *Biostatistical
//! Analysis* (4th ed. 1999, ch. 27; from memory); the small-n series and Kuiper's p-value as
//! implemented by astropy.stats (`rayleightest`, `kuiper`; Stephens 1965, Biometrika 52, 309;
//! Paltani 2004, A&A 420, 789), checked against `tests/reference/fixtures/rayleigh.csv`.

use std::f64::consts::TAU;

use nalgebra::Vector3;
use statrs::function::gamma::ln_gamma;

/// R = |Σ exp(iθ)| of angles in radians.
pub fn resultant_length(angles: &[f64]) -> f64 {
    let (s, c) = angles.iter().fold((0.0, 0.0), |(s, c), a| (s + a.sin(), c + a.cos()));
    s.hypot(c)
}

/// Mean direction (radians in [0, 2π)) and mean resultant length R/n.
pub fn mean_direction(angles: &[f64]) -> (f64, f64) {
    let (s, c) = angles.iter().fold((0.0, 0.0), |(s, c), a| (s + a.sin(), c + a.cos()));
    (s.atan2(c).rem_euclid(TAU), s.hypot(c) / angles.len() as f64)
}

/// Rayleigh p-value, Zar's approximation p = exp(√(1 + 4n + 4(n² − R²)) − (1 + 2n)).
/// Unlike the small-n series it never leaves [0, 1]; this is the one the commands report.
pub fn rayleigh_p(n: usize, r: f64) -> f64 {
    let n = n as f64;
    ((1.0 + 4.0 * n + 4.0 * (n * n - r * r)).sqrt() - (1.0 + 2.0 * n))
        .exp()
        .min(1.0)
}

/// Rayleigh p-value as astropy.stats.rayleightest computes it: z = R²/n,
/// p = e^(−z) [1 + (2z − z²)/(4n) − (24z − 132z² + 76z³ − 9z⁴)/(288n²)] for n < 50, else e^(−z).
/// Kept to check against astropy; it can go slightly negative for tight small samples.
pub fn rayleigh_p_series(n: usize, r: f64) -> f64 {
    let nf = n as f64;
    let z = r * r / nf;
    if n >= 50 {
        return (-z).exp();
    }
    let t1 = (2.0 * z - z * z) / (4.0 * nf);
    let t2 = (24.0 * z - 132.0 * z * z + 76.0 * z.powi(3) - 9.0 * z.powi(4)) / (288.0 * nf * nf);
    (-z).exp() * (1.0 + t1 - t2)
}

/// Kuiper's V = D⁺ + D⁻ of angles (radians) against the uniform distribution on the circle.
pub fn kuiper_v(angles: &[f64]) -> f64 {
    let mut u: Vec<f64> = angles.iter().map(|a| a.rem_euclid(TAU) / TAU).collect();
    u.sort_by(f64::total_cmp);
    let n = u.len() as f64;
    let (mut dp, mut dm) = (f64::NEG_INFINITY, f64::NEG_INFINITY);
    for (i, x) in u.iter().enumerate() {
        dm = dm.max(x - i as f64 / n);
        dp = dp.max((i as f64 + 1.0) / n - x);
    }
    dp + dm
}

/// P(V ≥ v) for n points under uniformity: the four regimes of astropy's
/// `kuiper_false_positive_probability` (exact for small V, Stephens' 1965 sum for large V,
/// the asymptotic series with its first correction term otherwise).
pub fn kuiper_p(v: f64, n: usize) -> f64 {
    let nf = n as f64;
    if v <= 0.0 {
        return 1.0;
    }
    if v >= 2.0 {
        return 0.0;
    }
    let ln_fact = |m: f64| ln_gamma(m + 1.0);
    if v < 2.0 / nf {
        return 1.0 - (ln_fact(nf) + (nf - 1.0) * (v - 1.0 / nf).ln()).exp();
    }
    if v < 3.0 / nf {
        let k = -(nf * v - 1.0) / 2.0;
        let r = (k * k - (nf * v - 2.0).powi(2) / 2.0).sqrt();
        let (a, b) = (-k + r, -k - r);
        let f = ln_fact(nf - 1.0).exp();
        return 1.0 - f * (b.powf(nf - 1.0) * (1.0 - a) - a.powf(nf - 1.0) * (1.0 - b)) / nf.powf(nf - 2.0) / (b - a);
    }
    let upper_tail = if n % 2 == 0 {
        v > 0.5
    } else {
        v > (nf - 1.0) / (2.0 * nf)
    };
    if upper_tail {
        return kuiper_upper_sum(v, nf);
    }
    let z = v * nf.sqrt();
    let (mut s1, mut s2) = (0.0, 0.0);
    let mut m = 1.0;
    while m < 18.82 / z {
        let e = (-2.0 * m * m * z * z).exp();
        s1 += 2.0 * (4.0 * m * m * z * z - 1.0) * e;
        s2 += m * m * (4.0 * m * m * z * z - 3.0) * e;
        m += 1.0;
    }
    s1 - 8.0 * v / 3.0 * s2
}

/// Stephens' (1965) finite sum for the upper tail, terms in logs where they are large.
fn kuiper_upper_sum(v: f64, nf: f64) -> f64 {
    let top = (nf * (1.0 - v)).floor() as i64;
    let mut sum = 0.0;
    for t in 0..=top {
        let t = t as f64;
        let y = v + t / nf;
        let tt = y.powf(t - 3.0)
            * (y.powi(3) * nf - y * y * t * (3.0 - 2.0 / nf) + y * t * (t - 1.0) * (3.0 - 2.0 / nf) / nf
                - t * (t - 1.0) * (t - 2.0) / (nf * nf));
        let base = 1.0 - v - t / nf;
        if base <= 0.0 {
            continue;
        }
        let ln_comb = ln_gamma(nf + 1.0) - ln_gamma(t + 1.0) - ln_gamma(nf - t + 1.0);
        sum += tt * (ln_comb + (nf - t - 1.0) * base.ln()).exp();
    }
    sum
}

/// Unit orbit normal (the orbital pole) from inclination and node, ecliptic frame.
pub fn pole(inc: f64, node: f64) -> Vector3<f64> {
    Vector3::new(inc.sin() * node.sin(), -inc.sin() * node.cos(), inc.cos())
}

/// Unit vector towards perihelion from (i, Ω, ω), ecliptic frame.
pub fn perihelion(inc: f64, node: f64, argperi: f64) -> Vector3<f64> {
    let (so, co) = argperi.sin_cos();
    let (sn, cn) = node.sin_cos();
    let (si, ci) = inc.sin_cos();
    Vector3::new(co * cn - so * sn * ci, co * sn + so * cn * ci, so * si)
}

/// The mean of unit vectors: its length (1 = all aligned, ~1/√n for isotropic) and its
/// direction as ecliptic longitude and latitude (radians).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MeanVector {
    pub length: f64,
    pub lon: f64,
    pub lat: f64,
}

pub fn mean_vector(v: &[Vector3<f64>]) -> MeanVector {
    let s: Vector3<f64> = v.iter().sum::<Vector3<f64>>() / v.len().max(1) as f64;
    let len = s.norm();
    MeanVector {
        length: len,
        lon: s.y.atan2(s.x).rem_euclid(TAU),
        lat: if len > 0.0 {
            (s.z / len).clamp(-1.0, 1.0).asin()
        } else {
            0.0
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pole_and_perihelion_are_orthogonal_unit_vectors() {
        for (i, n, w) in [(0.3, 1.0, 2.0), (2.5, 5.0, 0.1), (1.57, 0.0, 3.0)] {
            let (h, p) = (pole(i, n), perihelion(i, n, w));
            assert!((h.norm() - 1.0).abs() < 1e-14 && (p.norm() - 1.0).abs() < 1e-14);
            assert!(h.dot(&p).abs() < 1e-14);
        }
        // Low inclination: the perihelion longitude is ϖ = Ω + ω.
        let p = perihelion(1e-9, 1.0, 2.0);
        assert!((p.y.atan2(p.x) - 3.0).abs() < 1e-8);
    }
}
