//! The clustering test's output product: file names, columns, writing and reading of
//! `cluster_test.*` (one row per statistic: observed value, bias-aware and naive p-values),
//! `cluster_null.*` (every synthetic catalogue's statistics) and `rose.*` (per angle and bin,
//! the catalogue's count and the bias-aware null's band). `seine cluster-test` writes through
//! it; `seine report` reads through it.

use std::path::{Path, PathBuf};

use polars::prelude::Column;

use super::cluster_test::{ClusterTest, RoseCount};
use crate::error::{Error, Result};
use crate::io::out_dir::{OutDir, col, finite_or_empty, frame};
use crate::io::table::{Columns, Format, read_table};

/// File stems: `DIR/cluster_test.*`, `DIR/cluster_null.*`, `DIR/rose.*`.
pub const TEST: &str = "cluster_test";
pub const NULL: &str = "cluster_null";
pub const ROSE: &str = "rose";

const STATISTIC: &str = "statistic";
const OBSERVED: &str = "observed";
const P_BIAS_AWARE: &str = "p_bias_aware";
const P_NAIVE: &str = "p_naive";
const VALUE: &str = "value";
const VALUE_NAIVE: &str = "value_naive";
const QUANTITY: &str = "quantity";
const BIN_LO: &str = "bin_lo_deg";
const BIN_HI: &str = "bin_hi_deg";
const NULL_LO: &str = "null_lo";
const NULL_MEDIAN: &str = "null_median";
const NULL_HI: &str = "null_hi";

/// Whether `name` is the table of stem `stem` (`.csv` or `.parquet`).
pub fn is_table(name: &str, stem: &str) -> bool {
    [Format::Parquet, Format::Csv]
        .into_iter()
        .any(|f| name == format!("{stem}.{}", f.extension()))
}

/// Write the three tables; returns their paths (test, null samples, rose).
pub fn write(out: &OutDir, res: &ClusterTest) -> Result<[PathBuf; 3]> {
    Ok([
        out.write(TEST, test_columns(res))?,
        write_null(out, res)?,
        out.write(ROSE, rose_columns(res))?,
    ])
}

/// `cluster_test`: one row per statistic and sample.
fn test_columns(res: &ClusterTest) -> Vec<Column> {
    let r = &res.results;
    let num = |f: fn(&super::cluster_test::StatResult) -> f64| r.iter().map(f).collect::<Vec<f64>>();
    let text =
        |f: fn(&super::cluster_test::StatResult) -> &str| r.iter().map(|x| f(x).to_string()).collect::<Vec<String>>();
    vec![
        col(STATISTIC, text(|x| &x.statistic)),
        col("sample", text(|x| &x.sample)),
        col("n_objects", r.iter().map(|x| x.n_objects as u64).collect::<Vec<u64>>()),
        col(OBSERVED, num(|x| x.observed)),
        col("direction_lon_deg", num(|x| x.direction_lon_deg)),
        col("direction_lat_deg", num(|x| x.direction_lat_deg)),
        col(P_BIAS_AWARE, finite_or_empty(num(|x| x.p_bias_aware))),
        col("p_bias_aware_error", finite_or_empty(num(|x| x.p_bias_aware_error))),
        col(P_NAIVE, num(|x| x.p_naive)),
        col("p_naive_method", text(|x| &x.p_naive_method)),
        col("p_naive_monte_carlo", num(|x| x.p_naive_monte_carlo)),
    ]
}

/// Rows of `cluster_null.*` built and written at once (common practice, no source).
const NULL_ROWS_PER_BATCH: usize = 65_536;

/// `cluster_null`: one row per reported statistic and synthetic catalogue, statistic by
/// statistic: `statistic, trial, value` (bias-aware null), `value_naive` (uniform angles);
/// written a batch of rows at a time, so that the table is never held whole.
fn write_null(out: &OutDir, res: &ClusterTest) -> Result<PathBuf> {
    let (bias, naive) = (&res.null_values.bias_aware, &res.null_values.naive);
    let mut sink = out.sink(NULL)?;
    for (k, r) in res.results.iter().enumerate() {
        // Index 0 of each row is the observed catalogue; trial t is at t + 1.
        let trials = bias[k].len() - 1;
        for lo in (0..trials).step_by(NULL_ROWS_PER_BATCH) {
            let hi = (lo + NULL_ROWS_PER_BATCH).min(trials);
            sink.write(&frame(vec![
                col(STATISTIC, vec![r.statistic.clone(); hi - lo]),
                col("trial", (lo as u64..hi as u64).collect::<Vec<u64>>()),
                col(VALUE, bias[k][lo + 1..hi + 1].to_vec()),
                col(VALUE_NAIVE, naive[k][lo + 1..hi + 1].to_vec()),
            ])?)?;
        }
    }
    sink.finish()?;
    Ok(out.table(NULL))
}

/// `rose`: per angle and bin, the catalogue's count (each object with its weight) and the
/// bias-aware null's 5th, 50th and 95th percentile counts (weighted alike).
fn rose_columns(res: &ClusterTest) -> Vec<Column> {
    let r = &res.rose;
    let u = |f: fn(&RoseCount) -> f64| r.iter().map(f).collect::<Vec<f64>>();
    vec![
        col(
            QUANTITY,
            r.iter().map(|x| x.quantity.to_string()).collect::<Vec<String>>(),
        ),
        col(BIN_LO, r.iter().map(|x| x.lo_deg).collect::<Vec<f64>>()),
        col(BIN_HI, r.iter().map(|x| x.hi_deg).collect::<Vec<f64>>()),
        col(OBSERVED, u(|x| x.observed)),
        col(NULL_LO, u(|x| x.null_lo)),
        col(NULL_MEDIAN, u(|x| x.null_median)),
        col(NULL_HI, u(|x| x.null_hi)),
    ]
}

