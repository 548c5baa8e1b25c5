//! Finding and reading what a directory holds: observe runs, survey specs (with their visits),
//! plan coverage reports and the analysis tables, by the file names documented in `mod.rs`.
//! Everything is read into the tidy tables of `tables.rs`.

use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::tables::{Effort, FractionBin, HeatCell, HeatMap, MappedObject, NullBand, NullTest, PlanYield, RoseBin};
use crate::analysis::comparison;
use crate::analysis::{bias_map_tables, cluster_tables, detectability, selection, yield_tables};
use crate::engine::discoveries::{self, Discovery};
use crate::engine::outputs;
use crate::error::{Error, Result, io_at};
use crate::hideout::{self, HideoutSummary, moc, tables as hideout_tables};
use crate::io::provenance::Provenance;
use crate::io::table::read_provenance;
use crate::survey::Survey;
use crate::survey::plan_io::{self, PlanOutputs};

/// One `observe` output directory.
pub struct ObserveRun {
    pub dir: PathBuf,
    pub summary: serde_json::Value,
    pub objects: Observed,
    /// The detections table, when present: (survey, visit_id, mag, rate, detected) per event.
    pub detections: Option<Detections>,
    /// The discoveries table (`engine::discoveries`), when present: its path and rows.
    pub discoveries: Option<(PathBuf, Vec<Discovery>)>,
    /// Survey specs named in the run's provenance that still exist.
    pub survey_specs: Vec<PathBuf>,
    /// The objects table the run observed and its content hash (from its provenance): runs
    /// of one population through different surveys share the hash.
    pub objects_input: Option<(PathBuf, String)>,
}

/// An input the report could not use, and why; its section is left out and the page says so.
#[derive(Debug, Clone, PartialEq)]
pub struct Skipped {
    pub path: PathBuf,
    pub reason: String,
}

impl Skipped {
    /// One sentence: the reason, which names the input (prefixed with it when it does not).
    pub fn describe(&self) -> String {
        let p = self.path.display().to_string();
        if self.reason.contains(&p) {
            self.reason.clone()
        } else {
            format!("{p}: {}", self.reason)
        }
    }
}

/// One yield comparison (`seine yield`): its directory, rows, and the surveys it compared
/// (from its summary's provenance) for their effort.
pub struct YieldSet {
    pub dir: PathBuf,
    pub rows: Vec<PlanYield>,
}

pub use crate::engine::outputs::{Detections, Observed};

/// A plan's coverage report (`STEM.coverage.json` and `STEM.coverage_ecliptic.csv`).
pub struct PlanCoverage {
    pub stem: String,
    pub json: serde_json::Value,
    pub by_latitude: DataFrame,
}

/// The bias maps of one map table: the file, its maps, and the mapped objects' own angles
/// and weights (`map_objects.*` beside it) when there.
pub struct MapSet {
    pub path: PathBuf,
    pub maps: Vec<HeatMap>,
    pub objects: Option<Vec<MappedObject>>,
}

/// What one directory holds of bias maps and the cluster test.
pub struct ClusteringRun {
    pub dir: PathBuf,
    pub maps: Vec<MapSet>,
    /// (quantity, bins, the file they came from).
    pub roses: Vec<(String, Vec<RoseBin>, PathBuf)>,
    pub null_tests: Vec<NullTest>,
    /// Map tables the run read instead of computing maps (from its provenance, as recorded).
    pub maps_read: Vec<String>,
}

impl ClusteringRun {
    fn new(dir: &Path) -> Self {
        ClusteringRun {
            dir: dir.to_path_buf(),
            maps: Vec::new(),
            roses: Vec::new(),
            null_tests: Vec::new(),
            maps_read: maps_read(dir),
        }
    }
}

