//! Statistical checks of the population sampler against closed forms and outside references.
//! Each check names its source beside it. Seeds are fixed, so each test is deterministic;
//! tolerances are 5 standard errors unless said otherwise.

use std::path::Path;

use seine::population::distribution::{Distribution, von_mises_mean_resultant_length};
use seine::population::objects::ObjectTable;
use seine::population::{Population, Spec};
use seine::rng::{Purpose, object_stream};
use statrs::distribution::{ContinuousCDF, Normal};
use statrs::statistics::{Max, Min};
use statrs::stats_tests::NaNPolicy;
use statrs::stats_tests::ks_test::{KSOneSampleAlternativeMethod, ks_onesample};

fn dist(toml_text: &str) -> Distribution {
    #[derive(serde::Deserialize)]
    struct W {
        d: Distribution,
    }
    let w: W = toml::from_str(&format!("d = {toml_text}")).expect("test distribution parses");
    assert_eq!(w.d.problem(), None, "{toml_text}");
    w.d
}

fn samples(d: &Distribution, n: usize, seed: u64) -> Vec<f64> {
    let mut rng = object_stream(seed, 0, Purpose::Analysis);
    (0..n).map(|_| d.sample(&mut rng)).collect()
}

fn mean_var(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    (m, x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0))
}

/// statrs needs a type with Min, Max and ContinuousCDF: wrap our cdf.
struct Target<'a>(&'a Distribution);
impl Min<f64> for Target<'_> {
    fn min(&self) -> f64 {
        self.0.support().0.unwrap_or(f64::NEG_INFINITY)
    }
}
impl Max<f64> for Target<'_> {
    fn max(&self) -> f64 {
        self.0.support().1.unwrap_or(f64::INFINITY)
    }
}
impl ContinuousCDF<f64, f64> for Target<'_> {
    fn cdf(&self, x: f64) -> f64 {
        self.0.cdf(x).expect("closed-form cdf")
    }
}

fn ks_p(d: &Distribution, seed: u64) -> f64 {
    let x = samples(d, 20_000, seed);
    ks_onesample(
        x,
        &Target(d),
        KSOneSampleAlternativeMethod::TwoSidedAsymptotic,
        NaNPolicy::Error,
    )
    .unwrap()
    .1
}

/// KS test (statrs, Kolmogorov 1933 asymptotic p) of every distribution with a closed-form
/// CDF, at fixed seeds; the CDFs themselves are checked against independent forms below.
#[test]
fn ks_every_distribution_with_a_cdf() {
    let cases = [
        r#"{ dist = "uniform", lo = -2.0, hi = 5.0 }"#,
        r#"{ dist = "log-uniform", lo = 30.0, hi = 3000.0 }"#,
        r#"{ dist = "power-law", k = -2.5, lo = 50.0, hi = 1000.0 }"#,
        r#"{ dist = "power-law", k = 1.5, lo = 1.0, hi = 4.0 }"#,
        r#"{ dist = "normal", mean = 3.0, sigma = 0.5 }"#,
        r#"{ dist = "truncated-normal", mean = 0.0, sigma = 1.0, lo = -0.5, hi = 2.0 }"#,
        r#"{ dist = "truncated-normal", mean = 0.0, sigma = 1.0, lo = 4.0, hi = 9.0 }"#,
        r#"{ dist = "rayleigh", sigma = 0.1 }"#,
        r#"{ dist = "sin-gaussian", sigma = 15.0 }"#,
        r#"{ dist = "sin-gaussian", sigma = 120.0 }"#,
        r#"{ dist = "isotropic" }"#,
        r#"{ dist = "isotropic", lo = 10.0, hi = 40.0 }"#,
        r#"{ dist = "exponential", alpha = 0.6, lo = 4.0, hi = 10.0 }"#,
        r#"{ dist = "knee", alpha_bright = 0.9, alpha_faint = 0.4, break_mag = 8.0, lo = 4.0, hi = 10.0 }"#,
        r#"{ dist = "divot", alpha_bright = 0.9, alpha_faint = 0.5, break_mag = 8.3, contrast = 5.0, lo = 4.0, hi = 10.0 }"#,
        r#"{ dist = "histogram", edges = [0.0, 1.0, 3.0, 4.0], counts = [5.0, 2.0, 7.0] }"#,
    ];
    for (i, c) in cases.iter().enumerate() {
        let p = ks_p(&dist(c), 100 + i as u64);
        assert!(p > 1e-3, "KS p = {p} for {c}");
    }
}

