//! `seine detectability`: per-object discovery probability with unobserved angles redrawn,
//! and the selection function on (a, q, i, H) bins.

use std::path::PathBuf;

use seine::Result;
use seine::analysis::detectability::{GridEdges, Redraw, detectability, selection_grid};
use seine::engine::run::survey_key;
use seine::io::objects::ObjectTable;
use seine::shard::shard_rows;

use super::common::ShardArgs;
use super::common::*;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Catalogue of objects (CSV or Parquet): their a, e, i and H are kept.
    #[arg(long)]
    pub objects: PathBuf,
    /// Trials (clones) per object.
    #[arg(long, default_value_t = 1000)]
    pub clones: u64,
    /// Angles redrawn besides M: m (none), node, argperi, or all.
    #[arg(long, default_value = "all")]
    pub redraw: String,
    #[command(flatten)]
    pub run: RunArgs,
    /// Shard K of N (K from 0; or from SLURM_ARRAY_TASK_ID): a contiguous slice of the catalogue objects.
    #[command(flatten)]
    pub shard: ShardArgs,
    /// Bin edges of the selection-function grid in semi-major axis a, AU (comma-separated).
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
    if a.clones == 0 {
        return Err(seine::Error::input("--clones: expected at least 1"));
    }
    let mut prov = a.run.start()?;
    let surveys = load_surveys(&a.surveys, &mut prov)?;
    let objects = ObjectTable::read(&a.objects)?;
    prov.add_input(&a.objects)?;
    let shard = a.shard.resolve()?;
    let rows = shard_rows(objects.len(), shard);
    let (lo, hi) = (rows.start, rows.end);
    let out = a.run.out_dir(prov)?;
    let res = detectability(&objects, lo..hi, &surveys, a.clones, redraw, a.run.seed);
    let el =
        |f: fn(&seine::orbit::Elements) -> f64| res.iter().map(|d| f(&objects.elements[d.row])).collect::<Vec<f64>>();
    let mut cols = vec![
        col("id", res.iter().map(|d| objects.ids[d.row]).collect::<Vec<i64>>()),
        col("a_au", el(|e| e.a_au)),
        col("e", el(|e| e.e)),
        col("q_au", el(|e| e.q_au())),
        col("inc_deg", el(|e| e.inc.to_degrees())),
        col("h_mag", res.iter().map(|d| objects.h_mag[d.row]).collect::<Vec<f64>>()),
        col("trials", res.iter().map(|d| d.discovered.n).collect::<Vec<u64>>()),
        col("discovered", res.iter().map(|d| d.discovered.k).collect::<Vec<u64>>()),
        col("secured", res.iter().map(|d| d.secured).collect::<Vec<u64>>()),
        col(
            "p_discover",
            res.iter().map(|d| d.discovered.fraction).collect::<Vec<f64>>(),
        ),
        col(
            "p_std_error",
            res.iter().map(|d| d.discovered.std_error).collect::<Vec<f64>>(),
        ),
        col(
            "p_wilson_lo",
            res.iter().map(|d| d.discovered.lower).collect::<Vec<f64>>(),
        ),
        col(
            "p_wilson_hi",
            res.iter().map(|d| d.discovered.upper).collect::<Vec<f64>>(),
        ),
    ];
    for (s, ps) in surveys.iter().enumerate() {
        let name = format!("discovered_{}", survey_key(&ps.survey.name));
        cols.push(col(&name, res.iter().map(|d| d.by_survey[s]).collect::<Vec<u64>>()));
    }
    let per_object = out.write("detectability", cols)?;
    let (bins, outside) = selection_grid(&objects, &res, &edges);
    let e = |k: usize, hi: bool| {
        bins.iter()
            .map(|b| if hi { b.edges[k].1 } else { b.edges[k].0 })
            .collect::<Vec<f64>>()
    };
    let grid = out.write(
        "selection_grid",
        vec![
            col("a_lo_au", e(0, false)),
            col("a_hi_au", e(0, true)),
            col("q_lo_au", e(1, false)),
            col("q_hi_au", e(1, true)),
            col("inc_lo_deg", e(2, false)),
            col("inc_hi_deg", e(2, true)),
            col("h_lo_mag", e(3, false)),
            col("h_hi_mag", e(3, true)),
            col("n_objects", bins.iter().map(|b| b.n_objects).collect::<Vec<u64>>()),
            col("trials", bins.iter().map(|b| b.result.n).collect::<Vec<u64>>()),
        ]
        .into_iter()
        .chain(proportion_columns(&bins.iter().map(|b| b.result).collect::<Vec<_>>()))
        .collect(),
    )?;
    let conclusion = conclude(&res, &objects, a.clones);
    let summary = out.summary(
        serde_json::json!({
            "command": "detectability",
            "objects": res.len(),
            "trials_per_object": a.clones,
            "redraw": a.redraw,
            "grid_bins_filled": bins.len(),
            "objects_outside_grid": outside,
            "mean_p_discover": res.iter().map(|d| d.discovered.fraction).sum::<f64>() / res.len().max(1) as f64,
        }),
        &conclusion,
    )?;
    a.run.report(&conclusion, &[&per_object, &grid, &summary]);
    Ok(())
}

/// One plain sentence with the numbers.
fn conclude(res: &[seine::analysis::detectability::ObjectDetectability], objects: &ObjectTable, k: u64) -> String {
    if res.is_empty() {
        return "seine detectability: no objects in this shard".into();
    }
    let mut p: Vec<f64> = res.iter().map(|d| d.discovered.fraction).collect();
    p.sort_by(f64::total_cmp);
    let best = res
        .iter()
        .max_by(|x, y| x.discovered.fraction.total_cmp(&y.discovered.fraction))
        .unwrap();
    let low = p.iter().filter(|x| **x < 0.01).count();
    format!(
        "seine detectability: {} objects × {k} trials. Median chance of discovery {}; {low} objects below 1%; \
         highest: id {} at {} (95% Wilson {}–{}).",
        res.len(),
        pct(p[p.len() / 2]),
        objects.ids[best.row],
        pct(best.discovered.fraction),
        pct(best.discovered.lower),
        pct(best.discovered.upper)
    )
}
