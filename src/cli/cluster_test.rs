//! `seine cluster-test`: how significant the clustering of a catalogue's ϖ, Ω, ω, poles and
//! perihelia is once the surveys' bias is accounted for (AJ 157, 62, 2019), beside the naive
//! p-values.

use std::path::PathBuf;

use seine::analysis::bias_map::BiasMap;
use seine::analysis::cluster_test::{self as ct, Angles, ClusterTest, Cut, TestOptions};
use seine::io::objects::ObjectTable;
use seine::{Error, Result};

use super::bias_map::{GridArgs, map_columns, read_maps, thin_maps};
use super::common::*;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey")]
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue (objects table): its Ω and ω are tested.
    #[arg(long)]
    pub catalog: PathBuf,
    /// Bias maps written by `seine bias-map` for these objects (otherwise computed here);
    /// repeat for the tables of several shards.
    #[arg(long)]
    pub bias_map: Vec<PathBuf>,
    #[command(flatten)]
    pub grid: GridArgs,
    /// Synthetic catalogues for the Monte Carlo p-values.
    #[arg(long, default_value_t = ct::DEFAULT_TRIALS)]
    pub trials: u64,
    /// Bootstrap replicas of the bias maps: the quoted errors cover the maps' noise (at least 2).
    #[arg(long, default_value_t = ct::DEFAULT_REPLICAS)]
    pub replicas: u32,
    /// Test the sub-samples a ≥ A (au) too, e.g. 150,250; the global p-value covers them.
    #[arg(long, value_delimiter = ',')]
    pub cut_a_min: Vec<f64>,
    /// Test the sub-samples q ≥ Q (au) too, e.g. 40,42; the global p-value covers them.
    #[arg(long, value_delimiter = ',')]
    pub cut_q_min: Vec<f64>,
    /// Leave out the objects whose bias map holds no discovery (otherwise the test refuses them).
    #[arg(long)]
    pub drop_undiscovered: bool,
    /// Equal angular bins over 0–360° of the rose counts of ϖ, Ω and ω (`rose.*`).
    #[arg(long, default_value_t = ct::DEFAULT_ROSE_BINS)]
    pub rose_bins: usize,
    #[command(flatten)]
    pub run: RunArgs,
}

impl Args {
    fn options(&self) -> Result<TestOptions> {
        if self.replicas < 2 {
            return Err(Error::input(format!(
                "--replicas {}: expected at least 2 (the errors are their spread)",
                self.replicas
            )));
        }
        let cuts = (self.cut_a_min.iter().map(|a| Cut::AMin(*a)))
            .chain(self.cut_q_min.iter().map(|q| Cut::QMin(*q)))
            .collect();
        let opt = TestOptions {
            trials: self.trials,
            seed: self.run.seed,
            rose_bins: self.rose_bins,
            replicas: self.replicas,
            cuts,
        };
        opt.check()?;
        Ok(opt)
    }
}