/// The map tables among the inputs of the `summary.json` in `dir` (a cluster test given
/// `--bias-map`), as recorded.
fn maps_read(dir: &Path) -> Vec<String> {
    let Ok(summary) = read_json(&dir.join(outputs::SUMMARY)) else {
        return Vec::new();
    };
    let Ok(prov) = serde_json::from_value::<Provenance>(summary["provenance"].clone()) else {
        return Vec::new();
    };
    prov.inputs
        .iter()
        .map(|i| i.path.clone())
        .filter(|p| bias_map_tables::is_map_table(&name_of(Path::new(p))))
        .collect()
}

/// One `seine hideout` output directory (a run, a shard or a merge), each file read through
/// the `hideout` module that writes it.
pub struct HideoutRun {
    pub dir: PathBuf,
    pub summary: HideoutSummary,
    pub excluded: Vec<hideout_tables::ExcludedRow>,
    pub sky: Vec<hideout_tables::SkyCell>,
    /// The survivors' weight per magnitude bin, summed over the sky: (mag_lo, mag_hi, Σ w).
    pub magnitudes: Vec<(f64, f64, f64)>,
    /// The ranked fields and the file they came from.
    pub fields: (PathBuf, Vec<hideout_tables::FieldRow>),
    /// Each survey's covered sky (its name, its MOC), for the surveys whose file is there.
    pub coverage: Vec<(String, moc::Moc)>,
}

/// A hideout run in `d` (its `excluded.*` and `summary.json`), or None when `d` holds none.
/// Any of its tables that cannot be read is the error (the section is then left out).
fn read_hideout(d: &Path) -> Result<Option<HideoutRun>> {
    if !hideout::is_output_dir(d) {
        return Ok(None);
    }
    let table = |stem: &str| {
        crate::io::out_dir::find_table(d, stem).ok_or_else(|| {
            Error::input(format!(
                "{}: a hideout run without {stem}.parquet or {stem}.csv",
                d.display()
            ))
        })
    };
    // A shard can hold no draws (more shards than draws): its fractions are undefined, and
    // there is nothing to draw; say so rather than fail on its summary's empty numbers.
    let (run, n_draws, _, _) = hideout::summary::read_shard(d)?;
    if n_draws == 0 {
        return Err(Error::input(format!(
            "{}: a hideout shard ({}) without draws: nothing to show (seine merge adds it to the others)",
            d.display(),
            run.shard.as_deref().unwrap_or("whole run")
        )));
    }
    let summary = hideout::read_summary(d)?;
    let coverage = summary
        .run
        .surveys
        .iter()
        .map(|name| (name, d.join(moc::coverage_name(name))))
        .filter(|(_, p)| p.is_file())
        .map(|(name, p)| Ok((name.clone(), moc::read_json(&p)?)))
        .collect::<Result<Vec<_>>>()?;
    let fields = table(hideout_tables::FIELDS)?;
    Ok(Some(HideoutRun {
        dir: d.to_path_buf(),
        excluded: hideout_tables::read_excluded_rows(&table(hideout_tables::EXCLUDED)?)?,
        sky: hideout_tables::read_sky_map(&table(hideout_tables::SKY_MAP)?)?,
        magnitudes: hideout_tables::read_mag_hist_summed(&table(hideout_tables::SKY_MAG_HIST)?)?,
        fields: (fields.clone(), hideout_tables::read_fields(&fields)?),
        coverage,
        summary,
    }))
}

/// Everything found.
#[derive(Default)]
pub struct Inputs {
    pub runs: Vec<ObserveRun>,
    pub surveys: Vec<Survey>,
    pub coverage: Vec<PlanCoverage>,
    /// Bias maps and cluster tests, one per directory (a run of `seine bias-map` or
    /// `seine cluster-test`): each gets its own section and figures.
    pub clustering: Vec<ClusteringRun>,
    pub yields: Vec<YieldSet>,
    /// Model comparisons (`seine compare-models`): the directory and what it holds.
    pub comparisons: Vec<(PathBuf, comparison::Read)>,
    /// Per-object chances (`detectability.*` of `seine detectability --objects`): the file,
    /// its rows, and which angles were redrawn (`summary.json` beside it, when there).
    pub chances: Vec<(PathBuf, Vec<detectability::Row>, Option<String>)>,
    /// Selection functions (`selection_function.*` of `seine detectability --population`):
    /// the file, its cells, and the population it was measured on (from its provenance).
    pub selections: Vec<(PathBuf, Vec<selection::Cell>, String)>,
    /// Hideout runs (`seine hideout`, its shards and merges), one per directory.
    pub hideouts: Vec<HideoutRun>,
    /// Inputs that could not be read, each with the reason.
    pub skipped: Vec<Skipped>,
}

