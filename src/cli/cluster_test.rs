//! `seine cluster-test`: how significant the clustering of a catalogue's ϖ, Ω, ω, poles and
//! perihelia is once the surveys' bias is accounted for (AJ 157, 62, 2019), beside the naive
//! p-values.

use std::path::PathBuf;

use seine::analysis::bias_map::bias_maps;
use seine::analysis::cluster_test::{Angles, ClusterTest, cluster_test};
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
    /// Bias maps written by `seine bias-map` for these objects (otherwise computed here);
    /// repeat for the tables of several shards.
    #[arg(long)]
    pub bias_map: Vec<PathBuf>,
    #[command(flatten)]
    pub grid: GridArgs,
    /// Synthetic catalogues for the Monte Carlo p-values.
    #[arg(long, default_value_t = 10_000)]
    pub trials: u64,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let mut prov = a.run.start()?;
    let catalog = ObjectTable::read(&a.catalog)?;
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
    let res = cluster_test(&Angles::of(&catalog), &maps, a.trials, a.run.seed)?;
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
    let conclusion = conclude(&res);
    let mut value = serde_json::to_value(&res).map_err(|e| Error::io(e.to_string()))?;
    value["command"] = "cluster-test".into();
    let summary = out.summary(value, &conclusion)?;
    a.run.report(&conclusion, &[&table, &summary]);
    Ok(())
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
            "\n  Warning: {} never discovered on its bias-map grid and drawn uniformly (ids {:?}); more trials per cell would constrain it.",
            if t.unconstrained_ids.len() == 1 {
                "1 object was".to_string()
            } else {
                format!("{} objects were", t.unconstrained_ids.len())
            },
            t.unconstrained_ids
        );
    }
    s
}
