//! Bias maps: for one catalogue object, the probability that the surveys would have
//! discovered it as a function of its longitude of perihelion ϖ (or argument of perihelion
//! ω) and its longitude of the ascending node Ω, with a, e, i and H fixed and the mean
//! anomaly redrawn — the method of AJ 154, 65 (2017) for the observational bias in the
//! clustering of distant eccentric Kuiper-belt objects.
//!
//! A map grows by passes (one trial in every cell of the n_x × n_node grid, angles uniform
//! inside the cell, M uniform) until it holds enough discoveries or reaches its trial cap
//! (`MapBudget`); trial k of the object is cell k mod cells of pass k div cells, with the
//! streams of `trials.rs`. Why so many discoveries: methods.md, "Bias maps".

use std::f64::consts::TAU;

use rand::RngExt;
use rand_distr::Binomial;
use rand_pcg::Pcg64;
use rayon::prelude::*;

use super::trial_selection::{Kept, TrialSelection};
use super::trials::{TrialObject, angle_stream, trial_id};
use crate::engine::PreparedSurvey;
use crate::orbit::Elements;
use crate::population::objects::ObjectTable;

/// The angle on the map's first axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MapAxes {
    /// (ϖ, Ω): ω = ϖ − Ω.
    VarpiNode,
    /// (ω, Ω).
    ArgperiNode,
}

impl MapAxes {
    /// The axes by their option name: `varpi-node` or `argperi-node`.
    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "varpi-node" => Some(MapAxes::VarpiNode),
            "argperi-node" => Some(MapAxes::ArgperiNode),
            _ => None,
        }
    }

    pub fn x_name(self) -> &'static str {
        match self {
            MapAxes::VarpiNode => "varpi",
            MapAxes::ArgperiNode => "argperi",
        }
    }
    /// An orbit's angle on the first axis (rad): ϖ = Ω + ω in [0, 2π), or ω.
    pub fn x_of(self, el: &Elements) -> f64 {
        match self {
            MapAxes::VarpiNode => (el.node_rad + el.argperi_rad).rem_euclid(TAU),
            MapAxes::ArgperiNode => el.argperi_rad,
        }
    }

    /// ω from the first-axis angle and Ω.
    pub fn argperi(self, x: f64, node: f64) -> f64 {
        match self {
            MapAxes::VarpiNode => (x - node).rem_euclid(TAU),
            MapAxes::ArgperiNode => x,
        }
    }
}

/// The grid of a bias map.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapGrid {
    pub axes: MapAxes,
    pub n_x: usize,
    pub n_node: usize,
}

impl MapGrid {
    pub fn cells(&self) -> usize {
        self.n_x * self.n_node
    }
}

/// When a map stops growing: after the pass that brings it to `min_discoveries`, or before a
/// pass that would take it past `max_trials`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MapBudget {
    pub min_discoveries: u64,
    pub max_trials: u64,
}

/// The defaults: enough discoveries for p-values whose map noise is small next to their
/// Monte Carlo error (methods.md, "Bias maps"), and a cap that bounds a hopeless object's cost.
pub const DEFAULT_MIN_DISCOVERIES: u64 = 300;
pub const DEFAULT_MAX_TRIALS_PER_OBJECT: u64 = 500_000;

impl MapBudget {
    /// Exactly `passes` trials per cell, whatever they discover.
    pub fn fixed(passes: u64, grid: MapGrid) -> Self {
        MapBudget {
            min_discoveries: u64::MAX,
            max_trials: passes.saturating_mul(grid.cells() as u64),
        }
    }

    /// Whether a map with `discoveries` in `trials` gets another pass of `cells` trials.
    pub fn wants_pass(&self, discoveries: u64, trials: u64, cells: usize) -> bool {
        discoveries < self.min_discoveries && trials + cells as u64 <= self.max_trials
    }

    /// The number of trials the streams are laid out for (`trials::trial_id`).
    pub fn stream_span(&self) -> u64 {
        self.max_trials.max(1)
    }
}

