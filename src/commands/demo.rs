//! `seine demo`: the whole job on a built-in invented example — the invented site Sorrel
//! Peak plans a synoptic survey, an invented scattered-disk population is drawn, the engine
//! runs it through the survey; the discoveries become a catalogue whose detectability, the
//! population's selection function, bias maps, bias-aware clustering test and comparison with
//! two model populations are run through the commands' own library calls; three revisit
//! cadences of the same survey are compared on the population (`seine yield`); where an
//! invented distant planet that the survey did not find could still be is mapped (`seine
//! hideout`); the report (`DIR/index.html`) is written last. The plan, the population specs
//! and the planet's prior are the files of `survey-configs/`, built into the binary so that
//! the demo runs from anywhere.

use std::path::{Path, PathBuf};
use std::time::Instant;

use super::bias_map::{BiasMapOptions, MapOptions, bias_map};
use super::cluster_test::{ClusterTestOptions, cluster_test};
use super::compare_models::{CompareModelsOptions, ModelInput, compare};
use super::detectability::{DetectabilityOptions, Subject, detectability};
use super::hideout::{HideoutOptions, hideout};
use super::yields::{YieldOptions, yield_comparison};
use super::{Outcome, RunOptions};
use crate::analysis::bias_map::{DEFAULT_MAX_TRIALS_PER_OBJECT, DEFAULT_MIN_DISCOVERIES, MapAxes, MapGrid};
use crate::analysis::bias_map_tables;
use crate::analysis::cluster_test::TestOptions;
use crate::analysis::compare::DensityChoice;
use crate::analysis::detectability::Redraw;
use crate::analysis::selection::GridEdges;
use crate::analysis::space::Space;
use crate::analysis::yields::{DEFAULT_A_EDGES, DEFAULT_H_EDGES, DEFAULT_R_EDGES};
use crate::engine::{ObserveOptions, PreparedSurvey, observe};
use crate::error::{Error, Result};
use crate::fit::catalogue::Selection;
use crate::io::Provenance;
use crate::io::table::{Format, write_atomic};
use crate::population::objects::ObjectTable;
use crate::population::spec::Spec;
use crate::statistics::parse_edges;
use crate::survey::Survey;
use crate::survey::plan_io::{PlanOutputs, write_plan};
use crate::survey::planner::{PlanFile, make_plan};
use crate::survey::spec::parse_toml;

const PLAN: &str = include_str!("../../survey-configs/synoptic-plan.toml");
/// The demo's invented population: a scattered disk bright enough that a one-year synoptic
/// survey finds a small catalogue worth testing.
const POPULATION: &str = include_str!("../../survey-configs/populations/demo-scattered-disk.toml");
/// A second model for the comparison: the same disk with its perihelia clustered.
const CLUSTERED: &str = include_str!("../../survey-configs/populations/demo-clustered-disk.toml");
/// Size of the demo's catalogue (the first discoveries), kept small so the demo stays quick.
/// The demo's drawn population, in its output directory (the input of observe and yield).
const DRAWN_OBJECTS: &str = "objects.parquet";
const CATALOG_MAX: usize = 15;
const N_OBJECTS: i64 = 20_000;
const SEED: u64 = 2027;
/// Revisit intervals of the cadence comparison, nights (the demo's own plan revisits every 3).
const CADENCES: [u32; 3] = [1, 3, 7];
/// The prior of the hideout step: an invented distant planet, sized by diameter and albedo.
const PLANET_PRIOR: &str = include_str!("../../survey-configs/priors/demo-planet.toml");
/// Draws of the planet prior: about 15 surviving draws per order-4 cell of the map, in well
/// under a second.
const N_PLANETS: u64 = 20_000;

/// What the demo says as it goes: a line of its narrative (standard output), or the outcome
/// of one of the commands it runs (printed as that command prints it).
pub enum Say<'a> {
    Line(String),
    Stage(&'a Outcome),
}

/// What the demo wrote: its output directory and the report's page.
pub struct Demo {
    pub index: PathBuf,
    pub figures: usize,
}

/// Run the demo into `out`, telling `say` what happens.
pub fn demo(out: &Path, say: &mut dyn FnMut(Say)) -> Result<Demo> {
    let t0 = Instant::now();
    let mut line = |s: String| say(Say::Line(s));
    line("seine demo — an invented scenario: a synoptic survey from the invented site Sorrel Peak\n".into());
    let spec_path = plan_survey(out)?;
    let survey = Survey::load(&spec_path)?;
    let mut nights = survey.visits.night.clone();
    nights.dedup();
    line(format!(
        "1. plan     {} visits on {} nights: {} (greedy scheduler, Sun below −15°, airmass ≤ 1.8)",
        survey.visits.len(),
        nights.len(),
        survey.name
    ));
    let objects = draw_population(out)?;
    line(format!(
        "2. draw     {} objects of an invented isotropic scattered disk (seed {SEED})",
        objects.len()
    ));
    let observed = observe_population(out, &spec_path, survey, &objects, &mut line)?;
    analyses(out, &spec_path, &observed, &objects, say)?;
    compare_cadences(out, say)?;
    hideout_step(out, &spec_path, say)?;
    let written = crate::report::report(out)?;
    let mut line = |s: String| say(Say::Line(s));
    line(format!(
        "\n7. report   {} figures; open {}",
        written.figures.len(),
        written.index.display()
    ));
    line(format!(
        "\nOutputs in {}: visits and spec, objects.parquet, observe/ (objects, detections, discoveries, summary.json), catalog.parquet, \
         detectability/ (each object's chance), selection/ (the population's selection function), bias-map/, cluster-test/ (statistics, null samples, rose band), compare-models/, yield/ (cadences), \
         hideout/ (where an invented planet could still be), index.html, figures/.",
        out.display()
    ));
    line(format!("done in {:.1} s", t0.elapsed().as_secs_f64()));
    Ok(Demo {
        index: written.index,
        figures: written.figures.len(),
    })
}

