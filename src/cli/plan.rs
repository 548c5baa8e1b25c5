//! `seine plan`: arguments and printing; the run is `seine::commands::plan`.

use std::path::PathBuf;

use seine::commands::{Outcome, plan};
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
    /// --out then names the report, NAME.coverage.json (tables and MOC beside it). One of
    /// --plan or --survey is required.
    #[arg(long)]
    pub survey: Option<PathBuf>,
    /// Visits table to write (.csv or .parquet). Beside it: STEM.survey.toml (the survey spec),
    /// STEM.coverage.json, STEM.coverage_ecliptic.csv, STEM.coverage_nights.csv, STEM.moc.json.
    #[arg(long)]
    pub out: PathBuf,
    /// Seed of the weather draws (overrides plan.seed).
    #[arg(long)]
    pub seed: Option<u64>,
    /// No progress bar and no conclusion on stderr (a plan that does not keep its revisits
    /// still warns).
    #[arg(long)]
    pub quiet: bool,
}

pub fn run(a: Args) -> Result<()> {
    let outcome = match (&a.plan, &a.survey) {
        (Some(p), _) => plan::plan(p, &a.out, a.seed, !a.quiet)?.outcome,
        (None, Some(s)) => plan::coverage(s, &a.out)?,
        (None, None) => return Err(Error::input("seine plan: give --plan PLAN or --survey SPEC")),
    };
    print(&outcome, a.quiet);
    Ok(())
}

/// The plan's warning, if any, and (unless quiet) its one line.
pub fn print(outcome: &Outcome, quiet: bool) {
    for n in &outcome.notes {
        eprintln!("{n}");
    }
    if !quiet {
        eprintln!("{}", outcome.conclusion);
    }
}
