//! Densities of a model's detected objects in an observable space and the log-likelihood of
//! an observed catalogue under them: a Gaussian kernel density estimate (bandwidth by Scott's
//! rule, kernel covariance = data covariance × factor², as scipy.stats.gaussian_kde; Scott,
//! *Multivariate Density Estimation*, 1992) or a histogram with a pseudo-count in every bin.
//! Both can also draw synthetic catalogues from themselves (a smoothed bootstrap).

use nalgebra::{DMatrix, DVector};
use rand::RngExt;
use rand_distr::StandardNormal;
use rand_pcg::Pcg64;

use crate::error::{Error, Result};

/// How the detected distribution is turned into a density.
#[derive(Debug, Clone, PartialEq)]
pub enum DensityKind {
    /// Gaussian kernels, Scott's factor n_eff^(−1/(d+4)).
    Kde,
    /// Bins with these edges per dimension; `pseudo` counts added to every bin so that an
    /// empty bin does not give ln L = −∞ (common practice, no source).
    Binned { edges: Vec<Vec<f64>>, pseudo: f64 },
}

/// A density over points of dimension d (rows of `points`).
#[derive(Debug, Clone)]
pub enum Density {
    Kde(Kde),
    Binned(Binned),
}

impl Density {
    /// Build from weighted points (weights ≥ 0, not all 0).
    pub fn fit(kind: &DensityKind, points: &[Vec<f64>], weights: &[f64]) -> Result<Self> {
        match kind {
            DensityKind::Kde => Kde::new(points, weights).map(Density::Kde),
            DensityKind::Binned { edges, pseudo } => Binned::new(points, weights, edges, *pseudo).map(Density::Binned),
        }
    }
    pub fn pdf(&self, x: &[f64]) -> f64 {
        match self {
            Density::Kde(k) => k.pdf(x),
            Density::Binned(b) => b.pdf(x),
        }
    }
    /// Σ ln p(x) over a catalogue.
    pub fn log_likelihood(&self, catalogue: &[Vec<f64>]) -> f64 {
        catalogue.iter().map(|x| self.pdf(x).ln()).sum()
    }
    pub fn sample(&self, rng: &mut Pcg64) -> Vec<f64> {
        match self {
            Density::Kde(k) => k.sample(rng),
            Density::Binned(b) => b.sample(rng),
        }
    }
}

/// Pick an index with probability proportional to its entry of a cumulative sum.
fn pick(cumulative: &[f64], rng: &mut Pcg64) -> usize {
    let u = rng.random::<f64>() * cumulative.last().copied().unwrap_or(0.0);
    cumulative.partition_point(|c| *c <= u).min(cumulative.len() - 1)
}

fn cumsum(w: &[f64]) -> Vec<f64> {
    w.iter()
        .scan(0.0, |s, x| {
            *s += x;
            Some(*s)
        })
        .collect()
}

/// Gaussian kernel density estimate.
#[derive(Debug, Clone)]
pub struct Kde {
    points: Vec<DVector<f64>>,
    weights: Vec<f64>,
    cumulative: Vec<f64>,
    /// Cholesky factor of the kernel covariance.
    chol: DMatrix<f64>,
    inv_cov: DMatrix<f64>,
    norm: f64,
    pub factor: f64,
}

impl Kde {
    pub fn new(points: &[Vec<f64>], weights: &[f64]) -> Result<Self> {
        let d = points.first().map_or(0, Vec::len);
        let total: f64 = weights.iter().sum();
        if points.len() < 2 || d == 0 || !(total > 0.0) {
            return Err(Error::input(
                "a kernel density needs at least two points of positive weight",
            ));
        }
        let w: Vec<f64> = weights.iter().map(|x| x / total).collect();
        let neff = 1.0 / w.iter().map(|x| x * x).sum::<f64>();
        let factor = neff.powf(-1.0 / (d as f64 + 4.0));
        let pts: Vec<DVector<f64>> = points.iter().map(|p| DVector::from_column_slice(p)).collect();
        let mean: DVector<f64> = pts.iter().zip(&w).map(|(p, w)| p * *w).sum();
        let mut cov = DMatrix::<f64>::zeros(d, d);
        for (p, wi) in pts.iter().zip(&w) {
            let r = p - &mean;
            cov += &r * r.transpose() * *wi;
        }
        // Unbiased weighted covariance; with equal weights this is ddof = 1.
        cov /= 1.0 - w.iter().map(|x| x * x).sum::<f64>();
        let kcov = cov * factor * factor;
        let chol = kcov.clone().cholesky().ok_or_else(|| {
            Error::input(
                "the detected points are degenerate (zero spread in some direction); a kernel density cannot be built",
            )
        })?;
        let det = chol.l().diagonal().iter().map(|x| x * x).product::<f64>();
        let inv_cov = chol.inverse();
        let norm = 1.0 / ((std::f64::consts::TAU).powf(d as f64 / 2.0) * det.sqrt());
        Ok(Kde {
            cumulative: cumsum(&w),
            points: pts,
            weights: w,
            chol: chol.l(),
            inv_cov,
            norm,
            factor,
        })
    }

