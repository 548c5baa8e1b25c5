//! Densities of a model's detected objects in an observable space, built to respect it: ln of
//! scale variables, reflection at hard bounds, von Mises kernels on angles, weights honoured;
//! one bandwidth shared by every model of a comparison; or bins with a prior worth a fixed
//! number of objects. Also the plain weighted Gaussian kernel estimate of
//! scipy.stats.gaussian_kde (`Kde`), which the tests check against scipy. Derivations in
//! methods.md, "Densities of detected objects".
//!
//! A density is a sum over the model's points: p(x) = g(Σ wᵢ K(x, xᵢ), Σ wᵢ, Σ wᵢ²) (the kernel
//! estimate divides the sum by Σw; the binned one mixes it with its prior), so the goodness of
//! fit can remove points (leave-the-catalogue-out) and the bootstrap can reweight them
//! (`ModelDensity::pdf_from_sums`).

use std::f64::consts::{PI, TAU};

use nalgebra::{DMatrix, DVector};

use super::space::Coordinate;
use crate::error::{Error, Result};
use crate::population::distribution::bessel_ie;
use crate::statistics::kish_n;

/// The working coordinate of a value: ln x for scale variables, radians for angles.
fn working(c: Coordinate, x: f64) -> f64 {
    match c {
        Coordinate::Log => x.ln(),
        Coordinate::Angle => x.to_radians(),
        Coordinate::Bounded { .. } | Coordinate::Linear => x,
    }
}

/// ln of |d(working)/d(value)|: the factor that turns a density in working coordinates into one
/// in the observables' own units.
fn ln_jacobian(coords: &[Coordinate], x: &[f64]) -> f64 {
    coords
        .iter()
        .zip(x)
        .map(|(c, v)| match c {
            Coordinate::Log => -v.ln(),
            Coordinate::Angle => (PI / 180.0).ln(),
            _ => 0.0,
        })
        .sum()
}

/// The kernel's width: a covariance over the non-angle coordinates (working units) and a
/// concentration per angle.
#[derive(Debug, Clone, PartialEq)]
pub struct Bandwidth {
    /// h: Scott's factor at the catalogue's size.
    pub factor: f64,
    /// h² C over the non-angle coordinates, in the order of the space.
    pub covariance: DMatrix<f64>,
    /// κ per angle, in the order of the space.
    pub kappa: Vec<f64>,
}

impl Bandwidth {
    /// One bandwidth for every model (methods.md): C from the equal-weight mixture of the models'
    /// detected points (observable units), h = n_catalogue^(−1/(d+4)).
    pub fn shared(coords: &[Coordinate], models: &[(&[Vec<f64>], &[f64])], n_catalogue: f64) -> Result<Self> {
        let d = coords.len();
        let factor = n_catalogue.max(1.0).powf(-1.0 / (d as f64 + 4.0));
        let mut pts: Vec<Vec<f64>> = Vec::new();
        let mut w: Vec<f64> = Vec::new();
        for (p, wm) in models {
            let total: f64 = wm.iter().sum();
            if !(total > 0.0) {
                continue;
            }
            for (x, wi) in p.iter().zip(*wm) {
                pts.push(coords.iter().zip(x).map(|(c, v)| working(*c, *v)).collect());
                w.push(wi / total / models.len() as f64);
            }
        }
        Self::of_points(coords, &pts, &w, factor)
    }

    /// C from weighted points already in working coordinates, scaled by `factor`².
    fn of_points(coords: &[Coordinate], pts: &[Vec<f64>], w: &[f64], factor: f64) -> Result<Self> {
        let total: f64 = w.iter().sum();
        if pts.len() < 2 || !(total > 0.0) {
            return Err(Error::input(
                "a kernel density needs at least two detected model objects of positive weight",
            ));
        }
        let w: Vec<f64> = w.iter().map(|x| x / total).collect();
        let lin: Vec<usize> = (0..coords.len()).filter(|k| coords[*k] != Coordinate::Angle).collect();
        let mut cov = DMatrix::<f64>::zeros(lin.len(), lin.len());
        if !lin.is_empty() {
            let mean: Vec<f64> = lin
                .iter()
                .map(|&k| pts.iter().zip(&w).map(|(p, wi)| p[k] * wi).sum())
                .collect();
            for (p, wi) in pts.iter().zip(&w) {
                for (a, &ka) in lin.iter().enumerate() {
                    for (b, &kb) in lin.iter().enumerate() {
                        cov[(a, b)] += wi * (p[ka] - mean[a]) * (p[kb] - mean[b]);
                    }
                }
            }
            // The unbiased weighted covariance (numpy's aweights; ddof = 1 for equal weights).
            cov /= 1.0 - w.iter().map(|x| x * x).sum::<f64>();
        }
        let kappa = (0..coords.len())
            .filter(|k| coords[*k] == Coordinate::Angle)
            .map(|k| {
                let (s, c) = pts
                    .iter()
                    .zip(&w)
                    .fold((0.0, 0.0), |(s, c), (p, wi)| (s + wi * p[k].sin(), c + wi * p[k].cos()));
                let r = (s * s + c * c).sqrt();
                let var = if r > 0.0 {
                    (-2.0 * r.ln()).min(PI * PI / 3.0)
                } else {
                    PI * PI / 3.0
                };
                1.0 / (factor * factor * var.max(1e-12))
            })
            .collect();
        Ok(Bandwidth {
            factor,
            covariance: cov * factor * factor,
            kappa,
        })
    }
}

