//! `seine bias-map`: per-object discovery probability on a (ϖ, Ω) or (ω, Ω) grid, with a, e,
//! i and H fixed and M redrawn (AJ 154, 65, 2017). Tidy table and SVG heat maps.

use std::path::{Path, PathBuf};

use polars::prelude::Column;
use seine::analysis::bias_map::{
    BiasMap, DEFAULT_MAX_TRIALS_PER_OBJECT, DEFAULT_MIN_DISCOVERIES, MapAxes, MapBudget, MapGrid, bias_maps, svg,
};
use seine::engine::PreparedSurvey;
use seine::io::objects::ObjectTable;
use seine::io::table::{Columns, read_table, write_atomic};
use seine::shard::shard_rows;
use seine::{Error, Result};

use super::common::ShardArgs;
use super::common::*;

/// Grid and trial options shared with `cluster-test`.
#[derive(clap::Args, Debug, Clone)]
pub struct GridArgs {
    /// Cells along the first angle and along Ω: NX,NNODE.
    #[arg(long, default_value = "36,36")]
    pub grid: String,
    /// Trials are added a pass at a time (one per cell, angles uniform inside the cell, M
    /// uniform) until an object's map holds this many discoveries.
    #[arg(long, default_value_t = DEFAULT_MIN_DISCOVERIES)]
    pub min_discoveries: u64,
    /// Trial cap per object: no pass is started that would exceed it. An object still without
    /// a discovery is named in a warning (cluster-test refuses it unless --drop-undiscovered).
    #[arg(long, default_value_t = DEFAULT_MAX_TRIALS_PER_OBJECT)]
    pub max_trials_per_object: u64,
    /// Exactly this many trials per cell instead (no adaptive passes).
    #[arg(long)]
    pub per_cell: Option<u64>,
    /// Map axes: varpi-node (ϖ, Ω) or argperi-node (ω, Ω).
    #[arg(long, default_value = "varpi-node")]
    pub axes: String,
    /// Run past the budget of trials and memory (configuration.md, "Budgets"): it is meant.
    #[arg(long)]
    pub over_budget: bool,
}

impl GridArgs {
    /// Refuse maps of `objects` objects on `grid` past the budget (unless --over-budget): the
    /// trials of fixed per-cell maps, and the memory the maps hold.
    pub fn check_budget(&self, objects: usize, grid: &MapGrid, budget: &MapBudget) -> Result<()> {
        let fixed = (budget.min_discoveries == u64::MAX).then_some(budget.max_trials);
        seine::budget::check_bias_maps(objects, grid.cells() as f64, fixed, self.over_budget)
    }

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
        if n_x == 0 || n_node == 0 {
            return Err(bad());
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
        Ok(MapGrid { axes, n_x, n_node })
    }

    /// How far each map grows.
    pub fn budget(&self, grid: MapGrid) -> Result<MapBudget> {
        if let Some(n) = self.per_cell {
            if n == 0 {
                return Err(Error::input("--per-cell: expected at least 1"));
            }
            return Ok(MapBudget::fixed(n, grid));
        }
        if self.min_discoveries == 0 {
            return Err(Error::input("--min-discoveries: expected at least 1"));
        }
        if self.max_trials_per_object < grid.cells() as u64 {
            return Err(Error::input(format!(
                "--max-trials-per-object {}: expected at least one pass of the {}-cell grid",
                self.max_trials_per_object,
                grid.cells()
            )));
        }
        Ok(MapBudget {
            min_discoveries: self.min_discoveries,
            max_trials: self.max_trials_per_object,
        })
    }

    /// The maps of catalogue rows `rows`, with a progress bar over objects.
    pub fn maps(
        &self,
        objects: &ObjectTable,
        rows: std::ops::Range<usize>,
        surveys: &[PreparedSurvey],
        seed: u64,
        quiet: bool,
    ) -> Result<Vec<BiasMap>> {
        let grid = self.grid()?;
        let budget = self.budget(grid)?;
        let bar = seine::progress::bar(rows.len() as u64, "bias maps", !quiet);
        let tick = || {
            if let Some(b) = &bar {
                b.inc(1)
            }
        };
        let maps = bias_maps(objects, rows, surveys, grid, budget, seed, &tick);
        if let Some(b) = bar {
            b.finish_and_clear();
        }
        Ok(maps)
    }
}