/// The population through the survey (`observe`); returns the objects table it wrote.
fn observe_population(
    out: &Path,
    spec_path: &Path,
    survey: Survey,
    objects: &ObjectTable,
    line: &mut dyn FnMut(String),
) -> Result<PathBuf> {
    let prepared = vec![PreparedSurvey::new(survey)];
    // The survey spec in the provenance lets the report find the survey again.
    let mut provenance = Provenance::current().with_seed(SEED);
    provenance.add_input(spec_path)?;
    let opts = ObserveOptions {
        seed: SEED,
        ..Default::default()
    };
    let report = observe(&prepared, objects, &out.join("observe"), &opts, &provenance)?;
    let s = &report.summary;
    line(format!("3. observe  {}", super::observe::found(s)));
    fraction_by_q(s, line);
    Ok(report.objects_path)
}

/// The options of an analysis stage writing into `out/dir`.
fn run_in(out: &Path, dir: &str) -> RunOptions {
    RunOptions {
        out: out.join(dir),
        seed: SEED,
        format: Format::Parquet,
        progress: true,
    }
}

/// The catalogue of discoveries through the analyses, each through its command's library call.
fn analyses(out: &Path, spec: &Path, observed: &Path, objects: &ObjectTable, say: &mut dyn FnMut(Say)) -> Result<()> {
    let catalog = write_catalog(out, observed, objects)?;
    let clustered = draw_to(out, CLUSTERED, "clustered.parquet", N_OBJECTS)?;
    let population = out.join(DRAWN_OBJECTS);
    let surveys = vec![spec.to_path_buf()];
    say(Say::Line(format!(
        "\n4. analyses of the {CATALOG_MAX}-object catalogue of discoveries ({})",
        catalog.display()
    )));
    let chances = detectability(&DetectabilityOptions {
        surveys: surveys.clone(),
        subject: Subject::Catalogue {
            objects: catalog.clone(),
            selection: Selection::default(),
            fit: Default::default(),
            clones: 200,
            redraw: Redraw::All,
            shard: None,
            over_budget: false,
        },
        run: run_in(out, "detectability"),
    })?;
    say(Say::Stage(&chances));
    // The population's selection function over (a, q, i, H), for fits of populations.
    let selection = detectability(&DetectabilityOptions {
        surveys: surveys.clone(),
        subject: Subject::Population {
            objects: population.clone(),
            edges: GridEdges::default(),
        },
        run: run_in(out, "selection"),
    })?;
    say(Say::Stage(&selection));
    let maps = MapOptions {
        grid: MapGrid {
            axes: MapAxes::VarpiNode,
            n_x: 18,
            n_node: 18,
        },
        min_discoveries: DEFAULT_MIN_DISCOVERIES,
        max_trials_per_object: DEFAULT_MAX_TRIALS_PER_OBJECT,
        per_cell: None,
        over_budget: false,
        fit: Default::default(),
    };
    let mapped = bias_map(&BiasMapOptions {
        surveys: surveys.clone(),
        objects: catalog.clone(),
        selection: Selection::default(),
        maps: maps.clone(),
        run: run_in(out, "bias-map"),
        shard: None,
        svg: true,
    })?;
    say(Say::Stage(&mapped));
    let table = out
        .join("bias-map")
        .join(format!("{}.{}", bias_map_tables::MAPS, Format::Parquet.extension()));
    let tested = cluster_test(&ClusterTestOptions {
        surveys: Vec::new(),
        catalog: catalog.clone(),
        selection: Selection::default(),
        bias_maps: vec![table],
        maps,
        test: TestOptions {
            trials: 2000,
            seed: SEED,
            ..TestOptions::default()
        },
        drop_undiscovered: false,
        run: run_in(out, "cluster-test"),
    })?;
    say(Say::Stage(&tested));
    let model = |name: &str, objects: &Path| ModelInput {
        name: name.into(),
        objects: objects.to_path_buf(),
        population_size: None,
    };
    let compared = compare(&CompareModelsOptions {
        surveys,
        observed: catalog,
        selection: Selection::default(),
        fit: Default::default(),
        models: vec![model("isotropic", &population), model("clustered", &clustered)],
        space: Space::parse("a_au,q_au,inc_deg,varpi_deg")?,
        density: DensityChoice::Kernel,
        synthetic: 1000,
        bootstrap: 200,
        frame: None,
        run: run_in(out, "compare-models"),
    })?;
    say(Say::Stage(&compared));
    Ok(())
}

