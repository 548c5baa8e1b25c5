//! One-dimensional distributions of the population spec. Every variant samples; `pdf` and
//! `cdf` are given where a closed form (or a cheap exact computation) exists. Values are in
//! the units of the key they are attached to; the angular forms (`sin-gaussian`, `isotropic`,
//! `von-mises`) take and return degrees. Formulas and sources: methods.md, "Populations".

use std::f64::consts::{LN_10, PI, TAU};

use rand::{Rng, RngExt};
use rand_distr::StandardNormal;
use serde::Deserialize;

use statrs::function::erf::{erf, erfc};
use std::f64::consts::SQRT_2;

/// A distribution of one quantity, tagged in TOML by `dist = "..."`.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(tag = "dist", rename_all = "kebab-case", deny_unknown_fields)]
pub enum Distribution {
    /// Always `value`.
    Fixed { value: f64 },
    /// Uniform on [lo, hi].
    Uniform { lo: f64, hi: f64 },
    /// Uniform in ln x on [lo, hi] (the power law with k = −1).
    LogUniform { lo: f64, hi: f64 },
    /// dN/dx ∝ x^k on [lo, hi], 0 < lo; k = −1 is log-uniform.
    PowerLaw { k: f64, lo: f64, hi: f64 },
    /// Gaussian of mean `mean` and standard deviation `sigma`.
    Normal { mean: f64, sigma: f64 },
    /// The Gaussian restricted to [lo, hi].
    TruncatedNormal { mean: f64, sigma: f64, lo: f64, hi: f64 },
    /// Rayleigh of scale `sigma`: f(x) = x/σ² exp(−x²/2σ²), x ≥ 0.
    Rayleigh { sigma: f64 },
    /// f(i) ∝ sin i exp(−i²/2σ²) on [0°, 180°], σ in degrees (AJ 121, 2804, 2001).
    SinGaussian { sigma: f64 },
    /// Uniform in cos i, returning i in degrees on [lo, hi] (default 0–180).
    Isotropic {
        #[serde(default)]
        lo: Option<f64>,
        #[serde(default)]
        hi: Option<f64>,
    },
    /// Von Mises of mean direction `mean` (degrees) and concentration `kappa`, on [0°, 360°).
    VonMises { mean: f64, kappa: f64 },
    /// Luminosity function dN/dH ∝ 10^(αH) on [lo, hi].
    Exponential { alpha: f64, lo: f64, hi: f64 },
    /// Two slopes meeting continuously at `break_mag`.
    Knee {
        alpha_bright: f64,
        alpha_faint: f64,
        break_mag: f64,
        lo: f64,
        hi: f64,
    },
    /// Two slopes with the faint side lower by a factor `contrast` at `break_mag`
    /// (Shankman et al. 2013, ApJL 764, L2).
    Divot {
        alpha_bright: f64,
        alpha_faint: f64,
        break_mag: f64,
        contrast: f64,
        lo: f64,
        hi: f64,
    },
    /// Piecewise uniform: counts per bin between consecutive edges.
    Histogram { edges: Vec<f64>, counts: Vec<f64> },
    /// Each listed value with equal probability (e.g. a list of observed values).
    Values { values: Vec<f64> },
}

/// One piece of a piecewise exponential density s·exp(b (x − r)) on [x0, x1].
#[derive(Debug, Clone, Copy)]
pub(super) struct ExpPiece {
    pub(super) x0: f64,
    pub(super) x1: f64,
    b: f64,
    r: f64,
    s: f64,
}

impl ExpPiece {
    fn density(&self, x: f64) -> f64 {
        self.s * (self.b * (x - self.r)).exp()
    }
    /// ∫ from x0 to min(x, x1) of the density.
    pub(super) fn mass_to(&self, x: f64) -> f64 {
        let x = x.clamp(self.x0, self.x1);
        if self.b.abs() < 1e-12 {
            return self.s * (x - self.x0);
        }
        self.s * (self.b * (self.x0 - self.r)).exp() * (self.b * (x - self.x0)).exp_m1() / self.b
    }
    /// The x at which the mass from x0 is a fraction v of the piece's mass (inverse CDF).
    /// `em1` = expm1(b (x1 − x0)), precomputed by the caller.
    pub(super) fn invert(&self, v: f64, em1: f64) -> f64 {
        if self.b.abs() < 1e-12 {
            return self.x0 + v * (self.x1 - self.x0);
        }
        (self.x0 + (v * em1).ln_1p() / self.b).clamp(self.x0, self.x1)
    }
    pub(super) fn em1(&self) -> f64 {
        (self.b * (self.x1 - self.x0)).exp_m1()
    }
}

