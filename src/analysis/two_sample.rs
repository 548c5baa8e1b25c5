//! Two-sample tests on the marginals of an observed and a model sample: Kolmogorov–Smirnov
//! (statistic, exact p-value by lattice-path counting for small samples, otherwise the
//! one-sample Kolmogorov distribution at the effective size, as scipy.stats.ks_2samp does)
//! and the k-sample Anderson–Darling test (Scholz & Stephens 1987, J. Am. Stat. Assoc. 82,
//! 918, midrank form for ties; significance interpolated from their table as
//! scipy.stats.anderson_ksamp does, within [0.001, 0.25]).

use nalgebra::{DMatrix, Matrix3, Vector3};
use statrs::function::gamma::ln_gamma;

/// Which p-value a KS test used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KsMethod {
    Exact,
    Asymptotic,
}

/// A two-sample KS result.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ks {
    pub statistic: f64,
    pub p_value: f64,
    pub method: KsMethod,
}

fn sorted(x: &[f64]) -> Vec<f64> {
    let mut v = x.to_vec();
    v.sort_by(f64::total_cmp);
    v
}

/// D = sup |F_x − F_y|, both empirical CDFs evaluated after every tie.
pub fn ks_statistic(x: &[f64], y: &[f64]) -> f64 {
    let (x, y) = (sorted(x), sorted(y));
    let (nx, ny) = (x.len() as f64, y.len() as f64);
    let (mut i, mut j, mut d) = (0usize, 0usize, 0.0f64);
    while i < x.len() && j < y.len() {
        let v = x[i].min(y[j]);
        while i < x.len() && x[i] <= v {
            i += 1;
        }
        while j < y.len() && y[j] <= v {
            j += 1;
        }
        d = d.max((i as f64 / nx - j as f64 / ny).abs());
    }
    d
}

/// The two-sample KS test; exact when nx·ny ≤ 2500 (scipy's default switch), else asymptotic.
pub fn ks_two_sample(x: &[f64], y: &[f64]) -> Ks {
    let d = ks_statistic(x, y);
    let (n1, n2) = (x.len(), y.len());
    if n1 * n2 <= 2500 {
        Ks {
            statistic: d,
            p_value: ks_exact_p(n1, n2, d),
            method: KsMethod::Exact,
        }
    } else {
        let en = (n1 as f64 * n2 as f64 / (n1 + n2) as f64).round() as usize;
        Ks {
            statistic: d,
            p_value: kolmogorov_sf(en.max(1), d),
            method: KsMethod::Asymptotic,
        }
    }
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 { a } else { gcd(b, a % b) }
}

fn ln_choose(n: usize, k: usize) -> f64 {
    ln_gamma(n as f64 + 1.0) - ln_gamma(k as f64 + 1.0) - ln_gamma((n - k) as f64 + 1.0)
}

/// P(D ≥ d) under the null: lattice paths from (0, 0) to (n1, n2) that touch
/// |i/n1 − j/n2| ≥ d, counted at their first exit (no subtraction, so small p keeps its
/// precision); the threshold is an integer on the lcm grid, as in scipy.
pub fn ks_exact_p(n1: usize, n2: usize, d: f64) -> f64 {
    let lcm = n1 / gcd(n1, n2) * n2;
    let h = (d * lcm as f64).round() as i64;
    if h == 0 {
        return 1.0;
    }
    let (s1, s2) = ((lcm / n1) as i64, (lcm / n2) as i64);
    let outside = |i: usize, j: usize| (i as i64 * s1 - j as i64 * s2).abs() >= h;
    let total = ln_choose(n1 + n2, n1);
    // Path counts stay below C(n1 + n2, n1) ≤ C(100, 50) ≈ 1e29 when n1·n2 ≤ 2500: f64 holds them.
    let mut row = vec![0.0f64; n2 + 1];
    let mut p_out = 0.0;
    for i in 0..=n1 {
        for j in 0..=n2 {
            let count = if i == 0 && j == 0 {
                1.0
            } else {
                row[j] + if j > 0 { row[j - 1] } else { 0.0 }
            };
            // row[j] holds paths to (i−1, j) before this update: the sum is paths into (i, j).
            if outside(i, j) {
                let rest = ln_choose(n1 - i + n2 - j, n1 - i);
                if count > 0.0 {
                    p_out += (count.ln() + rest - total).exp();
                }
                row[j] = 0.0;
            } else {
                row[j] = count;
            }
        }
    }
    p_out.min(1.0)
}

