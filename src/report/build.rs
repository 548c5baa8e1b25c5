//! From what a directory holds to the report's sections: which figures and small tables to
//! make, in the order a reader needs them (what was run, the survey, what was found, cadence,
//! bias and clustering).

use std::path::{Path, PathBuf};

use super::figure::Figure;
use super::figures::{bias, cadence, cluster, distributions, rose, sky, survey as survey_fig};
use super::inputs::{self, Inputs, ObserveRun, fraction_bins};
use super::tables::{CadenceRow, EfficiencyCurve, FractionBin};
use crate::analysis::binomial::{Proportion, Tally};
use crate::analysis::yield_tables::median_revisit_days;
use crate::error::Result;
use crate::survey::Survey;

/// A small table for the page.
#[derive(Debug, Clone, Default)]
pub struct Table {
    pub caption: String,
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
}

#[derive(Debug, Clone, Default)]
pub struct Section {
    pub title: String,
    pub intro: String,
    pub tables: Vec<Table>,
    pub figures: Vec<Figure>,
}

/// Every section of the report of `dir`: the comparison of plans first, when there is one,
/// since it is the answer; then each survey and run in detail.
pub fn sections(dir: &Path, inp: &Inputs) -> Result<Vec<Section>> {
    let mut out = vec![overview(dir, inp)];
    let yields = yield_rows(inp);
    if !yields.is_empty() {
        out.push(Section {
            title: "Yield against cadence".into(),
            intro: "What each plan finds of the same population: the comparison a cadence \
                    design rests on."
                .into(),
            figures: vec![cadence::yield_vs_cadence(&yields)?],
            tables: vec![yield_table(&yields)],
        });
    }
    if !inp.surveys.is_empty() {
        out.push(surveys_section(inp)?);
    }
    for (k, run) in inp.runs.iter().enumerate() {
        out.push(found_section(dir, run, k, inp.runs.len())?);
    }
    out.push(bias_section(dir, inp)?);
    out.extend(comparison_section(dir, inp));
    Ok(out
        .into_iter()
        .filter(|s| !s.figures.is_empty() || !s.tables.is_empty())
        .collect())
}

fn rel(dir: &Path, p: &Path) -> String {
    let r = p.strip_prefix(dir).unwrap_or(p).display().to_string();
    if r.is_empty() { ".".into() } else { r }
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

fn overview(dir: &Path, inp: &Inputs) -> Section {
    let mut runs = Table {
        caption: "Observe runs: objects carried through the surveys and what was found (fraction \
                  weighted by the objects' weights)."
            .into(),
        header: ["run", "objects", "discovered", "fraction", "secured", "surveys"]
            .map(String::from)
            .to_vec(),
        rows: Vec::new(),
    };
    for r in &inp.runs {
        let s = &r.summary;
        let n = s["n_objects"].as_u64().unwrap_or(0);
        let k = s["n_detected"].as_u64().unwrap_or(0);
        let names: Vec<&str> = s["surveys"]
            .as_array()
            .map(|a| a.iter().filter_map(|x| x["name"].as_str()).collect())
            .unwrap_or_default();
        runs.rows.push(vec![
            rel(dir, &r.dir),
            n.to_string(),
            k.to_string(),
            pct(&run_fraction(r)),
            s["n_secured"].as_u64().unwrap_or(0).to_string(),
            names.join(", "),
        ]);
    }
    let mut surveys = Table {
        caption: "Surveys: their pointing histories.".into(),
        header: [
            "survey",
            "visits",
            "nights",
            "first night (MJD)",
            "last night (MJD)",
            "field (deg²)",
        ]
        .map(String::from)
        .to_vec(),
        rows: Vec::new(),
    };
    for s in &inp.surveys {
        let (first, last) = (s.visits.night.iter().min(), s.visits.night.iter().max());
        let mut nights = s.visits.night.clone();
        nights.sort_unstable();
        nights.dedup();
        surveys.rows.push(vec![
            s.name.clone(),
            s.visits.len().to_string(),
            nights.len().to_string(),
            first.map_or("–".into(), |x| x.to_string()),
            last.map_or("–".into(), |x| x.to_string()),
            format!("{:.2}", s.footprint.area_sq_deg()),
        ]);
    }
    Section {
        title: "What was run".into(),
        intro: headline(dir, inp),
        tables: [runs, surveys].into_iter().filter(|t| !t.rows.is_empty()).collect(),
        figures: Vec::new(),
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
                "{}: {} of {} objects discovered ({} weighted, 95% interval {:.3}%–{:.3}%).",
                rel(dir, &r.dir),
                p.k,
                p.n,
                pct(&p),
                100.0 * p.lower,
                100.0 * p.upper
            )
        })
        .collect();
    format!("Report of {}. {}", dir.display(), runs.join(" "))
}

