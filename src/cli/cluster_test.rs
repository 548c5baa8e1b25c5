//! `seine cluster-test`: how significant the clustering of a catalogue's ϖ, Ω, ω, poles and
//! perihelia is once the surveys' bias is accounted for (AJ 157, 62, 2019), beside the naive
//! p-values.

use std::path::PathBuf;

use seine::analysis::bias_map::bias_maps;
use seine::analysis::cluster_test::{Angles, ClusterTest, N_SAMPLED, STAT_NAMES, cluster_test_binned};
use seine::io::objects::ObjectTable;
use seine::{Error, Result};

use super::bias_map::{GridArgs, map_columns, read_maps};
use super::common::*;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey")]
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue (objects table): its Ω and ω are tested.
    #[arg(long)]
    pub catalog: PathBuf,
    #[command(flatten)]
    pub selection: super::common::CatalogueArgs,
    /// Bias maps written by `seine bias-map` for these objects (otherwise computed here);
    /// repeat for the tables of several shards.
    #[arg(long)]
    pub bias_map: Vec<PathBuf>,
    #[command(flatten)]
    pub grid: GridArgs,
    /// Synthetic catalogues for the Monte Carlo p-values.
    #[arg(long, default_value_t = 10_000)]
    pub trials: u64,
    /// Equal angular bins over 0–360° of the rose counts of ϖ, Ω and ω (`rose.*`).
    #[arg(long, default_value_t = seine::analysis::cluster_test::DEFAULT_ROSE_BINS)]
    pub rose_bins: usize,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    // Options first: nothing is computed or written for a bad one.
    seine::analysis::cluster_test::check_options(a.trials, a.rose_bins)?;
    let mut prov = a.run.start()?;
    let catalog = a.selection.read(&a.catalog)?;
    prov.add_input(&a.catalog)?;
    let maps = match a.bias_map.as_slice() {
        [] => {
            if a.surveys.is_empty() {
                return Err(Error::input(
                    "cluster-test: give --survey (to compute bias maps) or --bias-map",
                ));
            }
            let surveys = load_surveys(&a.surveys, &mut prov)?;
            bias_maps(&catalog, 0..catalog.len(), &surveys, a.grid.grid()?, a.run.seed)
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
    let out = a.run.out_dir(prov)?;
    if a.bias_map.is_empty() {
        out.write("bias_map", map_columns(&maps))?;
    }
    let res = cluster_test_binned(&Angles::of(&catalog), &maps, a.trials, a.run.seed, a.rose_bins)?;
    let r = &res.results;
    let table = out.write(
        "cluster_test",
        vec![
            col(
                "statistic",
                r.iter().map(|x| x.statistic.clone()).collect::<Vec<String>>(),
            ),
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
    let conclusion = conclude(&res);
    let mut value = serde_json::to_value(&res).map_err(|e| Error::io(e.to_string()))?;
    value["command"] = "cluster-test".into();
    let summary = out.summary(value, &conclusion)?;
    a.run.report(&conclusion, &[&table, &null, &rose, &summary]);
    Ok(())
}

/// `cluster_null`: one row per statistic and synthetic catalogue, statistic by statistic:
/// `statistic, trial, value` (bias-aware null), `value_naive` (uniform angles).
fn null_columns(res: &ClusterTest) -> Vec<polars::prelude::Column> {
    let s = &res.null_samples;
    let each = |f: &dyn Fn(usize, &seine::analysis::cluster_test::NullSample) -> f64| -> Vec<f64> {
        (0..N_SAMPLED).flat_map(|k| s.iter().map(move |x| f(k, x))).collect()
    };
    vec![
        col(
            "statistic",
            (0..N_SAMPLED)
                .flat_map(|k| std::iter::repeat_n(STAT_NAMES[k].to_string(), s.len()))
                .collect::<Vec<String>>(),
        ),
        col(
            "trial",
            (0..N_SAMPLED)
                .flat_map(|_| s.iter().map(|x| x.trial))
                .collect::<Vec<u64>>(),
        ),
        col("value", each(&|k, x| x.bias_aware[k])),
        col("value_naive", each(&|k, x| x.naive[k])),
    ]
}

/// `rose`: per angle and bin, the catalogue's count and the bias-aware null's 5th, 50th and
/// 95th percentile counts.
fn rose_columns(res: &ClusterTest) -> Vec<polars::prelude::Column> {
    let r = &res.rose;
    let u = |f: fn(&seine::analysis::cluster_test::RoseCount) -> u64| r.iter().map(f).collect::<Vec<u64>>();
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
fn order_maps(
    maps: Vec<seine::analysis::bias_map::BiasMap>,
    catalog: &ObjectTable,
    path: &std::path::Path,
) -> Result<Vec<seine::analysis::bias_map::BiasMap>> {
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

fn conclude(t: &ClusterTest) -> String {
    let r = |name: &str| {
        t.results
            .iter()
            .find(|x| x.statistic == name)
            .expect("every statistic is reported")
    };
    let line = |label: &str, name: &str| {
        let x = r(name);
        format!(
            "{label}: bias-aware chance {} ± {}, without bias correction {}",
            pct(x.p_bias_aware),
            pct(x.p_bias_aware_error),
            pct(x.p_naive)
        )
    };
    let mut s = format!(
        "seine cluster-test: {} objects, {} synthetic catalogues drawn from their bias maps.\n  {} (mean ϖ {:.0}°, R/n = {:.2}).\n  {}.\n  {}.\n  {}.",
        t.n_objects,
        t.trials,
        line("ϖ clustering (Rayleigh)", "rayleigh_varpi"),
        r("rayleigh_varpi").direction_lon_deg,
        r("rayleigh_varpi").observed,
        line("Ω clustering (Rayleigh)", "rayleigh_node"),
        line("mean orbital pole", "mean_pole"),
        line("poles and perihelia together", "pole_and_perihelion")
    );
    if !t.unconstrained_ids.is_empty() {
        s += &format!(
            "\n  Warning: {} on the bias-map grid and drawn uniformly (ids {:?}); more trials per cell would constrain it.",
            if t.unconstrained_ids.len() == 1 {
                "1 object was never discovered".to_string()
            } else {
                format!("{} objects were never discovered", t.unconstrained_ids.len())
            },
            t.unconstrained_ids
        );
    }
    s
}
