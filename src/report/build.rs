//! From what a directory holds to the report's sections: which figures and small tables to
//! make, in the order a reader needs them (what was run, the cadence comparison, the surveys,
//! what each run found, bias and clustering). Every section names the run or directory it
//! comes from; a section whose inputs cannot be read or do not agree is left out with a note.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use super::figure::Figure;
use super::figures::catalogue_map::{self, Summed};
use super::figures::{bias, cadence, cluster, detectability, distributions, models, rose, sky, survey as survey_fig};
use super::inputs::{self, ClusteringRun, Inputs, MapSet, ObserveRun, Skipped, effort_of, fraction_bins};
use super::section::{Section, Table, label};
use super::section::{header, href, run_prefix, slug};
use super::tables::{
    CadenceRow, EfficiencyCurve, FitNull, FractionBin, HeatMap, ObjectChance, PlanYield, SelectionCell, WeightedSample,
};
use crate::analysis::comparison;
use crate::analysis::selection::{QUANTITIES, project};
use crate::analysis::yield_tables::{median_revisit_days, population_name};
use crate::error::Result;
use crate::statistics::{Proportion, Tally};
use crate::survey::Survey;

/// Every section of the report of `dir`, and the notes of what was left out (also shown in
/// the first section). The comparison of plans comes first, when there is one, since it is
/// the answer; then each survey and run in detail.
pub fn sections(dir: &Path, inp: &Inputs) -> Result<(Vec<Section>, Vec<Skipped>)> {
    let mut skipped = inp.skipped.clone();
    let mut out = Vec::new();
    let mut add = |built: Result<Section>, source: &Path, skipped: &mut Vec<Skipped>| match built {
        Ok(s) => out.push(s),
        Err(e) => skipped.push(Skipped {
            path: source.to_path_buf(),
            reason: e.to_string(),
        }),
    };
    for set in &inp.yields {
        let stem = set
            .dir
            .strip_prefix(dir)
            .map_or(String::new(), |p| slug(&p.display().to_string()));
        add(
            yield_section(&label(dir, &set.dir), &stem, &set.rows),
            &set.dir,
            &mut skipped,
        );
    }
    for group in cadence_groups(inp) {
        let names: Vec<String> = group.iter().map(|r| label(dir, &r.dir)).collect();
        let rows = variant_rows(inp, &group);
        let source = format!("runs {}", names.join(", "));
        add(
            yield_section(&source, &slug(&names.join("_")), &rows),
            dir,
            &mut skipped,
        );
    }
    if !inp.surveys.is_empty() {
        add(surveys_section(dir, inp), dir, &mut skipped);
    }
    for run in &inp.runs {
        add(found_section(dir, inp, run), &run.dir, &mut skipped);
    }
    for (path, rows, redraw) in &inp.chances {
        add(chance_section(dir, path, rows, redraw.as_deref()), path, &mut skipped);
    }
    for (path, cells, population) in &inp.selections {
        add(selection_section(dir, path, cells, population), path, &mut skipped);
    }
    for run in &inp.clustering {
        add(clustering_section(dir, inp, run), &run.dir, &mut skipped);
    }
    for (run, read) in &inp.comparisons {
        add(comparison_section(dir, run, read), run, &mut skipped);
    }
    for run in &inp.hideouts {
        add(super::hideout::section(dir, run), &run.dir, &mut skipped);
    }
    out.insert(0, overview(dir, inp, &skipped));
    let out = out
        .into_iter()
        .filter(|s| !s.figures.is_empty() || !s.tables.is_empty() || !s.notes.is_empty())
        .collect();
    Ok((out, skipped))
}

/// A weighted fraction as a percentage.
fn pct(p: &Proportion) -> String {
    format!("{:.2}%", 100.0 * p.fraction)
}

/// The weighted discovered fraction of an observe run's objects.
fn run_fraction(r: &ObserveRun) -> Proportion {
    let mut t = Tally::default();
    for (w, d) in r.objects.weight.iter().zip(&r.objects.detected) {
        t.add(*w, *d);
    }
    t.proportion()
}

fn overview(dir: &Path, inp: &Inputs, skipped: &[Skipped]) -> Section {
    let mut runs = Table {
        caption: "Observe runs: objects carried through the surveys and what was found (fraction \
                  weighted by the objects' weights)."
            .into(),
        header: header(&["run", "objects", "discovered", "fraction", "secured", "surveys"]),
        ..Default::default()
    };
    for r in &inp.runs {
        let s = &r.summary;
        let n = s["n_objects"].as_u64().unwrap_or(0);
        let k = s["n_detected"].as_u64().unwrap_or(0);
        let secured = s["n_secured"].as_u64().unwrap_or(0);
        let names: Vec<&str> = s["surveys"]
            .as_array()
            .map(|a| a.iter().filter_map(|x| x["name"].as_str()).collect())
            .unwrap_or_default();
        runs.rows.push(vec![
            label(dir, &r.dir),
            n.to_string(),
            k.to_string(),
            pct(&run_fraction(r)),
            secured.to_string(),
            names.join(", "),
        ]);
    }
    let mut surveys = Table {
        caption: "Surveys: their visit histories and what they cost. Hours are telescope time \
                  (exposures and overheads) for a plan's visits, else open-shutter time (†)."
            .into(),
        header: header(&[
            "survey",
            "spec",
            "visits",
            "nights",
            "first night (MJD)",
            "last night (MJD)",
            "field (deg²)",
            "hours",
            "area covered (deg²)",
        ]),
        ..Default::default()
    };
    for s in &inp.surveys {
        let mut nights = s.visits.night.clone();
        nights.sort_unstable();
        nights.dedup();
        let e = effort_of(s);
        surveys.rows.push(vec![
            s.name.clone(),
            label(dir, &s.spec_path),
            s.visits.len().to_string(),
            nights.len().to_string(),
            nights.first().map_or("–".into(), |x| x.to_string()),
            nights.last().map_or("–".into(), |x| x.to_string()),
            format!("{:.2}", s.footprint.area_sq_deg()),
            format!("{:.0}{}", e.hours, if e.telescope_time { "" } else { " †" }),
            format!("{:.0}", e.area_sq_deg),
        ]);
    }
    Section {
        title: "What was run".into(),
        intro: headline(dir, inp),
        notes: skipped.iter().map(|s| format!("Left out: {}", s.describe())).collect(),
        tables: [runs, hideout_runs(dir, inp), surveys]
            .into_iter()
            .filter(|t| !t.rows.is_empty())
            .collect(),
        figures: Vec::new(),
    }
}

