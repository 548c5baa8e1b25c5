//! Every command as a library call: one file per command, each with its options struct (its
//! checks in one `validate`), the run, and an `Outcome` (what it wrote and its conclusion).
//! The binary (`src/cli/`) only turns arguments into these options and prints the outcome; the
//! demo calls the same functions. What the commands share sits here: the options of an
//! analysis run, loading the surveys into the provenance, and the outcome.

pub mod bias_map;
pub mod cluster_test;
pub mod compare_models;
pub mod demo;
pub mod detectability;
pub mod draw;
pub mod ephemeris;
pub mod hideout;
pub mod merge;
pub mod observe;
pub mod plan;
pub mod provenance;
pub mod yields;

use std::path::{Path, PathBuf};

use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::io::Provenance;
use crate::io::out_dir::OutDir;
use crate::io::table::Format;

/// What a command wrote and concluded.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Outcome {
    /// The tables and `summary.json`, in the order they are worth reading.
    pub written: Vec<PathBuf>,
    /// The command's conclusion in plain words, with the numbers.
    pub conclusion: String,
    /// Remarks on the inputs (e.g. what a catalogue cut left out), said whether or not the
    /// conclusion is printed.
    pub notes: Vec<String>,
}

/// Options every analysis command shares.
#[derive(Debug, Clone, PartialEq)]
pub struct RunOptions {
    /// Output directory: the command's tables and `summary.json`.
    pub out: PathBuf,
    /// Run seed: with the object ids it fixes every random draw.
    pub seed: u64,
    /// Table format.
    pub format: Format,
    /// Progress bars on a terminal.
    pub progress: bool,
}

impl RunOptions {
    /// The provenance of a run, with its seed.
    pub fn provenance(&self) -> Provenance {
        Provenance::current().with_seed(self.seed)
    }

    /// Where the run writes, with its provenance.
    pub fn out_dir(&self, provenance: Provenance) -> OutDir {
        OutDir::new(&self.out, self.format, provenance)
    }
}

/// Survey names label output columns and rows; two surveys may not share one.
pub fn check_unique_survey_names(surveys: &[PreparedSurvey]) -> Result<()> {
    let mut seen = std::collections::HashSet::new();
    for s in surveys {
        let key = crate::engine::run::survey_key(&s.survey.name);
        if !seen.insert(key.clone()) {
            return Err(Error::input(format!(
                "{}: survey name `{}` is already used by another --survey; names must differ",
                s.survey.spec_path.display(),
                s.survey.name
            )));
        }
    }
    Ok(())
}

/// Load and prepare every survey spec, recording each spec and then its visits table in the
/// provenance (the visits are an input as much as the spec).
pub fn load_surveys(paths: &[PathBuf], prov: &mut Provenance) -> Result<Vec<PreparedSurvey>> {
    let mut surveys = Vec::new();
    for path in paths {
        let s = crate::survey::Survey::load(path)?;
        prov.add_input(path)?;
        prov.add_input(&s.visits_path)?;
        surveys.push(PreparedSurvey::new(s));
    }
    check_unique_survey_names(&surveys)?;
    Ok(surveys)
}

/// The catalogue selection the options ask for (`--fitted-elements`, `--min-arc-days`,
/// `--max-sigma-a-frac`, `--fit-quality`), each checked: the cut values against their plausible
/// ranges, the classes by name (a failed fit is never a class to keep).
pub fn catalogue_selection(
    fitted: bool,
    min_arc_days: Option<f64>,
    max_sigma_a_frac: Option<f64>,
    fit_quality: &[String],
) -> Result<crate::fit::catalogue::Selection> {
    use crate::fit::Quality;
    let plausible = |option: &str, v: Option<f64>| match v {
        Some(x) => crate::ranges::check_option(option, x).map(|_| v),
        None => Ok(v),
    };
    let qualities = fit_quality
        .iter()
        .map(|s| {
            Quality::parse(s.trim())
                .filter(|q| *q != Quality::Failed)
                .ok_or_else(|| {
                    Error::input(format!(
                        "--fit-quality: expected single_night, short_arc, one_opposition or multi_opposition, found `{s}`"
                    ))
                })
        })
        .collect::<Result<Vec<_>>>()?;
    Ok(crate::fit::catalogue::Selection {
        fitted,
        min_arc_days: plausible("--min-arc-days", min_arc_days)?,
        max_sigma_a_frac: plausible("--max-sigma-a-frac", max_sigma_a_frac)?,
        qualities,
    })
}

/// How the simulated trials of a catalogue read from `path` under `selection` take its a, e,
/// i (`ids`: the rows read): on fitted elements drawn from each row's fit error law
/// (methods.md, "What the maps' xⱼ are"), otherwise the catalogue's own. The note names the
/// rows whose fit has no covariance, whose trials keep the fitted values.
pub fn trial_elements(
    selection: &crate::fit::catalogue::Selection,
    path: &Path,
    ids: &[i64],
) -> Result<(crate::analysis::trial_elements::TrialElements, Option<String>)> {
    use crate::analysis::trial_elements::TrialElements;
    if !selection.fitted {
        return Ok((TrialElements::Catalogued, None));
    }
    let elements = TrialElements::FitErrorLaw(selection.error_laws(path)?);
    let without: Vec<i64> = elements.rows_without_law().iter().map(|r| ids[*r]).collect();
    let note = (!without.is_empty()).then(|| {
        format!(
            "{}: ids {without:?} have no fit covariance (empty sigma_a_au, sigma_e or sigma_inc_deg): their \
             trials keep the fitted a, e and i",
            path.display()
        )
    });
    Ok((elements, note))
}

/// Read a catalogue under a selection (fitted elements, orbit-quality cut); the note says what
/// the cut left out, when there is a cut. Every command that reads one puts its simulated
/// objects (map trials, detectability trials, model objects) through the same selection
/// (`analysis::trial_selection`).
pub fn read_catalogue(
    selection: &crate::fit::catalogue::Selection,
    path: &Path,
) -> Result<(crate::population::objects::ObjectTable, Option<String>)> {
    let (table, left_out) = selection.read(path)?;
    let note = (!selection.is_plain()).then(|| {
        format!(
            "{}: {} objects ({}), {left_out} left out by the cut",
            path.display(),
            table.len(),
            selection.describe()
        )
    });
    Ok((table, note))
}
