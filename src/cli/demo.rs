//! `seine demo`: the whole job on a built-in invented example — the invented site Sorrel
//! Peak plans a synoptic survey, an invented scattered-disk population is drawn, the
//! engine runs it through the survey; the discoveries become a catalogue whose detectability,
//! the population's selection function, bias maps, bias-aware clustering test and comparison with two model populations are run
//! with the tool's own commands; three revisit cadences of the same survey are compared on the
//! population (`seine yield`); the report (`DIR/index.html`) is written last.

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
/// The demo's invented population: a scattered disk bright enough that a one-year synoptic
/// survey finds a small catalogue worth testing.
const POPULATION: &str = r#"
[population]
name = "demo scattered disk"
epoch_mjd = 60676.0
frame = "barycentric"

[orbit]
a_au = { dist = "power-law", k = -1.5, lo = 50.0, hi = 500.0 }
q_au = { dist = "uniform", lo = 30.0, hi = 45.0 }
inc_deg = { dist = "isotropic" }

[photometry]
h_mag = { dist = "exponential", alpha = 0.6, lo = 2.5, hi = 7.5 }
beta_mag_per_deg = { dist = "uniform", lo = 0.10, hi = 0.20 }
"#;
/// A second model for the comparison: the same disk with its perihelia clustered in
/// longitude (von Mises ϖ) and a thinner inclination distribution.
const CLUSTERED: &str = r#"
[population]
name = "demo clustered disk"
epoch_mjd = 60676.0
frame = "barycentric"

[orbit]
a_au = { dist = "power-law", k = -1.5, lo = 50.0, hi = 500.0 }
q_au = { dist = "uniform", lo = 30.0, hi = 45.0 }
inc_deg = { dist = "sin-gaussian", sigma = 15.0 }
varpi_deg = { dist = "von-mises", mean = 150.0, kappa = 2.0 }
node_deg = { dist = "uniform", lo = 0.0, hi = 360.0 }

