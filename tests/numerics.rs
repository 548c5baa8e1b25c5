//! The numeric routines are total and accurate over their validated domain, far tails and
//! extreme parameters included: Kepler's equation against mpmath, the truncated normal against
//! scipy.stats.truncnorm, the von Mises and sin-i-Gaussian samplers at extreme κ and σ against
//! their own closed forms; the universal-variable propagator against rebound's IAS15.
//! Fixtures: tests/reference/make_numerics_fixtures.py, make_conic_fixtures.py.
//! Tolerances on sampled quantities are 5 standard errors.

use std::f64::consts::PI;

use nalgebra::Vector3;
use seine::orbit::kepler::eccentric_anomaly;
use seine::orbit::{Center, Conic};
use seine::population::distribution::{Distribution, von_mises_mean_resultant_length};
use seine::rng::{Purpose, object_stream};

mod common;

fn samples(d: &Distribution, n: usize, seed: u64) -> Vec<f64> {
    let mut rng = object_stream(seed, 0, Purpose::Analysis);
    (0..n).map(|_| d.sample(&mut rng)).collect()
}

fn mean_sd(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    (m, (x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0)).sqrt())
}

/// E from mpmath.findroot at 60 digits (kepler_extreme.csv), for e up to 1 − 1e-12 and M from
/// 1e-300 rad: relative error below 1e-12 (absolute 1e-15 near E = 0 is not enough there,
/// since E spans 1e-288 to π).
#[test]
fn kepler_matches_mpmath_to_near_parabolic_orbits() {
    let f = common::Fixture::load("kepler_extreme.csv");
    let (e, m, big_e) = (f.col("e"), f.col("mean_anomaly_rad"), f.col("ecc_anomaly_rad"));
    assert!(f.len() >= 100);
    for i in 0..f.len() {
        let got = eccentric_anomaly(m[i], e[i]);
        let err = (got - big_e[i]).abs();
        assert!(
            err <= 1e-12 * big_e[i].abs() + 1e-300,
            "e = {}, M = {}: E = {got}, mpmath {}, relative error {:e}",
            e[i],
            m[i],
            big_e[i],
            err / big_e[i].abs()
        );
    }
}

/// The universal-variable propagator (orbit/universal.rs) against rebound's IAS15 integrator
/// (conic_states.csv, make_conic_fixtures.py): ellipses, e = 1 ∓ 10⁻⁴ and hyperbolas up to
/// e = 3, steps of ±1 day to ±10 years. IAS15 keeps the energy to ~5·10⁻¹² here; positions
/// and velocities agree to 3·10⁻¹³ relative (measured), asked within 10⁻¹¹.
#[test]
fn universal_variables_match_rebound_on_every_conic() {
    let f = common::Fixture::load("conic_states.csv");
    assert!(f.len() >= 48);
    let v3 = |x: &str, y: &str, z: &str, i: usize| Vector3::new(f.col(x)[i], f.col(y)[i], f.col(z)[i]);
    let mut unbound = 0;
    let mut worst = 0.0f64;
    for i in 0..f.len() {
        let r0 = v3("x0_au", "y0_au", "z0_au", i);
        let v0 = v3("vx0_au_per_day", "vy0_au_per_day", "vz0_au_per_day", i);
        let conic = Conic::new(r0, v0, 60000.0, Center::Heliocentric);
        unbound += usize::from(!conic.is_bound());
        let dt = f.col("dt_days")[i];
        let (r, v) = conic.state(60000.0 + dt);
        let r_ref = v3("x_au", "y_au", "z_au", i);
        let v_ref = v3("vx_au_per_day", "vy_au_per_day", "vz_au_per_day", i);
        let (dr, dv) = ((r - r_ref).norm() / r_ref.norm(), (v - v_ref).norm() / v_ref.norm());
        assert!(
            dr < 1e-11 && dv < 1e-11,
            "row {i} (dt {dt} d): position {dr:e}, velocity {dv:e}"
        );
        worst = worst.max(dr).max(dv);
    }
    eprintln!("universal variables against IAS15: worst relative difference {worst:.1e}");
    // Half the cases are unbound (e > 1): the point of the propagator.
    assert!(unbound >= 24, "{unbound} unbound rows");
}

/// No input panics or loops: non-finite M or e outside [0, 1) give NaN (the loaders refuse
/// such elements first); a huge finite M is reduced and solved.
#[test]
fn kepler_is_total() {
    for (m, e) in [
        (f64::NAN, 0.5),
        (f64::INFINITY, 0.5),
        (f64::NEG_INFINITY, 0.1),
        (1.0, 1.0),
        (1.0, -0.1),
        (1.0, f64::NAN),
        (1.0, 2.0),
    ] {
        assert!(eccentric_anomaly(m, e).is_nan(), "M = {m}, e = {e}");
    }
    for m in [1e300, -1e300, 1e15, f64::MAX, f64::MIN_POSITIVE, 5e-324] {
        for e in [0.0, 0.3, 0.999999] {
            let big_e = eccentric_anomaly(m, e);
            assert!(big_e.is_finite() && big_e.abs() <= PI, "M = {m}, e = {e}: {big_e}");
        }
    }
}