impl Distribution {
    /// Why the parameters are unusable, as "what was found: what was expected".
    pub fn problem(&self) -> Option<String> {
        use Distribution::*;
        let finite = self.parameters().iter().all(|(_, v)| v.is_finite());
        if !finite {
            return Some("every parameter must be a finite number".into());
        }
        match self {
            TruncatedNormal { mean, sigma, lo, hi } => (*sigma <= 0.0)
                .then(|| format!("sigma = {sigma}: expected sigma > 0"))
                .or_else(|| range_problem(*lo, *hi))
                .or_else(|| truncated_normal_problem(*mean, *sigma, *lo, *hi)),
            Uniform { lo, hi } => range_problem(*lo, *hi),
            LogUniform { lo, hi } | PowerLaw { lo, hi, .. } => {
                range_problem(*lo, *hi).or_else(|| (*lo <= 0.0).then(|| format!("lo = {lo}: expected lo > 0")))
            }
            Normal { sigma, .. } | Rayleigh { sigma } | SinGaussian { sigma } if *sigma <= 0.0 => {
                Some(format!("sigma = {sigma}: expected sigma > 0"))
            }
            Isotropic { .. } => {
                let (lo, hi) = self.isotropic_range();
                range_problem(lo, hi).or_else(|| {
                    (lo < 0.0 || hi > 180.0)
                        .then(|| format!("lo = {lo}, hi = {hi}: expected 0 ≤ lo < hi ≤ 180 degrees"))
                })
            }
            VonMises { kappa, .. } if *kappa < 0.0 => Some(format!("kappa = {kappa}: expected kappa ≥ 0")),
            Exponential { lo, hi, .. } | Knee { lo, hi, .. } => range_problem(*lo, *hi),
            Divot { lo, hi, contrast, .. } => range_problem(*lo, *hi)
                .or_else(|| (*contrast <= 0.0).then(|| format!("contrast = {contrast}: expected contrast > 0"))),
            Histogram { edges, counts } => histogram_problem(edges, counts),
            Values { values } if values.is_empty() => Some("values = []: expected at least one value".into()),
            _ => None,
        }
    }

    /// The numeric parameters with their names (for the finiteness check).
    fn parameters(&self) -> Vec<(&'static str, f64)> {
        use Distribution::*;
        match self {
            Fixed { value } => vec![("value", *value)],
            Uniform { lo, hi } | LogUniform { lo, hi } => vec![("lo", *lo), ("hi", *hi)],
            PowerLaw { k, lo, hi } => vec![("k", *k), ("lo", *lo), ("hi", *hi)],
            Normal { mean, sigma } => vec![("mean", *mean), ("sigma", *sigma)],
            TruncatedNormal { mean, sigma, lo, hi } => {
                vec![("mean", *mean), ("sigma", *sigma), ("lo", *lo), ("hi", *hi)]
            }
            Rayleigh { sigma } | SinGaussian { sigma } => vec![("sigma", *sigma)],
            Isotropic { lo, hi } => vec![("lo", lo.unwrap_or(0.0)), ("hi", hi.unwrap_or(180.0))],
            VonMises { mean, kappa } => vec![("mean", *mean), ("kappa", *kappa)],
            Exponential { .. } | Knee { .. } | Divot { .. } => {
                let names = ["alpha_bright", "alpha_faint", "break_mag", "contrast", "lo", "hi"];
                names.into_iter().zip(self.lf_parameters()).collect()
            }
            Histogram { edges, counts } => edges.iter().chain(counts).map(|v| ("edges/counts", *v)).collect(),
            Values { values } => values.iter().map(|v| ("values", *v)).collect(),
        }
    }