/// Depth, efficiency and one sky map per survey, with the coverage by ecliptic latitude.
fn surveys_section(inp: &Inputs) -> Result<Section> {
    let mut figures = Vec::new();
    for (k, s) in inp.surveys.iter().enumerate() {
        let mut f = sky::coverage_map(&s.name, &sky::visit_cells(s), &discoveries_of(inp, s))?;
        if inp.surveys.len() > 1 {
            f.stem = format!("{}_{k}", f.stem);
        }
        figures.push(f);
    }
    let depths: Vec<(String, Vec<f64>)> = inp
        .surveys
        .iter()
        .map(|s| (s.name.clone(), s.visits.depth_mag.clone()))
        .collect();
    figures.push(survey_fig::depth_distribution(&depths)?);
    let curves: Vec<EfficiencyCurve> = inp.surveys.iter().map(|s| efficiency_curve(inp, s)).collect();
    figures.push(survey_fig::efficiency(&curves)?);
    Ok(Section {
        title: "The surveys".into(),
        intro: "Where and how deep the surveys looked, and how likely a source was to be detected \
                in one visit."
            .into(),
        tables: inp.coverage.iter().map(latitude_table).collect(),
        figures,
    })
}

fn same_file(a: &Path, b: &Path) -> bool {
    a.canonicalize()
        .ok()
        .zip(b.canonicalize().ok())
        .is_some_and(|(x, y)| x == y)
}

/// Discovery positions from the runs that observed with this survey alone.
fn discoveries_of(inp: &Inputs, s: &Survey) -> Vec<(f64, f64)> {
    inp.runs
        .iter()
        .filter(|r| r.survey_specs.len() == 1 && same_file(&r.survey_specs[0], &s.spec_path))
        .flat_map(|r| r.objects.discovery_radec_deg.iter().flatten().copied())
        .collect()
}

/// The survey's efficiency model, and the detected fraction of its in-field events in bins of
/// magnitude minus depth from any run that observed with it.
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
    for det in inp.runs.iter().filter_map(|r| r.detections.as_ref()) {
        for i in 0..det.mag.len() {
            let Some(d) = (det.survey[i] == s.name).then(|| depth.get(&det.visit_id[i])).flatten() else {
                continue;
            };
            let k = edges.partition_point(|&e| e <= det.mag[i] - d);
            if k > 0 && k < edges.len() {
                measured[k - 1].tally.add(1.0, det.detected[i]);
            }
        }
    }
    EfficiencyCurve {
        survey: s.name.clone(),
        model,
        measured,
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
    Table {
        caption: format!(
            "Coverage of plan {} by ecliptic latitude β (from {}.coverage.json): {} visits, {} fields, {} nights used, {:.0} deg² covered.",
            c.json["plan"].as_str().unwrap_or(&c.stem),
            c.stem,
            cv["n_visits"],
            cv["n_fields"],
            cv["n_nights_used"],
            cv["covered_sq_deg"].as_f64().unwrap_or(0.0)
        ),
        header: ["β band", "covered (deg²)", "of the band", "seen on ≥ 5 nights (deg²)"]
            .map(String::from)
            .to_vec(),
        rows,
    }
}

