//! `seine bias-map`: per-object discovery probability on a (ϖ, Ω) or (ω, Ω) grid, with a, e,
//! i and H fixed and M redrawn (AJ 154, 65, 2017). The maps' science is in
//! `analysis::bias_map`, their files in `analysis::bias_map_tables`; this is the run: options,
//! checks, the maps of a shard of the catalogue, the SVG heat maps, the summary and conclusion.

use std::path::PathBuf;

use super::{Outcome, RunOptions, load_surveys, read_catalogue, trial_elements};
use crate::analysis::bias_map::{BiasMap, MapBudget, MapGrid, MapSummary, selected_bias_maps, svg};
use crate::analysis::bias_map_tables;
use crate::analysis::trial_elements::TrialElements;
use crate::analysis::trial_selection::TrialSelection;
use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::fit::FitOptions;
use crate::fit::catalogue::Selection;
use crate::io::table::write_atomic;
use crate::population::objects::ObjectTable;
use crate::shard::shard_rows;
use crate::statistics::pct;

/// How the maps are gridded and how far each grows (shared with `cluster-test`).
#[derive(Debug, Clone, PartialEq)]
pub struct MapOptions {
    pub grid: MapGrid,
    /// Trials are added a pass at a time until a map holds this many discoveries …
    pub min_discoveries: u64,
    /// … or no further pass fits under this cap.
    pub max_trials_per_object: u64,
    /// Exactly this many trials per cell instead (no adaptive passes).
    pub per_cell: Option<u64>,
    /// Run past the budget of trials and memory: it is meant.
    pub over_budget: bool,
    /// How a trial's orbit is fitted when the catalogue is taken on fitted elements or cut on
    /// its fits: the options its `observe --fit-orbits` used.
    pub fit: FitOptions,
}

impl MapOptions {
    /// The checks: a grid of at least one cell, and a budget that allows one pass.
    pub fn validate(&self) -> Result<()> {
        if self.grid.n_x == 0 || self.grid.n_node == 0 {
            return Err(Error::input(format!(
                "--grid {},{}: expected NX,NNODE, two whole numbers ≥ 1",
                self.grid.n_x, self.grid.n_node
            )));
        }
        self.budget().map(|_| ())
    }

    /// How far each map grows.
    pub fn budget(&self) -> Result<MapBudget> {
        if let Some(n) = self.per_cell {
            if n == 0 {
                return Err(Error::input("--per-cell: expected at least 1"));
            }
            return Ok(MapBudget::fixed(n, self.grid));
        }
        if self.min_discoveries == 0 {
            return Err(Error::input("--min-discoveries: expected at least 1"));
        }
        if self.max_trials_per_object < self.grid.cells() as u64 {
            return Err(Error::input(format!(
                "--max-trials-per-object {}: expected at least one pass of the {}-cell grid",
                self.max_trials_per_object,
                self.grid.cells()
            )));
        }
        Ok(MapBudget {
            min_discoveries: self.min_discoveries,
            max_trials: self.max_trials_per_object,
        })
    }

    /// Refuse maps of `objects` objects past the budget (unless `over_budget`): the trials of
    /// fixed per-cell maps, and the memory of the `held` maps kept at once (all of them, or a
    /// batch: `objects_per_batch`).
    pub fn check_budget(&self, objects: usize, held: usize) -> Result<()> {
        let budget = self.budget()?;
        let fixed = (budget.min_discoveries == u64::MAX).then_some(budget.max_trials);
        crate::budget::check_bias_maps((objects, held), self.grid.cells() as f64, fixed, self.over_budget)
    }

    /// How many maps `each_batch` makes (and holds) at once.
    pub fn objects_per_batch(&self) -> usize {
        bias_map_tables::maps_per_batch(self.grid.cells()).max(rayon::current_num_threads())
    }

    /// The selection the maps' trials go through for a catalogue read under `selection`, their
    /// a, e, i chosen as `elements` says (`commands::trial_elements`).
    pub fn trial_selection(&self, selection: &Selection, elements: TrialElements) -> TrialSelection {
        TrialSelection::new(selection, self.fit).with_elements(elements)
    }