pub fn run(a: Args) -> Result<()> {
    // Options first: nothing is computed or written for a bad one.
    let opt = a.options()?;
    let grid = a.grid.grid()?;
    let budget = a.grid.budget(grid)?;
    let mut prov = a.run.start()?;
    let catalog = ObjectTable::read(&a.catalog)?;
    prov.add_input(&a.catalog)?;
    let draws = catalog.len() as f64 * a.trials as f64;
    seine::budget::check(seine::budget::CLUSTER_TRIALS, draws, "--trials", a.grid.over_budget)?;
    // The null samples held for cluster_null.*: about half a kilobyte per trial.
    seine::budget::check_memory(512.0 * a.trials as f64, "--trials", a.grid.over_budget)?;
    let maps = match a.bias_map.as_slice() {
        [] => {
            if a.surveys.is_empty() {
                return Err(Error::input(
                    "cluster-test: give --survey (to compute bias maps) or --bias-map",
                ));
            }
            a.grid.check_budget(catalog.len(), &grid, &budget)?;
            let surveys = load_surveys(&a.surveys, &mut prov)?;
            a.grid
                .maps(&catalog, 0..catalog.len(), &surveys, a.run.seed, a.run.quiet)?
        }
        tables => {
            let mut maps = Vec::new();
            for p in tables {
                prov.add_input(p)?;
                maps.extend(read_maps(p)?);
            }
            order_maps(maps, &catalog, &tables[0])?
        }
    };
    let (undiscovered, thin) = thin_maps(&maps, budget.min_discoveries);
    if !undiscovered.is_empty() && !a.drop_undiscovered {
        return Err(Error::input(format!(
            "cluster-test: the bias maps of ids {undiscovered:?} hold no discovery (the surveys never found \
             these objects at any angle tried); drawing them uniformly would bias the test. Give \
             --drop-undiscovered to test the others, or raise --max-trials-per-object (run `seine bias-map` \
             first to keep the maps)"
        )));
    }
    let keep: Vec<usize> = (0..maps.len()).filter(|j| maps[*j].total_discoveries() > 0).collect();
    let angles = Angles::of(&catalog).select(&keep);
    let tested: Vec<BiasMap> = keep.iter().map(|j| maps[*j].clone()).collect();
    let bar = seine::progress::bar(u64::from(opt.replicas) + 1, "map replicas", !a.run.quiet);
    let tick = || {
        if let Some(b) = &bar {
            b.inc(1)
        }
    };
    let res = ct::cluster_test(&angles, &tested, &opt, &tick)?;
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    let out = a.run.out_dir(prov)?;
    if a.bias_map.is_empty() {
        out.write("bias_map", map_columns(&maps))?;
    }
    let r = &res.results;
    let table = out.write(
        "cluster_test",
        vec![
            col(
                "statistic",
                r.iter().map(|x| x.statistic.clone()).collect::<Vec<String>>(),
            ),
            col("sample", r.iter().map(|x| x.sample.clone()).collect::<Vec<String>>()),
            col("n_objects", r.iter().map(|x| x.n_objects as u64).collect::<Vec<u64>>()),
            col("observed", r.iter().map(|x| x.observed).collect::<Vec<f64>>()),
            col(
                "direction_lon_deg",
                r.iter().map(|x| x.direction_lon_deg).collect::<Vec<f64>>(),
            ),
            col(
                "direction_lat_deg",
                r.iter().map(|x| x.direction_lat_deg).collect::<Vec<f64>>(),
            ),
            col("p_bias_aware", r.iter().map(|x| x.p_bias_aware).collect::<Vec<f64>>()),
            col(
                "p_bias_aware_error",
                r.iter().map(|x| x.p_bias_aware_error).collect::<Vec<f64>>(),
            ),
            col("p_naive", r.iter().map(|x| x.p_naive).collect::<Vec<f64>>()),
            col(
                "p_naive_method",
                r.iter().map(|x| x.p_naive_method.clone()).collect::<Vec<String>>(),
            ),
            col(
                "p_naive_monte_carlo",
                r.iter().map(|x| x.p_naive_monte_carlo).collect::<Vec<f64>>(),
            ),
        ],
    )?;
    let null = out.write("cluster_null", null_columns(&res))?;
    let rose = out.write("rose", rose_columns(&res))?;
    let conclusion = conclude(&res, &undiscovered, &thin);
    let mut value = serde_json::to_value(&res).map_err(|e| Error::io(e.to_string()))?;
    value["command"] = "cluster-test".into();
    value["dropped_undiscovered_ids"] = serde_json::json!(undiscovered);
    value["below_min_discoveries_ids"] = serde_json::json!(thin);
    let summary = out.summary(value, &conclusion)?;
    a.run.report(&conclusion, &[&table, &null, &rose, &summary]);
    Ok(())
}