[photometry]
h_mag = { dist = "exponential", alpha = 0.6, lo = 2.5, hi = 7.5 }
beta_mag_per_deg = { dist = "uniform", lo = 0.10, hi = 0.20 }
"#;
/// Size of the demo's catalogue (the first discoveries), kept small so the demo stays quick.
const CATALOG_MAX: usize = 15;
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
    outln!("seine demo — an invented scenario: a synoptic survey from the invented site Sorrel Peak\n");
    let spec_path = plan_survey(&a.out)?;
    let survey = Survey::load(&spec_path)?;
    outln!(
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
    outln!(
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
    outln!(
        "3. observe  {} discovered ({:.2}%), {} secured; {} in-field events, {:.2} candidates per event, {:.0} objects/s",
        s.n_detected,
        100.0 * s.detected_fraction,
        s.n_secured,
        s.in_field_events,
        s.candidates_per_in_field_event,
        s.objects_per_second
    );
    print_fraction_by_q(s);
    analyses(&a.out, &spec_path, &report.objects_path, &objects)?;
    compare_cadences(&a.out)?;
    let written = seine::report::report(&a.out)?;
    outln!(
        "\n6. report   {} figures; open {}",
        written.figures.len(),
        written.index.display()
    );
    outln!(
        "\nOutputs in {}: visits and spec, objects.parquet, observe/ (objects, detections, discoveries, summary.json), catalog.parquet, \
         detectability/ (each object's chance), selection/ (the population's selection function), bias-map/, cluster-test/ (statistics, null samples, rose band), compare-models/, yield/ (cadences), \
         index.html, figures/.",
        a.out.display()
    );
    outln!("done in {:.1} s", t0.elapsed().as_secs_f64());
    Ok(())
}

/// The catalogue of discoveries through the analyses, each run as its own command.
fn analyses(out: &Path, spec: &Path, observed: &Path, objects: &ObjectTable) -> Result<()> {
    let catalog = write_catalog(out, observed, objects)?;
    let clustered = draw_to(out, CLUSTERED, "clustered.parquet", N_OBJECTS)?;
    let (spec, cat, dir) = (path_str(spec), path_str(&catalog), |d: &str| path_str(&out.join(d)));
    let seed = SEED.to_string();
    outln!(
        "\n4. analyses of the {CATALOG_MAX}-object catalogue of discoveries ({})",
        catalog.display()
    );
    stage(&[
        "detectability",
        "--survey",
        &spec,
        "--objects",
        &cat,
        "--clones",
        "200",
        "--seed",
        &seed,
        "--out",
        &dir("detectability"),
    ])?;
    // The population's selection function over (a, q, i, H), for fits of populations.
    stage(&[
        "detectability",
        "--survey",
        &spec,
        "--population",
        &path_str(&out.join("objects.parquet")),
        "--seed",
        &seed,
        "--out",
        &dir("selection"),
    ])?;
    stage(&[
        "bias-map",
        "--survey",
        &spec,
        "--objects",
        &cat,
        "--grid",
        "18,18",
        "--seed",
        &seed,
        "--out",
        &dir("bias-map"),
    ])?;
    let maps = path_str(&out.join("bias-map").join("bias_map.parquet"));
    stage(&[
        "cluster-test",
        "--catalog",
        &cat,
        "--bias-map",
        &maps,
        "--trials",
        "2000",
        "--seed",
        &seed,
        "--out",
        &dir("cluster-test"),
    ])?;
    let models = [
        format!("isotropic={}", path_str(&out.join("objects.parquet"))),
        format!("clustered={}", path_str(&clustered)),
    ];
    stage(&[
        "compare-models",
        "--survey",
        &spec,
        "--observed",
        &cat,
        "--model",
        &models[0],
        "--model",
        &models[1],
        "--seed",
        &seed,
        "--out",
        &dir("compare-models"),
    ])
}

/// Revisit intervals of the cadence comparison, nights (the demo's own plan revisits every 3).
const CADENCES: [u32; 3] = [1, 3, 7];

/// The same survey at three revisit intervals, through `seine yield` on the demo population.
fn compare_cadences(out: &Path) -> Result<()> {
    outln!("\n5. cadence  the same survey revisiting every {CADENCES:?} nights (seine yield)");
    let dir = out.join("cadences");
    std::fs::create_dir_all(&dir).map_err(|e| seine::error::io_at(&dir, e))?;
    let mut args: Vec<String> = vec!["yield".into()];
    for every in CADENCES {
        let text = cadence_variant(every)?;
        let path = dir.join(format!("every-{every}.toml"));
        write_atomic(&path, text.as_bytes())?;
        args.extend(["--plan".into(), path_str(&path)]);
    }
    let objects = path_str(&out.join("objects.parquet"));
    args.extend(["--objects".into(), objects, "--seed".into(), SEED.to_string()]);
    args.extend(["--out".into(), path_str(&out.join("yield"))]);
    stage(&args.iter().map(String::as_str).collect::<Vec<_>>())
}

/// The built-in plan with its revisit interval set to `every` nights (and a name saying so).
fn cadence_variant(every: u32) -> Result<String> {
    let (from_name, from_every) = ("name = \"Sorrel Peak synoptic sweep\"", "every_nights = 3");
    if !(PLAN.contains(from_name) && PLAN.contains(from_every)) {
        return Err(Error::input("built-in plan: expected its name and `every_nights = 3`"));
    }
    let when = if every == 1 {
        "every night".to_string()
    } else {
        format!("every {every} nights")
    };
    Ok(PLAN
        .replacen(from_name, &format!("name = \"Sorrel Peak synoptic, {when}\""), 1)
        .replacen(from_every, &format!("every_nights = {every}"), 1))
}

/// Run one of the tool's own commands in this process, exactly as a user would type it.
fn stage(args: &[&str]) -> Result<()> {
    use clap::Parser;
    let cli = super::Cli::try_parse_from(std::iter::once("seine").chain(args.iter().copied()))
        .map_err(|e| Error::input(format!("demo stage `{}`: {e}", args[0])))?;
    super::run(cli)
}

fn path_str(p: &Path) -> String {
    p.display().to_string()
}

/// The first discoveries, with the drawn objects' own columns only, as `catalog.parquet`.
fn write_catalog(out: &Path, observed: &Path, objects: &ObjectTable) -> Result<PathBuf> {
    let table = seine::io::read_table(observed)?;
    let detected = table
        .column("detected")
        .and_then(|c| c.bool().cloned())
        .map_err(|e| Error::io(e.to_string()))?;
    let names: Vec<String> = objects.frame.get_column_names().iter().map(|n| n.to_string()).collect();
    let mut catalog = table
        .filter(&detected)
        .and_then(|d| d.select(names))
        .map_err(|e| Error::io(e.to_string()))?
        .head(Some(CATALOG_MAX));
    if catalog.height() < 3 {
        return Err(Error::io(format!(
            "demo: only {} discoveries, too few for a catalogue",
            catalog.height()
        )));
    }
    let path = out.join("catalog.parquet");
    seine::io::table::write_table(&mut catalog, &path, &Provenance::current().with_seed(SEED))?;
    Ok(path)
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
    let path = draw_to(out, POPULATION, "objects.parquet", N_OBJECTS)?;
    ObjectTable::read(&path)
}

/// Draw `count` objects of an embedded spec into `out/name` (the spec text beside it).
fn draw_to(out: &Path, spec_text: &str, name: &str, count: i64) -> Result<PathBuf> {
    let spec_path = out.join(name.replace(".parquet", ".toml"));
    write_atomic(&spec_path, spec_text.as_bytes())?;
    let Spec::Draw(pop) = Spec::parse(spec_text, &spec_path)? else {
        return Err(Error::input("built-in population: expected a drawing spec"));
    };
    let mut df = pop.frame(pop.draw_ids(SEED, 0..count)?);
    let path = out.join(name);
    seine::io::table::write_table(&mut df, &path, &Provenance::current().with_seed(SEED))?;
    Ok(path)
}

/// The discovered fraction in bins of perihelion distance, as a small text table.
fn print_fraction_by_q(s: &seine::engine::summary::Summary) {
    let Some(q) = s.bins.iter().find(|b| b.quantity == "q_au") else {
        return;
    };
    outln!("\n   q (AU)        objects  discovered  fraction");
    for k in 0..q.n.len() {
        if q.n[k] > 0 {
            outln!(
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