/// A point prepared for kernel sums: whitened non-angle coordinates and (cos, sin) of angles.
#[derive(Debug, Clone, PartialEq)]
pub struct Prepared {
    z: Vec<f64>,
    cs: Vec<(f64, f64)>,
}

/// A query point: the whitened images of its non-angle coordinates (itself and its mirrors at
/// every bound), its angles, and the ln Jacobian to observable units.
#[derive(Debug, Clone, PartialEq)]
pub struct Query {
    images: Vec<Vec<f64>>,
    cs: Vec<(f64, f64)>,
    ln_jacobian: f64,
}

/// How far beyond a bound (in kernel σ) a mirror image is still summed.
const MIRROR_REACH: f64 = 12.0;

/// The product kernel: a Gaussian over the non-angle coordinates (reflected at bounds) times a
/// von Mises per angle.
#[derive(Debug, Clone)]
pub struct Kernel {
    coords: Vec<Coordinate>,
    /// Inverse of the Cholesky factor of the covariance: z = L⁻¹ y.
    whiten: DMatrix<f64>,
    kappa: Vec<f64>,
    /// ln of the normalization in working coordinates (the Gaussian's and every von Mises').
    ln_norm: f64,
    /// The kernel's σ per non-angle coordinate (working units): a mirror image farther than
    /// `MIRROR_REACH` σ beyond a bound adds less than e^(−72) of a kernel's peak and is skipped.
    sigma: Vec<f64>,
    pub bandwidth: Bandwidth,
}

impl Kernel {
    pub fn new(coords: &[Coordinate], bandwidth: &Bandwidth) -> Result<Self> {
        let nl = coords.iter().filter(|c| **c != Coordinate::Angle).count();
        let (whiten, ln_det) = if nl == 0 {
            (DMatrix::zeros(0, 0), 0.0)
        } else {
            let chol = bandwidth.covariance.clone().cholesky().ok_or_else(|| {
                Error::input(
                    "the detected model objects have no spread in some direction of the space \
                     (a constant value, or observables that determine each other such as a, q and e): \
                     a kernel density cannot be built; choose other observables",
                )
            })?;
            let l = chol.l();
            let ln_det: f64 = l.diagonal().iter().map(|x| 2.0 * x.ln()).sum();
            let inv = l
                .clone()
                .try_inverse()
                .ok_or_else(|| Error::input("singular kernel covariance"))?;
            (inv, ln_det)
        };
        let ln_gauss = -0.5 * (nl as f64 * TAU.ln() + ln_det);
        // von Mises normalization 1/(2π I0(κ)) written with I0e(κ) = e^(−κ) I0(κ); the kernel
        // below is exp(κ (cos − 1)), so the e^κ cancels.
        let ln_vm: f64 = bandwidth.kappa.iter().map(|k| -(TAU * bessel_ie(0, *k)).ln()).sum();
        Ok(Kernel {
            coords: coords.to_vec(),
            whiten,
            kappa: bandwidth.kappa.clone(),
            ln_norm: ln_gauss + ln_vm,
            sigma: (0..nl).map(|k| bandwidth.covariance[(k, k)].sqrt()).collect(),
            bandwidth: bandwidth.clone(),
        })
    }

    fn split(&self, x: &[f64]) -> (Vec<f64>, Vec<(f64, f64)>) {
        let mut lin = Vec::new();
        let mut cs = Vec::new();
        for (c, v) in self.coords.iter().zip(x) {
            let y = working(*c, *v);
            if *c == Coordinate::Angle {
                cs.push((y.cos(), y.sin()));
            } else {
                lin.push(y);
            }
        }
        (lin, cs)
    }