/// The hideout runs: draws, surveys, and the share of the prior they would have found.
fn hideout_runs(dir: &Path, inp: &Inputs) -> Table {
    Table {
        caption: "Hideout runs: draws of a planet prior through surveys that found nothing, and \
                  the share of the prior's weight the surveys would have found (± its standard \
                  error; a 95% upper limit when no draw was found)."
            .into(),
        header: header(&["run", "prior", "draws", "surveys", "would have found"]),
        rows: inp
            .hideouts
            .iter()
            .map(|h| {
                let s = &h.summary;
                vec![
                    label(dir, &h.dir),
                    // The prior's file name (its path as given is in the run's section).
                    Path::new(&s.run.prior)
                        .file_name()
                        .map_or(s.run.prior.clone(), |n| n.to_string_lossy().into_owned()),
                    s.n_draws.to_string(),
                    s.run.surveys.join(", "),
                    crate::hideout::summary::probability(s),
                ]
            })
            .collect(),
        link: None,
    }
}

/// One plain sentence per observe run: what went in and what was found.
fn headline(dir: &Path, inp: &Inputs) -> String {
    let runs: Vec<String> = inp
        .runs
        .iter()
        .map(|r| {
            let p = run_fraction(r);
            format!(
                "Run {}: {} of {} objects discovered ({} weighted, 95% interval {:.3}%–{:.3}%).",
                label(dir, &r.dir),
                p.k,
                p.n,
                pct(&p),
                100.0 * p.lower,
                100.0 * p.upper
            )
        })
        .collect();
    let hideouts = inp.hideouts.iter().map(|h| {
        format!(
            "Hideout run {}: the surveys would have found a planet of its prior with probability {}.",
            label(dir, &h.dir),
            crate::hideout::summary::probability(&h.summary)
        )
    });
    let all: Vec<String> = runs.into_iter().chain(hideouts).collect();
    format!("Report of {}. {}", label(dir, dir), all.join(" "))
}

/// Sky maps (the whole sky, and a zoom of a small coverage) per survey, the depths of all,
/// and their efficiencies.
fn surveys_section(dir: &Path, inp: &Inputs) -> Result<Section> {
    let mut figures = Vec::new();
    for s in &inp.surveys {
        let stem = format!("sky_{}", slug(&s.name));
        figures.extend(sky::maps(&stem, &s.name, &[s], &[])?);
    }
    let depths: Vec<(String, Vec<f64>)> = inp
        .surveys
        .iter()
        .map(|s| (s.name.clone(), s.visits.depth_mag.clone()))
        .collect();
    figures.push(survey_fig::depth_distribution(&depths)?);
    let curves: Vec<EfficiencyCurve> = inp.surveys.iter().map(|s| efficiency_curve(inp, s)).collect();
    figures.push(survey_fig::efficiency(&curves)?);
    let specs: Vec<String> = inp.surveys.iter().map(|s| label(dir, &s.spec_path)).collect();
    Ok(Section {
        title: "The surveys".into(),
        intro: format!(
            "Where and how deep the surveys looked, and how likely a source was to be detected \
             in one visit (from {}).",
            specs.join(", ")
        ),
        tables: inp.coverage.iter().map(latitude_table).collect(),
        figures,
        ..Default::default()
    })
}

fn same_file(a: &Path, b: &Path) -> bool {
    a.canonicalize()
        .ok()
        .zip(b.canonicalize().ok())
        .is_some_and(|(x, y)| x == y)
}

/// The surveys a run observed with, among those the report loaded.
fn surveys_of<'a>(inp: &'a Inputs, run: &ObserveRun) -> Vec<&'a Survey> {
    inp.surveys
        .iter()
        .filter(|s| run.survey_specs.iter().any(|p| same_file(p, &s.spec_path)))
        .collect()
}

