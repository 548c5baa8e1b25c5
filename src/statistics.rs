//! The one statistics module of the tool (engine, analyses, hideout, survey coverage and the
//! report): bin edges (by count, per decade, over a widened range) and the bin of a value, histograms (plain
//! and weighted), weighted proportions with Kish's effective sample size and Wilson score
//! intervals, and quantiles of values, of weighted values and of histograms, each rule a
//! variant of `QuantileRule`. It uses only the crate's errors, so every layer may use it.
//! Formulas and sources in methods.md ("Weighted proportions").

/// z of the two-sided 95% normal interval, √2 erf⁻¹(0.95), as astropy computes it. The one z
/// of every interval the tool prints, the report's included.
pub const Z95: f64 = 1.959_963_984_540_054;

/// `n + 1` equally spaced edges from `lo` to `hi`.
pub fn lin_edges(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..=n).map(|k| lo + (hi - lo) * k as f64 / n as f64).collect()
}

/// `n + 1` logarithmically spaced edges from `lo` to `hi` (both > 0).
pub fn log_edges(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    let (a, b) = (lo.ln(), hi.ln());
    (0..=n).map(|k| (a + (b - a) * k as f64 / n as f64).exp()).collect()
}

/// How a range of values is widened before it is cut into bins (a figure's histogram), so
/// that the extreme values fall inside the end bins rather than on the outer edges.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Margin {
    /// lo − m and hi + m, m = max(share · (hi − lo), at_least): linear bins (`at_least` keeps a
    /// single value's range open).
    Share { share: f64, at_least: f64 },
    /// lo / factor and hi · factor: logarithmic bins (lo > 0).
    Factor(f64),
}

impl Margin {
    /// `Factor(factor)` on a logarithmic axis, else `Share` of `share`, at least `at_least`.
    pub fn for_axis(log: bool, factor: f64, (share, at_least): (f64, f64)) -> Self {
        if log {
            Margin::Factor(factor)
        } else {
            Margin::Share { share, at_least }
        }
    }

    /// The widened range of [lo, hi].
    pub fn widen(self, lo: f64, hi: f64) -> (f64, f64) {
        match self {
            Margin::Share { share, at_least } => {
                let m = ((hi - lo) * share).max(at_least);
                (lo - m, hi + m)
            }
            Margin::Factor(f) => (lo / f, hi * f),
        }
    }

    /// `n` bins over the widened range of [lo, hi]: equal on a linear axis (`Share`), equal
    /// in the logarithm (`Factor`).
    pub fn edges(self, lo: f64, hi: f64, n: usize) -> Vec<f64> {
        let (a, b) = self.widen(lo, hi);
        match self {
            Margin::Share { .. } => lin_edges(a, b, n),
            Margin::Factor(_) => log_edges(a, b, n),
        }
    }
}

/// Logarithmic edges with `per_decade` bins per factor of ten from `lo` to `hi`, each computed
/// as `lo·10^(j/per_decade)` so that decades fall on round values.
pub fn edges_per_decade(lo: f64, hi: f64, per_decade: usize) -> Vec<f64> {
    let k = ((hi / lo).log10() * per_decade as f64).round() as usize;
    (0..=k).map(|j| lo * 10f64.powf(j as f64 / per_decade as f64)).collect()
}

/// Comma-separated increasing bin edges, as an option `option` gives them (e.g. `--h-edges`).
pub fn parse_edges(option: &str, text: &str) -> crate::error::Result<Vec<f64>> {
    use crate::error::Error;
    let v: Vec<f64> = text
        .split(',')
        .map(|x| x.trim().parse::<f64>())
        .collect::<std::result::Result<_, _>>()
        .map_err(|_| Error::input(format!("{option} `{text}`: expected comma-separated numbers")))?;
    check_edges(option, &v)?;
    Ok(v)
}