/// scipy.stats.truncnorm (truncnorm_tails.csv): windows near the mean and up to 30σ away in
/// either tail. Draws: quantiles within 5 standard errors (√(p(1−p)/n) / density) and the mean
/// within 5 σ/√n of scipy's; every draw inside the window. The closed-form CDF and density
/// agree with scipy's to 1e-9.
#[test]
fn truncated_normal_matches_scipy_in_far_tails() {
    let f = common::Fixture::load("truncnorm_tails.csv");
    let case = f.col("case");
    let cols = [
        "mean",
        "sigma",
        "lo",
        "hi",
        "p",
        "quantile",
        "pdf_at_quantile",
        "dist_mean",
        "dist_std",
    ]
    .map(|c| f.col(c));
    let [mean, sigma, lo, hi, p, quantile, pdf, dist_mean, dist_std] = &cols;
    let n = 40_000;
    let mut k = 0;
    while k < f.len() {
        let d = Distribution::TruncatedNormal {
            mean: mean[k],
            sigma: sigma[k],
            lo: lo[k],
            hi: hi[k],
        };
        assert_eq!(d.problem(), None, "{d:?}");
        let mut x = samples(&d, n, 7 + case[k] as u64);
        assert!(x.iter().all(|v| *v >= lo[k] && *v <= hi[k]), "{d:?}");
        let (m, _) = mean_sd(&x);
        let tol_mean = 5.0 * dist_std[k] / (n as f64).sqrt();
        assert!(
            (m - dist_mean[k]).abs() < tol_mean,
            "{d:?}: mean {m}, scipy {}",
            dist_mean[k]
        );
        x.sort_by(f64::total_cmp);
        let mut j = k;
        while j < f.len() && case[j] == case[k] {
            let q = x[((p[j] * n as f64) as usize).min(n - 1)];
            let se = (p[j] * (1.0 - p[j]) / n as f64).sqrt() / pdf[j];
            assert!(
                (q - quantile[j]).abs() < 5.0 * se,
                "{d:?}: quantile {} = {q}, scipy {}",
                p[j],
                quantile[j]
            );
            let c = d.cdf(quantile[j]).unwrap();
            assert!((c - p[j]).abs() < 1e-9, "{d:?}: cdf {c} at scipy's quantile {}", p[j]);
            let dens = d.pdf(quantile[j]).unwrap();
            assert!(
                (dens / pdf[j] - 1.0).abs() < 1e-9,
                "{d:?}: pdf {dens}, scipy {}",
                pdf[j]
            );
            j += 1;
        }
        k = j;
    }
}

/// A window farther than the double precision of Φ can hold is refused by name.
#[test]
fn truncated_normal_beyond_35_sigma_is_refused() {
    let d = Distribution::TruncatedNormal {
        mean: 0.0,
        sigma: 1.0,
        lo: 40.0,
        hi: 41.0,
    };
    let p = d.problem().expect("refused");
    assert!(p.contains("sigma from the mean"), "{p}");
}

/// Von Mises at concentrations where Best & Fisher's constants round to 1 (κ = 1e20 looped
/// for ever): draws end and sit at the mean; on both sides of the switch to the Gaussian
/// limit (κ = 1e6) E[1 − cos(θ − μ)] = 1 − A(κ), A = I1/I0 (checked against scipy in
/// tests/population.rs), within 5 standard errors.
#[test]
fn von_mises_at_extreme_concentration() {
    let d = Distribution::VonMises {
        mean: 123.0,
        kappa: 1e20,
    };
    let x = samples(&d, 1000, 3);
    assert!(x.iter().all(|v| (v - 123.0).abs() < 1e-6), "{:?}", &x[..3]);
    for kappa in [2e5, 0.9e6, 1.1e6, 1e8] {
        let d = Distribution::VonMises { mean: 10.0, kappa };
        let n = 40_000;
        let dev: Vec<f64> = samples(&d, n, 5)
            .iter()
            .map(|v| 2.0 * (0.5 * (v - 10.0).to_radians()).sin().powi(2))
            .collect();
        let (m, sd) = mean_sd(&dev);
        let expect = 1.0 - von_mises_mean_resultant_length(kappa);
        let tol = 5.0 * sd / (n as f64).sqrt();
        assert!(
            (m - expect).abs() < tol,
            "κ = {kappa}: E[1 − cos] = {m}, expected {expect} ± {tol}"
        );
    }
}

/// sin i exp(−i²/2σ²) at σ = 1e6° (it looped for ever) is the isotropic sin i / 2: mean 90°,
/// standard deviation √(π²/4 − 2) rad (closed form of the isotropic inclination). On both
/// sides of the change of proposal (σ = 1 rad) the draws follow the spec's own CDF (KS p > 0.001).
#[test]
fn sin_gaussian_at_extreme_width() {
    let n = 40_000;
    let x = samples(&Distribution::SinGaussian { sigma: 1e6 }, n, 11);
    let (m, sd) = mean_sd(&x);
    let iso_sd = (PI * PI / 4.0 - 2.0).sqrt().to_degrees();
    assert!((m - 90.0).abs() < 5.0 * iso_sd / (n as f64).sqrt(), "mean {m}");
    assert!(
        (sd / iso_sd - 1.0).abs() < 5.0 / (2.0 * n as f64).sqrt(),
        "sd {sd}, isotropic {iso_sd}"
    );
    for sigma in [50.0, 57.0, 58.0, 70.0, 1e6] {
        let d = Distribution::SinGaussian { sigma };
        let mut x = samples(&d, 20_000, 13);
        x.sort_by(f64::total_cmp);
        let nn = x.len() as f64;
        let dmax = x
            .iter()
            .enumerate()
            .map(|(i, v)| {
                let c = d.cdf(*v).unwrap();
                (c - i as f64 / nn).abs().max((c - (i + 1) as f64 / nn).abs())
            })
            .fold(0.0, f64::max);
        // Kolmogorov's asymptotic critical value at p = 0.001 is 1.95 / √n.
        assert!(dmax * nn.sqrt() < 1.95, "σ = {sigma}°: KS D √n = {}", dmax * nn.sqrt());
    }
}