    fn whitened(&self, y: &[f64]) -> Vec<f64> {
        (&self.whiten * DVector::from_column_slice(y)).iter().copied().collect()
    }

    pub fn prepare(&self, x: &[f64]) -> Prepared {
        let (lin, cs) = self.split(x);
        Prepared {
            z: self.whitened(&lin),
            cs,
        }
    }

    pub fn query(&self, x: &[f64]) -> Query {
        let (lin, cs) = self.split(x);
        let mut images = vec![lin];
        let bounds = self.coords.iter().filter(|c| **c != Coordinate::Angle).enumerate();
        for (k, c) in bounds {
            if let Coordinate::Bounded { lo, hi } = c {
                let n = images.len();
                for j in 0..n {
                    for edge in [*lo, *hi] {
                        if (images[0][k] - edge).abs() > MIRROR_REACH * self.sigma[k] {
                            continue;
                        }
                        let mut m = images[j].clone();
                        m[k] = 2.0 * edge - m[k];
                        images.push(m);
                    }
                }
            }
        }
        Query {
            images: images.iter().map(|y| self.whitened(y)).collect(),
            cs,
            ln_jacobian: ln_jacobian(&self.coords, x),
        }
    }

    /// K(x, xᵢ) in working coordinates.
    pub fn eval(&self, q: &Query, p: &Prepared) -> f64 {
        let mut ang = 0.0;
        for ((k, (c, s)), (ci, si)) in self.kappa.iter().zip(&q.cs).zip(&p.cs) {
            ang += k * (c * ci + s * si - 1.0);
        }
        let mut sum = 0.0;
        for img in &q.images {
            let d2: f64 = img.iter().zip(&p.z).map(|(a, b)| (a - b) * (a - b)).sum();
            sum += (ang - 0.5 * d2 + self.ln_norm).exp();
        }
        sum
    }
}

/// A grid of bins in working coordinates with a prior worth `prior_objects` objects.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    coords: Vec<Coordinate>,
    /// Edges per coordinate, in working units.
    edges: Vec<Vec<f64>>,
    pub prior_objects: f64,
}

impl Grid {
    /// `bins` equal-width bins per coordinate: angles over [0°, 360°), bounded coordinates over
    /// their bounds, the others over the range of `values` (observable units, any rows).
    pub fn new(coords: &[Coordinate], bins: usize, values: &[&[Vec<f64>]], prior_objects: f64) -> Result<Self> {
        if bins == 0 || !(prior_objects >= 0.0 && prior_objects.is_finite()) {
            return Err(Error::input("--bins ≥ 1 and --prior-objects ≥ 0 expected"));
        }
        let edges = coords
            .iter()
            .enumerate()
            .map(|(d, c)| {
                let (lo, hi) = match c {
                    Coordinate::Angle => (0.0, TAU),
                    Coordinate::Bounded { lo, hi } => (*lo, *hi),
                    _ => {
                        let ys = values.iter().flat_map(|v| v.iter().map(|x| working(*c, x[d])));
                        let (lo, hi) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), y| (l.min(y), h.max(y)));
                        (lo, if hi > lo { hi } else { lo + 1.0 })
                    }
                };
                crate::statistics::lin_edges(lo, hi, bins)
            })
            .collect();
        Ok(Grid {
            coords: coords.to_vec(),
            edges,
            prior_objects,
        })
    }

    pub fn n_bins(&self) -> usize {
        self.edges.iter().map(|e| e.len() - 1).product()
    }

    pub fn cell(&self, x: &[f64]) -> Option<usize> {
        let y: Vec<f64> = self.coords.iter().zip(x).map(|(c, v)| working(*c, *v)).collect();
        let y: Vec<f64> = y
            .iter()
            .zip(&self.coords)
            .map(|(v, c)| if *c == Coordinate::Angle { v.rem_euclid(TAU) } else { *v })
            .collect();
        crate::statistics::grid_index(&self.edges, &y)
    }

    /// Volume of the cell holding x, in the observables' own units.
    fn volume(&self, cell: usize) -> f64 {
        crate::statistics::grid_cell(&self.edges, cell)
            .iter()
            .zip(&self.coords)
            .map(|((lo, hi), c)| match c {
                Coordinate::Log => hi.exp() - lo.exp(),
                Coordinate::Angle => (hi - lo).to_degrees(),
                _ => hi - lo,
            })
            .product()
    }
}

/// How the detected distribution becomes a density.
#[derive(Debug, Clone)]
pub enum Estimator {
    Kernel(Kernel),
    Binned(Grid),
}

