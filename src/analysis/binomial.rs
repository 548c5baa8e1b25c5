//! Binomial proportions: the estimate, its standard error and the Wilson score interval
//! (Wilson 1927, J. Am. Stat. Assoc. 22, 209), the interval used by astropy's
//! `binom_conf_interval(..., interval='wilson')`.

/// z of the two-sided 95% normal interval, √2 erf⁻¹(0.95), as astropy computes it.
pub const Z95: f64 = 1.959_963_984_540_054;

/// A proportion k/n with its binomial standard error and 95% Wilson interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Proportion {
    pub k: u64,
    pub n: u64,
    pub fraction: f64,
    pub std_error: f64,
    pub lower: f64,
    pub upper: f64,
}

impl Proportion {
    /// k successes in n trials; n = 0 gives NaN estimates and the uninformative [0, 1].
    pub fn new(k: u64, n: u64) -> Self {
        let (lower, upper) = wilson(k, n, Z95);
        if n == 0 {
            return Proportion {
                k,
                n,
                fraction: f64::NAN,
                std_error: f64::NAN,
                lower,
                upper,
            };
        }
        let p = k as f64 / n as f64;
        Proportion {
            k,
            n,
            fraction: p,
            std_error: (p * (1.0 - p) / n as f64).sqrt(),
            lower,
            upper,
        }
    }
}

/// Wilson score interval for k successes in n trials at normal quantile z:
/// centre (k + z²/2)/(n + z²), half-width z √n/(n + z²) √(p(1 − p) + z²/(4n)), clipped to [0, 1].
pub fn wilson(k: u64, n: u64, z: f64) -> (f64, f64) {
    if n == 0 {
        return (0.0, 1.0);
    }
    let (k, n) = (k as f64, n as f64);
    let p = k / n;
    let z2 = z * z;
    let centre = (k + z2 / 2.0) / (n + z2);
    let half = z * n.sqrt() / (n + z2) * (p * (1.0 - p) + z2 / (4.0 * n)).sqrt();
    ((centre - half).max(0.0), (centre + half).min(1.0))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wilson_brackets_the_estimate() {
        for n in 1..40 {
            for k in 0..=n {
                let (lo, hi) = wilson(k, n, Z95);
                let p = k as f64 / n as f64;
                assert!(lo <= p + 1e-15 && p <= hi + 1e-15, "{k}/{n}: [{lo}, {hi}]");
            }
        }
    }
}