/// At least two increasing bin edges.
pub fn check_edges(option: &str, edges: &[f64]) -> crate::error::Result<()> {
    if edges.len() < 2 || edges.windows(2).any(|w| !(w[1] > w[0])) {
        return Err(crate::error::Error::input(format!(
            "{option} {edges:?}: expected at least two increasing bin edges"
        )));
    }
    Ok(())
}

/// The bin of `x` among `edges`: bins are [e_k, e_k+1), the last one with its top edge;
/// None outside (and for NaN).
pub fn bin_index(edges: &[f64], x: f64) -> Option<usize> {
    let n = edges.len().checked_sub(1).filter(|n| *n > 0)?;
    if !(x >= edges[0] && x <= edges[n]) {
        return None;
    }
    Some((edges.partition_point(|e| *e <= x) - 1).min(n - 1))
}

/// Row-major index of a point's cell in a grid of per-dimension edges, None outside.
pub fn grid_index(edges: &[Vec<f64>], x: &[f64]) -> Option<usize> {
    let mut idx = 0;
    for (e, v) in edges.iter().zip(x) {
        idx = idx * (e.len() - 1) + bin_index(e, *v)?;
    }
    Some(idx)
}

/// The (lo, hi) ranges of cell `cell` of a row-major grid.
pub fn grid_cell(edges: &[Vec<f64>], mut cell: usize) -> Vec<(f64, f64)> {
    let mut out = vec![(0.0, 0.0); edges.len()];
    for (slot, e) in out.iter_mut().zip(edges).rev() {
        let m = e.len() - 1;
        *slot = (e[cell % m], e[cell % m + 1]);
        cell /= m;
    }
    out
}

/// Counts of `xs` in the bins of `edges` (see `bin_index`).
pub fn histogram(xs: &[f64], edges: &[f64]) -> Vec<u64> {
    let mut n = vec![0u64; edges.len().saturating_sub(1)];
    for &x in xs {
        if let Some(k) = bin_index(edges, x) {
            n[k] += 1;
        }
    }
    n
}

/// Summed weights of `xs` in the bins of `edges`.
pub fn weighted_histogram(xs: &[f64], weights: &[f64], edges: &[f64]) -> Vec<f64> {
    let mut n = vec![0.0; edges.len().saturating_sub(1)];
    for (&x, &w) in xs.iter().zip(weights) {
        if let Some(k) = bin_index(edges, x) {
            n[k] += w;
        }
    }
    n
}

/// Kish's effective sample size (Σw)²/Σw² (Kish 1965, *Survey Sampling*, §11.7).
pub fn kish_n(sum_w: f64, sum_w2: f64) -> f64 {
    if sum_w2 > 0.0 { sum_w * sum_w / sum_w2 } else { 0.0 }
}

/// Kish's effective sample size of a list of weights.
pub fn kish_n_of(weights: &[f64]) -> f64 {
    kish_n(weights.iter().sum(), weights.iter().map(|w| w * w).sum())
}

/// The sums a weighted proportion needs; they add over objects, bins, chunks and shards.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Tally {
    /// Objects (trials) and successes, unweighted.
    pub n: u64,
    pub k: u64,
    /// Σw and Σw² over all, and over the successes.
    pub w: f64,
    pub w2: f64,
    pub w_hit: f64,
    pub w2_hit: f64,
}

impl Tally {
    /// An unweighted tally of k successes in n trials.
    pub fn counts(k: u64, n: u64) -> Self {
        Tally {
            n,
            k,
            w: n as f64,
            w2: n as f64,
            w_hit: k as f64,
            w2_hit: k as f64,
        }
    }

    /// Count one object of weight `w`.
    pub fn add(&mut self, w: f64, hit: bool) {
        self.n += 1;
        self.w += w;
        self.w2 += w * w;
        if hit {
            self.k += 1;
            self.w_hit += w;
            self.w2_hit += w * w;
        }
    }