    pub(super) fn isotropic_range(&self) -> (f64, f64) {
        match self {
            Distribution::Isotropic { lo, hi } => (lo.unwrap_or(0.0), hi.unwrap_or(180.0)),
            _ => unreachable!("only for isotropic"),
        }
    }

    /// The smallest and largest values the distribution can return (None: unbounded).
    pub fn support(&self) -> (Option<f64>, Option<f64>) {
        use Distribution::*;
        match self {
            Fixed { value } => (Some(*value), Some(*value)),
            Uniform { lo, hi } | LogUniform { lo, hi } | PowerLaw { lo, hi, .. } | TruncatedNormal { lo, hi, .. } => {
                (Some(*lo), Some(*hi))
            }
            Exponential { lo, hi, .. } | Knee { lo, hi, .. } | Divot { lo, hi, .. } => (Some(*lo), Some(*hi)),
            Normal { .. } => (None, None),
            Rayleigh { .. } => (Some(0.0), None),
            SinGaussian { .. } => (Some(0.0), Some(180.0)),
            Isotropic { .. } => {
                let (lo, hi) = self.isotropic_range();
                (Some(lo), Some(hi))
            }
            VonMises { .. } => (Some(0.0), Some(360.0)),
            Histogram { edges, .. } => (edges.first().copied(), edges.last().copied()),
            Values { values } => (
                values.iter().copied().reduce(f64::min),
                values.iter().copied().reduce(f64::max),
            ),
        }
    }

    /// A draw given the first uniform `u`, for the forms that need no precomputation.
    pub(super) fn sample_direct<R: Rng + ?Sized>(&self, rng: &mut R, u: f64) -> f64 {
        use Distribution::*;
        match self {
            Fixed { value } => *value,
            Uniform { lo, hi } => lo + u * (hi - lo),
            LogUniform { .. }
            | PowerLaw { .. }
            | Isotropic { .. }
            | Exponential { .. }
            | Knee { .. }
            | Divot { .. } => {
                unreachable!("sampled by PreparedDistribution with its precomputed constants")
            }
            Normal { mean, sigma } => mean + sigma * rng.sample::<f64, _>(StandardNormal),
            TruncatedNormal { mean, sigma, lo, hi } => truncated_normal(rng, *mean, *sigma, *lo, *hi),
            Rayleigh { sigma } => sigma * (-2.0 * (1.0 - u).ln()).sqrt(),
            SinGaussian { sigma } => sin_gaussian(rng, sigma.to_radians(), u).to_degrees(),
            VonMises { mean, kappa } => von_mises(rng, mean.to_radians(), *kappa).to_degrees(),
            Histogram { edges, counts } => histogram_sample(edges, counts, u, rng.random()),
            Values { values } => values[((u * values.len() as f64) as usize).min(values.len() - 1)],
        }
    }

    /// [alpha_bright, alpha_faint, break, contrast, lo, hi] of the luminosity-function forms:
    /// the plain exponential is one slope with its break at lo; the knee has contrast 1.
    fn lf_parameters(&self) -> [f64; 6] {
        use Distribution::*;
        match *self {
            Exponential { alpha, lo, hi } => [alpha, alpha, lo, 1.0, lo, hi],
            Knee {
                alpha_bright,
                alpha_faint,
                break_mag,
                lo,
                hi,
            } => [alpha_bright, alpha_faint, break_mag, 1.0, lo, hi],
            Divot {
                alpha_bright,
                alpha_faint,
                break_mag,
                contrast,
                lo,
                hi,
            } => [alpha_bright, alpha_faint, break_mag, contrast, lo, hi],
            _ => unreachable!("only for luminosity functions"),
        }
    }

    /// The luminosity-function forms as one or two exponential pieces, continuous or with a
    /// drop by `contrast` at the break; the reference point of both pieces is the break.
    /// A piece outside [lo, hi] is empty (x1 = x0, no mass); no allocation, as this runs per draw.
    pub(super) fn pieces(&self) -> [ExpPiece; 2] {
        let [ab, af, hb, c, lo, hi] = self.lf_parameters();
        let bright = ExpPiece {
            x0: lo,
            x1: hb.clamp(lo, hi),
            b: ab * LN_10,
            r: hb,
            s: 1.0,
        };
        let faint = ExpPiece {
            x0: hb.clamp(lo, hi),
            x1: hi,
            b: af * LN_10,
            r: hb,
            s: 1.0 / c,
        };
        [bright, faint]
    }