/// The survey's efficiency model, and the detected fraction of its in-field events in bins of
/// magnitude minus depth from any run that observed with it. Events outside the survey's
/// rate window have no chance of detection; they are counted apart, not binned.
fn efficiency_curve(inp: &Inputs, s: &Survey) -> EfficiencyCurve {
    let eff = &s.efficiency.default;
    let model = (0..=400)
        .map(|j| -2.0 + j as f64 * 0.01)
        .map(|dm| (dm, eff.eta(20.0 + dm, 20.0, 1.0)))
        .collect();
    let depth: std::collections::HashMap<i64, f64> = s
        .visits
        .visit_id
        .iter()
        .copied()
        .zip(s.visits.depth_mag.iter().copied())
        .collect();
    let edges: Vec<f64> = (0..=40).map(|j| -2.0 + 0.1 * j as f64).collect();
    let mut measured: Vec<FractionBin> = edges
        .windows(2)
        .map(|w| FractionBin::counts(w[0], w[1], 0, 0))
        .collect();
    let mut outside_rates = 0;
    for det in inp.runs.iter().filter_map(|r| r.detections.as_ref()) {
        for i in 0..det.mag.len() {
            let Some(d) = (det.survey[i] == s.name).then(|| depth.get(&det.visit_id[i])).flatten() else {
                continue;
            };
            if !s.motion.contains(det.rate_arcsec_per_hr[i]) {
                outside_rates += 1;
                continue;
            }
            let k = edges.partition_point(|&e| e <= det.mag[i] - d);
            if k > 0 && k < edges.len() {
                measured[k - 1].tally.add(1.0, det.detected[i]);
            }
        }
    }
    EfficiencyCurve {
        survey: s.name.clone(),
        model,
        live_fraction: s.live_fraction,
        measured,
        outside_rates,
        rate_window: (s.motion.min_rate_arcsec_per_hr, s.motion.max_rate_arcsec_per_hr),
    }
}

fn latitude_table(c: &inputs::PlanCoverage) -> Table {
    use crate::io::table::Columns;
    let path = PathBuf::from(&c.stem);
    let cols = Columns::new(&c.by_latitude, &path);
    let get = |n: &str| cols.f64(n).unwrap_or_default();
    let (lo, hi, cov, frac, five) = (
        get("ecl_lat_min_deg"),
        get("ecl_lat_max_deg"),
        get("covered_sq_deg"),
        get("covered_fraction"),
        get("covered_5_nights_sq_deg"),
    );
    let cv = &c.json["coverage"];
    let rows = (0..lo.len().min(cov.len()).min(frac.len()).min(five.len()).min(hi.len()))
        .filter(|&i| cov[i] > 0.0)
        .map(|i| {
            vec![
                format!("{:+.0}° to {:+.0}°", lo[i], hi[i]),
                format!("{:.0}", cov[i]),
                format!("{:.1}%", 100.0 * frac[i]),
                format!("{:.0}", five[i]),
            ]
        })
        .collect();
    let revisits = &c.json["revisits"];
    let kept = match (revisits["designed"].as_str(), revisits["achieved_median_days"].as_f64()) {
        (Some(d), Some(m)) => format!(
            " Revisits designed {d}, achieved median {m} nights; {} of {} revisited fields were \
             seen on every night the plan observed between their first and last.",
            revisits["fields_as_designed"], revisits["fields_revisited"]
        ),
        _ => String::new(),
    };
    Table {
        caption: format!(
            "Coverage of plan {} by ecliptic latitude β (from {}.coverage.json): {} visits, {} fields, {} nights used, {:.0} deg² covered.{kept}",
            c.json["plan"].as_str().unwrap_or(&c.stem),
            c.stem,
            cv["n_visits"],
            cv["n_fields"],
            cv["n_nights_used"],
            cv["covered_sq_deg"].as_f64().unwrap_or(0.0)
        ),
        header: header(&["β band", "covered (deg²)", "of the band", "seen on ≥ 5 nights (deg²)"]),
        rows,
        link: None,
    }
}

/// Number of discoveries listed in a run's section.
const FIRST_DISCOVERIES: usize = 10;

/// What one run found: injected against discovered objects, the discovered fraction, where
/// and how the discoveries were made, and the first of them.
fn found_section(dir: &Path, inp: &Inputs, run: &ObserveRun) -> Result<Section> {
    let name = label(dir, &run.dir);
    let prefix = figure_prefix(dir, &run.dir, inp.runs.len());
    let o = &run.objects;
    let pick = |xs: &[f64]| -> Vec<f64> {
        xs.iter()
            .zip(&o.detected)
            .filter(|(_, d)| **d)
            .map(|(x, _)| *x)
            .collect()
    };
    // Weights go with the values they weigh: the discovered objects', and those with a
    // distance at discovery.
    let w = &o.weight;
    let (found_w, found_r): (Vec<f64>, Vec<f64>) = o
        .discovery_r_au
        .iter()
        .zip(w)
        .filter_map(|(r, w)| r.map(|r| (*w, r)))
        .unzip();
    let found_weights = pick(w);
    let mut figures = Vec::new();
    for (q, xs) in [
        ("a_au", &o.a_au),
        ("q_au", &o.q_au),
        ("inc_deg", &o.inc_deg),
        ("h_mag", &o.h_mag),
    ] {
        let found = pick(xs);
        figures.push(distributions::injected_vs_discovered(
            q,
            (xs, w),
            (&found, &found_weights),
            "",
        )?);
    }
    figures.push(distributions::injected_vs_discovered(
        "r_au",
        (&o.r_au, w),
        (&found_r, &found_w),
        "Injected: distance from the Sun at the element epoch; discovered: distance at discovery.",
    )?);
    for q in ["a_au", "h_mag"] {
        figures.push(distributions::discovered_fraction(q, &fraction_bins(run, q))?);
    }
    let surveys = surveys_of(inp, run);
    let found: Vec<(f64, f64)> = o.discovery_radec_deg.iter().flatten().copied().collect();
    if !surveys.is_empty() {
        let what = format!("discoveries of {name}");
        figures.extend(sky::maps("sky_discoveries", &what, &surveys, &found)?);
    }
    if let Some((_, rows)) = &run.discoveries {
        let weight_of: BTreeMap<i64, f64> = o.id.iter().copied().zip(o.weight.iter().copied()).collect();
        figures.extend(discovery_figures(rows, &surveys, &weight_of)?);
    }
    figures.extend(discovery_roses(run, &name)?);
    for f in &mut figures {
        f.stem = format!("{prefix}{}", f.stem);
    }
    let mut tables = vec![fraction_table(run)];
    tables.extend(o.parent_id.as_ref().map(|p| parent_table(p, &o.detected, &o.weight)));
    if let Some((path, rows)) = run.discoveries.as_ref().filter(|(_, rows)| !rows.is_empty()) {
        tables.push(first_discoveries(dir, path, rows));
    }
    Ok(Section {
        title: format!("What was found: {name}"),
        intro: format!(
            "Injected objects against discovered ones in run {name}: where the survey's \
             selection cuts, where and how the discoveries were made."
        ),
        tables,
        figures,
        ..Default::default()
    })
}

