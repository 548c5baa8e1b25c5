//! `seine yield`: the cadence designer's comparison of surveys (and cadence plans, built first)
//! on one population. The science is in `analysis::yields`, the files in
//! `analysis::yield_tables`; this is the run. Every check that can refuse comes before anything
//! is written, and the plans' files are removed again if their surveys are refused.

use std::path::{Path, PathBuf};

use super::{Outcome, RunOptions, check_unique_survey_names, load_surveys};
use crate::analysis::yield_tables::{self, cadence_rows, population_name};
use crate::analysis::yields::yields;
use crate::error::{Error, Result};
use crate::io::Provenance;
use crate::population::objects::ObjectTable;
use crate::statistics::check_edges;
use crate::survey::plan_io::PlanOutputs;

/// The options of `seine yield`.
#[derive(Debug, Clone, PartialEq)]
pub struct YieldOptions {
    /// Survey specs to compare.
    pub surveys: Vec<PathBuf>,
    /// Cadence plans to build into `DIR/plans/<name>.csv` and compare.
    pub plans: Vec<PathBuf>,
    /// The population run through every survey.
    pub objects: PathBuf,
    /// Bin edges of the distance at discovery (AU), H (mag) and a (AU).
    pub r_edges: Vec<f64>,
    pub h_edges: Vec<f64>,
    pub a_edges: Vec<f64>,
    pub run: RunOptions,
}

impl YieldOptions {
    pub fn validate(&self) -> Result<()> {
        if self.surveys.is_empty() && self.plans.is_empty() {
            return Err(Error::input("seine yield: give at least one --survey or --plan"));
        }
        for (option, edges) in [
            ("--r-edges", &self.r_edges),
            ("--h-edges", &self.h_edges),
            ("--a-edges", &self.a_edges),
        ] {
            check_edges(option, edges)?;
        }
        Ok(())
    }

    /// Where plan `plan` is built: `DIR/plans/<its stem>.csv`.
    fn visits_of(&self, plan: &Path) -> PathBuf {
        let stem = plan
            .file_stem()
            .map_or("plan".into(), |s| s.to_string_lossy().into_owned());
        self.run.out.join("plans").join(format!("{stem}.csv"))
    }
}

/// Run `seine yield`.
pub fn yield_comparison(opts: &YieldOptions) -> Result<Outcome> {
    opts.validate()?;
    // Everything that can refuse before the plans are built: a refusal leaves nothing behind.
    let objects = ObjectTable::read(&opts.objects)?;
    let mut prov = opts.run.provenance();
    let mut surveys = load_surveys(&opts.surveys, &mut prov)?;
    let mut notes = Vec::new();
    let mut built = Vec::new();
    let planned = build_plans(opts, &mut prov, &mut notes, &mut built).and_then(|more| {
        surveys.extend(more);
        check_unique_survey_names(&surveys)
    });
    if let Err(e) = planned {
        remove_built(&opts.run.out, &built);
        return Err(e);
    }
    // The population last among the inputs: the report takes the last table as the objects.
    prov.add_input(&opts.objects)?;
    let out = opts.run.out_dir(prov);
    let edges = [opts.r_edges.clone(), opts.h_edges.clone(), opts.a_edges.clone()];
    let (rows, tallies) = yields(&objects, &surveys, opts.run.seed, &edges);
    let totals = yield_tables::totals(&surveys, &tallies);
    let cadence = cadence_rows(&surveys, &totals, &population_name(&opts.objects));
    let (written, conclusion) = yield_tables::write(&out, &rows, &totals, &cadence)?;
    Ok(Outcome {
        written,
        conclusion,
        notes,
    })
}

/// Build every plan and load its survey; the visits tables built so far are listed in `built`.
fn build_plans(
    opts: &YieldOptions,
    prov: &mut Provenance,
    notes: &mut Vec<String>,
    built: &mut Vec<PathBuf>,
) -> Result<Vec<crate::engine::PreparedSurvey>> {
    let mut specs = Vec::new();
    for plan in &opts.plans {
        prov.add_input(plan)?;
        let visits = opts.visits_of(plan);
        built.push(visits.clone());
        let b = super::plan::plan(plan, &visits, None, opts.run.progress)?;
        notes.extend(b.outcome.notes);
        notes.push(b.outcome.conclusion);
        specs.push(b.spec);
    }
    load_surveys(&specs, prov)
}

/// Remove the plan files a refused run built, and the directories it created if left empty.
fn remove_built(out: &Path, built: &[PathBuf]) {
    use crate::io::table::sidecar_path;
    for visits in built {
        let o = PlanOutputs::for_visits(visits);
        for f in [
            o.visits,
            o.spec,
            o.coverage_json,
            o.coverage_ecliptic,
            o.coverage_nights,
            o.moc,
        ] {
            let _ = std::fs::remove_file(sidecar_path(&f));
            let _ = std::fs::remove_file(f);
        }
    }
    let _ = std::fs::remove_dir(out.join("plans"));
    let _ = std::fs::remove_dir(out);
}
