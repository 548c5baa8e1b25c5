//! The fit's error law of an orbit's a, e and i: the Gaussian N(x̂, Σ) about the fitted
//! (a_au, e, inc_rad) with the fit's covariance, truncated to physical orbits. The bias maps of
//! a catalogue on fitted elements draw each trial's a, e, i from it (methods.md, "What the
//! maps' xⱼ are"): under a prior flat across the fit's errors this is the law of the true
//! elements given the fitted ones, restricted to orbits that exist.

use nalgebra::{Matrix3, SymmetricEigen, Vector3};
use rand::RngExt;
use rand_distr::StandardNormal;
use rand_pcg::Pcg64;

use crate::ranges::range;

/// Physical draws tried before the law gives up and returns its mean (the fitted values, which
/// are physical): past 1000 rejections the truncated law holds under 0.1% of the Gaussian's
/// mass, where a draw would say more about the linear covariance than about the orbit.
const MAX_DRAWS: usize = 1000;

/// N((a_au, e, inc_rad), Σ) truncated to a, e, i, q inside their plausible ranges
/// (`ranges.rs`: the orbits every loader and the engine accept).
#[derive(Debug, Clone, PartialEq)]
pub struct ElementErrorLaw {
    mean: Vector3<f64>,
    /// A square root of Σ (L Lᵀ = Σ), from Σ's eigenvectors: exists for any Σ ≥ 0, also one
    /// that is singular or, after the table's rounding, has a slightly negative eigenvalue.
    root: Matrix3<f64>,
}

impl ElementErrorLaw {
    /// The law about `mean` = (a_au, e, inc_rad) with covariance `cov` (same units); None when
    /// a value is not finite.
    pub fn new(mean: [f64; 3], cov: Matrix3<f64>) -> Option<Self> {
        if !(mean.iter().all(|v| v.is_finite()) && cov.iter().all(|v| v.is_finite())) {
            return None;
        }
        let eig = SymmetricEigen::new(cov.symmetric_part());
        let sqrt = eig.eigenvalues.map(|l| l.max(0.0).sqrt());
        let root = eig.eigenvectors * Matrix3::from_diagonal(&sqrt);
        Some(ElementErrorLaw {
            mean: Vector3::from(mean),
            root,
        })
    }

    /// The law from 1σ errors and correlations as the objects table writes them
    /// (`sigma_a_au, sigma_e, sigma_inc_deg`, `fit_corr_a_e, fit_corr_a_inc, fit_corr_e_inc`),
    /// the inclination's in radians here.
    pub fn from_sigmas(mean: [f64; 3], sigma: [f64; 3], (r_ae, r_ai, r_ei): (f64, f64, f64)) -> Option<Self> {
        let r = Matrix3::new(1.0, r_ae, r_ai, r_ae, 1.0, r_ei, r_ai, r_ei, 1.0);
        let s = Matrix3::from_diagonal(&Vector3::from(sigma));
        Self::new(mean, s * r * s)
    }

    /// The law of a fitted orbit's a, e, i: its elements and the a, e, i block of its
    /// covariance; None for a fit without them.
    pub fn of_fit(fit: &super::OrbitFit) -> Option<Self> {
        let (el, cov) = (fit.elements?, fit.covariance?);
        Self::new([el.a_au, el.e, el.inc_rad], cov.fixed_view::<3, 3>(0, 0).into_owned())
    }

    /// Σ (a_au, e, inc_rad) of the untruncated law.
    pub fn covariance(&self) -> Matrix3<f64> {
        self.root * self.root.transpose()
    }

    /// The mean (a_au, e, inc_rad): the fitted values.
    pub fn mean(&self) -> [f64; 3] {
        self.mean.into()
    }

    /// One draw of (a_au, e, inc_rad) from the truncated law: three standard normals per
    /// attempt, attempts until the orbit is physical (`is_physical`), which is exact rejection
    /// sampling of the truncated Gaussian; the mean after `MAX_DRAWS` failures.
    pub fn draw(&self, rng: &mut Pcg64) -> [f64; 3] {
        for _ in 0..MAX_DRAWS {
            let z: Vector3<f64> = Vector3::from_fn(|_, _| rng.sample(StandardNormal));
            let x: [f64; 3] = (self.mean + self.root * z).into();
            if is_physical(x) {
                return x;
            }
        }
        self.mean()
    }
}

