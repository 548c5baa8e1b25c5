//! `seine compare-models`: which model population better explains the observed catalogue
//! once both are seen through the surveys. Science in `analysis::compare`, files in
//! `analysis::comparison`; this is the run.

use std::path::PathBuf;

use super::{Outcome, RunOptions, load_surveys, read_catalogue};
use crate::analysis::compare::{CompareOptions, DensityChoice, Model, compare_models};
use crate::analysis::comparison;
use crate::analysis::space::Space;
use crate::analysis::trial_selection::TrialSelection;
use crate::error::Result;
use crate::fit::FitOptions;
use crate::fit::catalogue::Selection;
use crate::orbit::Center;
use crate::population::objects::ObjectTable;

/// One model population: its name, objects table, and the number of real objects it stands for
/// (for the extended likelihood).
#[derive(Debug, Clone, PartialEq)]
pub struct ModelInput {
    pub name: String,
    pub objects: PathBuf,
    pub population_size: Option<f64>,
}

/// The options of `seine compare-models`.
#[derive(Debug, Clone)]
pub struct CompareModelsOptions {
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue, and which of its elements and rows are taken.
    pub observed: PathBuf,
    pub selection: Selection,
    /// How the catalogue's orbits were fitted (its `observe --fit-orbits` options): the models'
    /// objects are fitted the same way when the catalogue is fitted or cut.
    pub fit: FitOptions,
    pub models: Vec<ModelInput>,
    pub space: Space,
    pub density: DensityChoice,
    /// Synthetic catalogues per model, and bootstrap replicates of ln L.
    pub synthetic: u64,
    pub bootstrap: u64,
    /// Convert every table to this frame; None refuses mixed frames.
    pub frame: Option<Center>,
    pub run: RunOptions,
}

/// Run `seine compare-models`.
pub fn compare(opts: &CompareModelsOptions) -> Result<Outcome> {
    let mut prov = opts.run.provenance();
    let surveys = load_surveys(&opts.surveys, &mut prov)?;
    let (observed, note) = read_catalogue(&opts.selection, &opts.observed)?;
    prov.add_input(&opts.observed)?;
    let mut models = Vec::new();
    for m in &opts.models {
        models.push(Model {
            name: m.name.clone(),
            objects: ObjectTable::read(&m.objects)?,
            population_size: m.population_size,
        });
        prov.add_input(&m.objects)?;
    }
    let options = CompareOptions {
        observed,
        models,
        space: opts.space.clone(),
        density: opts.density,
        synthetic: opts.synthetic,
        bootstrap: opts.bootstrap,
        seed: opts.run.seed,
        frame: opts.frame,
        // The models' objects go through the catalogue's own selection (methods.md, "A
        // catalogue of fitted orbits with an orbit-quality cut").
        selection: TrialSelection::new(&opts.selection, opts.fit),
    };
    options.validate()?;
    let result = compare_models(&surveys, options)?;
    let out = opts.run.out_dir(prov);
    let conclusion = comparison::conclusion(&result);
    Ok(Outcome {
        written: comparison::write(&out, &result)?,
        conclusion,
        notes: note.into_iter().collect(),
    })
}