/// One object's bias map: trials and discoveries per cell, row-major (x outer, Ω inner), and
/// the angles of every discovered trial.
#[derive(Debug, Clone, PartialEq)]
pub struct BiasMap {
    pub id: i64,
    pub grid: MapGrid,
    pub trials: Vec<u64>,
    pub discoveries: Vec<u64>,
    /// (x, Ω) of every discovered trial, radians, in trial order: exact draws of the angles of
    /// an isotropic object conditioned on discovery. Empty for a map read from a table
    /// without them; then the cells stand in (uniform inside each).
    pub found: Vec<(f64, f64)>,
}

impl BiasMap {
    /// Discovery probability of cell c.
    pub fn p(&self, c: usize) -> f64 {
        if self.trials[c] == 0 {
            0.0
        } else {
            self.discoveries[c] as f64 / self.trials[c] as f64
        }
    }

    /// Mean discovery probability over the map (uniform in both angles).
    pub fn mean_p(&self) -> f64 {
        self.total_discoveries() as f64 / self.total_trials().max(1) as f64
    }

    pub fn total_discoveries(&self) -> u64 {
        self.discoveries.iter().sum()
    }

    pub fn total_trials(&self) -> u64 {
        self.trials.iter().sum()
    }

    /// An empty map on `grid`.
    pub fn empty(id: i64, grid: MapGrid) -> Self {
        BiasMap {
            id,
            grid,
            trials: vec![0; grid.cells()],
            discoveries: vec![0; grid.cells()],
            found: Vec::new(),
        }
    }

    /// Grow the map pass by pass while `budget` wants more; `pass(k)` returns, cell by cell,
    /// the angles (x, Ω) of pass k's trial if it discovered the object.
    pub fn grow(&mut self, budget: MapBudget, mut pass: impl FnMut(u64) -> Vec<Option<(f64, f64)>>) {
        let cells = self.trials.len();
        let mut k = 0;
        while budget.wants_pass(self.total_discoveries(), self.total_trials(), cells) {
            for (c, found) in pass(k).into_iter().enumerate() {
                self.trials[c] += 1;
                if let Some(angles) = found {
                    self.discoveries[c] += 1;
                    self.found.push(angles);
                }
            }
            k += 1;
        }
    }

    /// What a run reports of the map once its table is written: its totals and contrast.
    pub fn summary(&self) -> MapSummary {
        let mean_p = self.mean_p();
        let max = (0..self.trials.len()).map(|c| self.p(c)).fold(0.0, f64::max);
        MapSummary {
            id: self.id,
            trials: self.total_trials(),
            discoveries: self.total_discoveries(),
            mean_p,
            contrast: max / mean_p.max(1e-300),
        }
    }

    /// The cell of angles (x, Ω), radians.
    pub fn cell_of(&self, x: f64, node: f64) -> usize {
        let bin = |a: f64, n: usize| ((a.rem_euclid(TAU) / TAU * n as f64) as usize).min(n - 1);
        bin(x, self.grid.n_x) * self.grid.n_node + bin(node, self.grid.n_node)
    }

    /// A bootstrap replica (methods.md, "Honest errors"): the discovered trials resampled
    /// with replacement; for a map without its discoveries' angles, each cell's trials
    /// resampled, i.e. its discoveries drawn from Binomial(trials, discoveries / trials).
    pub fn resampled(&self, rng: &mut Pcg64) -> BiasMap {
        if !self.found.is_empty() {
            let found: Vec<(f64, f64)> = (0..self.found.len())
                .map(|_| self.found[rng.random_range(0..self.found.len())])
                .collect();
            let mut discoveries = vec![0; self.trials.len()];
            for (x, node) in &found {
                discoveries[self.cell_of(*x, *node)] += 1;
            }
            return BiasMap {
                discoveries,
                found,
                ..self.clone()
            };
        }
        let discoveries = (0..self.trials.len())
            .map(|c| match Binomial::new(self.trials[c], self.p(c)) {
                Ok(b) if self.trials[c] > 0 => rng.sample(b),
                _ => 0,
            })
            .collect();
        BiasMap {
            discoveries,
            ..self.clone()
        }
    }

    /// (x_lo, x_hi, node_lo, node_hi) of cell c, radians.
    pub fn cell_bounds(&self, c: usize) -> (f64, f64, f64, f64) {
        let (ix, iy) = (c / self.grid.n_node, c % self.grid.n_node);
        let (dx, dy) = (TAU / self.grid.n_x as f64, TAU / self.grid.n_node as f64);
        (
            ix as f64 * dx,
            (ix + 1) as f64 * dx,
            iy as f64 * dy,
            (iy + 1) as f64 * dy,
        )
    }

