//! One-sample statistics of a catalogue's values against a model's weighted empirical CDF, with
//! model points removed on demand (leave-the-catalogue-out): Kolmogorov–Smirnov D and
//! Anderson–Darling A² for linear observables; Kuiper's V and Watson's U², invariant under a
//! rotation of the zero, for angles. Their p-values come from synthetic catalogues
//! (`compare.rs`); formulas in methods.md, "Marginal tests".

/// Which statistics an observable gets.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Statistic {
    KolmogorovSmirnov,
    AndersonDarling,
    Kuiper,
    Watson,
}

impl Statistic {
    pub fn name(self) -> &'static str {
        match self {
            Statistic::KolmogorovSmirnov => "ks",
            Statistic::AndersonDarling => "anderson_darling",
            Statistic::Kuiper => "kuiper",
            Statistic::Watson => "watson_u2",
        }
    }

    /// The pair of statistics for a linear observable or an angle.
    pub fn pair(angle: bool) -> [Statistic; 2] {
        if angle {
            [Statistic::Kuiper, Statistic::Watson]
        } else {
            [Statistic::KolmogorovSmirnov, Statistic::AndersonDarling]
        }
    }
}

/// A model's values of one observable, sorted, with cumulative weights.
#[derive(Debug, Clone)]
pub struct WeightedEcdf {
    values: Vec<f64>,
    /// cum[k] = Σ of the weights of values[..=k].
    cum: Vec<f64>,
    pub angle: bool,
    /// The clamp of F away from 0 and 1 in A² (half an effective object).
    eps: f64,
}

impl WeightedEcdf {
    pub fn new(values: &[f64], weights: &[f64], angle: bool) -> Self {
        let mut order: Vec<usize> = (0..values.len()).collect();
        order.sort_by(|a, b| values[*a].total_cmp(&values[*b]));
        let mut acc = 0.0;
        let cum = order
            .iter()
            .map(|i| {
                acc += weights[*i];
                acc
            })
            .collect();
        let n_eff = crate::statistics::kish_n_of(weights);
        WeightedEcdf {
            values: order.iter().map(|i| values[*i]).collect(),
            cum,
            angle,
            eps: 0.5 / (n_eff + 1.0),
        }
    }

    fn total(&self) -> f64 {
        self.cum.last().copied().unwrap_or(0.0)
    }

    /// Weight of values < x and ≤ x.
    fn below(&self, x: f64) -> (f64, f64) {
        let lt = self.values.partition_point(|v| *v < x);
        let le = self.values.partition_point(|v| *v <= x);
        let at = |k: usize| if k == 0 { 0.0 } else { self.cum[k - 1] };
        (at(lt), at(le))
    }

    /// F(x⁻) and F(x) with the `removed` (value, weight) points taken out.
    fn cdf(&self, x: f64, removed: &[(f64, f64)]) -> (f64, f64) {
        let (mut lt, mut le) = self.below(x);
        let mut total = self.total();
        for (v, w) in removed {
            total -= w;
            if *v < x {
                lt -= w;
            }
            if *v <= x {
                le -= w;
            }
        }
        if !(total > 0.0) {
            return (f64::NAN, f64::NAN);
        }
        ((lt / total).clamp(0.0, 1.0), (le / total).clamp(0.0, 1.0))
    }

    /// The pair of statistics of `catalogue` against this ECDF without `removed`.
    pub fn statistics(&self, catalogue: &[f64], removed: &[(f64, f64)]) -> [f64; 2] {
        let mut c = catalogue.to_vec();
        c.sort_by(f64::total_cmp);
        let n = c.len() as f64;
        let f: Vec<(f64, f64)> = c.iter().map(|x| self.cdf(*x, removed)).collect();
        // Sup distances: F_n − F at each distinct catalogue value, F − F_n just below it.
        let (mut d_plus, mut d_minus) = (0.0f64, 0.0f64);
        let mut k = 0;
        while k < c.len() {
            let mut j = k;
            while j < c.len() && c[j] == c[k] {
                j += 1;
            }
            d_plus = d_plus.max(j as f64 / n - f[k].1);
            d_minus = d_minus.max(f[k].0 - k as f64 / n);
            k = j;
        }
        // A² and U² use the CDF at the point, midway through any atom of the model there; A²
        // keeps it half an effective object from 0 and 1 (its logarithms), U² needs no clamp
        // (and a clamp would spoil its invariance under a turn of the zero).
        let eps = if self.angle { 0.0 } else { self.eps };
        let mid: Vec<f64> = f.iter().map(|(a, b)| (0.5 * (a + b)).clamp(eps, 1.0 - eps)).collect();
        if self.angle {
            let mean = mid.iter().sum::<f64>() / n;
            let u2 = mid
                .iter()
                .enumerate()
                .map(|(k, fk)| (fk - (2 * k + 1) as f64 / (2.0 * n)).powi(2))
                .sum::<f64>()
                - n * (mean - 0.5).powi(2)
                + 1.0 / (12.0 * n);
            [d_plus + d_minus, u2]
        } else {
            let s: f64 = (0..c.len())
                .map(|k| (2 * k + 1) as f64 * (mid[k].ln() + (1.0 - mid[c.len() - 1 - k]).ln()))
                .sum();
            [d_plus.max(d_minus), -n - s / n]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn angle_statistics_ignore_the_zero() {
        let model: Vec<f64> = (0..200).map(|k| (k as f64 * 7.3).rem_euclid(90.0) + 30.0).collect();
        let cat = [40.0, 55.0, 100.0, 110.0, 300.0];
        let shift = |v: &[f64]| v.iter().map(|x| (x + 200.0).rem_euclid(360.0)).collect::<Vec<_>>();
        let w = vec![1.0; model.len()];
        let a = WeightedEcdf::new(&model, &w, true).statistics(&cat, &[]);
        let b = WeightedEcdf::new(&shift(&model), &w, true).statistics(&shift(&cat), &[]);
        assert!((a[0] - b[0]).abs() < 1e-12 && (a[1] - b[1]).abs() < 1e-9, "{a:?} {b:?}");
    }

    #[test]
    fn integer_weights_are_repeated_points() {
        let (model, w) = (vec![1.0, 2.0, 3.0, 4.0], vec![1.0, 3.0, 1.0, 2.0]);
        let repeated = vec![1.0, 2.0, 2.0, 2.0, 3.0, 4.0, 4.0];
        let cat = [1.5, 2.0, 3.7];
        let a = WeightedEcdf::new(&model, &w, false).statistics(&cat, &[]);
        let b = WeightedEcdf::new(&repeated, &[1.0; 7], false).statistics(&cat, &[]);
        assert!((a[0] - b[0]).abs() < 1e-15);
        // Removing a point is the same as never having had it.
        let c = WeightedEcdf::new(&[1.0, 2.0, 3.0, 4.0, 9.0], &[1.0, 3.0, 1.0, 2.0, 5.0], false)
            .statistics(&cat, &[(9.0, 5.0)]);
        assert!((a[0] - c[0]).abs() < 1e-15 && (a[1] - c[1]).abs() < 1e-12);
    }
}
