//! Pooled Monte Carlo p-values: every catalogue (the observed one first, then the synthetic
//! ones) ranked against all of them, so that statistics combined from those ranks (Fisher's
//! combination, the smallest p-value of a family) can be calibrated on the very same
//! catalogues — the nonparametric combination of Pesarin (2001, *Multivariate Permutation
//! Tests*, ch. 4) and the single-step min-P of Westfall & Young (1993, §2.6), with draws from
//! the null in place of permutations. Derivation and sources: methods.md, "Bias-aware
//! clustering test".
//!
//! Under the null the N + 1 catalogues are exchangeable and everything here is a
//! permutation-equivariant function of them, so the observed catalogue's pooled p-value of
//! any statistic, simple or combined, is valid for every N: P(p ≤ α) ≤ α.

/// p(c) = #{c′ : v(c′) ≥ v(c)} / len for every entry c of `values` (larger = more extreme;
/// ties count against rejection). `values[0]` is the observed catalogue, whose p-value is the
/// usual (1 + #{synthetic ≥ observed}) / (1 + N).
pub fn upper_ranks(values: &[f64]) -> Vec<f64> {
    let mut sorted: Vec<f64> = values.to_vec();
    // Descending, NaN last (a NaN statistic is never "at least as extreme").
    sorted.sort_by(|a, b| b.partial_cmp(a).unwrap_or_else(|| a.is_nan().cmp(&b.is_nan())));
    let len = values.len() as f64;
    values
        .iter()
        .map(|v| {
            if v.is_nan() {
                return 1.0;
            }
            let at_least = sorted.partition_point(|x| *x >= *v);
            at_least as f64 / len
        })
        .collect()
}

/// Fisher's combination of p-values, −2 Σ ln p (Fisher 1932, *Statistical Methods for
/// Research Workers*, §21.1): larger = more significant. Calibrated by `upper_ranks`, never by
/// the χ² law, which needs independent continuous p-values.
pub fn fisher(ps: &[f64]) -> f64 {
    -2.0 * ps.iter().map(|p| p.ln()).sum::<f64>()
}

/// The family's most significant p-value as a statistic, −log₁₀ min p (larger = more
/// significant).
pub fn min_p_statistic(ps: &[f64]) -> f64 {
    -ps.iter().copied().fold(1.0, f64::min).log10()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranks_are_the_usual_monte_carlo_p_values_with_ties_against_rejection() {
        // Observed 0.5 among synthetic 0.9, 0.5, 0.1: two of four at least as large.
        let p = upper_ranks(&[0.5, 0.9, 0.5, 0.1]);
        assert_eq!(p, vec![0.75, 0.25, 0.75, 1.0]);
        assert_eq!(upper_ranks(&[f64::NAN, 1.0]), vec![1.0, 0.5]);
    }

    #[test]
    fn fisher_and_min_p() {
        assert!((fisher(&[0.5, 0.25]) - (-2.0 * (0.125f64).ln())).abs() < 1e-12);
        assert!((min_p_statistic(&[0.5, 0.01, 0.2]) - 2.0).abs() < 1e-12);
    }

    #[test]
    fn a_combined_statistic_calibrated_by_pooled_ranks_is_uniform() {
        // Exchangeable draws: the pooled p of Fisher's combination of two dependent marginal
        // statistics is uniform over which catalogue plays "observed" (exactly, by symmetry).
        use rand::{RngExt, SeedableRng};
        let mut rng = rand_pcg::Pcg64::seed_from_u64(3);
        let n = 400;
        let (a, b): (Vec<f64>, Vec<f64>) = (0..n)
            .map(|_| {
                let x: f64 = rng.random();
                (x, 0.5 * x + 0.5 * rng.random::<f64>())
            })
            .unzip();
        let (pa, pb) = (upper_ranks(&a), upper_ranks(&b));
        let f: Vec<f64> = pa.iter().zip(&pb).map(|(x, y)| fisher(&[*x, *y])).collect();
        let pf = upper_ranks(&f);
        let below = pf.iter().filter(|p| **p <= 0.05).count();
        assert!(below <= n / 20, "{below} of {n} at 5%");
        assert!(below >= n / 20 - 1, "{below} of {n} at 5%");
    }
}