impl Estimator {
    pub fn name(&self) -> &'static str {
        match self {
            Estimator::Kernel(_) => "kde",
            Estimator::Binned(_) => "binned",
        }
    }
}

/// A point of the model as a density term: its prepared kernel coordinates or its cell.
#[derive(Debug, Clone, PartialEq)]
enum Term {
    Kernel(Prepared),
    Cell(Option<usize>),
}

/// A point where the density is evaluated.
#[derive(Debug, Clone, PartialEq)]
pub enum At {
    Kernel(Query),
    Cell(Option<usize>, f64),
}

/// Weighted sums that define a density value: Σ wᵢ K(x, xᵢ), Σ wᵢ, Σ wᵢ².
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sums {
    pub s: f64,
    pub w: f64,
    pub w2: f64,
}

/// A model's detected density: its estimator, points and weights.
#[derive(Debug, Clone)]
pub struct ModelDensity {
    pub estimator: Estimator,
    terms: Vec<Term>,
    pub weights: Vec<f64>,
    pub total: Sums,
}

impl ModelDensity {
    /// The density of weighted points (observable units); weights ≥ 0, not all 0.
    pub fn new(estimator: &Estimator, points: &[Vec<f64>], weights: &[f64]) -> Result<Self> {
        let w: f64 = weights.iter().sum();
        if points.is_empty() || !(w > 0.0) {
            return Err(Error::input("a density needs detected objects of positive weight"));
        }
        let terms = points
            .iter()
            .map(|x| match estimator {
                Estimator::Kernel(k) => Term::Kernel(k.prepare(x)),
                Estimator::Binned(g) => Term::Cell(g.cell(x)),
            })
            .collect();
        Ok(ModelDensity {
            estimator: estimator.clone(),
            terms,
            weights: weights.to_vec(),
            total: Sums {
                s: 0.0,
                w,
                w2: weights.iter().map(|x| x * x).sum(),
            },
        })
    }

    pub fn len(&self) -> usize {
        self.terms.len()
    }

    pub fn is_empty(&self) -> bool {
        self.terms.is_empty()
    }

    pub fn at(&self, x: &[f64]) -> At {
        match &self.estimator {
            Estimator::Kernel(k) => At::Kernel(k.query(x)),
            Estimator::Binned(g) => {
                let cell = g.cell(x);
                At::Cell(cell, cell.map_or(f64::NAN, |c| g.volume(c)))
            }
        }
    }

    /// K(x, xᵢ) of model point i (unweighted).
    pub fn kernel(&self, at: &At, i: usize) -> f64 {
        match (&self.terms[i], at) {
            (Term::Kernel(p), At::Kernel(q)) => match &self.estimator {
                Estimator::Kernel(k) => k.eval(q, p),
                Estimator::Binned(_) => 0.0,
            },
            (Term::Cell(c), At::Cell(x, _)) => (c.is_some() && c == x) as u8 as f64,
            _ => 0.0,
        }
    }

    /// Σ wᵢ K(x, xᵢ) over all points, with the totals.
    pub fn sums(&self, at: &At) -> Sums {
        let s = (0..self.len()).map(|i| self.weights[i] * self.kernel(at, i)).sum();
        Sums { s, ..self.total }
    }

    /// The density (observable units) from sums over some (re)weighting of the points.
    pub fn pdf_from_sums(&self, at: &At, sums: Sums) -> f64 {
        if !(sums.w > 0.0) {
            return 0.0;
        }
        match (&self.estimator, at) {
            (Estimator::Kernel(_), At::Kernel(q)) => (sums.s / sums.w).max(0.0) * q.ln_jacobian.exp(),
            (Estimator::Binned(g), At::Cell(cell, volume)) => {
                if cell.is_none() {
                    return 0.0;
                }
                let n_eff = kish_n(sums.w, sums.w2);
                let b = g.n_bins() as f64;
                let p = (n_eff * sums.s.max(0.0) / sums.w + g.prior_objects / b) / (n_eff + g.prior_objects);
                p / volume
            }
            _ => 0.0,
        }
    }

    pub fn pdf(&self, x: &[f64]) -> f64 {
        let at = self.at(x);
        self.pdf_from_sums(&at, self.sums(&at))
    }

    /// Σ ln p(x) over a catalogue.
    pub fn log_likelihood(&self, catalogue: &[Vec<f64>]) -> f64 {
        catalogue.iter().map(|x| self.pdf(x).ln()).sum()
    }
}

