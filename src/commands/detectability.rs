//! `seine detectability`: per-object discovery probability of a catalogue's objects with their
//! unobserved angles redrawn, or the selection function of a population over (a, q, i, H)
//! cells. Science and files in `analysis::detectability` and `analysis::selection`; this is
//! the run.

use std::path::PathBuf;

use super::{Outcome, RunOptions, load_surveys, read_catalogue, trial_elements};
use crate::analysis::detectability::{self, Redraw, check_budget};
use crate::analysis::selection::{self, GridEdges, selection_function};
use crate::analysis::trial_selection::TrialSelection;
use crate::engine::PreparedSurvey;
use crate::engine::run::survey_key;
use crate::error::{Error, Result};
use crate::fit::FitOptions;
use crate::fit::catalogue::Selection;
use crate::io::Provenance;
use crate::population::objects::ObjectTable;
use crate::shard::shard_rows;
use crate::statistics::check_edges;

/// What is measured: each catalogue object's chance, or a population's selection function.
#[derive(Debug, Clone, PartialEq)]
pub enum Subject {
    /// A catalogue (and which of its elements and rows are taken): `clones` trials per object
    /// with the `redraw` angles redrawn, on the shard's rows.
    Catalogue {
        objects: PathBuf,
        selection: Selection,
        /// How the catalogue's orbits were fitted: under a fit selection each discovered trial
        /// is fitted the same way and its chance of passing the cut counted too.
        fit: FitOptions,
        clones: u64,
        redraw: Redraw,
        shard: Option<(usize, usize)>,
        over_budget: bool,
    },
    /// A population sample: P(discovered | cell) over the grid.
    Population { objects: PathBuf, edges: GridEdges },
}

/// The options of `seine detectability`.
#[derive(Debug, Clone, PartialEq)]
pub struct DetectabilityOptions {
    pub surveys: Vec<PathBuf>,
    pub subject: Subject,
    pub run: RunOptions,
}

impl DetectabilityOptions {
    pub fn validate(&self) -> Result<()> {
        if self.surveys.is_empty() {
            return Err(Error::input("seine detectability: give at least one --survey"));
        }
        if let Subject::Population { edges, .. } = &self.subject {
            check_edges("--a-edges", &edges.a_au)?;
            check_edges("--q-edges", &edges.q_au)?;
            check_edges("--inc-edges", &edges.inc_deg)?;
            check_edges("--h-edges", &edges.h_mag)?;
        }
        Ok(())
    }
}

/// Run `seine detectability`.
pub fn detectability(opts: &DetectabilityOptions) -> Result<Outcome> {
    opts.validate()?;
    let mut prov = opts.run.provenance();
    let surveys = load_surveys(&opts.surveys, &mut prov)?;
    match &opts.subject {
        Subject::Population { objects, edges } => population(opts, &surveys, prov, objects, edges),
        Subject::Catalogue { .. } => catalogue(opts, &surveys, prov),
    }
}

/// The selection function of a population sample.
fn population(
    opts: &DetectabilityOptions,
    surveys: &[PreparedSurvey],
    mut prov: Provenance,
    path: &std::path::Path,
    edges: &GridEdges,
) -> Result<Outcome> {
    let population = ObjectTable::read(path)?;
    prov.add_input(path)?;
    let out = opts.run.out_dir(prov);
    let (cells, outside) = selection_function(&population, surveys, opts.run.seed, edges);
    let table = selection::write(&out, &cells)?;
    let conclusion = selection::conclusion(population.len(), &cells, outside);
    let summary = out.summary(
        serde_json::json!({"command": "detectability", "mode": "population", "objects": population.len(),
            "cells_filled": cells.len(), "objects_outside_grid": outside}),
        &conclusion,
    )?;
    Ok(Outcome {
        written: vec![table, summary],
        conclusion,
        notes: Vec::new(),
    })
}

/// Each catalogue object's chance with its unobserved angles redrawn.
fn catalogue(opts: &DetectabilityOptions, surveys: &[PreparedSurvey], mut prov: Provenance) -> Result<Outcome> {
    let Subject::Catalogue {
        objects: path,
        selection,
        fit,
        clones,
        redraw,
        shard,
        over_budget,
    } = &opts.subject
    else {
        unreachable!("called for a catalogue");
    };
    // The trials go through the selection (the chance of entering the cut catalogue).
    let (objects, note) = read_catalogue(selection, path)?;
    let (elements, law_note) = trial_elements(selection, path, &objects.ids)?;
    let trials = TrialSelection::new(selection, *fit).with_elements(elements);
    prov.add_input(path)?;
    let rows = shard_rows(objects.len(), *shard);
    check_budget(rows.len(), *clones, *over_budget)?;
    let out = opts.run.out_dir(prov);
    let res = detectability::detectability(&objects, rows, surveys, *clones, (*redraw, &trials), opts.run.seed);
    let keys: Vec<String> = surveys.iter().map(|s| survey_key(&s.survey.name)).collect();
    let table = detectability::write(&out, &objects, &res, &keys)?;
    let conclusion = detectability::conclusion(&res, &objects, *clones);
    let summary = out.summary(
        serde_json::json!({
            "command": "detectability",
            "mode": "catalogue",
            "objects": res.len(),
            "trials_per_object": clones,
            "redraw": redraw.name(),
            "selection": trials.key(),
            "mean_p_discover": res.iter().map(|d| d.discovered.fraction).sum::<f64>() / res.len().max(1) as f64,
        }),
        &conclusion,
    )?;
    Ok(Outcome {
        written: vec![table, summary],
        conclusion,
        notes: note.into_iter().chain(law_note).collect(),
    })
}