/// Injected versus discovered in a, q, i, H and distance, and the discovered fraction
/// against a and H.
fn found_section(dir: &Path, run: &ObserveRun, k: usize, n_runs: usize) -> Result<Section> {
    let o = &run.objects;
    let pick = |xs: &[f64]| -> Vec<f64> {
        xs.iter()
            .zip(&o.detected)
            .filter(|(_, d)| **d)
            .map(|(x, _)| *x)
            .collect()
    };
    let found_r: Vec<f64> = o.discovery_r_au.iter().flatten().copied().collect();
    let mut figures = vec![
        distributions::injected_vs_discovered("a_au", &o.a_au, &pick(&o.a_au), "")?,
        distributions::injected_vs_discovered("q_au", &o.q_au, &pick(&o.q_au), "")?,
        distributions::injected_vs_discovered("inc_deg", &o.inc_deg, &pick(&o.inc_deg), "")?,
        distributions::injected_vs_discovered("h_mag", &o.h_mag, &pick(&o.h_mag), "")?,
        distributions::injected_vs_discovered(
            "r_au",
            &o.r_au,
            &found_r,
            "Injected: distance from the Sun at the element epoch; discovered: distance at discovery.",
        )?,
    ];
    for q in ["a_au", "h_mag"] {
        figures.push(distributions::discovered_fraction(q, &fraction_bins(run, q))?);
    }
    if n_runs > 1 {
        for f in &mut figures {
            f.stem = format!("run{k}_{}", f.stem);
        }
    }
    let mut tables = vec![fraction_table(run)];
    tables.extend(o.parent_id.as_ref().map(|p| parent_table(p, &o.detected, &o.weight)));
    Ok(Section {
        title: format!("What was found: {}", rel(dir, &run.dir)),
        intro: "Injected objects against discovered ones: where the survey's selection cuts.".into(),
        tables,
        figures,
    })
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
        header: ["parent_id", "clones", "discovered", "probability", "95% interval"]
            .map(String::from)
            .to_vec(),
        rows,
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
        header: ["q (AU)", "objects", "discovered", "fraction", "95% interval"]
            .map(String::from)
            .to_vec(),
        rows,
    }
}

/// Rows from `yield_cadence.csv`, or else from several runs that each used one known survey.
fn yield_rows(inp: &Inputs) -> Vec<CadenceRow> {
    if !inp.yields.is_empty() {
        return inp.yields.clone();
    }
    let rows: Vec<CadenceRow> = inp
        .runs
        .iter()
        .filter_map(|r| {
            let [spec] = r.survey_specs.as_slice() else { return None };
            let s = inp.surveys.iter().find(|s| same_file(&s.spec_path, spec))?;
            let p = run_fraction(r);
            Some(CadenceRow {
                plan: s.name.clone(),
                population: "injected population".into(),
                cadence_days: median_revisit_days(s)?,
                n_objects: p.n,
                n_discovered: p.k,
                fraction: p.fraction,
                wilson_lo: p.lower,
                wilson_hi: p.upper,
            })
        })
        .collect();
    if rows.len() >= 2 { rows } else { Vec::new() }
}

fn yield_table(rows: &[CadenceRow]) -> Table {
    Table {
        caption: "Yield per plan, with 95% Wilson intervals on the (weighted) discovered fraction.".into(),
        header: [
            "plan",
            "population",
            "revisit (days)",
            "objects",
            "discovered",
            "fraction",
            "95% interval",
        ]
        .map(String::from)
        .to_vec(),
        rows: rows
            .iter()
            .map(|r| {
                vec![
                    r.plan.clone(),
                    r.population.clone(),
                    format!("{:.1}", r.cadence_days),
                    r.n_objects.to_string(),
                    r.n_discovered.to_string(),
                    format!("{:.2}%", 100.0 * r.fraction),
                    format!("{:.2}%–{:.2}%", 100.0 * r.wilson_lo, 100.0 * r.wilson_hi),
                ]
            })
            .collect(),
    }
}

