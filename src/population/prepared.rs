//! A distribution with the constants of its sampler computed once (powers of the bounds,
//! the masses of the luminosity-function pieces, cosines of the inclination range), so the
//! per-object cost is one or two transcendental functions. The sampler prepares each
//! distribution of a spec once per chunk; `Distribution::sample` goes through here too, so
//! there is one sampling path.

use rand::{Rng, RngExt};

use super::distribution::{Distribution, ExpPiece, sin_gaussian_density, sin_gaussian_mass};

#[derive(Debug, Clone)]
pub struct PreparedDistribution {
    dist: Distribution,
    fast: Fast,
}

#[derive(Debug, Clone)]
enum Fast {
    /// x = (lo^p + u (hi^p − lo^p))^(1/p), p = k + 1 ≠ 0.
    PowerLaw {
        lo: f64,
        hi: f64,
        lo_p: f64,
        span: f64,
        inv_p: f64,
    },
    /// x = lo (hi/lo)^u = lo exp(u ln(hi/lo)).
    LogUniform {
        lo: f64,
        hi: f64,
        ln_ratio: f64,
    },
    /// i = acos(cos lo + u (cos hi − cos lo)), in degrees.
    Isotropic {
        lo: f64,
        hi: f64,
        c0: f64,
        dc: f64,
    },
    /// σ in radians and the normalisation Z = ∫_0^π sin i exp(−i²/2σ²) di (for the pdf only:
    /// the sampler needs no constant).
    SinGaussian {
        s: f64,
        z: f64,
    },
    /// Two exponential pieces with their masses and expm1 terms.
    Luminosity {
        p: [ExpPiece; 2],
        m0: f64,
        total: f64,
        em1: [f64; 2],
    },
    Direct,
}

impl Distribution {
    /// One draw from the distribution (through `PreparedDistribution`, the one sampling path; prepare
    /// once and reuse it where many draws are made). Defined here, beside the sampler, so that
    /// the distributions' file needs nothing of this one.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        PreparedDistribution::new(self.clone()).sample(rng)
    }
}

impl PreparedDistribution {
    pub fn new(dist: Distribution) -> Self {
        use Distribution::*;
        let fast = match dist {
            LogUniform { lo, hi } => Fast::LogUniform {
                lo,
                hi,
                ln_ratio: (hi / lo).ln(),
            },
            PowerLaw { k, lo, hi } if (k + 1.0).abs() < 1e-12 => Fast::LogUniform {
                lo,
                hi,
                ln_ratio: (hi / lo).ln(),
            },
            PowerLaw { k, lo, hi } => {
                let p = k + 1.0;
                Fast::PowerLaw {
                    lo,
                    hi,
                    lo_p: lo.powf(p),
                    span: hi.powf(p) - lo.powf(p),
                    inv_p: 1.0 / p,
                }
            }
            Isotropic { .. } => {
                let (lo, hi) = dist.isotropic_range();
                let c0 = lo.to_radians().cos();
                Fast::Isotropic {
                    lo,
                    hi,
                    c0,
                    dc: hi.to_radians().cos() - c0,
                }
            }
            Exponential { .. } | Knee { .. } | Divot { .. } => {
                let p = dist.pieces();
                let (m0, m1) = (p[0].mass_to(p[0].x1), p[1].mass_to(p[1].x1));
                Fast::Luminosity {
                    p,
                    m0,
                    total: m0 + m1,
                    em1: [p[0].em1(), p[1].em1()],
                }
            }
            SinGaussian { sigma } => {
                let s = sigma.to_radians();
                Fast::SinGaussian {
                    s,
                    z: sin_gaussian_mass(s, std::f64::consts::PI),
                }
            }
            _ => Fast::Direct,
        };
        PreparedDistribution { dist, fast }
    }

    pub fn distribution(&self) -> &Distribution {
        &self.dist
    }

    /// One draw.
    #[inline]
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let u: f64 = rng.random();
        self.sample_u(rng, u)
    }

    /// One draw given its first uniform variate `u` in [0, 1).
    pub(super) fn sample_u<R: Rng + ?Sized>(&self, rng: &mut R, u: f64) -> f64 {
        match &self.fast {
            Fast::PowerLaw {
                lo,
                hi,
                lo_p,
                span,
                inv_p,
            } => (lo_p + u * span).powf(*inv_p).clamp(*lo, *hi),
            Fast::LogUniform { lo, hi, ln_ratio } => (lo * (u * ln_ratio).exp()).clamp(*lo, *hi),
            Fast::Isotropic { lo, hi, c0, dc } => (c0 + u * dc).clamp(-1.0, 1.0).acos().to_degrees().clamp(*lo, *hi),
            Fast::Luminosity { .. } => self.luminosity(u),
            Fast::Direct | Fast::SinGaussian { .. } => self.dist.sample_direct(rng, u),
        }
    }

    /// Probability density at x, as `Distribution::pdf` but with the sin i × Gaussian
    /// normalisation computed once (importance weights call this per object).
    pub fn pdf(&self, x: f64) -> Option<f64> {
        match self.fast {
            Fast::SinGaussian { s, z } if (0.0..=180.0).contains(&x) => {
                Some(sin_gaussian_density(s, x.to_radians()) / z * std::f64::consts::PI / 180.0)
            }
            _ => self.dist.pdf(x),
        }
    }

    /// Inverse CDF of the piecewise exponential luminosity function.
    pub(super) fn luminosity(&self, u: f64) -> f64 {
        let Fast::Luminosity { p, m0, total, em1 } = &self.fast else {
            unreachable!("a luminosity function")
        };
        let target = u * total;
        if target < *m0 {
            p[0].invert(target / m0, em1[0])
        } else {
            p[1].invert((target - m0) / (total - m0), em1[1])
        }
    }
}
