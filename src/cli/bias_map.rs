//! `seine bias-map`: per-object discovery probability on a (ϖ, Ω) or (ω, Ω) grid, with a, e,
//! i and H fixed and M redrawn (AJ 154, 65, 2017). Tidy table and SVG heat maps.

use std::path::{Path, PathBuf};

use polars::prelude::Column;
use seine::analysis::bias_map::{BiasMap, MapAxes, MapGrid, bias_maps, svg};
use seine::io::table::{Columns, read_table, write_atomic};
use seine::shard::shard_rows;
use seine::{Error, Result};

use super::common::ShardArgs;
use super::common::*;

/// Grid options shared with `cluster-test`.
#[derive(clap::Args, Debug, Clone)]
pub struct GridArgs {
    /// Cells along the first angle and along Ω: NX,NNODE.
    #[arg(long, default_value = "36,36")]
    pub grid: String,
    /// Trials per cell (angles uniform inside the cell, M uniform).
    #[arg(long, default_value_t = 4)]
    pub per_cell: u64,
    /// Map axes: varpi-node (ϖ, Ω) or argperi-node (ω, Ω).
    #[arg(long, default_value = "varpi-node")]
    pub axes: String,
}

impl GridArgs {
    pub fn grid(&self) -> Result<MapGrid> {
        let bad = || {
            Error::input(format!(
                "--grid `{}`: expected NX,NNODE, two whole numbers ≥ 1",
                self.grid
            ))
        };
        let (x, y) = self.grid.split_once(',').ok_or_else(bad)?;
        let (n_x, n_node): (usize, usize) = (
            x.trim().parse().map_err(|_| bad())?,
            y.trim().parse().map_err(|_| bad())?,
        );
        if n_x == 0 || n_node == 0 || self.per_cell == 0 {
            return Err(Error::input("--grid and --per-cell: expected at least 1"));
        }
        let axes = match self.axes.as_str() {
            "varpi-node" => MapAxes::VarpiNode,
            "argperi-node" => MapAxes::ArgperiNode,
            other => {
                return Err(Error::input(format!(
                    "--axes `{other}`: expected varpi-node or argperi-node"
                )));
            }
        };
        Ok(MapGrid {
            axes,
            n_x,
            n_node,
            per_cell: self.per_cell,
        })
    }
}

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Catalogue of objects (CSV or Parquet).
    #[arg(long)]
    pub objects: PathBuf,
    #[command(flatten)]
    pub selection: super::common::CatalogueArgs,
    #[command(flatten)]
    pub grid: GridArgs,
    #[command(flatten)]
    pub run: RunArgs,
    /// Shard K of N (K from 0; or from SLURM_ARRAY_TASK_ID): a contiguous slice of the catalogue objects.
    #[command(flatten)]
    pub shard: ShardArgs,
    /// Do not write the SVG heat maps.
    #[arg(long)]
    pub no_svg: bool,
}

pub fn run(a: Args) -> Result<()> {
    let grid = a.grid.grid()?;
    let mut prov = a.run.start()?;
    let surveys = load_surveys(&a.surveys, &mut prov)?;
    let objects = a.selection.read(&a.objects)?;
    prov.add_input(&a.objects)?;
    let rows = shard_rows(objects.len(), a.shard.resolve()?);
    let (lo, hi) = (rows.start, rows.end);
    let out = a.run.out_dir(prov)?;
    let maps = bias_maps(&objects, lo..hi, &surveys, grid, a.run.seed);
    let table = out.write("bias_map", map_columns(&maps))?;
    if !a.no_svg {
        for (m, i) in maps.iter().zip(lo..hi) {
            let el = &objects.elements[i];
            let x = match grid.axes {
                MapAxes::VarpiNode => (el.node + el.argperi).rem_euclid(std::f64::consts::TAU),
                MapAxes::ArgperiNode => el.argperi,
            };
            write_atomic(
                &a.run.out.join("maps").join(format!("{}.svg", m.id)),
                svg(m, Some((x, el.node))).as_bytes(),
            )?;
        }
    }
    let mean: Vec<f64> = maps.iter().map(BiasMap::mean_p).collect();
    let conclusion = conclude(&maps, &mean);
    let summary = out.summary(
        serde_json::json!({
            "command": "bias-map",
            "objects": maps.len(),
            "grid": [grid.n_x, grid.n_node],
            "axes": grid.axes.x_name(),
            "trials_per_cell": grid.per_cell,
            "mean_p_discover": maps.iter().map(|m| serde_json::json!({"id": m.id, "mean_p": m.mean_p()})).collect::<Vec<_>>(),
        }),
        &conclusion,
    )?;
    a.run.report(&conclusion, &[&table, &summary]);
    Ok(())
}

