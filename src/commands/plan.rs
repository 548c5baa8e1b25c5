//! `seine plan`: a cadence plan → visits table, matching survey spec and coverage report; or
//! the coverage report of an existing survey. The planner is `survey::planner`, the files are
//! `survey::plan_io`'s; this is the run.

use std::path::{Path, PathBuf};

use super::Outcome;
use crate::error::{Error, Result};
use crate::io::Provenance;
use crate::io::spec_text::has_table;
use crate::survey::Survey;
use crate::survey::plan_io::{PlanOutputs, survey_coverage, write_coverage, write_plan};
use crate::survey::planner::{PlanFile, check_passthrough, make_plan_with_progress};
use crate::survey::revisit_check::RevisitCheck;
use crate::survey::spec::parse_toml;

/// A plan built: its survey spec, and the outcome (the warning of a plan that does not keep
/// its designed revisits is a note).
pub struct Built {
    pub spec: PathBuf,
    pub outcome: Outcome,
}

/// Build the plan `plan_path` into the visits table `visits` (.csv or .parquet) and the files
/// beside it; `seed` overrides the plan's weather seed.
pub fn plan(plan_path: &Path, visits: &Path, seed: Option<u64>, progress: bool) -> Result<Built> {
    crate::io::table::Format::of(visits)?;
    let text = crate::io::spec_text::read_spec_text(plan_path, "cadence plan")?;
    if has_table(&text, "survey") && !has_table(&text, "plan") {
        return Err(Error::input(format!(
            "{}: this is a survey spec (it has a [survey] table), not a cadence plan; pass it with --survey",
            plan_path.display()
        )));
    }
    let mut file: PlanFile = parse_toml(&text, plan_path)?;
    if let Some(s) = seed {
        file.plan.seed = s;
    }
    let in_plan = |e: Error| match e {
        Error::Input(m) => Error::input(format!("{}: {m}", plan_path.display())),
        other => other,
    };
    check_passthrough(&file).map_err(in_plan)?;
    let plan = make_plan_with_progress(file, progress).map_err(in_plan)?;
    let out = PlanOutputs::for_visits(visits);
    let cov = write_plan(&plan, plan_path, &out)?;
    let notes = RevisitCheck::of(&plan)
        .warning()
        .map(|w| format!("seine plan: warning: {}: {w}", plan_path.display()));
    let conclusion = format!(
        "seine plan: {} visits of {} fields on {} nights, {:.0} deg² covered → {} (spec {})",
        cov.n_visits,
        cov.n_fields,
        cov.n_nights_used,
        cov.covered_sq_deg,
        out.visits.display(),
        out.spec.display()
    );
    Ok(Built {
        outcome: Outcome {
            written: vec![
                out.visits,
                out.spec.clone(),
                out.coverage_json,
                out.coverage_ecliptic,
                out.coverage_nights,
                out.moc,
            ],
            conclusion,
            notes: notes.into_iter().collect(),
        },
        spec: out.spec,
    })
}

/// The coverage report `report` (NAME.coverage.json, tables and MOC beside it) of an existing
/// survey spec and its visits.
pub fn coverage(spec: &Path, report: &Path) -> Result<Outcome> {
    if report.extension().and_then(|e| e.to_str()) != Some("json") {
        return Err(Error::input(format!(
            "--out {}: expected a report name ending in .json",
            report.display()
        )));
    }
    let survey = Survey::load(spec)?;
    let (cov, nights) = survey_coverage(&survey)?;
    let paths = PlanOutputs::for_report(report);
    let mut prov = Provenance::current();
    prov.add_input(spec)?;
    prov.add_input(&survey.visits_path)?;
    let head = serde_json::json!({ "survey": survey.name, "field_area_sq_deg": survey.footprint.area_sq_deg() });
    write_coverage(&cov, &nights, head, &paths, &prov)?;
    let conclusion = format!(
        "seine plan --survey: {} visits, {} fields, {} nights, {:.0} deg² covered → {}",
        cov.n_visits,
        cov.n_fields,
        cov.n_nights_used,
        cov.covered_sq_deg,
        paths.coverage_json.display()
    );
    Ok(Outcome {
        written: vec![
            paths.coverage_json,
            paths.coverage_ecliptic,
            paths.coverage_nights,
            paths.moc,
        ],
        conclusion,
        notes: Vec::new(),
    })
}