/// Rose diagrams of ϖ and Ω of a run's discovered objects, weighted, with the naive band (an
/// observe run alone has no bias-aware null: that is the cluster test's).
fn discovery_roses(run: &ObserveRun, name: &str) -> Result<Vec<Figure>> {
    let o = &run.objects;
    let found = |xs: &[f64]| -> (Vec<f64>, Vec<f64>) {
        (0..xs.len())
            .filter(|&i| o.detected[i])
            .map(|i| (xs[i], o.weight[i]))
            .unzip()
    };
    let note = format!(
        "Angles of the discovered objects of run {name}, each counted with its weight; for the \
         bias-aware band, run seine cluster-test on a catalogue."
    );
    [("varpi_deg", &o.varpi_deg), ("node_deg", &o.node_deg)]
        .into_iter()
        .map(|(q, xs)| {
            let (angles, weights) = found(xs);
            rose::rose(q, &rose::bins_of(&angles, &weights, 18), rose::Band::Naive, &note)
        })
        .collect()
}

/// The magnitude and rate of motion of the discoveries at discovery, per survey, with each
/// survey's median depth and rate window marked; each discovery counts with its object's weight
/// (`weight_of`, by id; 1 for an id not there).
fn discovery_figures(
    rows: &[crate::engine::discoveries::Discovery],
    surveys: &[&Survey],
    weight_of: &BTreeMap<i64, f64>,
) -> Result<Vec<Figure>> {
    let mut by_survey: BTreeMap<&str, [Vec<f64>; 3]> = BTreeMap::new();
    for d in rows {
        let e = by_survey.entry(d.survey.as_str()).or_default();
        e[0].push(d.mag);
        e[1].push(d.rate_arcsec_per_hr);
        e[2].push(weight_of.get(&d.id).copied().unwrap_or(1.0));
    }
    let sample = |k: usize| -> Vec<WeightedSample> {
        by_survey
            .iter()
            .map(|(s, v)| WeightedSample {
                name: s.to_string(),
                values: v[k].clone(),
                weights: v[2].clone(),
            })
            .collect()
    };
    let (mags, rates) = (sample(0), sample(1));
    let depth_marks: Vec<(String, f64)> = surveys
        .iter()
        .filter_map(|s| Some((format!("median depth, {}", s.name), median(&s.visits.depth_mag)?)))
        .collect();
    let mut rate_marks = Vec::new();
    for s in surveys {
        if s.motion.min_rate_arcsec_per_hr > 0.0 {
            rate_marks.push((
                format!("slowest rate searched, {}", s.name),
                s.motion.min_rate_arcsec_per_hr,
            ));
        }
        rate_marks.push((
            format!("fastest rate searched, {}", s.name),
            s.motion.max_rate_arcsec_per_hr,
        ));
    }
    Ok(vec![
        distributions::at_discovery("discovery_mag", &mags, &depth_marks)?,
        distributions::at_discovery("discovery_rate_arcsec_per_hr", &rates, &rate_marks)?,
    ])
}