/// P(D_n ≥ d) of the one-sample Kolmogorov statistic: the exact matrix method of
/// Marsaglia, Tsang & Wang (2003, J. Stat. Softw. 8(18)) while its matrix is small, else
/// the limiting distribution with Stephens' (1970) size correction.
pub fn kolmogorov_sf(n: usize, d: f64) -> f64 {
    if d <= 0.0 {
        return 1.0;
    }
    if d >= 1.0 {
        return 0.0;
    }
    let nf = n as f64;
    let k = (nf * d).floor() as usize + 1;
    let m = 2 * k - 1;
    if m > 300 {
        let lambda = (nf.sqrt() + 0.12 + 0.11 / nf.sqrt()) * d;
        return kolmogorov_limit_sf(lambda);
    }
    let h = k as f64 - nf * d;
    let mut hm = DMatrix::<f64>::zeros(m, m);
    for i in 0..m {
        for j in 0..m {
            if i + 1 >= j {
                hm[(i, j)] = 1.0;
            }
        }
    }
    for i in 0..m {
        hm[(i, 0)] -= h.powi(i as i32 + 1);
        hm[(m - 1, i)] -= h.powi((m - i) as i32);
    }
    if 2.0 * h - 1.0 > 0.0 {
        hm[(m - 1, 0)] += (2.0 * h - 1.0).powi(m as i32);
    }
    for i in 0..m {
        for j in 0..m {
            if i + 1 > j {
                hm[(i, j)] /= ln_gamma((i + 1 - j) as f64 + 1.0).exp();
            }
        }
    }
    let (q, ln_scale) = matrix_power_scaled(&hm, n);
    let ln_cdf = q[(k - 1, k - 1)].ln() + ln_scale + ln_gamma(nf + 1.0) - nf * nf.ln();
    (1.0 - ln_cdf.exp()).clamp(0.0, 1.0)
}

/// M^n by repeated squaring, rescaled as it goes; returns (matrix, ln of the scale).
fn matrix_power_scaled(m: &DMatrix<f64>, mut n: usize) -> (DMatrix<f64>, f64) {
    let dim = m.nrows();
    let (mut result, mut base) = (DMatrix::<f64>::identity(dim, dim), m.clone());
    let (mut ln_r, mut ln_b) = (0.0, 0.0);
    let rescale = |x: &mut DMatrix<f64>, ln: &mut f64| {
        let mx = x.amax();
        if mx > 0.0 {
            *x /= mx;
            *ln += mx.ln();
        }
    };
    while n > 0 {
        if n & 1 == 1 {
            result = &result * &base;
            ln_r += ln_b;
            rescale(&mut result, &mut ln_r);
        }
        n >>= 1;
        if n > 0 {
            base = &base * &base;
            ln_b *= 2.0;
            rescale(&mut base, &mut ln_b);
        }
    }
    (result, ln_r)
}

/// Q_KS(λ) = 2 Σ (−1)^(j−1) exp(−2 j² λ²).
fn kolmogorov_limit_sf(lambda: f64) -> f64 {
    if lambda < 0.2 {
        return 1.0;
    }
    let mut s = 0.0;
    for j in 1..200 {
        let j = j as f64;
        let t = (-2.0 * j * j * lambda * lambda).exp();
        s += if j as i64 % 2 == 1 { t } else { -t };
        if t < 1e-17 {
            break;
        }
    }
    (2.0 * s).clamp(0.0, 1.0)
}

/// A k-sample Anderson–Darling result: the standardized statistic and its significance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AndersonDarling {
    pub statistic: f64,
    pub significance: f64,
}