/// Bias maps, rose diagrams (with the null band when the cluster test wrote one) and the
/// cluster test's null distributions.
fn bias_section(dir: &Path, inp: &Inputs) -> Result<Section> {
    let mut figures: Vec<Figure> = inp
        .bias_maps
        .iter()
        .take(6)
        .map(bias::bias_map)
        .collect::<Result<_>>()?;
    if inp.roses.is_empty() {
        if let Some(run) = inp.runs.first() {
            let o = &run.objects;
            let found = |xs: &[f64]| -> Vec<f64> {
                xs.iter()
                    .zip(&o.detected)
                    .filter(|(_, d)| **d)
                    .map(|(x, _)| *x)
                    .collect()
            };
            let note = "Angles of the discovered objects of the first observe run.";
            for (q, xs) in [("varpi_deg", &o.varpi_deg), ("node_deg", &o.node_deg)] {
                figures.push(rose::rose(q, &rose::bins_of(&found(xs), 18), rose::Band::Naive, note)?);
            }
        }
    }
    for (q, bins, source) in &inp.roses {
        let shown = Path::new(source)
            .strip_prefix(dir)
            .map_or(source.clone(), |p| p.display().to_string());
        let note = format!("Counts of the tested catalogue and band of its synthetic catalogues, from {shown}.");
        figures.push(rose::rose(q, bins, rose::Band::BiasAware, &note)?);
    }
    for t in &inp.null_tests {
        figures.push(cluster::null_distribution(t)?);
    }
    let tables = if inp.null_tests.is_empty() {
        Vec::new()
    } else {
        vec![cluster_table(&inp.null_tests)]
    };
    Ok(Section {
        title: "Bias and clustering".into(),
        intro: "Before reading meaning into aligned orbits: what the surveys' own footprint and \
                cadence produce from angles that are not clustered at all."
            .into(),
        tables,
        figures,
    })
}

/// The cluster test's statistics: observed value, bias-aware and naive p-values.
fn cluster_table(tests: &[super::tables::NullTest]) -> Table {
    let p = |x: Option<f64>| x.map_or("—".into(), |p| format!("{p:.3}"));
    Table {
        caption: "Cluster test: each statistic of the tested catalogue (larger means more clustered), \
                  its chance under the bias-aware null (angles from the objects' bias maps) and \
                  without the surveys' bias (uniform angles)."
            .into(),
        header: ["statistic", "observed", "null catalogues", "p bias-aware", "p naive"]
            .map(String::from)
            .to_vec(),
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
    }
}

/// Model comparisons: each model's ln L with its model-sample error, Δ to the best and the
/// goodness of fit, as `seine compare-models` wrote them.
fn comparison_section(dir: &Path, inp: &Inputs) -> Option<Section> {
    if inp.comparisons.is_empty() {
        return None;
    }
    let tables = inp
        .comparisons
        .iter()
        .map(|(file, rows)| Table {
            caption: format!(
                "Model comparison from {}: ln L of the catalogue under each model's detected density, \
                 ± its model-sample error (bootstrap over the model's objects); Δ to the best model; \
                 goodness of fit p (lower tail, from synthetic catalogues of the model's own detected objects).",
                rel(dir, Path::new(file))
            ),
            header: ["model", "objects", "detected", "ln L", "Δ ln L", "goodness of fit p"]
                .map(String::from)
                .to_vec(),
            rows: rows
                .iter()
                .map(|r| {
                    vec![
                        r.model.clone(),
                        r.n_objects.to_string(),
                        r.n_detected.to_string(),
                        format!("{:.2} ± {:.2}", r.log_likelihood, r.log_likelihood_error),
                        format!("{:.2} ± {:.2}", r.delta, r.delta_error),
                        format!("{:.3} ± {:.3}", r.gof_p, r.gof_p_error),
                    ]
                })
                .collect(),
        })
        .collect();
    Some(Section {
        title: "Model comparison".into(),
        intro: "Which model population explains the catalogue once both are seen through the surveys.".into(),
        tables,
        figures: Vec::new(),
    })
}