/// The weighted Gaussian kernel density estimate of scipy.stats.gaussian_kde: Scott's factor
/// n_eff^(−1/(d+4)) with Kish's n_eff, kernel covariance = weighted data covariance × factor²,
/// every coordinate linear. The reference the tests check the kernel machinery against.
#[derive(Debug, Clone)]
pub struct Kde {
    density: ModelDensity,
    pub factor: f64,
    pub n_eff: f64,
}

impl Kde {
    pub fn new(points: &[Vec<f64>], weights: &[f64]) -> Result<Self> {
        let d = points.first().map_or(0, Vec::len);
        let coords = vec![Coordinate::Linear; d];
        let n_eff = crate::statistics::kish_n_of(weights);
        let factor = n_eff.powf(-1.0 / (d as f64 + 4.0));
        let bw = Bandwidth::of_points(&coords, points, weights, factor)?;
        let kernel = Kernel::new(&coords, &bw)?;
        Ok(Kde {
            density: ModelDensity::new(&Estimator::Kernel(kernel), points, weights)?,
            factor,
            n_eff,
        })
    }

    pub fn pdf(&self, x: &[f64]) -> f64 {
        self.density.pdf(x)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A one-point density in (x, e, θ) with a diagonal bandwidth.
    fn one_point(x: &[f64], coords: &[Coordinate], var: f64, kappa: f64) -> ModelDensity {
        let nl = coords.iter().filter(|c| **c != Coordinate::Angle).count();
        let na = coords.len() - nl;
        let bw = Bandwidth {
            factor: 1.0,
            covariance: DMatrix::identity(nl, nl) * var,
            kappa: vec![kappa; na],
        };
        let k = Kernel::new(coords, &bw).unwrap();
        ModelDensity::new(&Estimator::Kernel(k), &[x.to_vec()], &[1.0]).unwrap()
    }

    #[test]
    fn reflected_kernel_integrates_to_one_over_the_bounds() {
        // A kernel centred 0.02 from the lower bound of e: without reflection a third of the
        // mass would leak below 0.
        let d = one_point(&[0.02], &[Coordinate::Bounded { lo: 0.0, hi: 1.0 }], 0.05 * 0.05, 1.0);
        let n = 20_000;
        let integral: f64 = (0..n).map(|k| d.pdf(&[(k as f64 + 0.5) / n as f64]) / n as f64).sum();
        assert!((integral - 1.0).abs() < 1e-6, "{integral}");
    }

    #[test]
    fn log_coordinate_integrates_to_one_in_au() {
        let d = one_point(&[100.0], &[Coordinate::Log], 0.3 * 0.3, 1.0);
        let (lo, hi, n) = (1f64.ln(), 1e4f64.ln(), 40_000);
        let integral: f64 = (0..n)
            .map(|k| {
                let y = lo + (hi - lo) * (k as f64 + 0.5) / n as f64;
                d.pdf(&[y.exp()]) * y.exp() * (hi - lo) / n as f64
            })
            .sum();
        assert!((integral - 1.0).abs() < 1e-6, "{integral}");
    }

    #[test]
    fn angle_kernel_is_periodic_and_per_degree() {
        let d = one_point(&[350.0], &[Coordinate::Angle], 1.0, 8.0);
        assert!((d.pdf(&[10.0]) - d.pdf(&[-350.0 + 360.0])).abs() < 1e-15);
        assert!((d.pdf(&[330.0]) - d.pdf(&[10.0])).abs() < 1e-12, "symmetric about 350°");
        let integral: f64 = (0..3600).map(|k| d.pdf(&[k as f64 / 10.0 + 0.05]) / 10.0).sum();
        assert!((integral - 1.0).abs() < 1e-9, "{integral}");
    }

    #[test]
    fn binned_prior_is_in_objects_not_weights() {
        let coords = [Coordinate::Linear];
        let pts: Vec<Vec<f64>> = (0..10).map(|k| vec![k as f64 / 10.0]).collect();
        let g = Grid::new(&coords, 4, &[&pts], 1.0).unwrap();
        let a = ModelDensity::new(&Estimator::Binned(g.clone()), &pts, &[1.0; 10]).unwrap();
        let b = ModelDensity::new(&Estimator::Binned(g), &pts, &[1e-3; 10]).unwrap();
        for x in [0.05, 0.5, 0.85] {
            assert!((a.pdf(&[x]) - b.pdf(&[x])).abs() < 1e-12);
        }
        let integral: f64 = (0..900).map(|k| a.pdf(&[(k as f64 + 0.5) / 1000.0]) / 1000.0).sum();
        assert!((integral - 1.0).abs() < 1e-9, "{integral}");
    }
}