/// The KS test must be able to fail: samples of one distribution against another's CDF.
#[test]
fn ks_rejects_a_wrong_distribution() {
    let x = samples(
        &dist(r#"{ dist = "power-law", k = -2.0, lo = 50.0, hi = 1000.0 }"#),
        20_000,
        1,
    );
    let other = dist(r#"{ dist = "power-law", k = -2.2, lo = 50.0, hi = 1000.0 }"#);
    let p = ks_onesample(
        x,
        &Target(&other),
        KSOneSampleAlternativeMethod::TwoSidedAsymptotic,
        NaNPolicy::Error,
    )
    .unwrap()
    .1;
    assert!(p < 1e-6, "p = {p}");
}

/// Rayleigh mean σ√(π/2) and variance (4 − π)σ²/2 (closed forms, e.g. Papoulis,
/// Probability, Random Variables and Stochastic Processes, 1991, §5-2).
#[test]
fn rayleigh_mean_and_variance() {
    let sigma = 0.12;
    let x = samples(&dist(r#"{ dist = "rayleigh", sigma = 0.12 }"#), 400_000, 7);
    let (m, v) = mean_var(&x);
    let (m0, v0) = (
        sigma * (std::f64::consts::PI / 2.0).sqrt(),
        (4.0 - std::f64::consts::PI) / 2.0 * sigma * sigma,
    );
    let n = x.len() as f64;
    assert!((m - m0).abs() < 5.0 * (v0 / n).sqrt(), "mean {m} vs {m0}");
    // Var of the sample variance ≈ (μ4 − σ⁴)/n; the Rayleigh kurtosis is ≈ 3.245, so μ4 ≈ 3.245 v0².
    assert!(
        (v - v0).abs() < 5.0 * (2.245 * v0 * v0 / n).sqrt(),
        "variance {v} vs {v0}"
    );
}

/// Power law dN/dx ∝ x^k: the q-quantile solves (x^(k+1) − lo^(k+1)) = q (hi^(k+1) − lo^(k+1))
/// (integration of the density, closed form); the fraction of samples below it must be q.
#[test]
fn power_law_quantiles() {
    for (text, k, lo, hi) in [
        (
            r#"{ dist = "power-law", k = -2.5, lo = 30.0, hi = 1000.0 }"#,
            -2.5_f64,
            30.0_f64,
            1000.0_f64,
        ),
        (
            r#"{ dist = "power-law", k = -1.0, lo = 30.0, hi = 1000.0 }"#,
            -1.0,
            30.0,
            1000.0,
        ),
        (
            r#"{ dist = "log-uniform", lo = 30.0, hi = 1000.0 }"#,
            -1.0,
            30.0,
            1000.0,
        ),
    ] {
        let x = samples(&dist(text), 200_000, 11);
        for q in [0.05, 0.25, 0.5, 0.75, 0.95] {
            let xq = if k == -1.0 {
                lo * (hi / lo).powf(q)
            } else {
                (lo.powf(k + 1.0) + q * (hi.powf(k + 1.0) - lo.powf(k + 1.0))).powf(1.0 / (k + 1.0))
            };
            let below = x.iter().filter(|v| **v < xq).count() as f64 / x.len() as f64;
            let se = (q * (1.0 - q) / x.len() as f64).sqrt();
            assert!((below - q).abs() < 5.0 * se, "{text}: F({xq}) = {below}, expected {q}");
        }
    }
}

fn vonmises_fixture() -> Vec<(f64, f64)> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/fixtures/vonmises.csv");
    let text = std::fs::read_to_string(path).unwrap();
    text.lines()
        .skip(1)
        .map(|l| {
            let (k, a) = l.split_once(',').unwrap();
            (k.parse().unwrap(), a.parse().unwrap())
        })
        .collect()
}

/// A(κ) = I1(κ)/I0(κ) against scipy.special.i1/i0 (fixture vonmises.csv, 200 values of κ).
#[test]
fn von_mises_resultant_length_function_matches_scipy() {
    for (kappa, a) in vonmises_fixture() {
        let ours = von_mises_mean_resultant_length(kappa);
        assert!((ours - a).abs() < 1e-12, "κ = {kappa}: {ours} vs scipy {a}");
    }
    // The series (κ ≤ 30) and the asymptotic form (κ > 30) must join smoothly.
    let (below, above) = (
        von_mises_mean_resultant_length(30.0),
        von_mises_mean_resultant_length(30.0 + 1e-9),
    );
    assert!((below - above).abs() < 1e-12);
}

/// Best & Fisher (1979) sampler: the sample mean resultant length and mean direction
/// match A(κ) from scipy (fixture) for several κ.
#[test]
fn von_mises_samples_match_mean_resultant_length() {
    let fixture = vonmises_fixture();
    for (i, &(kappa, a)) in fixture.iter().enumerate().filter(|(i, _)| i % 40 == 0) {
        let d = Distribution::VonMises { mean: 150.0, kappa };
        let x = samples(&d, 200_000, 300 + i as u64);
        let (c, s) = x.iter().fold((0.0, 0.0), |acc, t| {
            let r = (t - 150.0).to_radians();
            (acc.0 + r.cos(), acc.1 + r.sin())
        });
        let n = x.len() as f64;
        let (rbar, sbar) = (c / n, s / n);
        // Var cos(θ − μ) ≤ 1/2 + 1/2 = 1; use the bound 1/√n for the standard error.
        assert!((rbar - a).abs() < 5.0 / n.sqrt(), "κ = {kappa}: {rbar} vs {a}");
        assert!(sbar.abs() < 5.0 / n.sqrt(), "κ = {kappa}: mean sine {sbar}");
        assert!(x.iter().all(|t| (0.0..360.0).contains(t)));
    }
}

/// Closed forms of the CDFs, written independently of the library: normal (statrs),
/// isotropic 1 − cos i over 2, exponential LF (10^(α(H−lo)) − 1)/(10^(α(hi−lo)) − 1).
#[test]
fn cdfs_match_independent_closed_forms() {
    let normal = dist(r#"{ dist = "normal", mean = 3.0, sigma = 0.5 }"#);
    let ref_normal = Normal::new(3.0, 0.5).unwrap();
    for x in [1.0, 2.7, 3.0, 4.2] {
        assert!((normal.cdf(x).unwrap() - ref_normal.cdf(x)).abs() < 1e-12);
    }
    let iso = dist(r#"{ dist = "isotropic" }"#);
    for i in [10.0_f64, 60.0, 90.0, 150.0] {
        assert!((iso.cdf(i).unwrap() - (1.0 - i.to_radians().cos()) / 2.0).abs() < 1e-12);
    }
    let lf = dist(r#"{ dist = "exponential", alpha = 0.6, lo = 4.0, hi = 10.0 }"#);
    for h in [4.5_f64, 7.0, 9.9] {
        let f = (10f64.powf(0.6 * (h - 4.0)) - 1.0) / (10f64.powf(0.6 * 6.0) - 1.0);
        assert!((lf.cdf(h).unwrap() - f).abs() < 1e-12, "{h}");
    }
}

/// pdf and cdf agree: the integral of the pdf (Simpson) equals the cdf difference.
#[test]
fn pdf_integrates_to_cdf() {
    for c in [
        r#"{ dist = "sin-gaussian", sigma = 15.0 }"#,
        r#"{ dist = "isotropic", lo = 10.0, hi = 40.0 }"#,
        r#"{ dist = "divot", alpha_bright = 0.9, alpha_faint = 0.5, break_mag = 8.3, contrast = 5.0, lo = 4.0, hi = 10.0 }"#,
        r#"{ dist = "truncated-normal", mean = 0.0, sigma = 1.0, lo = -0.5, hi = 2.0 }"#,
        r#"{ dist = "rayleigh", sigma = 2.0 }"#,
        r#"{ dist = "power-law", k = -2.5, lo = 50.0, hi = 1000.0 }"#,
    ] {
        let d = dist(c);
        let (lo, hi) = (d.support().0.unwrap(), d.support().1.unwrap_or(20.0));
        let (a, b) = (lo + 0.1 * (hi - lo), lo + 0.7 * (hi - lo));
        let n = 4000;
        let h = (b - a) / n as f64;
        let s: f64 = (0..=n)
            .map(|j| {
                let w = if j == 0 || j == n {
                    1.0
                } else if j % 2 == 1 {
                    4.0
                } else {
                    2.0
                };
                w * d.pdf(a + j as f64 * h).unwrap()
            })
            .sum::<f64>()
            * h
            / 3.0;
        let want = d.cdf(b).unwrap() - d.cdf(a).unwrap();
        assert!(
            (s - want).abs() < 1e-4 * want.max(1e-3),
            "{c}: ∫pdf = {s}, Δcdf = {want}"
        );
    }
}

/// Divot (Shankman et al. 2013, ApJL 764, L2): the differential number drops by the
/// contrast at the break; the knee is continuous there.
#[test]
fn divot_contrast_and_knee_continuity() {
    let divot = dist(
        r#"{ dist = "divot", alpha_bright = 0.9, alpha_faint = 0.5, break_mag = 8.3, contrast = 5.0, lo = 4.0, hi = 10.0 }"#,
    );
    let ratio = divot.pdf(8.3 - 1e-9).unwrap() / divot.pdf(8.3 + 1e-9).unwrap();
    assert!((ratio - 5.0).abs() < 1e-6, "{ratio}");
    let knee =
        dist(r#"{ dist = "knee", alpha_bright = 0.9, alpha_faint = 0.4, break_mag = 8.0, lo = 4.0, hi = 10.0 }"#);
    let ratio = knee.pdf(8.0 - 1e-9).unwrap() / knee.pdf(8.0 + 1e-9).unwrap();
    assert!((ratio - 1.0).abs() < 1e-6, "{ratio}");
    // Slope: d log10 pdf / dH = α on each side (definition dN/dH ∝ 10^(αH)).
    let slope = (divot.pdf(6.0).unwrap() / divot.pdf(5.0).unwrap()).log10();
    assert!((slope - 0.9).abs() < 1e-9);
}

/// Bad parameters are reported with what was found and what was expected.
#[test]
fn problems_name_the_parameter() {
    let cases = [
        (Distribution::Uniform { lo: 5.0, hi: 1.0 }, "lo < hi"),
        (Distribution::Normal { mean: 0.0, sigma: 0.0 }, "sigma > 0"),
        (Distribution::VonMises { mean: 0.0, kappa: -1.0 }, "kappa ≥ 0"),
        (
            Distribution::PowerLaw {
                k: -2.0,
                lo: 0.0,
                hi: 1.0,
            },
            "lo > 0",
        ),
        (
            Distribution::Histogram {
                edges: vec![0.0, 1.0],
                counts: vec![1.0, 2.0],
            },
            "one more edge",
        ),
    ];
    for (d, want) in cases {
        let p = d.problem().unwrap_or_default();
        assert!(p.contains(want), "{d:?}: {p}");
    }
}

fn population(text: &str) -> Population {
    match Spec::parse(text, Path::new("test.toml")).unwrap() {
        Spec::Draw(p) => *p,
        Spec::Clone(_) => panic!("expected a draw spec"),
    }
}

const CLUSTERED: &str = r#"
[population]
epoch_mjd = 60676.0
[orbit]
a_au = { dist = "log-uniform", lo = 150.0, hi = 600.0 }
q_au = { dist = "uniform", lo = 35.0, hi = 80.0 }
inc_deg = { dist = "sin-gaussian", sigma = 15.0 }
varpi_deg = { dist = "von-mises", mean = 150.0, kappa = 2.0 }
[photometry]
h_mag = { dist = "exponential", alpha = 0.6, lo = 4.0, hi = 9.0 }
color = { g = { dist = "normal", mean = 0.6, sigma = 0.1 } }
[constraints]
q_au = [40.0, 80.0]
inc_deg = [0.0, 45.0]
"#;

/// The same seed gives the same objects; another seed gives others; chunking and the
/// number of threads do not matter (DESIGN: randomness).
#[test]
fn determinism_chunking_and_threads() {
    let pop = population(CLUSTERED);
    let whole = pop.frame(pop.draw_ids(5, 0..20_000).unwrap());
    let again = pop.frame(pop.draw_ids(5, 0..20_000).unwrap());
    assert!(whole.equals(&again));
    let other = pop.frame(pop.draw_ids(6, 0..20_000).unwrap());
    assert!(!whole.equals(&other));
    let mut parts = pop.frame(pop.draw_ids(5, 0..7_777).unwrap());
    parts
        .vstack_mut(&pop.frame(pop.draw_ids(5, 7_777..20_000).unwrap()))
        .unwrap();
    assert!(whole.equals(&parts));
    let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().unwrap();
    let single = one.install(|| pop.frame(pop.draw_ids(5, 0..20_000).unwrap()));
    assert!(whole.equals(&single));
}

/// The drawn table obeys the objects-table contract and the constraints, ω = ϖ − Ω.
#[test]
fn drawn_table_is_a_valid_objects_table() {
    let pop = population(CLUSTERED);
    let df = pop.frame(pop.draw_ids(1, 0..5000).unwrap());
    let t = ObjectTable::from_frame(df.clone(), Path::new("drawn")).unwrap();
    assert_eq!(t.len(), 5000);
    for el in &t.elements {
        assert!((40.0..=80.0).contains(&el.q_au()) && el.inc_rad.to_degrees() <= 45.0);
    }
    assert_eq!(t.colors.len(), 1);
    // ϖ = Ω + ω is von Mises about 150°: its mean direction is near 150°.
    let (s, c) = t
        .elements
        .iter()
        .fold((0.0, 0.0), |a, e| (a.0 + e.varpi().sin(), a.1 + e.varpi().cos()));
    assert!((s.atan2(c).to_degrees() - 150.0).abs() < 5.0);
    let acc = pop.pilot(1).unwrap();
    assert!(acc > 0.5 && acc < 1.0, "{acc}");
}

/// Importance weights: the weighted fraction of "M within 30° of perihelion and H < 6"
/// under proposals equals plain sampling's fraction and the closed form
/// (60/360) × F_H(6) within statistical error.
#[test]
fn importance_weights_are_unbiased() {
    let base = CLUSTERED.split("[constraints]").next().unwrap().to_string();
    let weighted = population(&format!(
        "{base}\n[importance]\nmean_anomaly_deg = {{ dist = \"von-mises\", mean = 0.0, kappa = 2.0 }}\n\
         h_mag = {{ dist = \"uniform\", lo = 4.0, hi = 9.0 }}\n"
    ));
    let plain = population(&base);
    let n = 400_000;
    let indicator = |df: &polars::prelude::DataFrame| -> (f64, f64) {
        let m = df
            .column("mean_anomaly_deg")
            .unwrap()
            .f64()
            .unwrap()
            .into_no_null_iter()
            .collect::<Vec<f64>>();
        let h = df
            .column("h_mag")
            .unwrap()
            .f64()
            .unwrap()
            .into_no_null_iter()
            .collect::<Vec<f64>>();
        let w = df
            .column("weight")
            .unwrap()
            .f64()
            .unwrap()
            .into_no_null_iter()
            .collect::<Vec<f64>>();
        let terms: Vec<f64> = (0..m.len())
            .map(|i| {
                if (m[i] < 30.0 || m[i] > 330.0) && h[i] < 6.0 {
                    w[i]
                } else {
                    0.0
                }
            })
            .collect();
        let (mean, var) = mean_var(&terms);
        (mean, (var / terms.len() as f64).sqrt())
    };
    let (fw, sw) = indicator(&weighted.frame(weighted.draw_ids(3, 0..n).unwrap()));
    let (fp, sp) = indicator(&plain.frame(plain.draw_ids(4, 0..n).unwrap()));
    let exact = 60.0 / 360.0 * (10f64.powf(0.6 * 2.0) - 1.0) / (10f64.powf(0.6 * 5.0) - 1.0);
    assert!(
        (fw - fp).abs() < 5.0 * (sw * sw + sp * sp).sqrt(),
        "weighted {fw} ± {sw}, plain {fp} ± {sp}"
    );
    assert!((fw - exact).abs() < 5.0 * sw, "weighted {fw} ± {sw}, exact {exact}");
    // The proposals make this rare event cheaper: a smaller standard error for the same n.
    assert!(sw < sp, "weighted error {sw} should beat plain {sp}");
}

/// Time of perihelion: M = n (epoch − T_p) with n = √(GM/a³) (two-body mean motion).
#[test]
fn perihelion_time_sets_mean_anomaly() {
    let pop = population(
        r#"
[population]
epoch_mjd = 60000.0
[orbit]
a_au = { dist = "fixed", value = 100.0 }
e = { dist = "fixed", value = 0.5 }
inc_deg = { dist = "fixed", value = 10.0 }
perihelion_mjd = { dist = "fixed", value = 50000.0 }
[photometry]
h_mag = { dist = "fixed", value = 7.0 }
"#,
    );
    let df = pop.frame(pop.draw_ids(1, 0..3).unwrap());
    let m = df.column("mean_anomaly_deg").unwrap().f64().unwrap().get(0).unwrap();
    let n = (seine::foundation::constants::GM_SUN / 1.0e6).sqrt();
    assert!((m - (n * 10000.0).to_degrees().rem_euclid(360.0)).abs() < 1e-9, "{m}");
}

/// Shards are contiguous, disjoint and cover 0..count for any count and number of shards.
#[test]
fn shard_ranges_partition_the_ids() {
    use seine::shard::shard_ids;
    for count in [0u64, 1, 2, 7, 1000, 1 << 40] {
        for n in [1u64, 2, 3, 7, 64] {
            let mut next = 0i64;
            for k in 0..n {
                let r = shard_ids(count, Some((k, n)));
                assert_eq!(r.start, next, "count {count}, shard {k}/{n}");
                next = r.end;
            }
            assert_eq!(next, count as i64);
        }
    }
}

/// An angular form on a key that is not in degrees is a unit error naming the key.
#[test]
fn angular_forms_only_on_degree_keys() {
    let bad = CLUSTERED.replace(
        r#"h_mag = { dist = "exponential", alpha = 0.6, lo = 4.0, hi = 9.0 }"#,
        r#"h_mag = { dist = "isotropic" }"#,
    );
    let e = Spec::parse(&bad, Path::new("test.toml")).unwrap_err().to_string();
    // Refused by name: either as an angular form on a key not in degrees, or, since the
    // plausible-range check (src/ranges.rs) runs first, because it would draw H up to 180.
    assert!(
        e.contains("photometry.h_mag") && (e.contains("degrees") || e.contains("can draw 180")),
        "{e}"
    );
}

/// The prepared pdf (cached normalisation) equals the direct one.
#[test]
fn prepared_pdf_matches_direct_pdf() {
    use seine::population::prepared::PreparedDistribution;
    for c in [
        r#"{ dist = "sin-gaussian", sigma = 15.0 }"#,
        r#"{ dist = "von-mises", mean = 10.0, kappa = 3.0 }"#,
    ] {
        let d = dist(c);
        let p = PreparedDistribution::new(d.clone());
        for x in [0.0, 5.0, 30.0, 90.0, 179.0, 200.0] {
            let (a, b) = (p.pdf(x).unwrap(), d.pdf(x).unwrap());
            assert!((a - b).abs() <= 1e-12 * b.abs().max(1e-300), "{c} at {x}: {a} vs {b}");
        }
    }
}