    /// A sampler of the angles of an isotropic population conditioned on discovery: one of
    /// the discovered trials' angles, each equally likely (exact, no smoothing); for a map
    /// without them, a cell with probability ∝ its value, then uniform inside it. None when
    /// nothing was ever discovered.
    pub fn sampler(&self) -> Option<MapSampler> {
        if !self.found.is_empty() {
            return Some(MapSampler::Found(self.found.clone()));
        }
        let mut acc = 0.0;
        let cumulative: Vec<f64> = (0..self.trials.len())
            .map(|c| {
                acc += self.p(c);
                acc
            })
            .collect();
        (acc > 0.0).then(|| {
            MapSampler::Cells(CellSampler {
                cumulative,
                grid: self.grid,
            })
        })
    }
}

/// A map's totals, all a run keeps of it once its rows are written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapSummary {
    pub id: i64,
    pub trials: u64,
    pub discoveries: u64,
    /// Mean discovery probability over the map (uniform in both angles).
    pub mean_p: f64,
    /// How uneven the map is: its most favoured cell's probability over its mean.
    pub contrast: f64,
}

/// Draws (x, Ω) from a bias map.
#[derive(Debug, Clone)]
pub enum MapSampler {
    /// One of the discovered trials' angles (one uniform).
    Found(Vec<(f64, f64)>),
    /// A cell by its probability, then uniform inside it (three uniforms).
    Cells(CellSampler),
}

impl MapSampler {
    pub fn sample(&self, rng: &mut Pcg64) -> (f64, f64) {
        match self {
            MapSampler::Found(v) => v[rng.random_range(0..v.len())],
            MapSampler::Cells(c) => c.sample(rng),
        }
    }
}

#[derive(Debug, Clone)]
pub struct CellSampler {
    cumulative: Vec<f64>,
    grid: MapGrid,
}

impl CellSampler {
    pub fn sample(&self, rng: &mut Pcg64) -> (f64, f64) {
        let u = rng.random::<f64>() * self.cumulative[self.cumulative.len() - 1];
        let c = self
            .cumulative
            .partition_point(|x| *x <= u)
            .min(self.cumulative.len() - 1);
        let (ix, iy) = (c / self.grid.n_node, c % self.grid.n_node);
        let x = (ix as f64 + rng.random::<f64>()) * TAU / self.grid.n_x as f64;
        let node = (iy as f64 + rng.random::<f64>()) * TAU / self.grid.n_node as f64;
        (x, node)
    }
}

/// Bias maps of catalogue rows `rows`, objects in parallel (and the cells of a pass in
/// parallel, so that a few hard objects keep every core busy); `tick` is called once per
/// finished object (a progress bar).
pub fn bias_maps(
    objects: &ObjectTable,
    rows: std::ops::Range<usize>,
    surveys: &[PreparedSurvey],
    grid: MapGrid,
    budget: MapBudget,
    seed: u64,
    tick: &(dyn Fn() + Sync),
) -> Vec<BiasMap> {
    let plan = (grid, budget, &TrialSelection::Discovered);
    selected_bias_maps(objects, rows, surveys, plan, seed, tick)
}

/// As `bias_maps`, with the trials counted as discovered only when they pass `selection`
/// (for a catalogue on fitted elements or cut on its fits: `trial_selection.rs`).
pub fn selected_bias_maps(
    objects: &ObjectTable,
    rows: std::ops::Range<usize>,
    surveys: &[PreparedSurvey],
    plan: (MapGrid, MapBudget, &TrialSelection),
    seed: u64,
    tick: &(dyn Fn() + Sync),
) -> Vec<BiasMap> {
    rows.into_par_iter()
        .map(|i| {
            let map = one_map(objects, i, surveys, plan, seed);
            tick();
            map
        })
        .collect()
}