impl Inputs {
    pub fn is_empty(&self) -> bool {
        self.runs.is_empty()
            && self.surveys.is_empty()
            && self.clustering.is_empty()
            && self.yields.is_empty()
            && self.comparisons.is_empty()
            && self.chances.is_empty()
            && self.selections.is_empty()
            && self.hideouts.is_empty()
    }

    /// The clustering run of directory `dir`, made when first needed.
    fn clustering_of(&mut self, dir: &Path) -> &mut ClusteringRun {
        let k = match self.clustering.iter().position(|r| r.dir == dir) {
            Some(k) => k,
            None => {
                self.clustering.push(ClusteringRun::new(dir));
                self.clustering.len() - 1
            }
        };
        &mut self.clustering[k]
    }

    /// Keep what `read` gives; an input error is noted against `path` and the scan goes on.
    fn keep<T>(&mut self, path: &Path, read: Result<T>) -> Option<T> {
        match read {
            Ok(x) => Some(x),
            Err(e) => {
                self.skipped.push(Skipped {
                    path: path.to_path_buf(),
                    reason: e.to_string(),
                });
                None
            }
        }
    }
}

/// DIR and its immediate subdirectories, sorted, DIR first.
fn search_dirs(dir: &Path) -> Result<Vec<PathBuf>> {
    let mut subs: Vec<PathBuf> = std::fs::read_dir(dir)
        .map_err(|e| io_at(dir, e))?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.is_dir())
        .collect();
    subs.sort();
    subs.insert(0, dir.to_path_buf());
    Ok(subs)
}