    /// Probability density at x (per unit of x), where it exists (not for fixed or values).
    pub fn pdf(&self, x: f64) -> Option<f64> {
        use Distribution::*;
        let (lo, hi) = self.support();
        if lo.is_some_and(|l| x < l) || hi.is_some_and(|h| x > h) {
            return Some(0.0);
        }
        Some(match self {
            Fixed { .. } | Values { .. } => return None,
            Uniform { lo, hi } => 1.0 / (hi - lo),
            LogUniform { lo, hi } => power_law_pdf(-1.0, *lo, *hi, x),
            PowerLaw { k, lo, hi } => power_law_pdf(*k, *lo, *hi, x),
            Normal { mean, sigma } => normal_pdf((x - mean) / sigma) / sigma,
            TruncatedNormal { mean, sigma, lo, hi } => {
                let (a, b) = ((lo - mean) / sigma, (hi - mean) / sigma);
                truncated_normal_pdf(a, b, (x - mean) / sigma) / sigma
            }
            Rayleigh { sigma } => x / (sigma * sigma) * (-x * x / (2.0 * sigma * sigma)).exp(),
            SinGaussian { sigma } => {
                let s = sigma.to_radians();
                sin_gaussian_density(s, x.to_radians()) / sin_gaussian_mass(s, PI) * PI / 180.0
            }
            Isotropic { .. } => {
                let (lo, hi) = self.isotropic_range();
                x.to_radians().sin() / (lo.to_radians().cos() - hi.to_radians().cos()) * PI / 180.0
            }
            VonMises { mean, kappa } => {
                let d = (x - mean).to_radians();
                (kappa * (d.cos() - 1.0)).exp() / (TAU * bessel_i0e(*kappa)) * PI / 180.0
            }
            Exponential { .. } | Knee { .. } | Divot { .. } => {
                let p = self.pieces();
                let total = p.iter().map(|q| q.mass_to(q.x1)).sum::<f64>();
                let piece = p.iter().rev().find(|q| x >= q.x0 && q.x1 > q.x0).unwrap_or(&p[0]);
                piece.density(x) / total
            }
            Histogram { edges, counts } => {
                let i = edges.partition_point(|e| *e <= x).clamp(1, edges.len() - 1) - 1;
                counts[i] / counts.iter().sum::<f64>() / (edges[i + 1] - edges[i])
            }
        })
    }

    /// Cumulative distribution at x, where it has a closed form (not for von Mises).
    pub fn cdf(&self, x: f64) -> Option<f64> {
        use Distribution::*;
        let (lo, hi) = self.support();
        if lo.is_some_and(|l| x < l) {
            return Some(0.0);
        }
        if hi.is_some_and(|h| x >= h) {
            return Some(1.0);
        }
        Some(match self {
            Fixed { .. } => 1.0,
            Uniform { lo, hi } => (x - lo) / (hi - lo),
            LogUniform { lo, hi } => power_law_cdf(-1.0, *lo, *hi, x),
            PowerLaw { k, lo, hi } => power_law_cdf(*k, *lo, *hi, x),
            Normal { mean, sigma } => normal_cdf((x - mean) / sigma),
            TruncatedNormal { mean, sigma, lo, hi } => {
                let (a, b) = ((lo - mean) / sigma, (hi - mean) / sigma);
                normal_window_mass(a, (x - mean) / sigma) / normal_window_mass(a, b)
            }
            Rayleigh { sigma } => 1.0 - (-x * x / (2.0 * sigma * sigma)).exp(),
            SinGaussian { sigma } => {
                let s = sigma.to_radians();
                sin_gaussian_mass(s, x.to_radians()) / sin_gaussian_mass(s, PI)
            }
            Isotropic { .. } => {
                let (lo, hi) = self.isotropic_range();
                let (c0, c1) = (lo.to_radians().cos(), hi.to_radians().cos());
                (c0 - x.to_radians().cos()) / (c0 - c1)
            }
            VonMises { .. } => return None,
            Exponential { .. } | Knee { .. } | Divot { .. } => {
                let p = self.pieces();
                p.iter().map(|q| q.mass_to(x)).sum::<f64>() / p.iter().map(|q| q.mass_to(q.x1)).sum::<f64>()
            }
            Histogram { edges, counts } => {
                let total: f64 = counts.iter().sum();
                let below: f64 = (0..counts.len())
                    .map(|i| counts[i] * ((x - edges[i]) / (edges[i + 1] - edges[i])).clamp(0.0, 1.0))
                    .sum();
                below / total
            }
            Values { values } => values.iter().filter(|v| **v <= x).count() as f64 / values.len() as f64,
        })
    }
}