fn one_map(
    objects: &ObjectTable,
    i: usize,
    surveys: &[PreparedSurvey],
    (grid, budget, selection): (MapGrid, MapBudget, &TrialSelection),
    seed: u64,
) -> BiasMap {
    let id = objects.ids[i];
    let template = TrialObject::new(objects, i);
    let base = template.elements();
    let mut map = BiasMap::empty(id, grid);
    let cells = grid.cells();
    let span = budget.stream_span();
    let bounds: Vec<_> = (0..cells).map(|c| map.cell_bounds(c)).collect();
    map.grow(budget, |pass| {
        (0..cells)
            .into_par_iter()
            .map_init(
                || (template.clone(), Vec::new()),
                |(obj, scratch), c| {
                    let tid = trial_id(id, pass * cells as u64 + c as u64, span);
                    let trial_base = selection.trial_elements(i, base, (seed, tid));
                    let (el, x) = cell_trial(trial_base, bounds[c], grid.axes, &mut angle_stream(seed, tid));
                    match selection.judge(obj, el, surveys, (seed, tid), scratch)? {
                        Kept::True => Some((x, el.node_rad)),
                        Kept::Fitted(f) => Some((grid.axes.x_of(&f), f.node_rad.rem_euclid(TAU))),
                    }
                },
            )
            .collect()
    });
    map
}

/// The elements of one trial in a cell (x0, x1, node0, node1), and its first-axis angle:
/// fixed draw order M, then the first-axis angle, then Ω.
fn cell_trial(
    base: Elements,
    (x0, x1, n0, n1): (f64, f64, f64, f64),
    axes: MapAxes,
    rng: &mut Pcg64,
) -> (Elements, f64) {
    let mut el = base;
    el.mean_anomaly_rad = rng.random::<f64>() * TAU;
    let x = x0 + rng.random::<f64>() * (x1 - x0);
    el.node_rad = n0 + rng.random::<f64>() * (n1 - n0);
    el.argperi_rad = axes.argperi(x, el.node_rad);
    (el, x)
}

/// A heat map of one bias map as a small standalone SVG (x across, Ω up; grey scale from
/// white = 0 to black = the map's maximum), with the object's own angles marked if given.
pub fn svg(map: &BiasMap, own: Option<(f64, f64)>) -> String {
    let (w, h, pad) = (360.0, 360.0, 40.0);
    let (cw, ch) = (w / map.grid.n_x as f64, h / map.grid.n_node as f64);
    let max = (0..map.trials.len()).map(|c| map.p(c)).fold(0.0, f64::max).max(1e-300);
    let mut s = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{}\" height=\"{}\" font-family=\"sans-serif\" font-size=\"11\">\n",
        w + 2.0 * pad,
        h + 2.0 * pad
    );
    s += &format!(
        "<text x=\"{pad}\" y=\"20\">object {}: discovery probability (max {:.3})</text>\n",
        map.id, max
    );
    for c in 0..map.trials.len() {
        let (ix, iy) = (c / map.grid.n_node, c % map.grid.n_node);
        let g = (255.0 * (1.0 - map.p(c) / max)).round() as u8;
        s += &format!(
            "<rect x=\"{:.2}\" y=\"{:.2}\" width=\"{:.2}\" height=\"{:.2}\" fill=\"rgb({g},{g},{g})\"/>\n",
            pad + ix as f64 * cw,
            pad + h - (iy + 1) as f64 * ch,
            cw + 0.05,
            ch + 0.05
        );
    }
    if let Some((x, node)) = own {
        let (px, py) = (pad + x / TAU * w, pad + h - node / TAU * h);
        s += &format!(
            "<circle cx=\"{px:.1}\" cy=\"{py:.1}\" r=\"5\" fill=\"none\" stroke=\"red\" stroke-width=\"2\"/>\n"
        );
    }
    s += &format!(
        "<rect x=\"{pad}\" y=\"{pad}\" width=\"{w}\" height=\"{h}\" fill=\"none\" stroke=\"black\"/>\n\
         <text x=\"{}\" y=\"{}\" text-anchor=\"middle\">{} (deg, 0–360)</text>\n\
         <text x=\"12\" y=\"{}\" transform=\"rotate(-90 12 {})\" text-anchor=\"middle\">node (deg, 0–360)</text>\n</svg>\n",
        pad + w / 2.0,
        h + pad + 25.0,
        map.grid.axes.x_name(),
        pad + h / 2.0,
        pad + h / 2.0
    );
    s
}