    pub fn pdf(&self, x: &[f64]) -> f64 {
        let x = DVector::from_column_slice(x);
        let s: f64 = self
            .points
            .iter()
            .zip(&self.weights)
            .map(|(p, w)| {
                let r = &x - p;
                w * (-0.5 * (r.transpose() * &self.inv_cov * &r)[(0, 0)]).exp()
            })
            .sum();
        s * self.norm
    }

    fn sample(&self, rng: &mut Pcg64) -> Vec<f64> {
        let p = &self.points[pick(&self.cumulative, rng)];
        let z = DVector::from_iterator(p.len(), (0..p.len()).map(|_| rng.sample::<f64, _>(StandardNormal)));
        (p + &self.chol * z).iter().copied().collect()
    }
}

/// Histogram density on a rectangular grid of bins.
#[derive(Debug, Clone)]
pub struct Binned {
    edges: Vec<Vec<f64>>,
    /// Probability of each bin (row-major over the dimensions), pseudo-counts included.
    prob: Vec<f64>,
    cumulative: Vec<f64>,
}

impl Binned {
    pub fn new(points: &[Vec<f64>], weights: &[f64], edges: &[Vec<f64>], pseudo: f64) -> Result<Self> {
        if edges
            .iter()
            .any(|e| e.len() < 2 || e.windows(2).any(|w| !(w[1] > w[0])))
        {
            return Err(Error::input(
                "bin edges must be at least two increasing values per dimension",
            ));
        }
        let nbins: usize = edges.iter().map(|e| e.len() - 1).product();
        let mut counts = vec![pseudo; nbins];
        for (p, w) in points.iter().zip(weights) {
            if let Some(b) = bin_of(edges, p) {
                counts[b] += w;
            }
        }
        let total: f64 = counts.iter().sum();
        if !(total > 0.0) {
            return Err(Error::input(
                "no detected point falls inside the bins and the pseudo-count is 0",
            ));
        }
        let prob: Vec<f64> = counts.iter().map(|c| c / total).collect();
        Ok(Binned {
            cumulative: cumsum(&prob),
            edges: edges.to_vec(),
            prob,
        })
    }

    fn volume(&self, mut b: usize) -> f64 {
        let mut v = 1.0;
        for e in self.edges.iter().rev() {
            let n = e.len() - 1;
            v *= e[b % n + 1] - e[b % n];
            b /= n;
        }
        v
    }

    pub fn pdf(&self, x: &[f64]) -> f64 {
        bin_of(&self.edges, x).map_or(0.0, |b| self.prob[b] / self.volume(b))
    }

    fn sample(&self, rng: &mut Pcg64) -> Vec<f64> {
        let mut b = pick(&self.cumulative, rng);
        let mut x = vec![0.0; self.edges.len()];
        for (d, e) in self.edges.iter().enumerate().rev() {
            let n = e.len() - 1;
            let k = b % n;
            x[d] = e[k] + rng.random::<f64>() * (e[k + 1] - e[k]);
            b /= n;
        }
        x
    }
}

/// Row-major bin index of a point, None outside the grid (upper edges inclusive at the top).
pub fn bin_of(edges: &[Vec<f64>], x: &[f64]) -> Option<usize> {
    let mut idx = 0;
    for (e, v) in edges.iter().zip(x) {
        let n = e.len() - 1;
        if !(*v >= e[0] && *v <= e[n]) {
            return None;
        }
        let k = (e.partition_point(|t| t <= v) - 1).min(n - 1);
        idx = idx * n + k;
    }
    Some(idx)
}