fn median(xs: &[f64]) -> Option<f64> {
    let mut v: Vec<f64> = xs.iter().copied().filter(|x| x.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    (!v.is_empty()).then(|| v[v.len() / 2])
}

/// The first discoveries of a run, in order of discovery, with a link to the whole table.
fn first_discoveries(dir: &Path, path: &Path, rows: &[crate::engine::discoveries::Discovery]) -> Table {
    let href = path
        .strip_prefix(dir)
        .map_or(path.display().to_string(), |p| p.display().to_string());
    Table {
        caption: format!(
            "The first {} of {} discoveries, in order of discovery: epoch (MJD, the survey's \
             time scale), survey, magnitude, distance from the Sun r and rate of motion at \
             discovery, and the orbit (a, q, i) and H of the object.",
            rows.len().min(FIRST_DISCOVERIES),
            rows.len()
        ),
        header: header(&[
            "id",
            "MJD",
            "survey",
            "mag",
            "r (AU)",
            "rate (″/h)",
            "a (AU)",
            "q (AU)",
            "i (deg)",
            "H (mag)",
        ]),
        rows: rows
            .iter()
            .take(FIRST_DISCOVERIES)
            .map(|d| {
                vec![
                    d.id.to_string(),
                    format!("{:.3}", d.mjd),
                    d.survey.clone(),
                    format!("{:.2}", d.mag),
                    format!("{:.1}", d.r_au),
                    format!("{:.2}", d.rate_arcsec_per_hr),
                    format!("{:.1}", d.a_au),
                    format!("{:.1}", d.q_au),
                    format!("{:.1}", d.inc_deg),
                    format!("{:.2}", d.h_mag),
                ]
            })
            .collect(),
        link: Some((format!("all {} discoveries ({href})", rows.len()), href)),
    }
}

/// The fraction of each particle's clones that were discovered (weighted): the particle's
/// detection probability, the per-object weight of a likelihood fit (first 25 particles).
fn parent_table(parent: &[i64], detected: &[bool], weight: &[f64]) -> Table {
    let mut by: std::collections::BTreeMap<i64, Tally> = Default::default();
    for ((p, d), w) in parent.iter().zip(detected).zip(weight) {
        by.entry(*p).or_default().add(*w, *d);
    }
    let rows = by
        .iter()
        .take(25)
        .map(|(p, t)| {
            let f = t.proportion();
            vec![
                p.to_string(),
                t.n.to_string(),
                t.k.to_string(),
                format!("{:.3}", f.fraction),
                format!("{:.3}–{:.3}", f.lower, f.upper),
            ]
        })
        .collect();
    Table {
        caption: format!(
            "Detection probability per simulation particle: the (weighted) fraction of its clones discovered, with 95% Wilson intervals ({} particles{}).",
            by.len(),
            if by.len() > 25 { ", the first 25 shown" } else { "" }
        ),
        header: header(&["parent_id", "clones", "discovered", "probability", "95% interval"]),
        rows,
        link: None,
    }
}

fn fraction_table(run: &ObserveRun) -> Table {
    let rows = fraction_bins(run, "q_au")
        .iter()
        .filter(|b| b.n() > 0)
        .map(|b| {
            let p = b.proportion();
            vec![
                format!("{:.0}–{:.0}", b.lo, b.hi),
                p.n.to_string(),
                p.k.to_string(),
                pct(&p),
                format!("{:.3}%–{:.3}%", 100.0 * p.lower, 100.0 * p.upper),
            ]
        })
        .collect();
    Table {
        caption: "Discovered fraction by perihelion distance q (bins of summary.json; fractions weighted by the \
                  objects' weights), with 95% Wilson intervals at the effective number of objects."
            .into(),
        header: header(&["q (AU)", "objects", "discovered", "fraction", "95% interval"]),
        rows,
        link: None,
    }
}

/// Observe runs that are cadence variants of one another: the same objects table (by its
/// content hash) through one survey each, the surveys all different. Groups of two or more.
fn cadence_groups(inp: &Inputs) -> Vec<Vec<&ObserveRun>> {
    let mut by_objects: BTreeMap<&str, Vec<&ObserveRun>> = BTreeMap::new();
    for r in &inp.runs {
        if let (Some((_, h)), [_]) = (r.objects_input.as_ref(), r.survey_specs.as_slice()) {
            by_objects.entry(h.as_str()).or_default().push(r);
        }
    }
    by_objects
        .into_values()
        .filter(|g| {
            let mut specs: Vec<PathBuf> = g
                .iter()
                .map(|r| r.survey_specs[0].canonicalize().unwrap_or(r.survey_specs[0].clone()))
                .collect();
            specs.sort();
            specs.dedup();
            g.len() >= 2 && specs.len() == g.len()
        })
        .collect()
}

/// The yield rows of cadence-variant runs.
fn variant_rows(inp: &Inputs, group: &[&ObserveRun]) -> Vec<PlanYield> {
    group
        .iter()
        .filter_map(|r| {
            let s = surveys_of(inp, r).into_iter().next()?;
            let p = run_fraction(r);
            let row = CadenceRow {
                plan: s.name.clone(),
                population: r
                    .objects_input
                    .as_ref()
                    .map_or("objects".into(), |(path, _)| population_name(path)),
                cadence_days: median_revisit_days(s)?,
                n_objects: p.n,
                n_discovered: p.k,
                fraction: p.fraction,
                wilson_lo: p.lower,
                wilson_hi: p.upper,
            };
            Some(PlanYield {
                row,
                effort: Some(effort_of(s)),
            })
        })
        .collect()
}

/// The cadence comparison of `source` (a yield directory or a group of runs); `stem` tells
/// its figure apart from others (empty for the report directory's own).
fn yield_section(source: &str, stem: &str, rows: &[PlanYield]) -> Result<Section> {
    let mut f = cadence::yield_vs_cadence(rows)?;
    if !stem.is_empty() {
        f.stem = format!("{}_{stem}", f.stem);
    }
    Ok(Section {
        title: format!("Yield against cadence: {source}"),
        intro: format!(
            "What each plan finds of the same population, and what each costs (from {source}): \
             the comparison a cadence design rests on. Plans of unequal effort are compared per \
             hour of telescope time in the second panel."
        ),
        figures: vec![f],
        tables: vec![yield_table(rows)],
        ..Default::default()
    })
}

fn yield_table(rows: &[PlanYield]) -> Table {
    let dash = || "–".to_string();
    Table {
        caption: "Yield per plan, with 95% Wilson intervals on the (weighted) discovered fraction; each plan's \
                  visits, hours (telescope time, or open shutter †) and area covered, and the \
                  discoveries per 100 hours."
            .into(),
        header: header(&[
            "plan",
            "population",
            "revisit (days)",
            "visits",
            "hours",
            "area (deg²)",
            "objects",
            "discovered",
            "fraction",
            "95% interval",
            "per 100 h",
        ]),
        rows: rows
            .iter()
            .map(|PlanYield { row: r, effort }| {
                let e = effort.as_ref();
                vec![
                    r.plan.clone(),
                    r.population.clone(),
                    format!("{:.1}", r.cadence_days),
                    e.map_or_else(dash, |e| e.visits.to_string()),
                    e.map_or_else(dash, |e| {
                        format!("{:.0}{}", e.hours, if e.telescope_time { "" } else { " †" })
                    }),
                    e.map_or_else(dash, |e| format!("{:.0}", e.area_sq_deg)),
                    r.n_objects.to_string(),
                    r.n_discovered.to_string(),
                    format!("{:.2}%", 100.0 * r.fraction),
                    format!("{:.2}%–{:.2}%", 100.0 * r.wilson_lo, 100.0 * r.wilson_hi),
                    e.filter(|e| e.hours > 0.0).map_or_else(dash, |e| {
                        format!("{:.2}", 100.0 * r.fraction * r.n_objects as f64 / e.hours)
                    }),
                ]
            })
            .collect(),
        link: None,
    }
}

/// One directory of bias maps or a cluster test (`seine bias-map`, `seine cluster-test`): the
/// map of the whole catalogue with the objects marked, a few objects' own maps, the rose
/// diagrams with the bias-aware band, the null distributions and the statistics. Its figures
/// are named by the run, so two runs side by side never share one.
fn clustering_section(dir: &Path, inp: &Inputs, run: &ClusteringRun) -> Result<Section> {
    let name = label(dir, &run.dir);
    let prefix = figure_prefix(dir, &run.dir, inp.clustering.len());
    let mut figures = Vec::new();
    let mut notes = Vec::new();
    for set in &run.maps {
        figures.extend(map_figures(dir, set, &mut notes)?);
    }
    for (q, bins, source) in &run.roses {
        let note = format!(
            "Counts of the tested catalogue, each object counted with its weight, and band of its \
             synthetic catalogues, in which every object keeps its weight, from {}.",
            href(dir, source)
        );
        figures.push(rose::rose(q, bins, rose::Band::BiasAware, &note)?);
    }
    for t in &run.null_tests {
        figures.push(cluster::null_distribution(t)?);
    }
    for f in &mut figures {
        f.stem = format!("{prefix}{}", f.stem);
    }
    let tables = if run.null_tests.is_empty() {
        Vec::new()
    } else {
        vec![cluster_table(&name, &run.null_tests)]
    };
    let tested = !run.null_tests.is_empty() || !run.roses.is_empty();
    let maps_from = if run.maps.is_empty() && !run.maps_read.is_empty() {
        format!(
            " Its bias maps were read from {} (shown in that run's section when it is in this report).",
            run.maps_read.join(", ")
        )
    } else {
        String::new()
    };
    Ok(Section {
        title: if tested {
            format!("Clustering test: {name}")
        } else {
            format!("Bias maps: {name}")
        },
        intro: format!(
            "From run {name}: before reading meaning into aligned orbits, what the surveys' own \
             footprint and cadence produce from angles that are not clustered at all.{maps_from}"
        ),
        notes,
        tables,
        figures,
    })
}

/// Number of single objects' bias maps drawn per map table (the catalogue's map shows all).
const OBJECT_MAPS: usize = 6;

/// The figures of one map table: the whole catalogue's map (the objects' maps added with
/// their weights, their own angles marked) when it holds several maps or the angles, then
/// the first objects' own maps.
fn map_figures(dir: &Path, set: &MapSet, notes: &mut Vec<String>) -> Result<Vec<Figure>> {
    let mut figures = Vec::new();
    let objects = set.objects.as_deref().unwrap_or_default();
    let weight_of = |id: Option<i64>| objects.iter().find(|o| Some(o.id) == id).map_or(1.0, |o| o.weight);
    let known = !objects.is_empty() && set.maps.iter().all(|m| objects.iter().any(|o| Some(o.id) == m.id));
    if set.maps.len() > 1 || !objects.is_empty() {
        let value = "weighted sum of discovery probabilities";
        if let Some(sum) = HeatMap::weighted_sum(&set.maps, weight_of, value) {
            let how = Summed {
                maps: set.maps.len(),
                total_weight: set.maps.iter().map(|m| weight_of(m.id)).sum(),
                weights_known: known,
            };
            figures.push(catalogue_map::catalogue_map(
                &sum,
                objects,
                &how,
                &href(dir, &set.path),
            )?);
        }
    }
    if set.objects.is_none() && set.maps.len() > 1 {
        notes.push(format!(
            "{}: no map_objects.* beside it (written by seine bias-map and seine cluster-test \
             since this version): the objects' own angles are not marked and their weights are \
             taken as 1.",
            href(dir, &set.path)
        ));
    }
    for m in set.maps.iter().take(OBJECT_MAPS) {
        figures.push(bias::bias_map(m)?);
    }
    if set.maps.len() > OBJECT_MAPS {
        notes.push(format!(
            "{}: the maps of the first {OBJECT_MAPS} of its {} objects are drawn; the \
             catalogue's map adds them all.",
            href(dir, &set.path),
            set.maps.len()
        ));
    }
    Ok(figures)
}

/// The cluster test's statistics: observed value, bias-aware and naive p-values.
fn cluster_table(name: &str, tests: &[super::tables::NullTest]) -> Table {
    let p = |x: Option<f64>| x.map_or("—".into(), |p| format!("{p:.3}"));
    Table {
        caption: format!(
            "Cluster test {name}: each statistic of the tested catalogue (larger means more \
             clustered), its chance under the bias-aware null (angles from the objects' bias \
             maps) and without the surveys' bias (uniform angles)."
        ),
        header: header(&["statistic", "observed", "null catalogues", "p bias-aware", "p naive"]),
        rows: tests
            .iter()
            .map(|t| {
                vec![
                    cluster::stat_label(&t.statistic),
                    format!("{:.4}", t.observed),
                    t.samples.len().to_string(),
                    p(t.p_value),
                    p(t.p_value_naive),
                ]
            })
            .collect(),
        link: None,
    }
}

/// The prefix of the figures of a run in `run_dir`, one of `runs` of its kind: its label as a
/// file-name-safe word, or none for the only run when it is the report's own directory.
fn figure_prefix(dir: &Path, run_dir: &Path, runs: usize) -> String {
    if runs > 1 || run_dir != dir {
        format!("{}_", slug(&label(dir, run_dir)))
    } else {
        String::new()
    }
}

/// How many objects of a detectability run the page lists (those with the lowest chances).
const LOWEST_CHANCES: usize = 20;

/// Each catalogue object's chance of discovery (`seine detectability --objects`): against q
/// and H, and the objects with the lowest chances (the heaviest in a fit) as a table.
fn chance_section(dir: &Path, path: &Path, rows: &[ObjectChance], redraw: Option<&str>) -> Result<Section> {
    let run = path.parent().unwrap_or(dir);
    let name = label(dir, run);
    let trials: Vec<u64> = rows.iter().map(|r| r.discovered.n).collect();
    let (tmin, tmax) = (
        trials.iter().copied().min().unwrap_or(0),
        trials.iter().copied().max().unwrap_or(0),
    );
    let redrawn = match redraw {
        Some("m") | Some("mean-anomaly") => "the mean anomaly redrawn",
        Some("node") => "the mean anomaly and node redrawn",
        Some("argperi") => "the mean anomaly and argument of perihelion redrawn",
        Some(_) => "the mean anomaly, node and argument of perihelion redrawn",
        None => "the angles redrawn as the run chose",
    };
    let note = if tmin == tmax {
        format!("{tmin} trials per object, {redrawn}")
    } else {
        format!("{tmin} to {tmax} trials per object, {redrawn}")
    };
    let mut figures = Vec::new();
    for q in ["q_au", "h_mag"] {
        let mut f = detectability::chances(q, rows, &note)?;
        f.stem = format!("{}{}", run_prefix(dir, run), f.stem);
        figures.push(f);
    }
    let mut order: Vec<&ObjectChance> = rows.iter().collect();
    order.sort_by(|a, b| a.discovered.fraction.total_cmp(&b.discovered.fraction));
    let link = href(dir, path);
    let table = Table {
        caption: format!(
            "The {} of {} objects with the lowest chance of discovery ({note}), with 95% Wilson \
             intervals over the trials: the objects a fit conditioned on the orbits weights most.",
            order.len().min(LOWEST_CHANCES),
            rows.len()
        ),
        header: header(&[
            "id",
            "a (AU)",
            "q (AU)",
            "i (deg)",
            "H (mag)",
            "trials",
            "discovered",
            "chance",
            "95% interval",
        ]),
        rows: order
            .iter()
            .take(LOWEST_CHANCES)
            .map(|r| {
                let p = &r.discovered;
                vec![
                    r.id.to_string(),
                    format!("{:.1}", r.a_au),
                    format!("{:.1}", r.q_au),
                    format!("{:.1}", r.inc_deg),
                    format!("{:.2}", r.h_mag),
                    p.n.to_string(),
                    p.k.to_string(),
                    format!("{:.4}", p.fraction),
                    format!("{:.4}–{:.4}", p.lower, p.upper),
                ]
            })
            .collect(),
        link: Some((format!("all {} objects ({link})", rows.len()), link.clone())),
    };
    Ok(Section {
        title: format!("Chance of discovery of each object: {name}"),
        intro: format!(
            "How likely the surveys were to discover each catalogue object, its orbit's shape and \
             size kept and the unobserved angles redrawn (from {link}): the per-object detection \
             probabilities of a likelihood fit."
        ),
        tables: vec![table],
        figures,
        ..Default::default()
    })
}

/// A population's selection function (`seine detectability --population`): heat maps over
/// a–q, a–i and a–H, and a table over q.
fn selection_section(dir: &Path, path: &Path, cells: &[SelectionCell], population: &str) -> Result<Section> {
    let run = path.parent().unwrap_or(dir);
    let name = label(dir, run);
    let mut figures = Vec::new();
    for other in [1, 2, 3] {
        let projected = project(cells, &[0, other]);
        let mut f = detectability::selection_map(QUANTITIES[0], QUANTITIES[other], &projected, population)?;
        f.stem = format!("{}{}", run_prefix(dir, run), f.stem);
        figures.push(f);
    }
    let link = href(dir, path);
    let by_q = project(cells, &[1]);
    let table = Table {
        caption: format!(
            "The selection function over perihelion distance q alone (all a, i and H of {population}): \
             the weighted discovered fraction with its 95% Wilson interval at the effective number \
             of objects."
        ),
        header: header(&["q (AU)", "objects", "discovered", "fraction", "95% interval"]),
        rows: by_q
            .iter()
            .map(|c| {
                let p = c.proportion();
                vec![
                    format!(
                        "{}–{}",
                        super::figures::axes::tick(c.edges[0].0),
                        super::figures::axes::tick(c.edges[0].1)
                    ),
                    p.n.to_string(),
                    p.k.to_string(),
                    pct(&p),
                    format!("{:.3}%–{:.3}%", 100.0 * p.lower, 100.0 * p.upper),
                ]
            })
            .collect(),
        link: Some((format!("every cell of (a, q, i, H) ({link})"), link.clone())),
    };
    Ok(Section {
        title: format!("Selection function: {name}"),
        intro: format!(
            "The chance that an object of {population} in a cell of (a, q, i, H) was discovered, \
             from {link}: what a likelihood fit of a population multiplies its model by."
        ),
        tables: vec![table],
        figures,
        ..Default::default()
    })
}

/// A model comparison (`seine compare-models`): the ln L table with errors, the marginal
/// tests, the catalogue over each model's detected distribution in every observable, and
/// each model's goodness-of-fit null.
fn comparison_section(dir: &Path, run: &Path, c: &comparison::Read) -> Result<Section> {
    let name = label(dir, run);
    let prefix = run_prefix(dir, run);
    let mut tables = vec![Table {
        caption: format!(
            "Model comparison {name}: ln L of the catalogue under each model's detected density, \
             ± its model-sample error (bootstrap over the model's objects); Δ to the best model; \
             goodness of fit p (lower tail, from synthetic catalogues of the model's own detected objects)."
        ),
        header: header(&["model", "objects", "detected", "ln L", "Δ ln L", "goodness of fit p"]),
        rows: c
            .models
            .iter()
            .map(|r| {
                vec![
                    r.model.clone(),
                    r.n_objects.to_string(),
                    r.n_detected.to_string(),
                    format!("{:.2} ± {:.2}", r.log_likelihood, r.log_likelihood_error),
                    format!("{:.2} ± {:.2}", r.delta, r.delta_error),
                    crate::statistics::chance_with_error(r.gof_p, r.gof_p_error),
                ]
            })
            .collect(),
        link: None,
    }];
    if !c.marginals.is_empty() {
        tables.push(marginal_table(&name, &c.marginals));
    }
    let mut figures = Vec::new();
    let mut notes = Vec::new();
    match &c.catalogue {
        Some(cat) => {
            for (k, obs) in c.space.iter().enumerate() {
                let sample = |s: &comparison::Sample, name: &str| WeightedSample {
                    name: name.to_string(),
                    values: s.columns[k].clone(),
                    weights: s.weights.clone(),
                };
                let detected: Vec<WeightedSample> = c.detected.iter().map(|s| sample(s, &s.model)).collect();
                figures.push(models::marginal(obs, &sample(cat, "catalogue"), &detected)?);
            }
        }
        None => notes.push(format!(
            "{name}: no catalogue.* (written by seine compare-models since this version); the \
             catalogue's distributions are not drawn."
        )),
    }
    match &c.null {
        Some(null) => {
            for (r, (_, samples)) in c.models.iter().zip(null) {
                figures.push(models::goodness_of_fit(&FitNull {
                    model: r.model.clone(),
                    observed: r.log_likelihood,
                    observed_error: r.log_likelihood_error,
                    p: r.gof_p,
                    p_error: r.gof_p_error,
                    samples: samples.clone(),
                })?);
            }
        }
        None => notes.push(format!(
            "{name}: no goodness_of_fit.*; the goodness-of-fit nulls are not drawn."
        )),
    }
    for f in &mut figures {
        f.stem = format!("{prefix}{}", slug(&f.stem));
    }
    Ok(Section {
        title: format!("Model comparison: {name}"),
        intro: format!(
            "Which model population explains the catalogue once both are seen through the surveys \
             (from {}), in the observables {}.",
            href(dir, run),
            c.space.join(", ")
        ),
        notes,
        tables,
        figures,
    })
}

/// A marginal test's name as `marginals.*` writes it, in words.
fn test_name(t: &str) -> String {
    match t {
        "ks" => "Kolmogorov–Smirnov D".into(),
        "anderson_darling" => "Anderson–Darling A²".into(),
        "kuiper" => "Kuiper V".into(),
        "watson_u2" => "Watson U²".into(),
        other => other.into(),
    }
}

/// The one-sample marginal tests of each model: the catalogue's statistic against the
/// model's detected distribution, with its p-value from the synthetic catalogues.
fn marginal_table(name: &str, rows: &[comparison::MarginalRow]) -> Table {
    Table {
        caption: format!(
            "Marginal tests {name}: for each model and observable, the catalogue's statistic \
             against the model's weighted detected distribution (Kuiper V and Watson U² for angles, \
             Kolmogorov–Smirnov D and Anderson–Darling A² otherwise) and its p-value from the \
             synthetic catalogues, ± its Monte Carlo error."
        ),
        header: header(&["model", "observable", "test", "statistic", "p"]),
        rows: rows
            .iter()
            .map(|r| {
                vec![
                    r.model.clone(),
                    r.observable.clone(),
                    test_name(&r.test),
                    format!("{:.4}", r.statistic),
                    crate::statistics::chance_with_error(r.p_value, r.p_value_error),
                ]
            })
            .collect(),
        link: None,
    }
}