/// One angular bin of a rose as read back: the observed count and, when the table has them,
/// the null band's (lo, median, hi) counts.
#[derive(Debug, Clone, PartialEq)]
pub struct RoseRow {
    pub lo_deg: f64,
    pub hi_deg: f64,
    pub observed: f64,
    pub null_band: Option<(f64, f64, f64)>,
}

/// Read `rose.*`: `quantity, bin_lo_deg, bin_hi_deg, observed` and optionally `null_lo,
/// null_median, null_hi`; one list of bins per quantity, in the table's order.
pub fn read_rose(path: &Path) -> Result<Vec<(String, Vec<RoseRow>)>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (q, lo, hi, obs) = (c.str(QUANTITY)?, c.f64(BIN_LO)?, c.f64(BIN_HI)?, c.f64(OBSERVED)?);
    let band = if c.has(NULL_LO) {
        Some((c.f64(NULL_LO)?, c.f64(NULL_MEDIAN)?, c.f64(NULL_HI)?))
    } else {
        None
    };
    let mut out: Vec<(String, Vec<RoseRow>)> = Vec::new();
    for i in 0..q.len() {
        if out.last().is_none_or(|(name, _)| *name != q[i]) {
            out.push((q[i].clone(), Vec::new()));
        }
        out.last_mut().expect("pushed above").1.push(RoseRow {
            lo_deg: lo[i],
            hi_deg: hi[i],
            observed: obs[i],
            null_band: band.as_ref().map(|(a, m, b)| (a[i], m[i], b[i])),
        });
    }
    Ok(out)
}

/// One statistic's null distribution as read back, with its observed value and p-values.
#[derive(Debug, Clone, PartialEq)]
pub struct NullRead {
    pub statistic: String,
    pub observed: f64,
    pub p_bias_aware: Option<f64>,
    pub p_naive: Option<f64>,
    /// The bias-aware null values, then the naive ones (empty when the table has none).
    pub values: Vec<f64>,
    pub values_naive: Vec<f64>,
}

/// Read `cluster_null.*` (`statistic, value`, one row per statistic and null catalogue,
/// optional `value_naive`) with the observed values and p-values of `cluster_test.*` beside
/// it (`statistic, observed, p_bias_aware`, optional `p_naive`).
pub fn read_null(path: &Path) -> Result<Vec<NullRead>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (stat, value) = (c.str(STATISTIC)?, c.f64(VALUE)?);
    let naive = if c.has(VALUE_NAIVE) {
        Some(c.f64(VALUE_NAIVE)?)
    } else {
        None
    };
    let test_path = test_beside(path)?;
    let observed = TestRows::read(&test_path)?;
    let mut tests: Vec<NullRead> = Vec::new();
    for i in 0..stat.len() {
        let k = match tests.iter().position(|t| t.statistic == stat[i]) {
            Some(k) => k,
            None => {
                tests.push(observed.of(&stat[i], &test_path, path)?);
                tests.len() - 1
            }
        };
        tests[k].values.push(value[i]);
        if let Some(v) = &naive {
            tests[k].values_naive.push(v[i]);
        }
    }
    Ok(tests)
}

/// `cluster_test.parquet` (or `.csv`) beside a null-sample table.
fn test_beside(path: &Path) -> Result<PathBuf> {
    [Format::Parquet, Format::Csv]
        .into_iter()
        .map(|f| path.with_file_name(format!("{TEST}.{}", f.extension())))
        .find(|p| p.exists())
        .ok_or_else(|| {
            Error::input(format!(
                "{}: expected {TEST}.parquet or {TEST}.csv beside it (the observed values \
                 and p-values seine cluster-test writes)",
                path.display()
            ))
        })
}

/// The columns of `cluster_test.*` the null distributions are shown with.
struct TestRows {
    names: Vec<String>,
    observed: Vec<Option<f64>>,
    p_bias: Vec<Option<f64>>,
    p_naive: Option<Vec<Option<f64>>>,
}

impl TestRows {
    fn read(path: &Path) -> Result<Self> {
        let df = read_table(path)?;
        let c = Columns::new(&df, path);
        Ok(TestRows {
            names: c.str(STATISTIC)?,
            observed: c.f64_nullable(OBSERVED)?,
            p_bias: c.f64_nullable(P_BIAS_AWARE)?,
            p_naive: if c.has(P_NAIVE) {
                Some(c.f64_nullable(P_NAIVE)?)
            } else {
                None
            },
        })
    }

    /// A statistic's row, without its samples. The joint statistic has no single value (NaN):
    /// only the rows of sampled statistics are looked up.
    fn of(&self, s: &str, test_path: &Path, null_path: &Path) -> Result<NullRead> {
        let j = self.names.iter().position(|n| n == s).ok_or_else(|| {
            Error::input(format!(
                "{}: no row for statistic `{s}` of {}",
                test_path.display(),
                null_path.display()
            ))
        })?;
        let finite = |x: Option<f64>| x.filter(|x| x.is_finite());
        let observed = finite(self.observed[j]).ok_or_else(|| {
            Error::input(format!(
                "{}: statistic `{s}`: expected a finite `{OBSERVED}` value",
                test_path.display()
            ))
        })?;
        Ok(NullRead {
            statistic: s.to_string(),
            observed,
            p_bias_aware: finite(self.p_bias[j]),
            p_naive: self.p_naive.as_ref().and_then(|p| finite(p[j])),
            values: Vec::new(),
            values_naive: Vec::new(),
        })
    }
}
