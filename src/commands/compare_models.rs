//! `seine compare-models`: which model population better explains the observed catalogue
//! once both are seen through the surveys. Science in `analysis::compare`, files in
//! `analysis::comparison`; this is the run.

use std::path::PathBuf;

use super::{Outcome, RunOptions, load_surveys, read_catalogue};
use crate::analysis::compare::{CompareOptions, DensityChoice, compare_models};
use crate::analysis::comparison;
use crate::analysis::model_sample::Model;
use crate::analysis::space::Space;
use crate::analysis::trial_selection::TrialSelection;
use crate::error::{Error, Result};
use crate::fit::FitOptions;
use crate::fit::catalogue::Selection;
use crate::orbit::Center;
use crate::population::objects::ObjectSource;

/// One model population: its name, objects table, and the number of real objects it stands for
/// (for the extended likelihood).
#[derive(Debug, Clone, PartialEq)]
pub struct ModelInput {
    pub name: String,
    pub objects: PathBuf,
    pub population_size: Option<f64>,
}

impl ModelInput {
    /// The models of `--model NAME=OBJECTS` (repeated), each with the population size a
    /// `--population-size NAME=N` gives it; a size must name a model.
    pub fn parse_all(models: &[String], sizes: &[String]) -> Result<Vec<ModelInput>> {
        let mut by_name = std::collections::HashMap::new();
        for s in sizes {
            let (name, n) = pair("--population-size", s, "N")?;
            let n: f64 = n
                .trim()
                .parse()
                .map_err(|_| Error::input(format!("--population-size `{s}`: expected NAME=N with a number N")))?;
            by_name.insert(name.to_string(), n);
        }
        let mut out = Vec::new();
        for m in models {
            let (name, path) = pair("--model", m, "OBJECTS")?;
            out.push(ModelInput {
                name: name.to_string(),
                objects: PathBuf::from(path),
                population_size: by_name.remove(name),
            });
        }
        if let Some(name) = by_name.keys().next() {
            return Err(Error::input(format!("--population-size: no --model is named `{name}`")));
        }
        Ok(out)
    }
}

/// `NAME=VALUE` of `option`.
fn pair<'a>(option: &str, s: &'a str, value: &str) -> Result<(&'a str, &'a str)> {
    s.split_once('=')
        .ok_or_else(|| Error::input(format!("{option} `{s}`: expected NAME={value}")))
}

/// `--density kde|binned`; the binned density takes `bins` per dimension and a prior worth
/// `prior_objects` objects.
pub fn parse_density(name: &str, bins: usize, prior_objects: f64) -> Result<DensityChoice> {
    match name {
        "kde" => Ok(DensityChoice::Kernel),
        "binned" => Ok(DensityChoice::Binned { bins, prior_objects }),
        other => Err(Error::input(format!("--density `{other}`: expected kde or binned"))),
    }
}

/// `--frame heliocentric|barycentric`, when given.
pub fn parse_frame(frame: Option<&str>) -> Result<Option<Center>> {
    frame
        .map(|f| {
            Center::parse(f)
                .filter(|_| !f.trim().is_empty())
                .ok_or_else(|| Error::input(format!("--frame `{f}`: expected heliocentric or barycentric")))
        })
        .transpose()
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
        // Checked whole now (values, unique ids, frames), then read a chunk at a time as the
        // model is run: a model is never held whole (a CSV table is).
        models.push(Model {
            name: m.name.clone(),
            objects: ObjectSource::open(&m.objects, None)?,
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
