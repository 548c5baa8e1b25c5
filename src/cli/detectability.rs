//! `seine detectability`: per-object discovery probability of a catalogue's objects with their
//! unobserved angles redrawn (`--objects`), or the selection function of a population over
//! (a, q, i, H) cells (`--population`). Science and files in `analysis::detectability` and
//! `analysis::selection`.

use std::path::PathBuf;

use seine::Result;
use seine::analysis::detectability::{self, Redraw, check_budget};
use seine::analysis::selection::{self, GridEdges, selection_function};
use seine::engine::run::survey_key;
use seine::io::objects::ObjectTable;
use seine::shard::shard_rows;

use super::common::*;

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("input").required(true).args(["objects", "population"])))]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Catalogue of objects (CSV or Parquet): each object's chance with its a, e, i and H kept.
    #[arg(long)]
    pub objects: Option<PathBuf>,
    #[command(flatten)]
    pub selection: super::common::CatalogueArgs,
    /// A population sample (e.g. from seine draw): the selection function P(discovered | a, q, i, H cell).
    #[arg(long)]
    pub population: Option<PathBuf>,
    /// Trials (clones) per catalogue object.
    #[arg(long, default_value_t = 1000)]
    pub clones: u64,
    /// Angles redrawn besides M: m (none), node, argperi, or all.
    #[arg(long, default_value = "all")]
    pub redraw: String,
    /// Allow more than 10^8 trials (objects × clones) in one run.
    #[arg(long)]
    pub over_budget: bool,
    #[command(flatten)]
    pub run: RunArgs,
    /// Shard K of N (K from 0; or from SLURM_ARRAY_TASK_ID): a contiguous slice of the catalogue objects.
    #[command(flatten)]
    pub shard: ShardArgs,
    /// Cell edges of the selection function in semi-major axis a, AU (comma-separated), with
    /// --population.
    #[arg(long, default_value = "0,30,50,100,250,1000,100000")]
    pub a_edges: String,
    /// Bin edges of the grid in perihelion distance q, AU (comma-separated).
    #[arg(long, default_value = "0,30,40,50,75,100,100000")]
    pub q_edges: String,
    /// Bin edges of the grid in inclination i, degrees (comma-separated).
    #[arg(long, default_value = "0,10,20,30,45,90,180")]
    pub inc_edges: String,
    /// Bin edges of the grid in absolute magnitude H, mag (comma-separated).
    #[arg(long, default_value = "-5,3,4,5,6,7,8,9,10,20")]
    pub h_edges: String,
}

pub fn run(a: Args) -> Result<()> {
    let redraw = Redraw::parse(&a.redraw)?;
    let edges = GridEdges {
        a_au: parse_edges("--a-edges", &a.a_edges)?,
        q_au: parse_edges("--q-edges", &a.q_edges)?,
        inc_deg: parse_edges("--inc-edges", &a.inc_edges)?,
        h_mag: parse_edges("--h-edges", &a.h_edges)?,
    };
    parse_format(&a.run.format)?;
    let shard = a.shard.resolve()?;
    let mut prov = a.run.start()?;
    let surveys = load_surveys(&a.surveys, &mut prov)?;
    if let Some(path) = &a.population {
        let population = ObjectTable::read(path)?;
        prov.add_input(path)?;
        let out = a.run.out_dir(prov)?;
        let (cells, outside) = selection_function(&population, &surveys, a.run.seed, &edges);
        let table = selection::write(&out, &cells)?;
        let conclusion = selection::conclusion(population.len(), &cells, outside);
        let summary = out.summary(
            serde_json::json!({"command": "detectability", "mode": "population", "objects": population.len(),
                "cells_filled": cells.len(), "objects_outside_grid": outside}),
            &conclusion,
        )?;
        a.run.report(&conclusion, &[&table, &summary]);
        return Ok(());
    }
    let path = a.objects.as_ref().expect("clap requires --objects or --population");
    let objects = a.selection.read(path)?;
    prov.add_input(path)?;
    let rows = shard_rows(objects.len(), shard);
    check_budget(rows.len(), a.clones, a.over_budget)?;
    let out = a.run.out_dir(prov)?;
    let res = detectability::detectability(&objects, rows, &surveys, a.clones, redraw, a.run.seed);
    let keys: Vec<String> = surveys.iter().map(|s| survey_key(&s.survey.name)).collect();
    let table = detectability::write(&out, &objects, &res, &keys)?;
    let conclusion = detectability::conclusion(&res, &objects, a.clones);
    let summary = out.summary(
        serde_json::json!({
            "command": "detectability",
            "mode": "catalogue",
            "objects": res.len(),
            "trials_per_object": a.clones,
            "redraw": a.redraw,
            "mean_p_discover": res.iter().map(|d| d.discovered.fraction).sum::<f64>() / res.len().max(1) as f64,
        }),
        &conclusion,
    )?;
    a.run.report(&conclusion, &[&table, &summary]);
    Ok(())
}