    pub fn absorb(&mut self, o: &Tally) {
        self.n += o.n;
        self.k += o.k;
        self.w += o.w;
        self.w2 += o.w2;
        self.w_hit += o.w_hit;
        self.w2_hit += o.w2_hit;
    }

    pub fn proportion(&self) -> Proportion {
        Proportion::of(self)
    }
}

/// A (weighted) proportion: the estimate, its effective sample size, standard error and 95%
/// Wilson interval. With unit weights these are the binomial k/n, n, √(p(1 − p)/n) and the
/// ordinary Wilson interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Proportion {
    /// Trials and successes, unweighted.
    pub k: u64,
    pub n: u64,
    /// Σw(success)/Σw.
    pub fraction: f64,
    /// The effective sample size the error and interval use: Kish's n, lowered to the
    /// linearization one where the weights make the fraction noisier (methods.md).
    pub n_eff: f64,
    pub std_error: f64,
    pub lower: f64,
    pub upper: f64,
}

impl Proportion {
    /// k successes in n unweighted trials; n = 0 gives NaN estimates and the uninformative [0, 1].
    pub fn new(k: u64, n: u64) -> Self {
        Self::of(&Tally::counts(k, n))
    }

    /// The weighted proportion of a tally (methods.md, "Weighted proportions").
    pub fn of(t: &Tally) -> Self {
        if !(t.w > 0.0) {
            return Proportion {
                k: t.k,
                n: t.n,
                fraction: f64::NAN,
                n_eff: 0.0,
                std_error: f64::NAN,
                lower: 0.0,
                upper: 1.0,
            };
        }
        let p = (t.w_hit / t.w).clamp(0.0, 1.0);
        let n_eff = effective_n(t, p);
        let (lower, upper) = wilson(p * n_eff, n_eff, Z95);
        Proportion {
            k: t.k,
            n: t.n,
            fraction: p,
            n_eff,
            std_error: (p * (1.0 - p) / n_eff).sqrt(),
            lower,
            upper,
        }
    }
}

/// min(Kish's n, p(1 − p)/V) with V = Σw²(d − p)²/(Σw)², the linearization variance of the
/// ratio Σwd/Σw; Kish's n alone where p is 0 or 1 (V = 0).
fn effective_n(t: &Tally, p: f64) -> f64 {
    let kish = kish_n(t.w, t.w2);
    let v = (t.w2_hit * (1.0 - 2.0 * p) + p * p * t.w2) / (t.w * t.w);
    let linear = p * (1.0 - p) / v;
    if v > 0.0 && linear.is_finite() {
        kish.min(linear)
    } else {
        kish
    }
}

/// Wilson score interval for k successes in n trials at normal quantile z (effective counts may
/// be fractional): centre (k + z²/2)/(n + z²), half-width z √n/(n + z²) √(p(1 − p) + z²/(4n)),
/// clipped to [0, 1]; [0, 1] for n = 0.
pub fn wilson(k: f64, n: f64, z: f64) -> (f64, f64) {
    if !(n > 0.0) {
        return (0.0, 1.0);
    }
    let p = (k / n).clamp(0.0, 1.0);
    let z2 = z * z;
    let centre = (k + z2 / 2.0) / (n + z2);
    let half = z * n.sqrt() / (n + z2) * (p * (1.0 - p) + z2 / (4.0 * n)).sqrt();
    ((centre - half).max(0.0), (centre + half).min(1.0))
}

/// How a quantile is read from a sample (Hyndman & Fan 1996, *Am. Stat.* 50, 361).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QuantileRule {
    /// Type 1: the smallest value whose empirical CDF reaches q (a value of the sample).
    InverseEcdf,
    /// Type 7: linear between the order statistics at position q·(n − 1).
    Linear,
}