/// `cluster_null`: one row per reported statistic and synthetic catalogue, statistic by
/// statistic: `statistic, trial, value` (bias-aware null), `value_naive` (uniform angles).
fn null_columns(res: &ClusterTest) -> Vec<polars::prelude::Column> {
    let s = &res.null_samples;
    let k_all = res.results.len();
    let each = |f: &dyn Fn(usize, &ct::NullSample) -> f64| -> Vec<f64> {
        (0..k_all).flat_map(|k| s.iter().map(move |x| f(k, x))).collect()
    };
    vec![
        col(
            "statistic",
            res.results
                .iter()
                .flat_map(|r| std::iter::repeat_n(r.statistic.clone(), s.len()))
                .collect::<Vec<String>>(),
        ),
        col(
            "trial",
            (0..k_all).flat_map(|_| s.iter().map(|x| x.trial)).collect::<Vec<u64>>(),
        ),
        col("value", each(&|k, x| x.bias_aware[k])),
        col("value_naive", each(&|k, x| x.naive[k])),
    ]
}

/// `rose`: per angle and bin, the catalogue's count and the bias-aware null's 5th, 50th and
/// 95th percentile counts.
fn rose_columns(res: &ClusterTest) -> Vec<polars::prelude::Column> {
    let r = &res.rose;
    let u = |f: fn(&ct::RoseCount) -> u64| r.iter().map(f).collect::<Vec<u64>>();
    vec![
        col(
            "quantity",
            r.iter().map(|x| x.quantity.to_string()).collect::<Vec<String>>(),
        ),
        col("bin_lo_deg", r.iter().map(|x| x.lo_deg).collect::<Vec<f64>>()),
        col("bin_hi_deg", r.iter().map(|x| x.hi_deg).collect::<Vec<f64>>()),
        col("observed", u(|x| x.observed)),
        col("null_lo", u(|x| x.null_lo)),
        col("null_median", u(|x| x.null_median)),
        col("null_hi", u(|x| x.null_hi)),
    ]
}

/// The maps in catalogue order; every catalogue id needs one.
fn order_maps(maps: Vec<BiasMap>, catalog: &ObjectTable, path: &std::path::Path) -> Result<Vec<BiasMap>> {
    let mut by_id: std::collections::HashMap<i64, _> = maps.into_iter().map(|m| (m.id, m)).collect();
    catalog
        .ids
        .iter()
        .map(|id| {
            by_id
                .remove(id)
                .ok_or_else(|| Error::input(format!("{}: no bias map for catalogue id {id}", path.display())))
        })
        .collect()
}

fn conclude(t: &ClusterTest, dropped: &[i64], thin: &[i64]) -> String {
    let r = |name: &str| t.result(name).expect("every statistic is reported");
    let line = |label: &str, name: &str| {
        let x = r(name);
        format!(
            "{label}: bias-aware chance {} ± {}, without bias correction {}",
            pct(x.p_bias_aware),
            pct(x.p_bias_aware_error),
            pct(x.p_naive)
        )
    };
    let family = t.results.len() - 1;
    let mut s = format!(
        "seine cluster-test: {} objects, {} synthetic catalogues drawn from their bias maps, errors from {} \
         bootstrap replicas of the maps.\n  {} — the chance that the most significant of all {family} \
         statistics{} is at least this significant: the number to quote unless one statistic was chosen \
         before looking.\n  {} (mean ϖ {:.0}°, R/n = {:.2}).\n  {}.\n  {}.\n  {} (Fisher's combination).",
        t.n_objects,
        t.trials,
        t.replicas,
        line("Global (look-elsewhere)", ct::GLOBAL),
        if t.results.iter().any(|x| x.sample != "all") {
            " over all samples"
        } else {
            ""
        },
        line("ϖ clustering (Rayleigh)", "rayleigh_varpi"),
        r("rayleigh_varpi").direction_lon_deg,
        r("rayleigh_varpi").observed,
        line("Ω clustering (Rayleigh)", "rayleigh_node"),
        line("mean orbital pole", "mean_pole"),
        line("poles and perihelia together", ct::COMBINED)
    );
    if !dropped.is_empty() {
        s += &format!(
            "\n  Warning: left out, their bias maps hold no discovery: ids {dropped:?} (--drop-undiscovered)."
        );
    }
    if !thin.is_empty() {
        s += &format!(
            "\n  Note: maps short of the asked discoveries at the trial cap, ids {thin:?}; the errors include their noise."
        );
    }
    s
}
