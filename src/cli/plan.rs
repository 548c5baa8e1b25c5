//! `seine plan`: a cadence plan → visits table, matching survey spec, coverage report.

use std::path::PathBuf;

use seine::survey::plan_io::{PlanOutputs, write_plan};
use seine::survey::planner::{PlanFile, check_passthrough, make_plan};
use seine::survey::spec::parse_toml;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Cadence plan (TOML): [plan], [site], [field], [region], [revisit], [depth], and the
    /// [efficiency], [motion], [linking] tables to copy into the survey spec.
    #[arg(long)]
    pub plan: PathBuf,
    /// Visits table to write (.csv or .parquet). Beside it: STEM.survey.toml (the survey spec),
    /// STEM.coverage.json, STEM.coverage_ecliptic.csv, STEM.coverage_nights.csv, STEM.moc.json.
    #[arg(long)]
    pub out: PathBuf,
    /// Seed of the weather draws (overrides plan.seed).
    #[arg(long)]
    pub seed: Option<u64>,
}

pub fn run(a: Args) -> Result<()> {
    seine::io::table::Format::of(&a.out)?;
    let text = std::fs::read_to_string(&a.plan)
        .map_err(|e| Error::input(format!("{}: cannot read the plan: {e}", a.plan.display())))?;
    let mut file: PlanFile = parse_toml(&text, &a.plan)?;
    if let Some(s) = a.seed {
        file.plan.seed = s;
    }
    let in_plan = |e: Error| match e {
        Error::Input(m) => Error::input(format!("{}: {m}", a.plan.display())),
        other => other,
    };
    check_passthrough(&file).map_err(in_plan)?;
    let plan = make_plan(file).map_err(in_plan)?;
    let out = PlanOutputs::for_visits(&a.out);
    let cov = write_plan(&plan, &a.plan, &out)?;
    eprintln!(
        "seine plan: {} visits of {} fields on {} nights, {:.0} deg² covered → {} (spec {})",
        cov.n_visits,
        cov.n_fields,
        cov.n_nights_used,
        cov.covered_sq_deg,
        out.visits.display(),
        out.spec.display()
    );
    Ok(())
}
