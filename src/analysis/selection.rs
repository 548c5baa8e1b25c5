//! The selection function of a population: P(discovered | cell of a, q, i, H), from a population
//! sample run once through the surveys (each object its own trial, on its `Observe` stream as
//! `seine observe`), as the weighted fraction of the cell's objects discovered with its interval
//! at the effective n. Owns `selection_function.*` (write and read). See methods.md,
//! "Detectability".

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use crate::engine::{Batch, PreparedSurvey, StopRule};
use crate::error::{Error, Result};
use crate::io::out_dir::proportion_columns;
use crate::io::out_dir::{OutDir, col};
use crate::io::table::{Columns, read_table};
use crate::population::objects::ObjectTable;
use crate::statistics::{Proportion, Tally, grid_cell, grid_index};

pub const TABLE: &str = "selection_function";

/// Cell edges per quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct GridEdges {
    pub a_au: Vec<f64>,
    pub q_au: Vec<f64>,
    pub inc_deg: Vec<f64>,
    pub h_mag: Vec<f64>,
}

impl Default for GridEdges {
    fn default() -> Self {
        GridEdges {
            a_au: vec![0.0, 30.0, 50.0, 100.0, 250.0, 1000.0, 1e5],
            q_au: vec![0.0, 30.0, 40.0, 50.0, 75.0, 100.0, 1e5],
            inc_deg: vec![0.0, 10.0, 20.0, 30.0, 45.0, 90.0, 180.0],
            h_mag: vec![-5.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 20.0],
        }
    }
}

impl GridEdges {
    fn all(&self) -> Vec<Vec<f64>> {
        vec![
            self.a_au.clone(),
            self.q_au.clone(),
            self.inc_deg.clone(),
            self.h_mag.clone(),
        ]
    }
}

/// One non-empty cell.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    /// (lo, hi) of a_au, q_au, inc_deg, h_mag.
    pub edges: Vec<(f64, f64)>,
    pub tally: Tally,
}

impl Cell {
    pub fn proportion(&self) -> Proportion {
        self.tally.proportion()
    }
}

/// The selection function over the cells holding population objects, and the number of objects
/// outside the grid.
pub fn selection_function(
    population: &ObjectTable,
    surveys: &[PreparedSurvey],
    seed: u64,
    g: &GridEdges,
) -> (Vec<Cell>, u64) {
    let found = Batch::new(surveys, seed, StopRule::UntilDiscovery).discovered(population);
    let edges = g.all();
    let mut cells: BTreeMap<usize, Tally> = BTreeMap::new();
    let mut outside = 0;
    for (i, hit) in found.iter().enumerate() {
        let el = &population.elements[i];
        let x = [el.a_au, el.q_au(), el.inc_rad.to_degrees(), population.h_mag[i]];
        match grid_index(&edges, &x) {
            Some(c) => cells.entry(c).or_default().add(population.weight[i], *hit),
            None => outside += 1,
        }
    }
    let cells = cells
        .into_iter()
        .map(|(c, tally)| Cell {
            edges: grid_cell(&edges, c),
            tally,
        })
        .collect();
    (cells, outside)
}

const EDGE_COLUMNS: [(&str, &str); 4] = [
    ("a_lo_au", "a_hi_au"),
    ("q_lo_au", "q_hi_au"),
    ("inc_lo_deg", "inc_hi_deg"),
    ("h_lo_mag", "h_hi_mag"),
];

/// The grid's quantities, in the order of a cell's edges.
pub const QUANTITIES: [&str; 4] = ["a_au", "q_au", "inc_deg", "h_mag"];