/// Whether (a_au, e, inc_rad) is a bound orbit the loaders and the engine accept: a, e, i and
/// the perihelion q = a(1 − e) inside their plausible ranges (`ranges.rs`).
pub fn is_physical([a_au, e, inc_rad]: [f64; 3]) -> bool {
    let inside = |key: &str, v: f64| range(key).is_some_and(|r| r.contains(v));
    inside("a_au", a_au)
        && inside("e", e)
        && inside("inc_deg", inc_rad.to_degrees())
        && inside("q_au", a_au * (1.0 - e))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_pcg::Pcg64;

    /// A correlated law far from every bound (no truncation): the draws' mean, standard
    /// deviations and correlations are those asked for, within 5 standard errors of their
    /// estimates over 40 000 draws (standard error of a correlation (1 − ρ²)/√n; common
    /// practice, no source).
    #[test]
    fn draws_have_the_asked_means_sigmas_and_correlations() {
        let (mean, sigma, corr) = ([60.0, 0.4, 0.2], [3.0, 0.03, 0.01], (0.8, -0.5, -0.3));
        let law = ElementErrorLaw::from_sigmas(mean, sigma, corr).unwrap();
        let mut rng = Pcg64::seed_from_u64(3);
        let n = 40_000;
        let x: Vec<[f64; 3]> = (0..n).map(|_| law.draw(&mut rng)).collect();
        let m: Vec<f64> = (0..3).map(|k| x.iter().map(|v| v[k]).sum::<f64>() / n as f64).collect();
        let cov = |i: usize, j: usize| x.iter().map(|v| (v[i] - m[i]) * (v[j] - m[j])).sum::<f64>() / (n - 1) as f64;
        for k in 0..3 {
            assert!(
                (m[k] - mean[k]).abs() < 5.0 * sigma[k] / (n as f64).sqrt(),
                "mean {k}: {m:?}"
            );
            let s = cov(k, k).sqrt();
            assert!((s / sigma[k] - 1.0).abs() < 5.0 / (2.0 * n as f64).sqrt(), "σ {k}: {s}");
        }
        let asked = [((0, 1), corr.0), ((0, 2), corr.1), ((1, 2), corr.2)];
        for ((i, j), rho) in asked {
            let r = cov(i, j) / (cov(i, i) * cov(j, j)).sqrt();
            assert!(
                (r - rho).abs() < 5.0 * (1.0 - rho * rho) / (n as f64).sqrt(),
                "ρ {i}{j}: {r}"
            );
        }
        // The law's own covariance is the one asked for.
        let c = law.covariance();
        assert!((c[(0, 1)] - 0.8 * 3.0 * 0.03).abs() < 1e-12 && (c[(2, 2)] - 1e-4).abs() < 1e-15);
    }

    /// Near the bounds (e 0.98 with σe 0.05, i 1° with σi 2°; a 0.1 AU with σa 0.1 AU in a second
    /// law) every draw is physical, and inside the bounds the truncated law keeps the Gaussian's
    /// shape: with independent errors the share of draws below the mean is
    /// [Φ(0) − Φ(−lo)] / [Φ(hi) − Φ(−lo)] in σ units, for e 0.5 / Φ(0.4) = 0.7629, for i
    /// (0.5 − Φ(−0.5)) / (1 − Φ(−0.5)) = 0.2769, for a (0.5 − Φ(−0.5)) / (1 − Φ(−0.5)) = 0.2769
    /// (the floor 0.05 AU is 0.5 σ below; Φ(0.4) = 0.655422, Φ(−0.5) = 0.308538 from
    /// scipy.stats.norm.cdf). Within 5 binomial standard errors of 40 000 draws.
    #[test]
    fn draws_near_the_bounds_are_redrawn_into_physical_orbits() {
        let one_deg = 1f64.to_radians();
        let share = |law: &ElementErrorLaw, k: usize, seed: u64| {
            let mut rng = Pcg64::seed_from_u64(seed);
            let x: Vec<[f64; 3]> = (0..40_000).map(|_| law.draw(&mut rng)).collect();
            assert!(x.iter().all(|v| is_physical(*v)));
            assert!(
                x.iter()
                    .all(|v| v[0] >= 0.05 && (0.0..1.0).contains(&v[1]) && v[2] >= 0.0)
            );
            let m = law.mean()[k];
            x.iter().filter(|v| v[k] < m).count() as f64 / x.len() as f64
        };
        let tol = 5.0 * (0.25f64 / 40_000.0).sqrt();
        let eccentric =
            ElementErrorLaw::from_sigmas([30.0, 0.98, one_deg], [0.5, 0.05, 2.0 * one_deg], (0.0, 0.0, 0.0)).unwrap();
        assert!((share(&eccentric, 1, 5) - 0.5 / 0.655422).abs() < tol);
        let low = (0.5 - 0.308538) / (1.0 - 0.308538);
        assert!((share(&eccentric, 2, 6) - low).abs() < tol);
        let close = ElementErrorLaw::from_sigmas([0.1, 0.1, 0.2], [0.1, 0.01, 0.01], (0.0, 0.0, 0.0)).unwrap();
        assert!((share(&close, 0, 7) - low).abs() < tol);
    }

    #[test]
    fn a_law_with_no_physical_mass_returns_its_mean_and_a_singular_one_still_draws() {
        // A mean outside the physical region with a tiny σ: no draw is physical, the mean returns.
        let hopeless = ElementErrorLaw::from_sigmas([60.0, 1.5, 0.1], [1e-6, 1e-6, 1e-6], (0.0, 0.0, 0.0)).unwrap();
        assert_eq!(hopeless.draw(&mut Pcg64::seed_from_u64(1)), [60.0, 1.5, 0.1]);
        // σe = 0 (a singular Σ): e stays put, a and i scatter.
        let singular = ElementErrorLaw::from_sigmas([60.0, 0.3, 0.2], [2.0, 0.0, 0.01], (0.5, 0.2, 0.0)).unwrap();
        let d = singular.draw(&mut Pcg64::seed_from_u64(2));
        assert!((d[1] - 0.3).abs() < 1e-12 && d[0] != 60.0 && d[2] != 0.2);
        assert!(ElementErrorLaw::from_sigmas([f64::NAN, 0.3, 0.2], [1.0, 0.1, 0.1], (0.0, 0.0, 0.0)).is_none());
    }

    #[test]
    fn the_same_stream_gives_the_same_draws() {
        let law = ElementErrorLaw::from_sigmas([45.0, 0.1, 0.3], [5.0, 0.08, 0.02], (0.9, 0.1, 0.2)).unwrap();
        let a: Vec<[f64; 3]> = (0..5).map(|_| law.draw(&mut Pcg64::seed_from_u64(9))).collect();
        assert!(a.windows(2).all(|w| w[0] == w[1]));
    }
}
