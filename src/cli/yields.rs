//! `seine yield`: the cadence designer's comparison of surveys on one population (science in
//! `analysis::yields`, files in `analysis::yield_tables`).

use std::path::{Path, PathBuf};

use seine::Result;
use seine::analysis::yield_tables::{self, cadence_rows, population_name};
use seine::analysis::yields::yields;
use seine::io::objects::ObjectTable;

use super::common::*;

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("compared").required(true).multiple(true).args(["surveys", "plans"])))]
pub struct Args {
    /// Survey spec (TOML); repeat to compare surveys. At least one --survey or --plan.
    #[arg(long = "survey")]
    pub surveys: Vec<PathBuf>,
    /// Cadence plan (TOML): built first into DIR/plans/<name>.csv and its survey spec; repeat.
    #[arg(long = "plan")]
    pub plans: Vec<PathBuf>,
    /// The population (objects table) to run through every survey.
    #[arg(long)]
    pub objects: PathBuf,
    /// Bin edges of the heliocentric distance at discovery, AU (comma-separated).
    #[arg(long, default_value = "0,30,40,50,70,100,150,250,500,1000,100000")]
    pub r_edges: String,
    /// Bin edges of the absolute magnitude H, mag (comma-separated).
    #[arg(long, default_value = "-5,3,4,5,6,7,8,9,10,20")]
    pub h_edges: String,
    /// Bin edges of the semi-major axis a, AU (comma-separated).
    #[arg(long, default_value = "0,30,50,100,250,1000,100000")]
    pub a_edges: String,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let edges = [
        parse_edges("--r-edges", &a.r_edges)?,
        parse_edges("--h-edges", &a.h_edges)?,
        parse_edges("--a-edges", &a.a_edges)?,
    ];
    parse_format(&a.run.format)?;
    let mut prov = a.run.start()?;
    // The population first: a refusal must leave nothing behind.
    let objects = ObjectTable::read(&a.objects)?;
    prov.add_input(&a.objects)?;
    let mut built: Vec<PathBuf> = Vec::new();
    let result = run_with_plans(&a, &objects, &edges, prov, &mut built);
    if result.is_err() {
        remove_built(&a.run.out, &built);
    }
    result
}

fn run_with_plans(
    a: &Args,
    objects: &ObjectTable,
    edges: &[Vec<f64>; 3],
    mut prov: seine::io::Provenance,
    built: &mut Vec<PathBuf>,
) -> Result<()> {
    let mut specs = a.surveys.clone();
    for plan in &a.plans {
        let stem = plan
            .file_stem()
            .map_or("plan".into(), |s| s.to_string_lossy().into_owned());
        prov.add_input(plan)?;
        let visits = a.run.out.join("plans").join(format!("{stem}.csv"));
        built.push(visits.clone());
        specs.push(super::plan::run_plan(plan, &visits, None)?);
    }
    let surveys = load_surveys(&specs, &mut prov)?;
    let out = a.run.out_dir(prov)?;
    let (rows, tallies) = yields(objects, &surveys, a.run.seed, edges);
    let totals = yield_tables::totals(&surveys, &tallies);
    let cadence = cadence_rows(&surveys, &totals, &population_name(&a.objects));
    let (written, conclusion) = yield_tables::write(&out, &rows, &totals, &cadence)?;
    let paths: Vec<&Path> = written.iter().map(|p| p.as_path()).collect();
    a.run.report(&conclusion, &paths);
    Ok(())
}

/// Remove the plan files a refused run built, and the directories it created if left empty.
fn remove_built(out: &Path, built: &[PathBuf]) {
    use seine::io::table::sidecar_path;
    for visits in built {
        let o = seine::survey::plan_io::PlanOutputs::for_visits(visits);
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