fn conclude(maps: &[BiasMap], mean: &[f64]) -> String {
    if maps.is_empty() {
        return "seine bias-map: no objects in this shard".into();
    }
    // How uneven a map is: the spread of its cells' probability against its mean.
    let contrast: Vec<f64> = maps
        .iter()
        .map(|m| (0..m.trials.len()).map(|c| m.p(c)).fold(0.0, f64::max) / m.mean_p().max(1e-300))
        .collect();
    let never = maps.iter().filter(|m| m.mean_p() == 0.0).count();
    format!(
        "seine bias-map: {} objects on a {}×{} grid. Mean chance of discovery over all angles {} (range {}–{}); \
         the most favoured cell is on average {:.1}× the mean, so the surveys see these objects unevenly in {} and node; \
         {} never discovered on the grid.",
        maps.len(),
        maps[0].grid.n_x,
        maps[0].grid.n_node,
        pct(mean.iter().sum::<f64>() / mean.len() as f64),
        pct(mean.iter().copied().fold(f64::INFINITY, f64::min)),
        pct(mean.iter().copied().fold(0.0, f64::max)),
        contrast.iter().filter(|c| c.is_finite()).sum::<f64>() / contrast.len() as f64,
        maps[0].grid.axes.x_name(),
        if never == 1 {
            "1 object was".to_string()
        } else {
            format!("{never} objects were")
        }
    )
}

/// The tidy table: one row per object and cell.
pub fn map_columns(maps: &[BiasMap]) -> Vec<Column> {
    let rows: Vec<(usize, usize)> = maps
        .iter()
        .enumerate()
        .flat_map(|(m, b)| (0..b.trials.len()).map(move |c| (m, c)))
        .collect();
    let x = maps.first().map_or("varpi", |m| m.grid.axes.x_name());
    let bound = |k: usize| -> Vec<f64> {
        rows.iter()
            .map(|&(m, c)| {
                let b = maps[m].cell_bounds(c);
                [b.0, b.1, b.2, b.3][k].to_degrees()
            })
            .collect()
    };
    vec![
        col("id", rows.iter().map(|&(m, _)| maps[m].id).collect::<Vec<i64>>()),
        col("cell", rows.iter().map(|&(_, c)| c as u64).collect::<Vec<u64>>()),
        col(
            "grid_n_x",
            rows.iter().map(|&(m, _)| maps[m].grid.n_x as u64).collect::<Vec<u64>>(),
        ),
        col(
            "grid_n_node",
            rows.iter()
                .map(|&(m, _)| maps[m].grid.n_node as u64)
                .collect::<Vec<u64>>(),
        ),
        col(&format!("{x}_lo_deg"), bound(0)),
        col(&format!("{x}_hi_deg"), bound(1)),
        col("node_lo_deg", bound(2)),
        col("node_hi_deg", bound(3)),
        col(
            "trials",
            rows.iter().map(|&(m, c)| maps[m].trials[c]).collect::<Vec<u64>>(),
        ),
        col(
            "discovered",
            rows.iter().map(|&(m, c)| maps[m].discoveries[c]).collect::<Vec<u64>>(),
        ),
        col(
            "p_discover",
            rows.iter().map(|&(m, c)| maps[m].p(c)).collect::<Vec<f64>>(),
        ),
    ]
}

/// Read a table written by `seine bias-map` back into maps, one per id.
pub fn read_maps(path: &Path) -> Result<Vec<BiasMap>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let axes = if c.has("varpi_lo_deg") {
        MapAxes::VarpiNode
    } else {
        MapAxes::ArgperiNode
    };
    let (ids, cells, nx, nn) = (c.i64("id")?, c.i64("cell")?, c.i64("grid_n_x")?, c.i64("grid_n_node")?);
    let (trials, found) = (c.i64("trials")?, c.i64("discovered")?);
    let mut maps: Vec<BiasMap> = Vec::new();
    for r in 0..c.len() {
        if maps.last().is_none_or(|m| m.id != ids[r]) {
            let grid = MapGrid {
                axes,
                n_x: nx[r] as usize,
                n_node: nn[r] as usize,
                per_cell: 0,
            };
            let n = grid.n_x * grid.n_node;
            maps.push(BiasMap {
                id: ids[r],
                grid,
                trials: vec![0; n],
                discoveries: vec![0; n],
            });
        }
        let m = maps.last_mut().expect("pushed above");
        let cell = usize::try_from(cells[r]).ok().filter(|x| *x < m.trials.len());
        let cell = cell.ok_or_else(|| c.bad_value(r, "cell", &format!("a cell below {}", m.trials.len())))?;
        if trials[r] < 0 || found[r] < 0 || found[r] > trials[r] {
            return Err(c.bad_value(r, "discovered", "0 ≤ discovered ≤ trials"));
        }
        m.trials[cell] = trials[r] as u64;
        m.discoveries[cell] = found[r] as u64;
    }
    Ok(maps)
}