/// Ids of maps without any discovery, and of maps short of `min` discoveries.
pub fn thin_maps(maps: &[BiasMap], min: u64) -> (Vec<i64>, Vec<i64>) {
    let ids = |f: &dyn Fn(u64) -> bool| -> Vec<i64> {
        maps.iter().filter(|m| f(m.total_discoveries())).map(|m| m.id).collect()
    };
    (ids(&|d| d == 0), ids(&|d| d > 0 && d < min && min != u64::MAX))
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
    let budget = a.grid.budget(grid)?;
    let mut prov = a.run.start()?;
    let surveys = load_surveys(&a.surveys, &mut prov)?;
    let objects = a.selection.read(&a.objects)?;
    prov.add_input(&a.objects)?;
    let rows = shard_rows(objects.len(), a.shard.resolve()?);
    let (lo, hi) = (rows.start, rows.end);
    a.grid.check_budget(hi - lo, &grid, &budget)?;
    let out = a.run.out_dir(prov)?;
    let maps = a.grid.maps(&objects, lo..hi, &surveys, a.run.seed, a.run.quiet)?;
    let table = out.write("bias_map", map_columns(&maps))?;
    let found = out.write(FOUND, found_columns(&maps))?;
    if !a.no_svg {
        for (m, i) in maps.iter().zip(lo..hi) {
            let el = &objects.elements[i];
            let x = match grid.axes {
                MapAxes::VarpiNode => (el.node_rad + el.argperi_rad).rem_euclid(std::f64::consts::TAU),
                MapAxes::ArgperiNode => el.argperi_rad,
            };
            write_atomic(
                &a.run.out.join("maps").join(format!("{}.svg", m.id)),
                svg(m, Some((x, el.node_rad))).as_bytes(),
            )?;
        }
    }
    let mean: Vec<f64> = maps.iter().map(BiasMap::mean_p).collect();
    let (undiscovered, thin) = thin_maps(&maps, budget.min_discoveries);
    let conclusion = conclude(&maps, &mean, &undiscovered, &thin);
    let summary = out.summary(
        serde_json::json!({
            "command": "bias-map",
            "objects": maps.len(),
            "grid": [grid.n_x, grid.n_node],
            "axes": grid.axes.x_name(),
            "min_discoveries": (budget.min_discoveries != u64::MAX).then_some(budget.min_discoveries),
            "max_trials_per_object": budget.max_trials,
            "undiscovered_ids": undiscovered,
            "below_min_discoveries_ids": thin,
            "maps": maps.iter().map(|m| serde_json::json!({
                "id": m.id,
                "trials": m.total_trials(),
                "discoveries": m.total_discoveries(),
                "mean_p": m.mean_p(),
            })).collect::<Vec<_>>(),
        }),
        &conclusion,
    )?;
    a.run.report(&conclusion, &[&table, &found, &summary]);
    Ok(())
}