fn range_problem(lo: f64, hi: f64) -> Option<String> {
    (lo >= hi).then(|| format!("lo = {lo}, hi = {hi}: expected lo < hi"))
}

fn truncated_normal_problem(mean: f64, sigma: f64, lo: f64, hi: f64) -> Option<String> {
    let nearest = mean.clamp(lo, hi);
    let away = (nearest - mean).abs() / sigma;
    (away > TRUNCATED_NORMAL_MAX_SIGMA).then(|| {
        format!(
            "lo = {lo}, hi = {hi}: the window is {away:.1} sigma from the mean {mean}; expected at most \
             {TRUNCATED_NORMAL_MAX_SIGMA} sigma (farther, it holds no representable share of the Gaussian)"
        )
    })
}

fn histogram_problem(edges: &[f64], counts: &[f64]) -> Option<String> {
    if edges.len() != counts.len() + 1 || counts.is_empty() {
        return Some(format!(
            "{} edges and {} counts: expected one more edge than counts, at least one bin",
            edges.len(),
            counts.len()
        ));
    }
    if edges.windows(2).any(|w| w[1] <= w[0]) {
        return Some("edges: expected strictly increasing values".into());
    }
    if counts.iter().any(|c| *c < 0.0) || counts.iter().sum::<f64>() <= 0.0 {
        return Some("counts: expected counts ≥ 0 with a positive total".into());
    }
    None
}

fn power_law_cdf(k: f64, lo: f64, hi: f64, x: f64) -> f64 {
    if (k + 1.0).abs() < 1e-12 {
        return (x / lo).ln() / (hi / lo).ln();
    }
    let p = k + 1.0;
    (x.powf(p) - lo.powf(p)) / (hi.powf(p) - lo.powf(p))
}

fn power_law_pdf(k: f64, lo: f64, hi: f64, x: f64) -> f64 {
    if (k + 1.0).abs() < 1e-12 {
        return 1.0 / (x * (hi / lo).ln());
    }
    let p = k + 1.0;
    p * x.powf(k) / (hi.powf(p) - lo.powf(p))
}

fn normal_pdf(z: f64) -> f64 {
    (-0.5 * z * z).exp() / (TAU).sqrt()
}

fn normal_cdf(z: f64) -> f64 {
    0.5 * (1.0 + erf(z / std::f64::consts::SQRT_2))
}

/// Truncated normal: plain rejection when the window holds a fair share of the mass; else,
/// with the window reflected to the upper side of the mean, one of the two proposals of
/// Robert (1995, Statistics and Computing 5, 121): the translated exponential of rate
/// α = (a + √(a² + 4))/2 on [a, ∞), or the uniform on [a, b], whichever keeps the acceptance
/// above one half (the rule is derived in methods.md, "Truncated normal in the far tail").
/// Exact at any distance from the mean: no CDF is inverted.
fn truncated_normal<R: Rng + ?Sized>(rng: &mut R, mean: f64, sigma: f64, lo: f64, hi: f64) -> f64 {
    let (a, b) = ((lo - mean) / sigma, (hi - mean) / sigma);
    if normal_window_mass(a, b) > 0.25 {
        loop {
            let z: f64 = rng.sample(StandardNormal);
            if z >= a && z <= b {
                return mean + sigma * z;
            }
        }
    }
    let z = if a >= 0.0 {
        upper_window(rng, a, b)
    } else if b <= 0.0 {
        -upper_window(rng, -b, -a)
    } else {
        // A narrow window about the mean (mass ≤ 0.25: width below 0.64): the uniform
        // proposal accepts with probability exp(−z²/2) ≥ 0.81.
        loop {
            let z = a + rng.random::<f64>() * (b - a);
            if rng.random::<f64>() <= (-0.5 * z * z).exp() {
                break z;
            }
        }
    };
    (mean + sigma * z).clamp(lo, hi)
}