/// The k-sample Anderson–Darling test, midrank version (Scholz & Stephens 1987, eq. 7),
/// standardized by its variance under the null.
pub fn anderson_ksamp(samples: &[&[f64]]) -> AndersonDarling {
    let k = samples.len();
    let sorted_s: Vec<Vec<f64>> = samples.iter().map(|s| sorted(s)).collect();
    let z = sorted(&samples.concat());
    let big_n = z.len() as f64;
    let mut zstar = z.clone();
    zstar.dedup();
    let lower = |v: &[f64], x: f64| v.partition_point(|y| *y < x) as f64;
    let upper = |v: &[f64], x: f64| v.partition_point(|y| *y <= x) as f64;
    let mut a2 = 0.0;
    for s in &sorted_s {
        let ni = s.len() as f64;
        let mut inner = 0.0;
        for &x in &zstar {
            let lj = upper(&z, x) - lower(&z, x);
            let bj = lower(&z, x) + lj / 2.0;
            let mij = upper(s, x) - (upper(s, x) - lower(s, x)) / 2.0;
            inner += lj / big_n * (big_n * mij - bj * ni).powi(2) / (bj * (big_n - bj) - big_n * lj / 4.0);
        }
        a2 += inner / ni;
    }
    a2 *= (big_n - 1.0) / big_n;
    let ns: Vec<f64> = samples.iter().map(|s| s.len() as f64).collect();
    let sigma = ad_null_sigma(&ns, big_n);
    let stat = (a2 - (k as f64 - 1.0)) / sigma;
    AndersonDarling {
        statistic: stat,
        significance: ad_significance(stat, k),
    }
}

/// Standard deviation of the k-sample statistic under the null (Scholz & Stephens 1987, eq. 4).
fn ad_null_sigma(ns: &[f64], n: f64) -> f64 {
    let k = ns.len() as f64;
    let hh: f64 = ns.iter().map(|x| 1.0 / x).sum();
    let nn = n as usize;
    let h: f64 = (1..nn).map(|i| 1.0 / i as f64).sum();
    // g = Σ_{i=1}^{N−2} Σ_{j=i+1}^{N−1} 1/((N − i) j)
    let mut g = 0.0;
    let mut tail = 0.0; // Σ_{j=i+1}^{N−1} 1/j, built from the top
    for i in (1..nn.saturating_sub(1)).rev() {
        tail += 1.0 / (i + 1) as f64;
        g += tail / (n - i as f64);
    }
    let a = (4.0 * g - 6.0) * (k - 1.0) + (10.0 - 6.0 * g) * hh;
    let b = (2.0 * g - 4.0) * k * k + 8.0 * h * k + (2.0 * g - 14.0 * h - 4.0) * hh - 8.0 * h + 4.0 * g - 6.0;
    let c = (6.0 * h + 2.0 * g - 2.0) * k * k + (4.0 * h - 4.0 * g + 6.0) * k + (2.0 * h - 6.0) * hh + 4.0 * h;
    let d = (2.0 * h + 6.0) * k * k - 4.0 * h * k;
    ((a * n.powi(3) + b * n * n + c * n + d) / ((n - 1.0) * (n - 2.0) * (n - 3.0))).sqrt()
}

/// Significance from the critical values of Scholz & Stephens' Table 1 (as interpolated in
/// m = k − 1: b0 + b1/√m + b2/m), by a quadratic fit of ln(level) against the critical
/// values; outside the table the level is pinned at 0.25 or 0.001.
fn ad_significance(stat: f64, k: usize) -> f64 {
    const B0: [f64; 7] = [0.675, 1.281, 1.645, 1.96, 2.326, 2.573, 3.085];
    const B1: [f64; 7] = [-0.245, 0.25, 0.678, 1.149, 1.822, 2.364, 3.615];
    const B2: [f64; 7] = [-0.105, -0.305, -0.362, -0.391, -0.396, -0.345, -0.154];
    const SIG: [f64; 7] = [0.25, 0.1, 0.05, 0.025, 0.01, 0.005, 0.001];
    let m = (k - 1) as f64;
    let crit: Vec<f64> = (0..7).map(|i| B0[i] + B1[i] / m.sqrt() + B2[i] / m).collect();
    if stat < crit[0] {
        return 0.25;
    }
    if stat > crit[6] {
        return 0.001;
    }
    let coef = quadratic_fit(&crit, &SIG.map(f64::ln));
    (coef[0] * stat * stat + coef[1] * stat + coef[2]).exp()
}

/// Least-squares y ≈ c0 x² + c1 x + c2 through the normal equations.
fn quadratic_fit(x: &[f64], y: &[f64]) -> [f64; 3] {
    let mut a = Matrix3::<f64>::zeros();
    let mut b = Vector3::<f64>::zeros();
    for (xi, yi) in x.iter().zip(y) {
        let row = [xi * xi, *xi, 1.0];
        for r in 0..3 {
            b[r] += row[r] * yi;
            for c in 0..3 {
                a[(r, c)] += row[r] * row[c];
            }
        }
    }
    let s = a.lu().solve(&b).expect("distinct critical values");
    [s[0], s[1], s[2]]
}