fn files_in(dir: &Path) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .map(|rd| {
            rd.filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.is_file())
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

fn name_of(p: &Path) -> String {
    p.file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Read everything the report can show from `dir`. An input that cannot be read is noted in
/// `skipped` and left out; a missing directory, or one where nothing at all can be shown, is
/// one clear input error.
pub fn scan(dir: &Path) -> Result<Inputs> {
    if !dir.is_dir() {
        return Err(Error::input(format!("{}: no such directory", dir.display())));
    }
    let mut inputs = Inputs::default();
    let mut specs: Vec<PathBuf> = Vec::new();
    for d in search_dirs(dir)? {
        for f in files_in(&d) {
            let read = read_file(&f, &mut inputs, &mut specs);
            inputs.keep(&f, read);
        }
        let read = read_run(&d);
        if let Some(run) = inputs.keep(&d, read).flatten() {
            specs.extend(run.survey_specs.iter().cloned());
            inputs.runs.push(run);
        }
        let read = read_hideout(&d);
        if let Some(run) = inputs.keep(&d, read).flatten() {
            inputs.hideouts.push(run);
        }
    }
    load_surveys(&mut inputs, specs);
    if inputs.is_empty() && !inputs.skipped.is_empty() {
        let why: Vec<String> = inputs.skipped.iter().map(|s| s.reason.clone()).collect();
        return Err(Error::input(format!(
            "{}: nothing to report: {}",
            dir.display(),
            why.join("; ")
        )));
    }
    if inputs.is_empty() {
        return Err(Error::input(format!(
            "{}: nothing to report: expected an observe output (summary.json with objects.parquet \
             or objects.csv), a survey spec (*.survey.toml), or analysis tables (bias_map*, \
             rose.*, cluster_null.* with cluster_test.*, yield_cadence.*, models.*, detectability.*, \
             selection_function.*), or a hideout run (excluded.* with summary.json), here or one \
             directory down",
            dir.display()
        )));
    }
    Ok(inputs)
}

fn read_file(f: &Path, inputs: &mut Inputs, specs: &mut Vec<PathBuf>) -> Result<()> {
    let name = name_of(f);
    let parent = f.parent().unwrap_or(Path::new("."));
    if name.ends_with(plan_io::SURVEY_SPEC) {
        specs.push(f.to_path_buf());
    } else if let Some(stem) = name.strip_suffix(plan_io::COVERAGE_JSON) {
        inputs.coverage.push(read_coverage(f, stem)?);
    } else if bias_map_tables::is_map_table(&name) {
        let set = MapSet {
            path: f.to_path_buf(),
            maps: read_bias_maps(f)?,
            objects: bias_map_tables::read_objects(f)?,
        };
        inputs.clustering_of(parent).maps.push(set);
    } else if cluster_tables::is_table(&name, cluster_tables::ROSE) {
        let roses = read_roses(f)?;
        inputs.clustering_of(parent).roses.extend(roses);
    } else if cluster_tables::is_table(&name, cluster_tables::NULL) {
        let tests = read_null_tests(f)?;
        inputs.clustering_of(parent).null_tests.extend(tests);
    } else if cluster_tables::is_table(&name, yield_tables::CADENCE) {
        inputs.yields.push(read_yield_set(f)?);
    } else if comparison::find(parent).as_deref() == Some(f) {
        inputs
            .comparisons
            .push((parent.to_path_buf(), comparison::read(parent)?));
    } else if detectability::find(parent).as_deref() == Some(f) {
        let redraw = read_json(&parent.join(outputs::SUMMARY))
            .ok()
            .and_then(|j| j["redraw"].as_str().map(String::from));
        inputs.chances.push((f.to_path_buf(), detectability::read(f)?, redraw));
    } else if selection::find(parent).as_deref() == Some(f) {
        let population = read_provenance(f)
            .ok()
            .and_then(|p| p.inputs.last().map(|i| population_name_of(&i.path)))
            .unwrap_or_else(|| "the population".into());
        inputs
            .selections
            .push((f.to_path_buf(), selection::read(f)?, population));
    }
    Ok(())
}

/// Load each distinct survey spec once; a spec that does not load is noted and skipped.
fn load_surveys(inputs: &mut Inputs, specs: Vec<PathBuf>) {
    let mut seen = Vec::new();
    for s in specs {
        let key = s.canonicalize().unwrap_or(s.clone());
        if !seen.contains(&key) {
            seen.push(key);
            if let Some(survey) = inputs.keep(&s, Survey::load(&s)) {
                inputs.surveys.push(survey);
            }
        }
    }
}

fn read_json(path: &Path) -> Result<serde_json::Value> {
    let text = std::fs::read_to_string(path).map_err(|e| io_at(path, e))?;
    serde_json::from_str(&text).map_err(|e| Error::input(format!("{}: not valid JSON: {e}", path.display())))
}

fn read_coverage(json: &Path, stem: &str) -> Result<PlanCoverage> {
    let (json, by_latitude) = PlanOutputs::for_report(json).read_coverage()?;
    Ok(PlanCoverage {
        stem: stem.to_string(),
        json,
        by_latitude,
    })
}

/// An observe run in `d`: `summary.json` beside `objects.parquet` (or `.csv`), read through
/// `engine::outputs` and `engine::discoveries`.
fn read_run(d: &Path) -> Result<Option<ObserveRun>> {
    let summary_path = d.join(outputs::SUMMARY);
    let Some(objects_path) = outputs::find(d, outputs::OBJECTS) else {
        return Ok(None);
    };
    if !summary_path.exists() {
        return Ok(None);
    }
    let prov = read_provenance(&objects_path).ok();
    Ok(Some(ObserveRun {
        dir: d.to_path_buf(),
        summary: read_json(&summary_path)?,
        objects: outputs::read_objects(&objects_path)?,
        detections: outputs::find(d, outputs::DETECTIONS)
            .map(|p| outputs::read_detections(&p))
            .transpose()?,
        discoveries: discoveries::find(d)
            .map(|p| discoveries::read(&p).map(|rows| (p, rows)))
            .transpose()?,
        survey_specs: prov.as_ref().map_or(Vec::new(), |p| survey_specs(p, d)),
        objects_input: prov.as_ref().and_then(objects_input),
    }))
}

/// The hash of the objects table among a run's inputs: the one table that is not a visits
/// table (a survey spec's visits are recorded beside the spec).
fn objects_input(p: &Provenance) -> Option<(PathBuf, String)> {
    let tables: Vec<&crate::io::provenance::InputHash> = p
        .inputs
        .iter()
        .filter(|i| i.path.ends_with(".parquet") || i.path.ends_with(".csv"))
        .collect();
    // Observe records each spec, then its visits table, then the objects table last.
    tables.last().map(|i| (PathBuf::from(&i.path), i.sha256.clone()))
}

/// Survey specs (`.toml` inputs) recorded in a provenance, where they still exist (as
/// recorded, or relative to `dir`).
fn survey_specs(prov: &Provenance, dir: &Path) -> Vec<PathBuf> {
    prov.inputs
        .iter()
        .filter(|i| i.path.ends_with(".toml"))
        .filter_map(|i| {
            let p = PathBuf::from(&i.path);
            [p.clone(), dir.join(&p)]
                .into_iter()
                .find(|c| c.is_file() && is_survey_spec(c))
        })
        .collect()
}

fn is_survey_spec(p: &Path) -> bool {
    std::fs::read_to_string(p).is_ok_and(|t| t.contains("[survey]"))
}

/// The weighted discovered-fraction bins of `a_au`, `h_mag` or `q_au`, over the bin edges of
/// the run's `summary.json` (`bins[].quantity`), from the objects and their weights.
pub fn fraction_bins(run: &ObserveRun, quantity: &str) -> Vec<FractionBin> {
    let o = &run.objects;
    let values = match quantity {
        "a_au" => &o.a_au,
        "h_mag" => &o.h_mag,
        "q_au" => &o.q_au,
        _ => return Vec::new(),
    };
    let Some(b) = run.summary["bins"]
        .as_array()
        .and_then(|a| a.iter().find(|b| b["quantity"] == quantity))
    else {
        return Vec::new();
    };
    let edges: Vec<f64> = b["edges"]
        .as_array()
        .map(|a| a.iter().filter_map(|x| x.as_f64()).collect())
        .unwrap_or_default();
    let mut bins: Vec<FractionBin> = edges
        .windows(2)
        .map(|w| FractionBin::counts(w[0], w[1], 0, 0))
        .collect();
    for i in 0..values.len() {
        if let Some(k) = crate::statistics::bin_index(&edges, values[i]) {
            bins[k].tally.add(o.weight[i], o.detected[i]);
        }
    }
    bins
}

/// Map tables (`analysis::bias_map_tables::read_cells`) as heat maps of discovery probability.
fn read_bias_maps(path: &Path) -> Result<Vec<HeatMap>> {
    Ok(bias_map_tables::read_cells(path)?
        .into_iter()
        .map(|m| HeatMap {
            value_label: "discovery probability".into(),
            id: m.id,
            cells: m
                .cells
                .iter()
                .enumerate()
                .map(|(k, &[x_min, x_max, y_min, y_max, value])| HeatCell {
                    x_min,
                    x_max,
                    y_min,
                    y_max,
                    value,
                    trials: m.trials.as_ref().map(|t| t[k]),
                })
                .collect(),
            x: m.x,
            y: m.y,
        })
        .collect())
}

/// Rose tables (`analysis::cluster_tables::read_rose`), each quantity with the file it came from.
fn read_roses(path: &Path) -> Result<Vec<(String, Vec<RoseBin>, PathBuf)>> {
    let source = path.to_path_buf();
    Ok(cluster_tables::read_rose(path)?
        .into_iter()
        .map(|(quantity, rows)| {
            let bins = rows
                .into_iter()
                .map(|r| RoseBin {
                    min_deg: r.lo_deg,
                    max_deg: r.hi_deg,
                    observed: r.observed,
                    null: r.null_band.map(|(lo, median, hi)| NullBand { lo, median, hi }),
                })
                .collect();
            (quantity, bins, source.clone())
        })
        .collect())
}

/// The cluster test's null distributions (`analysis::cluster_tables::read_null`).
fn read_null_tests(path: &Path) -> Result<Vec<NullTest>> {
    Ok(cluster_tables::read_null(path)?
        .into_iter()
        .map(|t| NullTest {
            statistic: t.statistic,
            observed: t.observed,
            p_value: t.p_bias_aware,
            p_value_naive: t.p_naive,
            samples: t.values,
            naive_samples: t.values_naive,
        })
        .collect())
}

/// `yield_cadence.*` (read by `analysis::yield_tables`), with the effort of each plan from
/// the survey specs in the provenance of `summary.json` beside it, when there is one.
fn read_yield_set(path: &Path) -> Result<YieldSet> {
    let dir = path.parent().unwrap_or(Path::new("")).to_path_buf();
    let (surveys, objects) = yield_context(&dir);
    let found = objects.as_deref().map(yield_tables::population_name);
    let stem = objects
        .as_deref()
        .and_then(|p| p.file_stem())
        .map(|s| s.to_string_lossy().into_owned());
    let rows = yield_tables::read_cadence(path)?
        .into_iter()
        .map(|mut row| {
            row.population = population_label(&row.population, stem.as_deref(), found.as_deref());
            let effort = surveys.iter().find(|s| s.name == row.plan).map(effort_of);
            PlanYield { row, effort }
        })
        .collect();
    Ok(YieldSet { dir, rows })
}

/// The surveys a yield compared and the objects table it ran, from the provenance of the
/// `summary.json` in `dir`.
fn yield_context(dir: &Path) -> (Vec<Survey>, Option<PathBuf>) {
    let Ok(summary) = read_json(&dir.join(outputs::SUMMARY)) else {
        return (Vec::new(), None);
    };
    let Ok(prov) = serde_json::from_value::<Provenance>(summary["provenance"].clone()) else {
        return (Vec::new(), None);
    };
    let surveys = survey_specs(&prov, dir)
        .iter()
        .filter_map(|p| Survey::load(p).ok())
        .collect();
    let objects = prov
        .inputs
        .iter()
        .rev()
        .map(|i| PathBuf::from(&i.path))
        .find(|p| matches!(name_of(p).rsplit('.').next(), Some("parquet" | "csv")));
    (surveys, objects)
}

/// A population named by its spec or file (see `yield_tables::population_name`).
fn population_name_of(path: &str) -> String {
    yield_tables::population_name(Path::new(path))
}

/// The label of a yield row's population: the written one, unless it is only the bare stem
/// of the objects file (or missing), in which case the name found from the file is better.
fn population_label(written: &str, stem: Option<&str>, found: Option<&str>) -> String {
    match found {
        Some(f) if Some(written) == stem || written == "population" => f.to_string(),
        _ => written.to_string(),
    }
}

/// What a survey cost: its visits, hours and area. Hours are the telescope time the planner
/// used (exposures and overheads, `STEM.coverage_nights.csv` beside the visits table) when
/// there is that table, else the open-shutter time (the sum of exposure times). The area is
/// the covered area of `STEM.coverage.json` when there is one, else counted as that report
/// counts it (`figures::sky::covered_sq_deg`).
pub fn effort_of(s: &Survey) -> Effort {
    let plan = PlanOutputs::for_visits(&s.visits_path);
    let telescope_hours = plan.telescope_hours();
    let area = plan.covered_sq_deg();
    let area_sq_deg = area.unwrap_or_else(|| super::figures::sky::covered_sq_deg(&[s]));
    Effort {
        visits: s.visits.len() as u64,
        hours: telescope_hours.unwrap_or_else(|| s.visits.exposure_s.iter().sum::<f64>() / 3600.0),
        telescope_time: telescope_hours.is_some(),
        area_sq_deg,
    }
}