/// A standard normal draw restricted to [a, b], 0 ≤ a < b (b may be infinite); Robert (1995).
fn upper_window<R: Rng + ?Sized>(rng: &mut R, a: f64, b: f64) -> f64 {
    let alpha = 0.5 * (a + (a * a + 4.0).sqrt());
    if alpha * (b - a) >= 1.0 {
        // Translated exponential: z = a + Exp(α), accepted with exp(−(z − α)²/2); a draw
        // beyond b is rejected too (at most e⁻¹ of them, since α (b − a) ≥ 1).
        loop {
            let z = a - (1.0 - rng.random::<f64>()).ln() / alpha;
            let d = z - alpha;
            if z <= b && rng.random::<f64>() <= (-0.5 * d * d).exp() {
                return z;
            }
        }
    }
    // Uniform on [a, b], accepted with exp((a² − z²)/2) = exp(−(z − a)(z + a)/2); a (b − a) < 1
    // keeps the acceptance above 1 − e⁻¹.
    loop {
        let z = a + rng.random::<f64>() * (b - a);
        if rng.random::<f64>() <= (-0.5 * (z - a) * (z + a)).exp() {
            return z;
        }
    }
}

/// Φ(b) − Φ(a) without cancellation in either tail (through erfc on the side away from 0).
fn normal_window_mass(a: f64, b: f64) -> f64 {
    if a >= 0.0 {
        0.5 * (erfc(a / SQRT_2) - erfc(b / SQRT_2))
    } else if b <= 0.0 {
        0.5 * (erfc(-b / SQRT_2) - erfc(-a / SQRT_2))
    } else {
        1.0 - 0.5 * (erfc(-a / SQRT_2) + erfc(b / SQRT_2))
    }
}

/// Density at z of the standard normal restricted to [a, b], as φ(r)/mass · exp(−(z − r)(z + r)/2)
/// with r the point of the window nearest 0, so that neither factor underflows in the far
/// tail (windows up to `TRUNCATED_NORMAL_MAX_SIGMA` from the mean).
fn truncated_normal_pdf(a: f64, b: f64, z: f64) -> f64 {
    let r = 0f64.clamp(a, b);
    normal_pdf(r) / normal_window_mass(a, b) * (-0.5 * (z - r) * (z + r)).exp()
}

/// How far (in σ) from its mean a truncated normal's window may lie: beyond, Φ's tail mass
/// (below 1e-268 at 35σ) comes near the smallest double and the density cannot be normalised.
pub const TRUNCATED_NORMAL_MAX_SIGMA: f64 = 35.0;

/// sin i exp(−i²/2σ²), i and σ in radians.
pub(super) fn sin_gaussian_density(s: f64, i: f64) -> f64 {
    i.sin() * (-i * i / (2.0 * s * s)).exp()
}

/// ∫_0^x sin i exp(−i²/2σ²) di by composite Simpson (the integrand is smooth; 2000 panels
/// give ~1e-12 relative accuracy for σ ≥ 0.1°).
pub(super) fn sin_gaussian_mass(s: f64, x: f64) -> f64 {
    let n = 2000;
    let h = x / n as f64;
    let inner: f64 = (1..n)
        .map(|j| sin_gaussian_density(s, j as f64 * h) * if j % 2 == 1 { 4.0 } else { 2.0 })
        .sum();
    (inner + sin_gaussian_density(s, x)) * h / 3.0
}