/// The q-quantile of sorted values under `rule`; NaN for no values.
pub fn quantile_sorted(sorted: &[f64], q: f64, rule: QuantileRule) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    match rule {
        QuantileRule::InverseEcdf => {
            let k = (q * sorted.len() as f64).ceil() as usize;
            sorted[k.clamp(1, sorted.len()) - 1]
        }
        QuantileRule::Linear => {
            let pos = q * (sorted.len() - 1) as f64;
            let (i, t) = (pos.floor() as usize, pos.fract());
            sorted[i] * (1.0 - t) + sorted[(i + 1).min(sorted.len() - 1)] * t
        }
    }
}

/// The q-quantile of a histogram, as a position in bins from the bottom edge of bin 0 (the
/// caller maps it to its units). `InverseEcdf`: the first bin whose cumulative count reaches
/// q·total (the last bin if none); `Linear`: linear inside the first non-empty bin that reaches
/// it (the top edge if none). NaN for an empty histogram.
pub fn histogram_quantile(counts: &[f64], q: f64, rule: QuantileRule) -> f64 {
    let total: f64 = counts.iter().sum();
    if !(total > 0.0) {
        return f64::NAN;
    }
    let target = q * total;
    let mut acc = 0.0;
    for (b, &w) in counts.iter().enumerate() {
        match rule {
            QuantileRule::InverseEcdf if acc + w >= target => return b as f64,
            QuantileRule::Linear if w > 0.0 && acc + w >= target => return b as f64 + (target - acc) / w,
            _ => acc += w,
        }
    }
    match rule {
        QuantileRule::InverseEcdf => counts.len() as f64 - 1.0,
        QuantileRule::Linear => counts.len() as f64,
    }
}

/// A sample kept for its type-1 quantiles (`QuantileRule::InverseEcdf`) in memory that grows
/// with its distinct values while they are few (counts of objects, say), and with its size
/// only beyond `DISTINCT_LIMIT` distinct values: the quantiles are exactly those of
/// `quantile_sorted` over the whole sample sorted by `f64::total_cmp`.
#[derive(Debug, Clone)]
pub enum QuantileSample {
    /// Each distinct value (by its bits) with how often it came.
    Counted(std::collections::HashMap<u64, u64>),
    /// Every value.
    Listed(Vec<f64>),
}

impl Default for QuantileSample {
    fn default() -> Self {
        QuantileSample::Counted(Default::default())
    }
}

impl QuantileSample {
    /// Distinct values counted before the sample is kept whole instead (a count costs about
    /// four times a listed value; common practice, no source).
    pub const DISTINCT_LIMIT: usize = 4096;

    pub fn push(&mut self, x: f64) {
        self.push_n(x, 1);
    }

    fn push_n(&mut self, x: f64, n: u64) {
        match self {
            QuantileSample::Counted(c) => {
                *c.entry(x.to_bits()).or_insert(0) += n;
                if c.len() > Self::DISTINCT_LIMIT {
                    let listed = c
                        .iter()
                        .flat_map(|(bits, n)| std::iter::repeat_n(f64::from_bits(*bits), *n as usize))
                        .collect();
                    *self = QuantileSample::Listed(listed);
                }
            }
            QuantileSample::Listed(v) => v.extend(std::iter::repeat_n(x, n as usize)),
        }
    }

    /// Add another sample's values to this one.
    pub fn absorb(&mut self, other: QuantileSample) {
        match other {
            QuantileSample::Counted(c) => c.into_iter().for_each(|(bits, n)| self.push_n(f64::from_bits(bits), n)),
            QuantileSample::Listed(v) => v.into_iter().for_each(|x| self.push(x)),
        }
    }