fn conclude(maps: &[BiasMap], mean: &[f64], undiscovered: &[i64], thin: &[i64]) -> String {
    if maps.is_empty() {
        return "seine bias-map: no objects in this shard".into();
    }
    // How uneven a map is: the spread of its cells' probability against its mean.
    let contrast: Vec<f64> = maps
        .iter()
        .map(|m| (0..m.trials.len()).map(|c| m.p(c)).fold(0.0, f64::max) / m.mean_p().max(1e-300))
        .collect();
    let trials: Vec<u64> = maps.iter().map(BiasMap::total_trials).collect();
    let mut s = format!(
        "seine bias-map: {} objects on a {}×{} grid, {}–{} trials each. Mean chance of discovery over all angles {} (range {}–{}); \
         the most favoured cell is on average {:.1}× the mean, so the surveys see these objects unevenly in {} and node.",
        maps.len(),
        maps[0].grid.n_x,
        maps[0].grid.n_node,
        trials.iter().min().copied().unwrap_or(0),
        trials.iter().max().copied().unwrap_or(0),
        pct(mean.iter().sum::<f64>() / mean.len() as f64),
        pct(mean.iter().copied().fold(f64::INFINITY, f64::min)),
        pct(mean.iter().copied().fold(0.0, f64::max)),
        contrast.iter().filter(|c| c.is_finite()).sum::<f64>() / contrast.len() as f64,
        maps[0].grid.axes.x_name(),
    );
    if !undiscovered.is_empty() {
        s += &format!(
            "\n  Warning: never discovered at any angle tried, ids {undiscovered:?}: cluster-test refuses \
             these maps unless --drop-undiscovered (or raise --max-trials-per-object)."
        );
    }
    if !thin.is_empty() {
        s += &format!(
            "\n  Note: maps short of the asked discoveries at the trial cap, ids {thin:?}: their \
             p-values' errors (cluster-test) include this map noise."
        );
    }
    s
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
            };
            let n = grid.n_x * grid.n_node;
            maps.push(BiasMap {
                id: ids[r],
                grid,
                trials: vec![0; n],
                discoveries: vec![0; n],
                found: Vec::new(),
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
    read_found(path, &mut maps)?;
    Ok(maps)
}

/// The file of the discovered trials' angles beside a map table (`map_discoveries.*`).
pub const FOUND: &str = "map_discoveries";

/// `map_discoveries`: one row per discovered trial, `id, varpi_deg` (or `argperi_deg`),
/// `node_deg`, in trial order.
pub fn found_columns(maps: &[BiasMap]) -> Vec<Column> {
    let x = maps.first().map_or("varpi", |m| m.grid.axes.x_name());
    let each =
        |f: &dyn Fn(&(f64, f64)) -> f64| -> Vec<f64> { maps.iter().flat_map(|m| m.found.iter().map(f)).collect() };
    vec![
        col(
            "id",
            maps.iter()
                .flat_map(|m| std::iter::repeat_n(m.id, m.found.len()))
                .collect::<Vec<i64>>(),
        ),
        col(&format!("{x}_deg"), each(&|a| a.0.to_degrees())),
        col("node_deg", each(&|a| a.1.to_degrees())),
    ]
}

/// The discovered trials' angles from `map_discoveries.*` beside a map table, when there is
/// one; each map's discoveries must match its count.
fn read_found(path: &Path, maps: &mut [BiasMap]) -> Result<()> {
    let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("parquet");
    let beside = path.with_file_name(format!("{FOUND}.{ext}"));
    if !beside.exists() {
        return Ok(());
    }
    let df = read_table(&beside)?;
    let c = Columns::new(&df, &beside);
    let x_col = format!("{}_deg", maps.first().map_or("varpi", |m| m.grid.axes.x_name()));
    let (ids, x, node) = (c.i64("id")?, c.f64(&x_col)?, c.f64("node_deg")?);
    let index: std::collections::HashMap<i64, usize> = maps.iter().enumerate().map(|(k, m)| (m.id, k)).collect();
    for r in 0..ids.len() {
        let k = *index
            .get(&ids[r])
            .ok_or_else(|| c.bad_value(r, "id", "an id of the map table beside it"))?;
        maps[k].found.push((x[r].to_radians(), node[r].to_radians()));
    }
    for m in maps.iter() {
        if !m.found.is_empty() && m.found.len() as u64 != m.total_discoveries() {
            return Err(Error::input(format!(
                "{}: id {}: {} discovered angles, but {} discoveries in {}",
                beside.display(),
                m.id,
                m.found.len(),
                m.total_discoveries(),
                path.display()
            )));
        }
    }
    Ok(())
}