    /// The maps of catalogue rows `rows`, their trials under `selection`, with a progress bar
    /// over objects.
    pub fn maps(
        &self,
        objects: &ObjectTable,
        rows: (std::ops::Range<usize>, &TrialSelection),
        surveys: &[PreparedSurvey],
        seed: u64,
        progress: bool,
    ) -> Result<Vec<BiasMap>> {
        let mut maps = Vec::new();
        self.each_batch(objects, rows, (surveys, seed, progress), |batch| {
            maps.extend_from_slice(batch);
            Ok(())
        })?;
        Ok(maps)
    }

    /// The maps of catalogue rows `rows` (trials under `selection`) made a batch of objects at
    /// a time and handed to `f` in row order, so that a caller that writes them need not hold
    /// them all; a progress bar over objects. A map depends only on its object and the seed,
    /// so the batches change nothing in it.
    pub fn each_batch(
        &self,
        objects: &ObjectTable,
        (rows, selection): (std::ops::Range<usize>, &TrialSelection),
        (surveys, seed, progress): (&[PreparedSurvey], u64, bool),
        mut f: impl FnMut(&[BiasMap]) -> Result<()>,
    ) -> Result<()> {
        let budget = self.budget()?;
        let bar = crate::progress::bar(rows.len() as u64, "bias maps", progress);
        let tick = || {
            if let Some(b) = &bar {
                b.inc(1)
            }
        };
        let plan = (self.grid, budget, selection);
        let per_batch = self.objects_per_batch();
        let mut start = rows.start;
        while start < rows.end {
            let end = (start + per_batch).min(rows.end);
            f(&selected_bias_maps(objects, start..end, surveys, plan, seed, &tick))?;
            start = end;
        }
        if let Some(b) = bar {
            b.finish_and_clear();
        }
        Ok(())
    }

    /// Ids of maps without any discovery, and of maps short of the asked discoveries.
    pub fn thin_maps(&self, maps: &[MapSummary]) -> Result<(Vec<i64>, Vec<i64>)> {
        let min = self.budget()?.min_discoveries;
        let ids =
            |f: &dyn Fn(u64) -> bool| -> Vec<i64> { maps.iter().filter(|m| f(m.discoveries)).map(|m| m.id).collect() };
        Ok((ids(&|d| d == 0), ids(&|d| d > 0 && d < min && min != u64::MAX)))
    }
}

/// The options of `seine bias-map`.
#[derive(Debug, Clone, PartialEq)]
pub struct BiasMapOptions {
    /// Survey specs (discovered by any).
    pub surveys: Vec<PathBuf>,
    /// The catalogue, and which of its elements and rows are taken.
    pub objects: PathBuf,
    pub selection: Selection,
    pub maps: MapOptions,
    pub run: RunOptions,
    /// Shard (k, n) of the catalogue's rows.
    pub shard: Option<(usize, usize)>,
    /// Write an SVG heat map per object under `DIR/maps/`.
    pub svg: bool,
}

impl BiasMapOptions {
    pub fn validate(&self) -> Result<()> {
        self.maps.validate()
    }
}