    /// The type-1 q-quantile: the smallest value whose empirical CDF reaches q; NaN for none.
    pub fn inverse_ecdf(&self, q: f64) -> f64 {
        match self {
            QuantileSample::Listed(v) => {
                let mut sorted = v.clone();
                sorted.sort_by(f64::total_cmp);
                quantile_sorted(&sorted, q, QuantileRule::InverseEcdf)
            }
            QuantileSample::Counted(c) => {
                let mut values: Vec<(f64, u64)> = c.iter().map(|(b, n)| (f64::from_bits(*b), *n)).collect();
                values.sort_by(|a, b| a.0.total_cmp(&b.0));
                let counts: Vec<f64> = values.iter().map(|v| v.1 as f64).collect();
                let b = histogram_quantile(&counts, q, QuantileRule::InverseEcdf);
                if b.is_nan() { f64::NAN } else { values[b as usize].0 }
            }
        }
    }
}

/// The weighted q-quantile: the smallest value whose cumulative share of the weight reaches q.
pub fn weighted_quantile(values: &[f64], weights: &[f64], q: f64) -> f64 {
    let mut order: Vec<usize> = (0..values.len()).filter(|i| values[*i].is_finite()).collect();
    order.sort_by(|a, b| values[*a].total_cmp(&values[*b]));
    let total: f64 = order.iter().map(|i| weights[*i]).sum();
    let mut acc = 0.0;
    for &i in &order {
        acc += weights[i];
        if acc >= q * total {
            return values[i];
        }
    }
    order.last().map_or(f64::NAN, |i| values[*i])
}

/// A proportion as a percentage with sensible digits, for conclusions: one decimal from 10%,
/// two from 0.1%, three below.
pub fn pct(p: f64) -> String {
    let x = 100.0 * p;
    if x >= 10.0 {
        format!("{x:.1}%")
    } else if x >= 0.1 {
        format!("{x:.2}%")
    } else {
        format!("{x:.3}%")
    }
}