/// Rejection from the Rayleigh density i exp(−i²/2σ²) ≥ sin i exp(−i²/2σ²): accept with
/// probability sin(i)/i, and never beyond π. For a wide σ (above 1 rad) the Rayleigh mostly
/// falls beyond π (a σ of 1e6° would loop for ever): propose from sin i / 2 on [0, π] instead
/// and accept with exp(−i²/2σ²) ≥ exp(−π²/2σ²) ≥ 0.007, on average above 0.3.
fn sin_gaussian<R: Rng + ?Sized>(rng: &mut R, s: f64, first_u: f64) -> f64 {
    let mut u = first_u;
    if s > 1.0 {
        loop {
            let i = (1.0 - 2.0 * u).clamp(-1.0, 1.0).acos();
            if rng.random::<f64>() <= (-i * i / (2.0 * s * s)).exp() {
                return i;
            }
            u = rng.random();
        }
    }
    loop {
        let i = s * (-2.0 * (1.0 - u).ln()).sqrt();
        let accept: f64 = rng.random();
        if i < PI && accept * i <= i.sin() {
            return i;
        }
        u = rng.random();
    }
}

/// Above this concentration the von Mises is drawn as the Gaussian of variance 1/κ it tends
/// to (Mardia & Jupp 2000, Directional Statistics, §3.5.4; from memory): the relative error of
/// the spread is of order 1/κ (below 1e-6 here), while Best & Fisher's constants round to 1 in
/// double precision for κ of about 1e16 and above, and their loop would never end.
const VON_MISES_GAUSSIAN_KAPPA: f64 = 1e6;

/// Von Mises sampler of Best & Fisher (1979, Appl. Statist. 28, 152), result in [0, 2π).
fn von_mises<R: Rng + ?Sized>(rng: &mut R, mu: f64, kappa: f64) -> f64 {
    if kappa < 1e-6 {
        return rng.random::<f64>() * TAU;
    }
    if kappa > VON_MISES_GAUSSIAN_KAPPA {
        let z: f64 = rng.sample(StandardNormal);
        return (mu + z / kappa.sqrt()).rem_euclid(TAU);
    }
    let tau = 1.0 + (1.0 + 4.0 * kappa * kappa).sqrt();
    let rho = (tau - (2.0 * tau).sqrt()) / (2.0 * kappa);
    let r = (1.0 + rho * rho) / (2.0 * rho);
    loop {
        let (u1, u2, u3): (f64, f64, f64) = (rng.random(), rng.random(), rng.random());
        let z = (PI * u1).cos();
        let f = (1.0 + r * z) / (r + z);
        let c = kappa * (r - f);
        if c * (2.0 - c) - u2 > 0.0 || (c / u2).ln() + 1.0 - c >= 0.0 {
            let theta = mu + (u3 - 0.5).signum() * f.clamp(-1.0, 1.0).acos();
            return theta.rem_euclid(TAU);
        }
    }
}

/// e^(−x) I_ν(x) for ν = 0, 1: power series for x ≤ 30, else the asymptotic expansion
/// (Abramowitz & Stegun 9.6.10 and 9.7.1).
pub fn bessel_ie(nu: u32, x: f64) -> f64 {
    if x <= 30.0 {
        let y = x * x / 4.0;
        // (x/2)^ν / ν!, with ν! = 1 for ν = 0, 1.
        let mut term = (x / 2.0).powi(nu as i32);
        let mut sum = term;
        for k in 1..200 {
            term *= y / (k as f64 * (k + nu) as f64);
            sum += term;
            if term < sum * 1e-17 {
                break;
            }
        }
        return sum * (-x).exp();
    }
    let mu = 4.0 * (nu * nu) as f64;
    let (mut term, mut sum) = (1.0, 1.0);
    for k in 1..12 {
        let odd = (2 * k - 1) as f64;
        term *= -(mu - odd * odd) / (k as f64 * 8.0 * x);
        sum += term;
    }
    sum / (TAU * x).sqrt()
}

fn bessel_i0e(x: f64) -> f64 {
    bessel_ie(0, x)
}

/// Mean resultant length of a von Mises distribution, A(κ) = I1(κ)/I0(κ).
pub fn von_mises_mean_resultant_length(kappa: f64) -> f64 {
    bessel_ie(1, kappa) / bessel_ie(0, kappa)
}

fn histogram_sample(edges: &[f64], counts: &[f64], u: f64, v: f64) -> f64 {
    let total: f64 = counts.iter().sum();
    let mut acc = 0.0;
    for (i, c) in counts.iter().enumerate() {
        acc += c / total;
        if u < acc || i == counts.len() - 1 {
            return edges[i] + v * (edges[i + 1] - edges[i]);
        }
    }
    unreachable!("counts is not empty")
}