/// Run `seine bias-map`: the maps of the shard's catalogue objects, their tables, heat maps
/// and `summary.json`.
pub fn bias_map(opts: &BiasMapOptions) -> Result<Outcome> {
    opts.validate()?;
    let budget = opts.maps.budget()?;
    let mut prov = opts.run.provenance();
    let surveys = load_surveys(&opts.surveys, &mut prov)?;
    let (objects, note) = read_catalogue(&opts.selection, &opts.objects)?;
    prov.add_input(&opts.objects)?;
    let rows = shard_rows(objects.len(), opts.shard);
    opts.maps.check_budget(rows.len(), opts.maps.objects_per_batch())?;
    let (elements, law_note) = trial_elements(&opts.selection, &opts.objects, &objects.ids)?;
    let out = opts.run.out_dir(prov);
    let selection = opts.maps.trial_selection(&opts.selection, elements);
    // Each batch of maps is written as it is made; only their summaries are kept.
    let mut sink = bias_map_tables::MapSink::create(&out, &objects, &selection)?;
    let mut maps: Vec<MapSummary> = Vec::with_capacity(rows.len());
    let run = (surveys.as_slice(), opts.run.seed, opts.run.progress);
    opts.maps
        .each_batch(&objects, (rows.clone(), &selection), run, |batch| {
            sink.add(batch)?;
            if opts.svg {
                write_svgs(opts, &objects, rows.start + maps.len(), batch)?;
            }
            maps.extend(batch.iter().map(BiasMap::summary));
            Ok(())
        })?;
    let [table, found, own] = sink.finish()?;
    let (undiscovered, thin) = opts.maps.thin_maps(&maps)?;
    let mut conclusion = conclude(&maps, opts.maps.grid, &undiscovered, &thin);
    if selection != TrialSelection::Discovered {
        conclusion += &format!(
            "\n  A trial counts as discovered only when its orbit, fitted to its simulated astrometry, passes the \
             catalogue's selection ({}).",
            selection.key()
        );
    }
    let grid = opts.maps.grid;
    let summary = out.summary(
        serde_json::json!({
            "command": "bias-map",
            "objects": maps.len(),
            "grid": [grid.n_x, grid.n_node],
            "axes": grid.axes.x_name(),
            "min_discoveries": (budget.min_discoveries != u64::MAX).then_some(budget.min_discoveries),
            "max_trials_per_object": budget.max_trials,
            "selection": selection.key(),
            "undiscovered_ids": undiscovered,
            "below_min_discoveries_ids": thin,
            "maps": maps.iter().map(|m| serde_json::json!({
                "id": m.id,
                "trials": m.trials,
                "discoveries": m.discoveries,
                "mean_p": m.mean_p,
            })).collect::<Vec<_>>(),
        }),
        &conclusion,
    )?;
    Ok(Outcome {
        written: vec![table, found, own, summary],
        conclusion,
        notes: note.into_iter().chain(law_note).collect(),
    })
}

/// `DIR/maps/ID.svg`: each object's map with its own angles marked; `maps` are those of
/// catalogue rows from `first_row` on.
fn write_svgs(opts: &BiasMapOptions, objects: &ObjectTable, first_row: usize, maps: &[BiasMap]) -> Result<()> {
    for (m, i) in maps.iter().zip(first_row..) {
        let el = &objects.elements[i];
        let x = opts.maps.grid.axes.x_of(el);
        write_atomic(
            &opts.run.out.join("maps").join(format!("{}.svg", m.id)),
            svg(m, Some((x, el.node_rad))).as_bytes(),
        )?;
    }
    Ok(())
}

fn conclude(maps: &[MapSummary], grid: MapGrid, undiscovered: &[i64], thin: &[i64]) -> String {
    if maps.is_empty() {
        return "seine bias-map: no objects in this shard".into();
    }
    let mean: Vec<f64> = maps.iter().map(|m| m.mean_p).collect();
    // How uneven a map is: the spread of its cells' probability against its mean.
    let contrast: Vec<f64> = maps.iter().map(|m| m.contrast).collect();
    let trials: Vec<u64> = maps.iter().map(|m| m.trials).collect();
    let mut s = format!(
        "seine bias-map: {} objects on a {}×{} grid, {}–{} trials each. Mean chance of discovery over all angles {} (range {}–{}); \
         the most favoured cell is on average {:.1}× the mean, so the surveys see these objects unevenly in {} and node.",
        maps.len(),
        grid.n_x,
        grid.n_node,
        trials.iter().min().copied().unwrap_or(0),
        trials.iter().max().copied().unwrap_or(0),
        pct(mean.iter().sum::<f64>() / mean.len() as f64),
        pct(mean.iter().copied().fold(f64::INFINITY, f64::min)),
        pct(mean.iter().copied().fold(0.0, f64::max)),
        contrast.iter().filter(|c| c.is_finite()).sum::<f64>() / contrast.len() as f64,
        grid.axes.x_name(),
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