/// A chance and its error to three decimals; a chance a run withheld (NaN: an empty cell of
/// its table: `cluster-test` on fitted elements outside its calibrated selection,
/// `commands::cluster_test::uncalibrated_selection`) says so instead.
pub fn chance_with_error(p: f64, error: f64) -> String {
    if p.is_finite() {
        format!("{p:.3} ± {error:.3}")
    } else {
        "withheld (not calibrated for this selection)".to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wilson_brackets_the_estimate() {
        for n in 1..40u64 {
            for k in 0..=n {
                let (lo, hi) = wilson(k as f64, n as f64, Z95);
                let p = k as f64 / n as f64;
                assert!(lo <= p + 1e-15 && p <= hi + 1e-15, "{k}/{n}: [{lo}, {hi}]");
            }
        }
    }

    #[test]
    fn unit_weights_are_the_binomial_proportion() {
        let mut t = Tally::default();
        for i in 0..50 {
            t.add(1.0, i % 7 == 0);
        }
        let (p, q) = (t.proportion(), Proportion::new(8, 50));
        assert_eq!(p.n_eff, 50.0);
        assert!((p.fraction - 0.16).abs() < 1e-15 && (p.upper - q.upper).abs() < 1e-15);
    }

    #[test]
    fn rescaled_weights_change_nothing() {
        let (mut a, mut b) = (Tally::default(), Tally::default());
        for i in 0..40 {
            let w = 1.0 + (i % 5) as f64;
            a.add(w, i % 3 == 0);
            b.add(1e-6 * w, i % 3 == 0);
        }
        let (pa, pb) = (a.proportion(), b.proportion());
        assert!((pa.fraction - pb.fraction).abs() < 1e-12 && (pa.n_eff - pb.n_eff).abs() < 1e-9);
    }

    #[test]
    fn quantiles_invert_the_ecdf() {
        let v = [1.0, 2.0, 3.0, 4.0];
        let ecdf = QuantileRule::InverseEcdf;
        assert_eq!(quantile_sorted(&v, 0.5, ecdf), 2.0);
        assert_eq!(quantile_sorted(&v, 0.51, ecdf), 3.0);
        assert_eq!(quantile_sorted(&v, 0.0, ecdf), 1.0);
        assert_eq!(weighted_quantile(&[3.0, 1.0, 2.0], &[1.0, 1.0, 2.0], 0.5), 2.0);
    }

    /// The counted sample gives `quantile_sorted`'s type-1 quantiles of the whole sample, with
    /// few distinct values (counts) and past the limit (kept whole), and when two samples
    /// are added (the definition of type 1 is the reference: Hyndman & Fan 1996).
    #[test]
    fn a_counted_sample_has_the_quantiles_of_the_whole_sample() {
        let few: Vec<f64> = (0..5000).map(|i| ((i * 7919) % 13) as f64).collect();
        let many: Vec<f64> = (0..9000).map(|i| ((i * 7919) % 8191) as f64 * 0.37).collect();
        for values in [few, many] {
            let (mut a, mut b) = (QuantileSample::default(), QuantileSample::default());
            let half = values.len() / 2;
            values[..half].iter().for_each(|x| a.push(*x));
            values[half..].iter().for_each(|x| b.push(*x));
            a.absorb(b);
            let mut sorted = values.clone();
            sorted.sort_by(f64::total_cmp);
            for q in [0.0, 0.05, 0.5, 0.95, 1.0, 0.3333] {
                assert_eq!(
                    a.inverse_ecdf(q),
                    quantile_sorted(&sorted, q, QuantileRule::InverseEcdf),
                    "q = {q}"
                );
            }
        }
        assert!(matches!(QuantileSample::default(), QuantileSample::Counted(_)));
        assert!(QuantileSample::default().inverse_ecdf(0.5).is_nan());
    }

    /// Type 7 of Hyndman & Fan (1996): numpy.quantile's default (from memory: the median of
    /// 1..4 is 2.5, the 0.1-quantile 1.3).
    #[test]
    fn linear_quantiles_interpolate() {
        let v = [1.0, 2.0, 3.0, 4.0];
        assert_eq!(quantile_sorted(&v, 0.5, QuantileRule::Linear), 2.5);
        assert!((quantile_sorted(&v, 0.1, QuantileRule::Linear) - 1.3).abs() < 1e-12);
        assert_eq!(quantile_sorted(&v, 1.0, QuantileRule::Linear), 4.0);
    }

    #[test]
    fn histogram_quantiles_by_rule() {
        let h = [0.0, 2.0, 0.0, 2.0];
        assert_eq!(histogram_quantile(&h, 0.5, QuantileRule::InverseEcdf), 1.0);
        assert_eq!(histogram_quantile(&h, 0.75, QuantileRule::InverseEcdf), 3.0);
        assert_eq!(histogram_quantile(&h, 0.75, QuantileRule::Linear), 3.5);
        assert_eq!(histogram_quantile(&h, 0.25, QuantileRule::Linear), 1.5);
        assert!(histogram_quantile(&[0.0; 3], 0.5, QuantileRule::Linear).is_nan());
    }

    #[test]
    fn linear_and_decade_edges_fall_on_round_values() {
        assert_eq!(lin_edges(-10.0, 16.0, 52)[21], 0.5);
        assert_eq!(lin_edges(0.0, 180.0, 18)[18], 180.0);
        let d = edges_per_decade(10.0, 10000.0, 8);
        assert_eq!((d.len(), d[0], d[8], d[24]), (25, 10.0, 100.0, 10000.0));
    }

    #[test]
    fn bins_are_half_open_with_the_top_edge_inside() {
        let e = [0.0, 1.0, 2.0];
        assert_eq!(histogram(&[0.0, 0.5, 1.0, 2.0, 3.0, f64::NAN], &e), vec![2, 2]);
        assert_eq!(grid_index(&[e.to_vec(), e.to_vec()], &[1.5, 0.2]), Some(2));
        assert_eq!(grid_cell(&[e.to_vec(), e.to_vec()], 2), vec![(1.0, 2.0), (0.0, 1.0)]);
    }
}
