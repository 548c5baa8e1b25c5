//! `seine demo`: the whole job on a built-in invented example — the fictional Cerro Seine
//! Observatory plans a synoptic survey, an invented scattered-disk population is drawn, the
//! engine runs it through the survey, and the report (`DIR/index.html`) is written. Later
//! stages (detectability, bias maps, the clustering test, model comparison) are listed as they land.

use std::path::{Path, PathBuf};
use std::time::Instant;

use seine::engine::{ObserveOptions, PreparedSurvey, observe};
use seine::io::Provenance;
use seine::io::objects::ObjectTable;
use seine::io::table::write_atomic;
use seine::population::spec::Spec;
use seine::survey::Survey;
use seine::survey::plan_io::{PlanOutputs, write_plan};
use seine::survey::planner::{PlanFile, make_plan};
use seine::survey::spec::parse_toml;
use seine::{Error, Result};

const PLAN: &str = include_str!("../../survey-configs/synoptic-plan.toml");
const POPULATION: &str = include_str!("../../survey-configs/populations/scattered-disk.toml");
const N_OBJECTS: i64 = 20_000;
const SEED: u64 = 2027;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Output directory for the demo's tables and report.
    #[arg(long, default_value = "seine-demo")]
    pub out: PathBuf,
}

pub fn run(a: Args) -> Result<()> {
    let t0 = Instant::now();
    println!("seine demo — an invented scenario: the fictional Cerro Seine Observatory\n");
    let spec_path = plan_survey(&a.out)?;
    let survey = Survey::load(&spec_path)?;
    println!(
        "1. plan     {} visits on {} nights: {} (greedy scheduler, Sun below −15°, airmass ≤ 1.8)",
        survey.visits.len(),
        {
            let mut n = survey.visits.night.clone();
            n.dedup();
            n.len()
        },
        survey.name
    );
    let objects = draw_population(&a.out)?;
    println!(
        "2. draw     {} objects of an invented isotropic scattered disk (seed {SEED})",
        objects.len()
    );
    let prepared = vec![PreparedSurvey::new(survey)];
    // The survey spec in the provenance lets the report find the survey again.
    let mut provenance = Provenance::current().with_seed(SEED);
    provenance.add_input(&spec_path)?;
    let opts = ObserveOptions {
        seed: SEED,
        ..Default::default()
    };
    let report = observe(&prepared, &objects, &a.out.join("observe"), &opts, &provenance)?;
    let s = &report.summary;
    println!(
        "3. observe  {} discovered ({:.2}%), {} tracked; {} in-field events, {:.2} candidates per event, {:.0} objects/s",
        s.n_detected,
        100.0 * s.detected_fraction,
        s.n_tracked,
        s.in_field_events,
        s.candidates_per_in_field_event,
        s.objects_per_second
    );
    print_fraction_by_q(s);
    let written = seine::report::report(&a.out)?;
    println!(
        "4. report   {} figures; open {}",
        written.figures.len(),
        written.index.display()
    );
    println!(
        "\nOutputs in {}: visits and spec, objects.parquet, observe/ (objects, detections, summary.json), index.html, figures/.",
        a.out.display()
    );
    println!(
        "Still to come in the demo: detectability, bias maps, the bias-aware clustering test and model comparison."
    );
    println!("done in {:.1} s", t0.elapsed().as_secs_f64());
    Ok(())
}

/// Write the embedded plan and run the planner; returns the survey spec's path.
fn plan_survey(out: &Path) -> Result<PathBuf> {
    let plan_path = out.join("plan.toml");
    write_atomic(&plan_path, PLAN.as_bytes())?;
    let file: PlanFile = parse_toml(PLAN, &plan_path)?;
    let plan = make_plan(file).map_err(|e| Error::input(format!("built-in plan: {e}")))?;
    let outputs = PlanOutputs::for_visits(&out.join("visits.csv"));
    write_plan(&plan, &plan_path, &outputs)?;
    Ok(outputs.spec)
}

/// Draw the embedded population and write it as `objects.parquet`.
fn draw_population(out: &Path) -> Result<ObjectTable> {
    let path = out.join("population.toml");
    write_atomic(&path, POPULATION.as_bytes())?;
    let Spec::Draw(pop) = Spec::parse(POPULATION, &path)? else {
        return Err(Error::input("built-in population: expected a drawing spec"));
    };
    let mut df = pop.frame(pop.draw_ids(SEED, 0..N_OBJECTS)?);
    let objects_path = out.join("objects.parquet");
    seine::io::table::write_table(&mut df, &objects_path, &Provenance::current().with_seed(SEED))?;
    ObjectTable::from_frame(df, &objects_path)
}

/// The discovered fraction in bins of perihelion distance, as a small text table.
fn print_fraction_by_q(s: &seine::engine::summary::Summary) {
    let Some(q) = s.bins.iter().find(|b| b.quantity == "q_au") else {
        return;
    };
    println!("\n   q (AU)        objects  discovered  fraction");
    for k in 0..q.n.len() {
        if q.n[k] > 0 {
            println!(
                "   {:>5.0}–{:<5.0}   {:>8}  {:>10}  {:>7.2}%",
                q.edges[k],
                q.edges[k + 1],
                q.n[k],
                q.detected[k],
                100.0 * q.detected[k] as f64 / q.n[k] as f64
            );
        }
    }
}