/// Write `selection_function.*`: one row per non-empty cell, with the tally's sums (they add
/// over cells, so a reader can project the grid onto fewer quantities exactly).
pub fn write(out: &OutDir, cells: &[Cell]) -> Result<PathBuf> {
    let mut cols = Vec::new();
    for (k, (lo, hi)) in EDGE_COLUMNS.iter().enumerate() {
        cols.push(col(lo, cells.iter().map(|c| c.edges[k].0).collect::<Vec<f64>>()));
        cols.push(col(hi, cells.iter().map(|c| c.edges[k].1).collect::<Vec<f64>>()));
    }
    let sum = |f: fn(&Tally) -> f64| cells.iter().map(|c| f(&c.tally)).collect::<Vec<f64>>();
    cols.push(col("n_objects", cells.iter().map(|c| c.tally.n).collect::<Vec<u64>>()));
    cols.push(col("weight_sum", sum(|t| t.w)));
    cols.push(col("weight_sq_sum", sum(|t| t.w2)));
    cols.push(col("weight_discovered_sum", sum(|t| t.w_hit)));
    cols.push(col("weight_sq_discovered_sum", sum(|t| t.w2_hit)));
    cols.extend(proportion_columns(
        &cells.iter().map(Cell::proportion).collect::<Vec<_>>(),
    ));
    out.write(TABLE, cols)
}

/// `selection_function.parquet` (or `.csv`) in `dir`, when there is one.
pub fn find(dir: &Path) -> Option<PathBuf> {
    crate::io::out_dir::find_table(dir, TABLE)
}

/// Read `selection_function.*` back into cells with their tallies, as written above.
pub fn read(path: &Path) -> Result<Vec<Cell>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let mut edges: Vec<(Vec<f64>, Vec<f64>)> = Vec::new();
    for (lo, hi) in EDGE_COLUMNS {
        edges.push((c.f64(lo)?, c.f64(hi)?));
    }
    let (n, k) = (c.i64("n_objects")?, c.i64("discovered")?);
    let (w, w2, wh, w2h) = (
        c.f64("weight_sum")?,
        c.f64("weight_sq_sum")?,
        c.f64("weight_discovered_sum")?,
        c.f64("weight_sq_discovered_sum")?,
    );
    let mut cells = Vec::with_capacity(n.len());
    for i in 0..n.len() {
        let tally = Tally {
            n: n[i].max(0) as u64,
            k: k[i].max(0) as u64,
            w: w[i],
            w2: w2[i],
            w_hit: wh[i],
            w2_hit: w2h[i],
        };
        if tally.k > tally.n || !(tally.w_hit <= tally.w * (1.0 + 1e-12)) {
            return Err(Error::input(format!(
                "{}: row {}: more discovered than objects (discovered {}, n_objects {}; weights {} of {})",
                path.display(),
                i + 1,
                tally.k,
                tally.n,
                tally.w_hit,
                tally.w
            )));
        }
        let e = edges.iter().map(|(a, b)| (a[i], b[i])).collect();
        cells.push(Cell { edges: e, tally });
    }
    Ok(cells)
}

/// The selection function on some of the grid's quantities (indices into `QUANTITIES`): the
/// tallies of the cells that share those intervals added, which is P(discovered | cell)
/// averaged over the population's own distribution in the others. Cells in order of their
/// intervals, the first quantity slowest.
pub fn project(cells: &[Cell], on: &[usize]) -> Vec<Cell> {
    let mut by: BTreeMap<Vec<(u64, u64)>, Cell> = BTreeMap::new();
    for c in cells {
        let edges: Vec<(f64, f64)> = on.iter().map(|&k| c.edges[k]).collect();
        let key = edges.iter().map(|e| (ord(e.0), ord(e.1))).collect();
        by.entry(key)
            .or_insert_with(|| Cell {
                edges,
                tally: Tally::default(),
            })
            .tally
            .absorb(&c.tally);
    }
    by.into_values().collect()
}

/// A key that sorts like the f64 it comes from (total order).
fn ord(x: f64) -> u64 {
    let b = x.to_bits();
    if b >> 63 == 1 { !b } else { b | (1 << 63) }
}

/// One plain sentence with the numbers.
pub fn conclusion(population: usize, cells: &[Cell], outside: u64) -> String {
    let mut total = Tally::default();
    cells.iter().for_each(|c| total.absorb(&c.tally));
    let p = total.proportion();
    format!(
        "seine detectability --population: {population} objects in {} cells of (a, q, i, H) ({outside} outside the grid); \
         {:.3}% discovered overall (weighted; 95% interval {:.3}%–{:.3}%). selection_function.* holds \
         P(discovered | cell) for likelihood fits of populations.",
        cells.len(),
        100.0 * p.fraction,
        100.0 * p.lower,
        100.0 * p.upper
    )
}