/// The same survey at three revisit intervals, through `seine yield` on the demo population.
fn compare_cadences(out: &Path, say: &mut dyn FnMut(Say)) -> Result<()> {
    say(Say::Line(format!(
        "\n5. cadence  the same survey revisiting every {CADENCES:?} nights (seine yield)"
    )));
    let dir = out.join("cadences");
    std::fs::create_dir_all(&dir).map_err(|e| crate::error::io_at(&dir, e))?;
    let mut plans = Vec::new();
    for every in CADENCES {
        let text = cadence_variant(every)?;
        let path = dir.join(format!("every-{every}.toml"));
        write_atomic(&path, text.as_bytes())?;
        plans.push(path);
    }
    let outcome = yield_comparison(&YieldOptions {
        surveys: Vec::new(),
        plans,
        objects: out.join(DRAWN_OBJECTS),
        r_edges: parse_edges("--r-edges", DEFAULT_R_EDGES)?,
        h_edges: parse_edges("--h-edges", DEFAULT_H_EDGES)?,
        a_edges: parse_edges("--a-edges", DEFAULT_A_EDGES)?,
        run: run_in(out, "yield"),
    })?;
    say(Say::Stage(&outcome));
    Ok(())
}

/// Where an invented distant planet that the survey did not find could still be, and where to
/// look next (`seine hideout` of the built-in prior through the demo's survey).
fn hideout_step(out: &Path, spec: &Path, say: &mut dyn FnMut(Say)) -> Result<()> {
    say(Say::Line(
        "\n6. hideout  where an invented distant planet the survey did not find could still be (seine hideout)".into(),
    ));
    let prior = out.join("planet-prior.toml");
    write_atomic(&prior, PLANET_PRIOR.as_bytes())?;
    let outcome = hideout(&HideoutOptions {
        surveys: vec![spec.to_path_buf()],
        prior,
        diameter_km: None,
        albedo: None,
        count: N_PLANETS,
        shard: None,
        epoch_mjd: None,
        // Cells of 13.4 deg² and fields of 5° radius (about six cells): a map of 20 000 draws
        // smooth enough to read.
        order: 4,
        field_radius_deg: 5.0,
        n_fields: 10,
        a_bins: None,
        h_bins: None,
        over_budget: false,
        run: run_in(out, "hideout"),
    })?;
    say(Say::Stage(&outcome.outcome));
    Ok(())
}

/// The built-in plan with its revisit interval set to `every` nights (and a name and a header
/// comment saying so).
fn cadence_variant(every: u32) -> Result<String> {
    let (from_name, from_every) = ("name = \"Sorrel Peak synoptic sweep\"", "every_nights = 3");
    let from_header = "region every three nights";
    if !(PLAN.contains(from_name) && PLAN.contains(from_every) && PLAN.contains(from_header)) {
        return Err(Error::input(
            "built-in plan: expected its name, `every_nights = 3` and its header's \"every three nights\"",
        ));
    }
    let when = if every == 1 {
        "every night".to_string()
    } else {
        format!("every {every} nights")
    };
    Ok(PLAN
        .replacen(from_header, &format!("region {when}"), 1)
        .replacen(from_name, &format!("name = \"Sorrel Peak synoptic, {when}\""), 1)
        .replacen(from_every, &format!("every_nights = {every}"), 1))
}

/// The first discoveries, with the drawn objects' own columns only, as `catalog.parquet`.
fn write_catalog(out: &Path, observed: &Path, objects: &ObjectTable) -> Result<PathBuf> {
    let table = crate::io::read_table(observed)?;
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
    crate::io::table::write_table(&mut catalog, &path, &Provenance::current().with_seed(SEED))?;
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

/// Draw the embedded population and write it as `DRAWN_OBJECTS`.
fn draw_population(out: &Path) -> Result<ObjectTable> {
    let path = draw_to(out, POPULATION, DRAWN_OBJECTS, N_OBJECTS)?;
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
    crate::io::table::write_table(&mut df, &path, &Provenance::current().with_seed(SEED))?;
    Ok(path)
}

/// The discovered fraction in bins of perihelion distance, as a small text table.
fn fraction_by_q(s: &crate::engine::summary::Summary, line: &mut dyn FnMut(String)) {
    let Some(q) = s.bins.iter().find(|b| b.quantity == "q_au") else {
        return;
    };
    line("\n   q (AU)        objects  discovered  fraction".into());
    for k in 0..q.n.len() {
        if q.n[k] > 0 {
            line(format!(
                "   {:>5.0}–{:<5.0}   {:>8}  {:>10}  {:>7.2}%",
                q.edges[k],
                q.edges[k + 1],
                q.n[k],
                q.detected[k],
                100.0 * q.detected[k] as f64 / q.n[k] as f64
            ));
        }
    }
}
