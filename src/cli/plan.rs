//! `seine plan`: a cadence plan → visits table, matching survey spec, coverage report.

use std::path::{Path, PathBuf};

use seine::io::Provenance;
use seine::io::spec_text::has_table;
use seine::survey::Survey;
use seine::survey::plan_io::{PlanOutputs, survey_coverage, write_coverage, write_plan};
use seine::survey::planner::{PlanFile, check_passthrough, make_plan_with_progress};
use seine::survey::revisit_check::RevisitCheck;
use seine::survey::spec::parse_toml;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("input").required(true).args(["plan", "survey"])))]
pub struct Args {
    /// Cadence plan (TOML): [plan], [site], [field], [region], [revisit], [depth], and the
    /// [efficiency], [motion], [linking] tables to copy into the survey spec. One of --plan
    /// or --survey is required.
    #[arg(long)]
    pub plan: Option<PathBuf>,
    /// Instead of planning: the coverage report of an existing survey spec and its visits.
    /// --out then names the report, NAME.coverage.json (tables and MOC beside it).
    #[arg(long)]
    pub survey: Option<PathBuf>,
    /// Visits table to write (.csv or .parquet). Beside it: STEM.survey.toml (the survey spec),
    /// STEM.coverage.json, STEM.coverage_ecliptic.csv, STEM.coverage_nights.csv, STEM.moc.json.
    #[arg(long)]
    pub out: PathBuf,
    /// Seed of the weather draws (overrides plan.seed).
    #[arg(long)]
    pub seed: Option<u64>,
}

pub fn run(a: Args) -> Result<()> {
    match (&a.plan, &a.survey) {
        (Some(p), _) => run_plan(p, &a.out, a.seed).map(|_| ()),
        (None, Some(s)) => run_survey(s, &a.out),
        (None, None) => Err(Error::input("seine plan: give --plan PLAN or --survey SPEC")),
    }
}

fn run_survey(spec: &Path, out: &Path) -> Result<()> {
    if out.extension().and_then(|e| e.to_str()) != Some("json") {
        return Err(Error::input(format!(
            "--out {}: expected a report name ending in .json",
            out.display()
        )));
    }
    let survey = Survey::load(spec)?;
    let (cov, nights) = survey_coverage(&survey)?;
    let paths = PlanOutputs::for_report(out);
    let mut prov = Provenance::current();
    prov.add_input(spec)?;
    prov.add_input(&survey.visits_path)?;
    let head = serde_json::json!({ "survey": survey.name, "field_area_sq_deg": survey.footprint.area_sq_deg() });
    write_coverage(&cov, &nights, head, &paths, &prov)?;
    eprintln!(
        "seine plan --survey: {} visits, {} fields, {} nights, {:.0} deg² covered → {}",
        cov.n_visits,
        cov.n_fields,
        cov.n_nights_used,
        cov.covered_sq_deg,
        paths.coverage_json.display()
    );
    Ok(())
}

/// Build a plan's visits and survey spec next to `out`; returns the spec's path (also used by `yield`).
pub fn run_plan(plan_path: &Path, out: &Path, seed: Option<u64>) -> Result<PathBuf> {
    seine::io::table::Format::of(out)?;
    let text = seine::io::spec_text::read_spec_text(plan_path, "cadence plan")?;
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
    let plan = make_plan_with_progress(file, true).map_err(in_plan)?;
    let out = PlanOutputs::for_visits(out);
    let cov = write_plan(&plan, plan_path, &out)?;
    if let Some(w) = RevisitCheck::of(&plan).warning() {
        eprintln!("seine plan: warning: {}: {w}", plan_path.display());
    }
    eprintln!(
        "seine plan: {} visits of {} fields on {} nights, {:.0} deg² covered → {} (spec {})",
        cov.n_visits,
        cov.n_fields,
        cov.n_nights_used,
        cov.covered_sq_deg,
        out.visits.display(),
        out.spec.display()
    );
    Ok(out.spec)
}
