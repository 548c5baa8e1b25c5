//! Levenberg–Marquardt for six parameters (Marquardt 1963, SIAM J. Appl. Math. 11, 431), with a
//! forward-difference Jacobian.
//!
//! The residual function fills whitened residuals (data and prior pseudo-observations) and may
//! refuse a point outside the model's domain (an unbound orbit): such a trial step is treated
//! like one that raises χ². Steps solve (JᵀJ + λ diag JᵀJ) δ = −Jᵀr (as D(DJᵀJD + λI)⁻¹D with
//! D = diag(JᵀJ)^(−1/2), since the parameters differ by orders of magnitude); λ is divided by 10 after a
//! step that lowers χ² and multiplied by 10 otherwise. Finite-difference steps are 10⁻³ of each
//! parameter's current 1σ: small enough that the model is linear over them, large enough that
//! rounding (≈ 10⁻¹⁶ rad against σ ≈ 10⁻⁶ rad) does not matter. Converged when the Gauss–Newton
//! decrement gᵀ(JᵀJ)⁻¹g (twice the χ² a full step would still gain) is below 10⁻⁶.

use nalgebra::{Matrix6, Vector6};

const MAX_ITERATIONS: usize = 200;
const DECREMENT: f64 = 1e-6;
const STEP_FRACTION: f64 = 1e-3;

/// A least-squares solution.
#[derive(Debug, Clone, Copy)]
pub struct Solution {
    pub params: Vector6<f64>,
    /// Σ r² over every residual, priors included.
    pub chi2: f64,
    /// (JᵀJ)⁻¹ at the solution: the linear covariance of the parameters.
    pub covariance: Matrix6<f64>,
    /// Finite-difference steps at the solution (10⁻³ σ).
    pub steps: Vector6<f64>,
    pub iterations: usize,
}

/// Minimise Σ r(p)² from `start`, given rough 1σ uncertainties `sigma` of the parameters there
/// (they set the first finite-difference steps).
pub fn levenberg_marquardt<F>(residuals: F, start: Vector6<f64>, sigma: Vector6<f64>) -> Option<Solution>
where
    F: Fn(&Vector6<f64>, &mut Vec<f64>) -> bool,
{
    let mut p = start;
    let mut r = Vec::new();
    if !residuals(&p, &mut r) {
        return None;
    }
    let mut chi2 = sum_sq(&r);
    let mut steps = sigma.map(|s| STEP_FRACTION * s.abs().max(1e-300));
    let mut lambda = 1e-3;
    let mut trial_r = Vec::new();
    let mut columns: Vec<Vec<f64>> = vec![Vec::new(); 6];
    for iteration in 0..MAX_ITERATIONS {
        let (a, g) = normal_equations(&residuals, &p, &r, &steps, &mut columns)?;
        // Jacobi scaling: the parameters differ by many orders of magnitude, so the linear
        // algebra is done on D A D with D = diag(A)^(−1/2), which has a unit diagonal.
        let d = a.diagonal().map(|v| if v > 0.0 { 1.0 / v.sqrt() } else { 0.0 });
        if d.iter().any(|x| *x == 0.0 || !x.is_finite()) {
            return None;
        }
        let scaled = Matrix6::from_fn(|i, j| a[(i, j)] * d[i] * d[j]);
        let scaled_g = g.component_mul(&d);
        let scaled_cov = scaled.try_inverse()?;
        let covariance = Matrix6::from_fn(|i, j| scaled_cov[(i, j)] * d[i] * d[j]);
        steps = covariance
            .diagonal()
            .map(|v| STEP_FRACTION * v.max(0.0).sqrt().max(1e-300));
        let solution = |iterations| Solution {
            params: p,
            chi2,
            covariance,
            steps,
            iterations,
        };
        if scaled_g.dot(&(scaled_cov * scaled_g)) < DECREMENT {
            return Some(solution(iteration));
        }
        loop {
            let mut damped = scaled;
            for i in 0..6 {
                damped[(i, i)] += lambda;
            }
            let delta = damped.cholesky()?.solve(&(-scaled_g)).component_mul(&d);
            let trial = p + delta;
            if residuals(&trial, &mut trial_r) && sum_sq(&trial_r) < chi2 {
                p = trial;
                std::mem::swap(&mut r, &mut trial_r);
                chi2 = sum_sq(&r);
                lambda = (lambda / 10.0).max(1e-12);
                break;
            }
            lambda *= 10.0;
            if lambda > 1e10 {
                // No step lowers χ²: a minimum within the finite-difference precision.
                return Some(solution(iteration));
            }
        }
    }
    None
}

/// JᵀJ and Jᵀr at `p` by forward differences (backward where the forward point is refused).
fn normal_equations<F>(
    residuals: &F,
    p: &Vector6<f64>,
    r: &[f64],
    steps: &Vector6<f64>,
    columns: &mut [Vec<f64>],
) -> Option<(Matrix6<f64>, Vector6<f64>)>
where
    F: Fn(&Vector6<f64>, &mut Vec<f64>) -> bool,
{
    for (i, col) in columns.iter_mut().enumerate() {
        let mut h = steps[i];
        let mut q = *p;
        q[i] += h;
        if !residuals(&q, col) {
            h = -h;
            q[i] = p[i] + h;
            if !residuals(&q, col) {
                return None;
            }
        }
        for (c, r0) in col.iter_mut().zip(r) {
            *c = (*c - r0) / h;
        }
    }
    let mut a = Matrix6::zeros();
    let mut g = Vector6::zeros();
    for i in 0..6 {
        g[i] = dot(&columns[i], r);
        for j in 0..=i {
            let v = dot(&columns[i], &columns[j]);
            a[(i, j)] = v;
            a[(j, i)] = v;
        }
    }
    Some((a, g))
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

fn sum_sq(r: &[f64]) -> f64 {
    r.iter().map(|x| x * x).sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fits_a_linear_model_exactly() {
        // y = Σ p_i x^i at 20 points: the least-squares solution of noise-free data is the truth.
        // Residuals are whitened with σ = 10⁻⁶: convergence is judged in χ² (a decrement below
        // 10⁻⁶), so with unit σ the parameters would only be pinned to ~10⁻³ of their 1σ.
        let truth = Vector6::new(1.0, -2.0, 0.5, 0.1, -0.03, 0.002);
        let xs: Vec<f64> = (0..20).map(|k| k as f64 * 0.5).collect();
        let sigma = 1e-6;
        let f = |p: &Vector6<f64>, out: &mut Vec<f64>| {
            out.clear();
            for &x in &xs {
                let model: f64 = (0..6).map(|i| p[i] * x.powi(i as i32)).sum();
                let data: f64 = (0..6).map(|i| truth[i] * x.powi(i as i32)).sum();
                out.push((model - data) / sigma);
            }
            true
        };
        let s = levenberg_marquardt(f, Vector6::zeros(), Vector6::repeat(1.0)).unwrap();
        assert!((s.params - truth).norm() < 1e-6, "{:?}", s.params);
    }
}
