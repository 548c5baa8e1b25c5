//! The report: every figure function on synthetic tidy tables writes a well-formed SVG that
//! carries its axis labels (with units) and caption; `seine report` on an observe output
//! directory writes an index.html that references every SVG it wrote; an empty or invalid
//! directory is one clear error with exit status 2.

mod common;

use std::path::Path;

use seine::analysis::{comparison, detectability as det, selection};
use seine::report::figure::{Figure, xml_escape};
use seine::report::figures::{bias, cadence, cluster, detectability, distributions, models, rose, sky, survey};
use seine::report::tables::*;
use seine::statistics::Tally;

/// Well-formedness without an XML library: every opened element is closed in order.
fn assert_well_formed(svg: &str) {
    assert!(
        svg.trim_start().starts_with("<svg") || svg.trim_start().starts_with("<?xml"),
        "{}",
        &svg[..80]
    );
    let mut stack: Vec<String> = Vec::new();
    let mut rest = svg;
    while let Some(i) = rest.find('<') {
        let j = rest[i..].find('>').expect("unclosed tag") + i;
        let tag = &rest[i + 1..j];
        rest = &rest[j + 1..];
        if tag.starts_with('?') || tag.starts_with('!') || tag.ends_with('/') {
            continue;
        }
        let name = tag
            .trim_start_matches('/')
            .split_whitespace()
            .next()
            .unwrap_or("")
            .to_string();
        if tag.starts_with('/') {
            assert_eq!(stack.pop().as_deref(), Some(name.as_str()), "mismatched </{name}>");
        } else {
            stack.push(name);
        }
    }
    assert!(stack.is_empty(), "unclosed elements: {stack:?}");
}

/// The figure is well formed and shows every label (escaped as in the SVG) and its caption.
fn check(f: &Figure, labels: &[&str]) {
    assert_well_formed(&f.svg);
    for l in labels {
        assert!(f.svg.contains(&xml_escape(l)), "{}: missing label {l:?}", f.stem);
    }
    assert!(f.caption.len() > 40, "{}: caption too short", f.stem);
    assert!(
        f.svg.contains(&format!("<desc>{}</desc>", xml_escape(&f.caption))),
        "{}: caption not in <desc>",
        f.stem
    );
    let dir = tempfile::tempdir().unwrap();
    let p = f.write(dir.path()).unwrap();
    assert_eq!(std::fs::read_to_string(p).unwrap(), f.svg);
}

fn ramp(n: usize, lo: f64, hi: f64) -> Vec<f64> {
    (0..n)
        .map(|k| lo + (hi - lo) * ((k * 7919) % n) as f64 / n as f64)
        .collect()
}

#[test]
fn distributions_and_fractions_have_units() {
    let a = ramp(500, 30.0, 900.0);
    let found: Vec<f64> = a.iter().copied().step_by(17).collect();
    check(
        &distributions::injected_vs_discovered(
            "a_au",
            (&a, &vec![1.0; a.len()]),
            (&found, &vec![1.0; found.len()]),
            "",
        )
        .unwrap(),
        &["semi-major axis a (AU)", "objects per bin"],
    );
    // Weights count: every object at weight 2 doubles the curves and the caption says so.
    let two = |n: usize| vec![2.0; n];
    let weighted =
        distributions::injected_vs_discovered("a_au", (&a, &two(a.len())), (&found, &two(found.len())), "").unwrap();
    let plain =
        distributions::injected_vs_discovered("a_au", (&a, &vec![1.0; a.len()]), (&found, &vec![1.0; found.len()]), "")
            .unwrap();
    assert!(
        weighted.caption.contains("total weight injected 1000.0000"),
        "{}",
        weighted.caption
    );
    assert!(!plain.caption.contains("total weight"));
    assert_ne!(weighted.svg, plain.svg, "weights do not change the histograms");
    let h = ramp(500, 4.0, 10.0);
    check(
        &distributions::injected_vs_discovered("h_mag", (&h, &vec![1.0; h.len()]), (&h[..5], &[1.0; 5]), "").unwrap(),
        &["absolute magnitude H (mag)"],
    );
    let bins: Vec<FractionBin> = (0..8)
        .map(|k| FractionBin::counts(4.0 + k as f64, 5.0 + k as f64, 100 - k * 10, 20 - 2 * k))
        .collect();
    check(
        &distributions::discovered_fraction("h_mag", &bins).unwrap(),
        &["absolute magnitude H (mag)", "discovered fraction (dimensionless)"],
    );
    let log_bins: Vec<FractionBin> = (0..6)
        .map(|k| {
            FractionBin::counts(
                10f64.powf(1.0 + k as f64 / 3.0),
                10f64.powf(1.0 + (k + 1) as f64 / 3.0),
                50,
                k as u64,
            )
        })
        .collect();
    check(
        &distributions::discovered_fraction("a_au", &log_bins).unwrap(),
        &["semi-major axis a (AU)"],
    );
    // Discovery magnitudes whose counts span decades (200 in one bin, 1 in others) get a
    // logarithmic count axis, said in the caption; a few even counts keep a linear one.
    let many: Vec<f64> = std::iter::repeat_n(22.0, 200).chain([20.0, 21.0]).collect();
    let one = |values: Vec<f64>, w: f64| WeightedSample {
        name: "Survey A".into(),
        weights: vec![w; values.len()],
        values,
    };
    let log = distributions::at_discovery("discovery_mag", &[one(many.clone(), 1.0)], &[]).unwrap();
    assert!(log.caption.contains("Counts on a logarithmic axis"), "{}", log.caption);
    let even = distributions::at_discovery("discovery_mag", &[one(ramp(40, 20.0, 23.0), 1.0)], &[]).unwrap();
    assert!(!even.caption.contains("logarithmic"), "{}", even.caption);
    // Weights count: at weight 3 each the curves change and the caption gives the total weight.
    let heavy = distributions::at_discovery("discovery_mag", &[one(many, 3.0)], &[]).unwrap();
    assert!(
        heavy.caption.contains("weight 606.0000") && heavy.caption.contains("counts with its object's weight"),
        "{}",
        heavy.caption
    );
    assert_ne!(heavy.svg, log.svg, "weights do not change the histogram");
}

#[test]
fn empty_tables_still_make_a_figure() {
    check(
        &distributions::injected_vs_discovered("q_au", (&[], &[]), (&[], &[]), "").unwrap(),
        &["no objects"],
    );
    check(
        &distributions::discovered_fraction("a_au", &[]).unwrap(),
        &["no objects in any bin"],
    );
    check(&cadence::yield_vs_cadence(&[]).unwrap(), &["no plans to compare"]);
}

#[test]
fn survey_figures_have_units() {
    let d = vec![
        ("Invented Survey A".to_string(), ramp(300, 22.5, 24.0)),
        ("Invented Survey B".to_string(), ramp(100, 23.0, 25.0)),
    ];
    check(
        &survey::depth_distribution(&d).unwrap(),
        &["depth, 50% efficiency (mag)", "visits per 0.1 mag"],
    );
    let model: Vec<(f64, f64)> = (0..=40)
        .map(|k| -2.0 + 0.1 * k as f64)
        .map(|x| (x, 0.9 / (1.0 + (x / 0.2f64).exp())))
        .collect();
    let measured = vec![
        FractionBin::counts(-0.1, 0.0, 100, 48),
        FractionBin::counts(0.0, 0.1, 80, 30),
    ];
    let curve = EfficiencyCurve {
        survey: "Invented Survey A".into(),
        model,
        live_fraction: 0.9,
        measured,
        outside_rates: 12,
        rate_window: (0.5, 300.0),
    };
    check(
        &survey::efficiency(&[curve]).unwrap(),
        &["magnitude − depth (mag)", "detection probability (dimensionless)"],
    );
}

#[test]
fn sky_map_names_its_projection() {
    // A band of cells along the ecliptic, from a few invented pointings.
    let cells: Vec<(u64, u64)> = (0..2000u64).map(|h| (h * 7 + 30000, 1 + h % 9)).collect();
    let f = sky::coverage_map(
        "sky",
        "Invented Survey",
        &cells,
        1234.0,
        &[(150.0, 10.0), (200.0, -5.0)],
    )
    .unwrap();
    check(&f, &["visits per point:", "0°", "+30°", "−60°", "discovery"]);
    assert!(f.caption.contains("Hammer–Aitoff") && f.caption.contains("(deg)"));
    // The area quoted is the one given (the coverage report's measure); the map's own cells' sum
    // (2000 order-6 cells, 1679 deg²) is named as that.
    assert!(f.caption.contains("1234 deg² covered at least once"), "{}", f.caption);
    assert!(f.caption.contains("add up to 1679 deg²"), "{}", f.caption);
}

#[test]
fn analysis_figures_from_synthetic_tables() {
    let cells: Vec<HeatCell> = (0..36)
        .flat_map(|i| (0..18).map(move |j| (i, j)))
        .map(|(i, j)| HeatCell {
            x_min: i as f64 * 10.0,
            x_max: (i + 1) as f64 * 10.0,
            y_min: j as f64 * 20.0,
            y_max: (j + 1) as f64 * 20.0,
            value: 0.01 * (1.0 + ((i as f64) * 0.17).sin()),
            trials: None,
        })
        .collect();
    let map = HeatMap {
        x: "varpi_deg".into(),
        y: "node_deg".into(),
        value_label: "discovery probability".into(),
        id: Some(7),
        cells,
    };
    check(
        &bias::bias_map(&map).unwrap(),
        &[
            "longitude of perihelion ϖ (deg)",
            "longitude of ascending node Ω (deg)",
            "discovery probability",
        ],
    );

    let bins: Vec<RoseBin> = (0..12)
        .map(|k| RoseBin {
            min_deg: 30.0 * k as f64,
            max_deg: 30.0 * (k + 1) as f64,
            observed: [0.0, 1.0, 4.0, 6.0, 2.0, 0.0, 0.0, 1.0, 0.0, 0.0, 1.0, 0.0][k],
            null: Some(NullBand {
                lo: 0.0,
                median: 1.0,
                hi: 3.0,
            }),
        })
        .collect();
    let f = rose::rose("varpi_deg", &bins, rose::Band::BiasAware, "").unwrap();
    check(&f, &["90°", "180°"]);
    assert!(f.caption.contains("longitude of perihelion ϖ (deg)") && f.caption.contains("null band"));

    let samples: Vec<f64> = (0..2000).map(|k| ((k * 37 % 1000) as f64 / 1000.0).powi(2)).collect();
    let t = NullTest {
        statistic: "rayleigh_r_varpi".into(),
        observed: 0.81,
        p_value: Some(0.031),
        p_value_naive: Some(0.004),
        naive_samples: samples.iter().map(|x| x.sqrt()).collect(),
        samples,
    };
    let f = cluster::null_distribution(&t).unwrap();
    check(
        &f,
        &[
            "rayleigh_r_varpi (dimensionless)",
            "fraction of null catalogs",
            "observed, p = 0.031",
            "naive null (uniform angles)",
        ],
    );

    // Plans of unequal effort: the second panel divides by their hours.
    let rows: Vec<PlanYield> = [
        ("Plan A", 1.0, 40, 300.0),
        ("Plan B", 3.0, 55, 100.0),
        ("Plan C", 14.0, 20, 25.0),
    ]
    .into_iter()
    .map(|(p, c, k, hours)| {
        let f = seine::statistics::Proportion::new(k, 1000);
        PlanYield {
            row: CadenceRow {
                plan: p.into(),
                population: "distant slow movers".into(),
                cadence_days: c,
                n_objects: 1000,
                n_discovered: k,
                fraction: f.fraction,
                wilson_lo: f.lower,
                wilson_hi: f.upper,
            },
            effort: Some(Effort {
                visits: (hours * 60.0) as u64,
                hours,
                telescope_time: true,
                area_sq_deg: 500.0,
            }),
        }
    })
    .collect();
    let f = cadence::yield_vs_cadence(&rows).unwrap();
    check(
        &f,
        &[
            "revisit interval (days)",
            "discovered fraction (dimensionless)",
            "discoveries per 100 h",
            "Plan B (55/1000)",
            "distant slow movers",
        ],
    );
    assert!(f.caption.contains("per 100 hours of telescope time"), "{}", f.caption);
}

fn run_ok(args: &[&str]) {
    let o = common::seine(args);
    assert!(o.status.success(), "seine {args:?}: {}", common::stderr(&o));
}

/// A small observe run: the deep and the synoptic invented plans together, a few thousand
/// drawn objects (the synoptic survey finds some of them).
fn small_observe(dir: &Path) -> std::path::PathBuf {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs");
    let s = |p: &Path| p.to_str().unwrap().to_string();
    for plan in ["deep", "synoptic"] {
        let visits = dir.join(format!("{plan}.csv"));
        run_ok(&[
            "plan",
            "--plan",
            &s(&root.join(format!("{plan}-plan.toml"))),
            "--out",
            &s(&visits),
        ]);
    }
    let objects = dir.join("objects.parquet");
    // Bright near objects (invented): enough of them are discovered to list.
    let pop = common::bright_population(dir);
    run_ok(&[
        "draw",
        "--spec",
        &s(&pop),
        "--count",
        "3000",
        "--seed",
        "5",
        "--out",
        &s(&objects),
    ]);
    let out = dir.join("run");
    run_ok(&[
        "observe",
        "--survey",
        &s(&dir.join("deep.survey.toml")),
        "--survey",
        &s(&dir.join("synoptic.survey.toml")),
        "--objects",
        &s(&objects),
        "--out",
        &s(&out),
        "--quiet",
    ]);
    out
}

#[test]
fn report_of_an_observe_directory_references_every_svg() {
    let tmp = tempfile::tempdir().unwrap();
    let out = small_observe(tmp.path());
    run_ok(&["report", out.to_str().unwrap()]);
    let html = std::fs::read_to_string(out.join("index.html")).unwrap();
    let svgs: Vec<String> = std::fs::read_dir(out.join("figures"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    // The run's provenance names the survey spec, so the survey's figures come along; its
    // 40 deg² also get a zoomed map, and the discoveries theirs.
    for stem in [
        "sky_sorrel_peak_deep_stare",
        "sky_sorrel_peak_deep_stare_zoom",
        "sky_sorrel_peak_synoptic_sweep",
        "sky_discoveries",
        "depth",
        "efficiency",
        "distribution_a_au",
        "distribution_r_au",
        "fraction_h_mag",
        "discovery_mag",
        "discovery_rate_arcsec_per_hr",
        "rose_varpi_deg",
    ] {
        assert!(
            svgs.contains(&format!("{stem}.svg")),
            "{stem}.svg not written: {svgs:?}"
        );
    }
    for s in &svgs {
        assert!(
            html.contains(&format!("src=\"figures/{s}\"")),
            "index.html does not show {s}"
        );
        assert_well_formed(&std::fs::read_to_string(out.join("figures").join(s)).unwrap());
    }
    assert!(
        !html.contains("http://") && !html.contains("https://"),
        "the page must work offline"
    );
    // The run is named by its directory, never "."; its first discoveries are listed and
    // the whole table linked.
    assert!(
        html.contains("What was found: run") && !html.contains(">.<"),
        "run not named"
    );
    assert!(html.contains("href=\"discoveries.parquet\""), "discoveries not linked");
    assert!(html.contains("in order of discovery"), "first discoveries not listed");
    // The map and the survey table quote the covered area that `seine plan` wrote for the
    // same survey (one measure, order-9 cells), not the map's coarser cells' sum.
    let cov: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(tmp.path().join("synoptic.coverage.json")).unwrap()).unwrap();
    let area = cov["coverage"]["covered_sq_deg"].as_f64().unwrap();
    let said = format!("{area:.0} deg² covered at least once (counted on HEALPix order-9 cells");
    assert!(html.contains(&said), "the map does not quote the plan's {area:.0} deg²");
    assert!(
        html.contains(&format!("<td class=\"num\">{area:.0}</td></tr>")),
        "the survey table does not quote {area:.0} deg²"
    );
}

#[test]
fn report_reads_analysis_tables_by_their_documented_names() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    common::write(
        d,
        "rose.csv",
        "quantity,bin_lo_deg,bin_hi_deg,observed,null_lo,null_median,null_hi\nvarpi_deg,0,180,3,0,1,2\nvarpi_deg,180,360,1,0,1,2\nnode_deg,0,180,2,0,1,3\nnode_deg,180,360,2,0,1,3\n",
    );
    common::write(
        d,
        "cluster_null.csv",
        "statistic,value\nkuiper_v_node,0.1\nkuiper_v_node,0.2\nkuiper_v_node,0.3\n",
    );
    common::write(
        d,
        "cluster_test.csv",
        "statistic,observed,p_bias_aware,p_naive\nkuiper_v_node,0.25,0.33,0.2\n",
    );
    common::write(
        d,
        "bias_map_varpi_node.csv",
        "id,varpi_deg_min,varpi_deg_max,node_deg_min,node_deg_max,fraction\n1,0,180,0,180,0.1\n1,180,360,0,180,0.2\n2,0,180,0,180,0.3\n",
    );
    common::write(
        d,
        "yield_cadence.csv",
        "plan,cadence_days,n_objects,n_discovered\nA,1,100,5\nB,3,100,9\n",
    );
    run_ok(&["report", d.to_str().unwrap()]);
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    for f in [
        "rose_varpi_deg",
        "rose_node_deg",
        "cluster_null_kuiper_v_node",
        "bias_map_varpi_deg_node_deg_1",
        "bias_map_varpi_deg_node_deg_2",
        "yield_cadence",
    ] {
        assert!(html.contains(&format!("figures/{f}.svg")), "{f} missing");
    }
}

/// `seine report DIR` refused: exit status 2 and one line on stderr, which is returned.
fn refused(dir: &str) -> String {
    let o = common::seine(&["report", dir]);
    assert_eq!(o.status.code(), Some(2));
    let err = common::stderr(&o);
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    err
}

#[test]
fn empty_or_invalid_directories_are_one_clear_error() {
    let tmp = tempfile::tempdir().unwrap();
    let err = refused(tmp.path().to_str().unwrap());
    assert!(
        err.contains("nothing to report") && err.contains("summary.json"),
        "{err}"
    );
    assert!(!tmp.path().join("index.html").exists());

    let missing = tmp.path().join("no-such-dir");
    assert!(refused(missing.to_str().unwrap()).contains("no such directory"));

    common::write(tmp.path(), "rose.csv", "quantity,bin_lo_deg\nvarpi_deg,0\n");
    let err = refused(tmp.path().to_str().unwrap());
    assert!(err.contains("rose.csv") && err.contains("bin_hi_deg"), "{err}");

    // Null samples without the cluster test's table beside them, then with a table that lacks
    // one of their statistics: one sentence naming the file and what it lacks.
    let d = tempfile::tempdir().unwrap();
    common::write(
        d.path(),
        "cluster_null.csv",
        "statistic,value\nmean_pole,0.2\nmean_pole,0.3\n",
    );
    let err = refused(d.path().to_str().unwrap());
    assert!(
        err.contains("cluster_null.csv") && err.contains("cluster_test.parquet or cluster_test.csv"),
        "{err}"
    );
    common::write(
        d.path(),
        "cluster_test.csv",
        "statistic,observed,p_bias_aware\nrayleigh_varpi,0.4,0.2\n",
    );
    let err = refused(d.path().to_str().unwrap());
    assert!(err.contains("cluster_test.csv") && err.contains("`mean_pole`"), "{err}");
    assert!(!d.path().join("index.html").exists());
}

#[test]
fn one_bad_input_leaves_its_section_out_and_the_rest_is_built() {
    let tmp = tempfile::tempdir().unwrap();
    small_observe(tmp.path());
    // A rose table that lacks a column, beside a good observe run.
    common::write(tmp.path(), "rose.csv", "quantity,bin_lo_deg\nvarpi_deg,0\n");
    let o = common::seine(&["report", tmp.path().to_str().unwrap()]);
    assert!(o.status.success(), "{}", common::stderr(&o));
    let err = common::stderr(&o);
    assert!(
        err.contains("left out") && err.contains("rose.csv") && err.contains("bin_hi_deg"),
        "{err}"
    );
    let html = std::fs::read_to_string(tmp.path().join("index.html")).unwrap();
    assert!(
        html.contains("class=\"note\"") && html.contains("bin_hi_deg"),
        "the page does not say what was left out"
    );
    assert!(html.contains("What was found: run"), "the good run is missing");
}

#[test]
fn cadence_comparisons_only_of_runs_of_one_population() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    small_observe(d);
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let observe = |survey: &str, objects: &Path, out: &str| {
        run_ok(&[
            "observe",
            "--survey",
            &s(&d.join(survey)),
            "--objects",
            &s(objects),
            "--out",
            &s(&d.join(out)),
            "--quiet",
        ])
    };
    // The same objects through each survey alone: variants of one another.
    observe("deep.survey.toml", &d.join("objects.parquet"), "deep-only");
    observe("synoptic.survey.toml", &d.join("objects.parquet"), "synoptic-only");
    // Another population through the deep survey: not comparable with them.
    let other = d.join("other.parquet");
    let pop = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/populations/scattered-disk.toml");
    run_ok(&[
        "draw",
        "--spec",
        &s(&pop),
        "--count",
        "500",
        "--seed",
        "9",
        "--out",
        &s(&other),
    ]);
    observe("deep.survey.toml", &other, "other-deep");
    run_ok(&["report", d.to_str().unwrap()]);
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    let titles: Vec<&str> = html
        .match_indices("<h2>")
        .map(|(i, _)| &html[i + 4..i + 4 + html[i + 4..].find("</h2>").unwrap()])
        .collect();
    let cadence: Vec<&&str> = titles
        .iter()
        .filter(|t| t.starts_with("Yield against cadence"))
        .collect();
    assert_eq!(cadence.len(), 1, "{titles:?}");
    assert!(
        cadence[0].contains("deep-only") && cadence[0].contains("synoptic-only") && !cadence[0].contains("other-deep"),
        "{titles:?}"
    );
    // The legend names the population by its spec's name.
    assert!(html.contains("bright test disk"), "population not named");
    // Each run has its own section and figures; no figure file is shared.
    for run in ["deep-only", "synoptic-only", "other-deep", "run"] {
        assert!(
            titles.iter().any(|t| *t == format!("What was found: {run}")),
            "{run}: {titles:?}"
        );
    }
    let srcs: Vec<&str> = html
        .match_indices("src=\"figures/")
        .map(|(i, _)| &html[i + 13..i + 13 + html[i + 13..].find('"').unwrap()])
        .collect();
    let mut unique = srcs.clone();
    unique.sort();
    unique.dedup();
    assert_eq!(unique.len(), srcs.len(), "a figure is shown twice: {srcs:?}");
}

/// A selection cell over (a, q, i, H) with `k` of `n` objects of weight `w` discovered.
fn sel_cell(edges: [(f64, f64); 4], n: u64, k: u64, w: f64) -> SelectionCell {
    let mut tally = Tally::default();
    for j in 0..n {
        tally.add(w, j < k);
    }
    SelectionCell {
        edges: edges.to_vec(),
        tally,
    }
}

#[test]
fn selection_maps_add_weighted_tallies_and_name_their_intervals() {
    let (a1, a2) = ((30.0, 50.0), (50.0, 100.0));
    let (q1, q2) = ((30.0, 40.0), (40.0, 50.0));
    let (i, h1, h2) = ((0.0, 10.0), (4.0, 5.0), (5.0, 6.0));
    let cells = vec![
        sel_cell([a1, q1, i, h1], 10, 5, 1.0),
        sel_cell([a1, q1, i, h2], 30, 3, 3.0),
        sel_cell([a2, q2, i, h1], 8, 0, 1.0),
    ];
    let aq = selection::project(&cells, &[0, 1]);
    assert_eq!(aq.len(), 2);
    // The two H cells of (a1, q1) added with their weights: (5·1 + 3·3)/(10·1 + 30·3).
    let p = aq[0].proportion();
    assert_eq!((aq[0].edges.clone(), p.n, p.k), (vec![a1, q1], 40, 8));
    assert!((p.fraction - 14.0 / 100.0).abs() < 1e-12, "{}", p.fraction);
    assert!(p.n_eff < 40.0, "unequal weights lower the effective n: {}", p.n_eff);
    let f = detectability::selection_map("a_au", "q_au", &aq, "test disk").unwrap();
    check(
        &f,
        &[
            "30–50",
            "50–100",
            "40–50",
            "14%",
            "n=40",
            "semi-major axis a (AU)",
            "perihelion distance q (AU)",
        ],
    );
    assert_eq!(f.stem, "selection_a_au_q_au");
    assert!(f.caption.contains("test disk: 8 of 48 objects"), "{}", f.caption);
}

#[test]
fn model_curves_follow_the_weights_and_angles_are_drawn_on_a_circle() {
    // Three objects of weight 0 in the low bin and one of weight 2 in the high one: all of the
    // model's expected catalogue falls in the high bin.
    let m = WeightedSample {
        name: "A".into(),
        values: vec![1.0, 1.0, 1.0, 9.0],
        weights: vec![0.0, 0.0, 0.0, 2.0],
    };
    assert_eq!(models::expected_counts(&m, &[0.0, 5.0, 10.0], 4.0), vec![0.0, 4.0]);
    let cat = WeightedSample {
        name: "catalogue".into(),
        values: vec![10.0, 350.0, 20.0, 185.0],
        weights: vec![1.0; 4],
    };
    let wide = WeightedSample {
        name: "wide".into(),
        values: ramp(300, 0.0, 360.0),
        weights: vec![1.0; 300],
    };
    let f = models::marginal("varpi_deg", &cat, &[wide.clone()]).unwrap();
    check(
        &f,
        &["90°", "180°", "catalogue (4 objects)", "wide (300 detected objects)"],
    );
    assert!(f.caption.contains("on a circle"), "{}", f.caption);
    let line = WeightedSample {
        values: ramp(300, 30.0, 300.0),
        ..wide
    };
    let f = models::marginal(
        "a_au",
        &WeightedSample {
            values: vec![35.0, 60.0, 61.0, 200.0],
            ..cat
        },
        &[line],
    )
    .unwrap();
    check(
        &f,
        &["semi-major axis a (AU)", "objects per bin", "catalogue (4 objects)"],
    );

    let fit = FitNull {
        model: "A".into(),
        observed: -250.0,
        observed_error: 1.5,
        p: 0.001,
        p_error: 0.001,
        samples: ramp(500, -60.0, -40.0),
    };
    let f = models::goodness_of_fit(&fit).unwrap();
    // Far below the null: an arrow at the left edge says where, the null keeps its width.
    check(
        &f,
        &[
            "ln L of a catalogue (nats)",
            "◀ catalogue: ln L = -250.0",
            "catalogue, p = 0.001",
        ],
    );
    // The caption says why the number of catalogues is what it is: it sets the floor of p,
    // 1/(1 + 500) = 0.0020, at which this p sits (an upper bound, rule of three 3/500).
    assert!(f.caption.contains("Why 500 catalogues"), "{}", f.caption);
    assert!(f.caption.contains("1/(1 + 500) = 0.00200"), "{}", f.caption);
    assert!(f.caption.contains("3/500 = 0.00600"), "{}", f.caption);
    // Away from the floor it gives the counting error at p: √(0.2 · 0.8 / 500) = 0.0179.
    let f = models::goodness_of_fit(&FitNull { p: 0.2, ..fit }).unwrap();
    assert!(
        f.caption.contains("counting error is 0.0179 (9% of p)"),
        "{}",
        f.caption
    );
}

#[test]
fn detectability_and_model_comparison_runs_get_their_own_sections() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    let run = small_observe(d);
    let s = |p: &Path| p.to_str().unwrap().to_string();
    let survey = s(&d.join("synoptic.survey.toml"));
    let catalogue = s(&run.join("discoveries.parquet"));
    let objects = s(&d.join("objects.parquet"));
    let other = d.join("other.parquet");
    // A second draw of the bright population: a model the survey detects enough of.
    let pop = common::bright_population(d);
    run_ok(&[
        "draw",
        "--spec",
        &s(&pop),
        "--count",
        "3000",
        "--seed",
        "9",
        "--out",
        &s(&other),
    ]);
    run_ok(&[
        "detectability",
        "--survey",
        &survey,
        "--objects",
        &catalogue,
        "--clones",
        "40",
        "--out",
        &s(&d.join("det")),
        "--quiet",
    ]);
    run_ok(&[
        "detectability",
        "--survey",
        &survey,
        "--population",
        &objects,
        "--out",
        &s(&d.join("sel")),
        "--quiet",
    ]);
    // Two comparisons of the same kind under one directory, in different spaces.
    let models = [format!("plain={objects}"), format!("other={}", s(&other))];
    for (out, space) in [("cmp-a", "a_au,q_au,inc_deg,varpi_deg"), ("cmp-b", "q_au,node_deg")] {
        run_ok(&[
            "compare-models",
            "--survey",
            &survey,
            "--observed",
            &catalogue,
            "--model",
            &models[0],
            "--model",
            &models[1],
            "--space",
            space,
            "--frame",
            "heliocentric",
            "--synthetic",
            "100",
            "--bootstrap",
            "10",
            "--out",
            &s(&d.join(out)),
            "--quiet",
        ]);
    }

    // What the report reads is what the commands wrote, through the modules that wrote it.
    let n_cat = seine::io::read_table(&run.join("discoveries.parquet"))
        .unwrap()
        .height();
    let chances = det::read(&det::find(&d.join("det")).unwrap()).unwrap();
    assert_eq!(chances.len(), n_cat);
    assert!(
        chances
            .iter()
            .all(|r| r.discovered.n == 40 && r.discovered.lower <= r.discovered.fraction)
    );
    let cells = selection::read(&selection::find(&d.join("sel")).unwrap()).unwrap();
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("sel/summary.json")).unwrap()).unwrap();
    let inside: u64 = cells.iter().map(|c| c.tally.n).sum();
    assert_eq!(inside + summary["objects_outside_grid"].as_u64().unwrap(), 3000);
    let cmp = comparison::read(&d.join("cmp-a")).unwrap();
    assert_eq!(cmp.space, ["a_au", "q_au", "inc_deg", "varpi_deg"]);
    assert_eq!(cmp.catalogue.as_ref().unwrap().ids.len(), n_cat);
    for (m, (name, null)) in cmp.models.iter().zip(cmp.null.as_ref().unwrap()) {
        assert_eq!((&m.model, null.len()), (name, 100));
        let det = cmp.detected.iter().find(|s| s.model == m.model).unwrap();
        assert_eq!(det.ids.len() as u64, m.n_detected);
        let below = null.iter().filter(|l| **l <= m.log_likelihood).count() as f64;
        assert!((m.gof_p - (1.0 + below) / 101.0).abs() < 1e-9, "{} vs {below}", m.gof_p);
    }

    run_ok(&["report", d.to_str().unwrap()]);
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    for title in [
        "Chance of discovery of each object: det",
        "Selection function: sel",
        "Model comparison: cmp-a",
        "Model comparison: cmp-b",
    ] {
        assert!(html.contains(&format!("<h2>{title}</h2>")), "{title} missing");
    }
    for f in [
        "det_chance_q_au",
        "det_chance_h_mag",
        "sel_selection_a_au_q_au",
        "sel_selection_a_au_inc_deg",
        "sel_selection_a_au_h_mag",
        "cmp_a_model_marginal_varpi_deg",
        "cmp_a_model_marginal_a_au",
        "cmp_a_goodness_of_fit_plain",
        "cmp_b_model_marginal_node_deg",
        "cmp_b_goodness_of_fit_other",
    ] {
        assert!(html.contains(&format!("src=\"figures/{f}.svg\"")), "{f} missing");
    }
    assert!(!html.contains("cmp_b_model_marginal_a_au"), "cmp-b has no a");
    assert!(
        html.contains("Kuiper V") && html.contains("Anderson–Darling A²"),
        "marginal tests not listed"
    );

    // A comparison directory alone is a report of its own, named by the directory.
    run_ok(&["report", &s(&d.join("cmp-b"))]);
    let html = std::fs::read_to_string(d.join("cmp-b/index.html")).unwrap();
    assert!(
        html.contains("<h2>Model comparison: cmp-b</h2>"),
        "not named by its directory"
    );
    assert!(html.contains("src=\"figures/cmp_b_goodness_of_fit_plain.svg\""));
}

#[test]
fn an_inconsistent_selection_table_is_refused_by_name_and_row() {
    let tmp = tempfile::tempdir().unwrap();
    common::write(
        tmp.path(),
        "selection_function.csv",
        "a_lo_au,a_hi_au,q_lo_au,q_hi_au,inc_lo_deg,inc_hi_deg,h_lo_mag,h_hi_mag,n_objects,weight_sum,\
         weight_sq_sum,weight_discovered_sum,weight_sq_discovered_sum,discovered,fraction,n_eff,std_error,wilson_lo,wilson_hi\n\
         30,50,30,40,0,10,4,5,10,10,10,2,2,2,0.2,10,0.1,0.05,0.5\n\
         30,50,40,50,0,10,4,5,3,3,3,3,3,4,1,3,0,0.4,1\n",
    );
    let err = refused(tmp.path().to_str().unwrap());
    assert!(err.contains("selection_function.csv") && err.contains("row 2"), "{err}");
}

/// A square grid of `n` × `n` cells over (ϖ, Ω) with values `v(i, j)` and `trials` per cell.
fn angle_map(id: i64, n: usize, trials: Option<u64>, v: impl Fn(usize, usize) -> f64) -> HeatMap {
    let w = 360.0 / n as f64;
    HeatMap {
        x: "varpi_deg".into(),
        y: "node_deg".into(),
        value_label: "discovery probability".into(),
        id: Some(id),
        cells: (0..n)
            .flat_map(|i| (0..n).map(move |j| (i, j)))
            .map(|(i, j)| HeatCell {
                x_min: i as f64 * w,
                x_max: (i + 1) as f64 * w,
                y_min: j as f64 * w,
                y_max: (j + 1) as f64 * w,
                value: v(i, j),
                trials,
            })
            .collect(),
    }
}

#[test]
fn a_map_of_few_values_gets_a_discrete_key_and_a_smooth_one_a_colour_bar() {
    // Three trials per cell: every value is 0, 1/3, 2/3 or 1.
    let coarse = angle_map(3, 6, Some(3), |i, j| ((i + 2 * j) % 4) as f64 / 3.0);
    let f = bias::bias_map(&coarse).unwrap();
    check(
        &f,
        &["1/3 = 0.333", "3/3 = 1.000", "discovery probability (dimensionless)"],
    );
    assert!(f.caption.contains("only 4 distinct values"), "{}", f.caption);
    assert!(f.caption.contains("Each cell holds 3 trials"), "{}", f.caption);
    // Many values: the continuous bar, with its ticks from 0 to the largest value.
    let smooth = angle_map(4, 6, None, |i, j| 0.01 * (i * 6 + j) as f64);
    let f = bias::bias_map(&smooth).unwrap();
    assert!(!f.svg.contains(" = 0."), "a continuous map has no discrete key");
    assert!(
        f.caption.contains("linear from 0 to the largest value, 0.350"),
        "{}",
        f.caption
    );
}

#[test]
fn the_catalogue_map_adds_the_objects_maps_with_their_weights() {
    let a = angle_map(1, 4, None, |i, _| 0.1 * i as f64);
    let b = angle_map(2, 4, None, |_, j| 0.2 * j as f64);
    // A map on another grid is read at the summed grid's cell centres.
    let c = angle_map(3, 2, None, |_, _| 0.4);
    let weight = |id: Option<i64>| match id {
        Some(1) => 2.0,
        Some(2) => 0.5,
        _ => 0.25,
    };
    let sum = HeatMap::weighted_sum(&[a, b, c], weight, "sum").unwrap();
    assert_eq!(sum.cells.len(), 16);
    for cell in &sum.cells {
        let (i, j) = ((cell.x_min / 90.0) as usize, (cell.y_min / 90.0) as usize);
        let expected = 2.0 * 0.1 * i as f64 + 0.5 * 0.2 * j as f64 + 0.25 * 0.4;
        assert!(
            (cell.value - expected).abs() < 1e-12,
            "cell ({i}, {j}): {} vs {expected}",
            cell.value
        );
    }
}

#[test]
fn rose_wedges_outside_the_band_are_named_and_the_median_is_one_line() {
    let band = |lo, median, hi| Some(NullBand { lo, median, hi });
    // 12 bins, 9 objects: one bin above its band (5 > 3), one empty bin below it (0 < 1).
    let observed = [5.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0];
    let bins: Vec<RoseBin> = (0..12)
        .map(|k| RoseBin {
            min_deg: 30.0 * k as f64,
            max_deg: 30.0 * (k + 1) as f64,
            observed: observed[k],
            null: if k == 2 {
                band(1.0, 2.0, 4.0)
            } else {
                band(0.0, 1.0, 3.0)
            },
        })
        .collect();
    let f = rose::rose("node_deg", &bins, rose::Band::BiasAware, "").unwrap();
    check(
        &f,
        &[
            "observed, inside the band",
            "observed, above the band",
            "observed, below the band",
            "median of the band",
        ],
    );
    assert!(f.caption.contains("above the band (1 of 12 bins)"), "{}", f.caption);
    assert!(f.caption.contains("below it (1;"), "{}", f.caption);
    assert!(
        f.caption.contains("9 objects in 12 bins, fewer objects than bins"),
        "{}",
        f.caption
    );
    // The median is one line round the circle (the other dark line of width 2 is the key's).
    let median_lines = f
        .svg
        .matches("<polyline fill=\"none\" opacity=\"1\" stroke=\"#222222\" stroke-width=\"2\"")
        .count();
    assert_eq!(median_lines, 2, "the median must be one continuous line");
    // More objects than bins: no caution.
    let many: Vec<RoseBin> = bins
        .iter()
        .map(|b| RoseBin {
            observed: 3.0,
            ..b.clone()
        })
        .collect();
    let f = rose::rose("node_deg", &many, rose::Band::BiasAware, "").unwrap();
    assert!(!f.caption.contains("fewer objects than bins"), "{}", f.caption);
}

/// A cluster-test output written by hand in `d`: its rose, statistics and null samples, and
/// a map table of two objects with their angles and weights, all carrying `observed`.
fn cluster_run(d: &Path, observed: f64) {
    std::fs::create_dir_all(d).unwrap();
    common::write(
        d,
        "rose.csv",
        &format!(
            "quantity,bin_lo_deg,bin_hi_deg,observed,null_lo,null_median,null_hi\nvarpi_deg,0,180,{observed},0,1,2\nvarpi_deg,180,360,1,0,1,2\n"
        ),
    );
    common::write(
        d,
        "cluster_null.csv",
        "statistic,value\nrayleigh_varpi,0.1\nrayleigh_varpi,0.2\nrayleigh_varpi,0.3\n",
    );
    common::write(
        d,
        "cluster_test.csv",
        &format!("statistic,observed,p_bias_aware,p_naive\nrayleigh_varpi,{observed},0.33,0.2\n"),
    );
    common::write(
        d,
        "bias_map.csv",
        "id,varpi_lo_deg,varpi_hi_deg,node_lo_deg,node_hi_deg,trials,p_discover\n1,0,180,0,360,4,0.25\n1,180,360,0,360,4,0.5\n2,0,180,0,360,4,0.75\n2,180,360,0,360,4,0\n",
    );
    common::write(
        d,
        "map_objects.csv",
        "id,varpi_deg,node_deg,weight\n1,30,40,2\n2,200,100,0.5\n",
    );
}

#[test]
fn two_cluster_test_runs_side_by_side_never_share_a_figure() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    cluster_run(&d.join("first"), 0.125);
    cluster_run(&d.join("second"), 0.875);
    run_ok(&["report", d.to_str().unwrap()]);
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    for run in ["first", "second"] {
        assert!(
            html.contains(&format!("<h2>Clustering test: {run}</h2>")),
            "no section of {run}"
        );
        assert!(
            html.contains(&format!("From run {run}:")),
            "section does not name {run}"
        );
    }
    assert!(!html.contains(">.<") && !html.contains("run .:"), "a run called \".\"");
    let fig = |name: &str| std::fs::read_to_string(d.join("figures").join(name)).unwrap();
    for stem in [
        "rose_varpi_deg",
        "cluster_null_rayleigh_varpi",
        "bias_map_varpi_deg_node_deg_catalogue",
        "bias_map_varpi_deg_node_deg_1",
    ] {
        let (a, b) = (fig(&format!("first_{stem}.svg")), fig(&format!("second_{stem}.svg")));
        assert!(
            html.contains(&format!("figures/first_{stem}.svg")) && html.contains(&format!("figures/second_{stem}.svg"))
        );
        if stem.starts_with("cluster_null") {
            // Each null figure carries its own run's observed value.
            assert!(
                a.contains("0.1250") && !a.contains("0.8750"),
                "first run's figure shows the second's value"
            );
            assert!(b.contains("0.8750") && !b.contains("0.1250"));
        }
    }
    // The catalogue map adds the two maps with the weights of map_objects.csv (2 and 0.5) and
    // marks both objects: 2 × 0.25 + 0.5 × 0.75 = 0.875 in the first cell.
    let cat = fig("first_bias_map_varpi_deg_node_deg_catalogue.svg");
    assert!(cat.contains("total weight 2.500"), "weights not honoured");
    assert!(cat.contains("the 2 objects' own"), "objects not marked");
    assert!(cat.contains("0.875"), "the weighted sum is not drawn");
    // Two trials' worth of values per map: the discrete key.
    assert!(fig("first_bias_map_varpi_deg_node_deg_1.svg").contains("1/4 = 0.250"));
}

/// An invented planet prior near the ecliptic, bright enough that the deep example survey
/// (committed visits) finds a few draws.
const HIDEOUT_PRIOR: &str = "[population]\nname = \"test planet\"\nepoch_mjd = 60676.0\n[orbit]\n\
    a_au = { dist = \"uniform\", lo = 150.0, hi = 400.0 }\ne = { dist = \"uniform\", lo = 0.0, hi = 0.3 }\n\
    inc_deg = { dist = \"uniform\", lo = 0.0, hi = 20.0 }\n[photometry]\nh_mag = { dist = \"uniform\", lo = 0.0, hi = 4.0 }\n";

/// `seine hideout` of `count` draws of the prior through the deep example survey into `out`,
/// small and fast.
fn small_hideout(dir: &Path, out: &Path, count: &str, extra: &[&str]) {
    let prior = common::write(dir, "prior.toml", HIDEOUT_PRIOR);
    let deep = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/deep.survey.toml");
    let mut args = vec![
        "hideout",
        "--survey",
        deep.to_str().unwrap(),
        "--prior",
        prior.to_str().unwrap(),
        "--count",
        count,
        "--order",
        "4",
        "--n-fields",
        "8",
        "--quiet",
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    run_ok(&args);
}

#[test]
fn a_hideout_run_gets_its_section_figures_and_fields() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("report");
    small_hideout(tmp.path(), &d.join("hide"), "3000", &[]);
    run_ok(&["report", d.to_str().unwrap()]);
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    assert!(
        html.contains("<h2>Where a planet could still hide: hide</h2>"),
        "no section"
    );
    // The page's opening names the run and its answer.
    assert!(
        html.contains("Hideout run hide: the surveys would have found a planet of its prior with probability"),
        "not in the overview"
    );
    // The run's own conclusion, from its summary.json.
    let summary = seine::hideout::read_summary(&d.join("hide")).unwrap();
    assert!(html.contains(&xml_escape(&summary.conclusion)), "conclusion missing");
    for stem in [
        "sky_map",
        "excluded_h_mag",
        "excluded_a_au",
        "survivors_mag",
        "survivors_rate",
    ] {
        let name = format!("hide_hideout_{stem}.svg");
        assert!(html.contains(&format!("src=\"figures/{name}\"")), "{name} not shown");
        assert_well_formed(&std::fs::read_to_string(d.join("figures").join(&name)).unwrap());
    }
    // The survey's coverage is outlined on the map and named in its caption.
    let map = std::fs::read_to_string(d.join("figures/hide_hideout_sky_map.svg")).unwrap();
    assert!(
        map.contains("covered by Sorrel Peak deep stare"),
        "coverage not in the key"
    );
    // Every ranked field of fields.* is a row of the page's table, in rank order.
    let fields = seine::hideout::tables::read_fields(&d.join("hide/fields.parquet")).unwrap();
    assert_eq!(fields.len(), 8);
    let mut from = 0;
    for f in &fields {
        let row = format!(
            "<tr><td class=\"num\">{}</td><td class=\"num\">{:.2}</td><td class=\"num\">{:.2}</td>",
            f.rank, f.ra_deg, f.dec_deg
        );
        let at = html[from..]
            .find(&row)
            .unwrap_or_else(|| panic!("field {} not listed: {row}", f.rank));
        from += at;
    }
    assert!(html.contains("href=\"hide/fields.parquet\""), "fields table not linked");
}

#[test]
fn hideout_shards_and_their_merge_each_get_a_section_and_a_damaged_table_is_left_out() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path().join("report");
    for k in 0..2 {
        let shard = format!("{k}/2");
        small_hideout(tmp.path(), &d.join(format!("s{k}")), "3000", &["--shard", &shard]);
    }
    let (s0, s1, all) = (d.join("s0"), d.join("s1"), d.join("all"));
    run_ok(&[
        "merge",
        s0.to_str().unwrap(),
        s1.to_str().unwrap(),
        "--out",
        all.to_str().unwrap(),
    ]);
    run_ok(&["report", d.to_str().unwrap()]);
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    for run in ["s0", "s1", "all"] {
        assert!(
            html.contains(&format!("<h2>Where a planet could still hide: {run}</h2>")),
            "no section of {run}"
        );
        assert!(
            html.contains(&format!("figures/{run}_hideout_sky_map.svg")),
            "{run}'s map"
        );
    }
    assert!(html.contains("Shard 1/2 of a run"), "a shard is not called one");
    // The merge holds the whole run's draws.
    assert!(html.contains("From all: 3000 draws"), "merge not summed");
    // A damaged table of one shard: its section is left out with a note; the rest is built.
    std::fs::write(s1.join("sky_map.parquet"), b"PAR1 not a table").unwrap();
    let o = common::seine(&["report", d.to_str().unwrap()]);
    assert!(o.status.success(), "{}", common::stderr(&o));
    let err = common::stderr(&o);
    assert!(err.contains("left out") && err.contains("sky_map.parquet"), "{err}");
    let html = std::fs::read_to_string(d.join("index.html")).unwrap();
    assert!(
        html.contains("class=\"note\"") && html.contains("s1/sky_map.parquet"),
        "no note"
    );
    assert!(
        !html.contains("Where a planet could still hide: s1<"),
        "damaged run shown"
    );
    for run in ["s0", "all"] {
        assert!(
            html.contains(&format!("Where a planet could still hide: {run}<")),
            "{run} lost"
        );
    }
    // A shard without draws (one draw, two shards: shard 0 takes none) is noted as such.
    small_hideout(tmp.path(), &d.join("empty"), "1", &["--shard", "0/2"]);
    let o = common::seine(&["report", d.to_str().unwrap()]);
    assert!(o.status.success(), "{}", common::stderr(&o));
    let err = common::stderr(&o);
    assert!(err.contains("a hideout shard (0/2) without draws"), "{err}");
}

fn sky_cell(cell: u64, p: f64, n: u64, w: f64, rate: f64, regions: (bool, bool)) -> SkyCell {
    SkyCell {
        order: 3,
        cell,
        w_prior: w.max(1.0),
        n_surviving: n,
        w_surviving: w,
        p_posterior_per_sq_deg: p,
        mean_rate_arcsec_per_hr: rate,
        in_region_68: regions.0,
        in_region_95: regions.1,
    }
}

fn excluded_row(quantity: &str, bin: i64, lo: f64, n: u64, f: f64) -> ExcludedRow {
    ExcludedRow {
        quantity: quantity.into(),
        bin,
        lo: Some(lo),
        hi: Some(lo + 1.0),
        n_prior: n,
        w_prior: n as f64,
        excluded_fraction: f,
        excluded_fraction_err: 0.02,
    }
}

#[test]
fn hideout_figures_from_synthetic_tables_weigh_their_survivors() {
    use seine::report::figures::hideout as fig;
    use seine::sky::healpix::Moc;
    let cells = vec![
        sky_cell(10, 1e-3, 30, 3.0, 0.5, (true, true)),
        sky_cell(11, 1e-4, 20, 1.0, 2.0, (false, true)),
        sky_cell(12, 0.0, 0, 0.0, f64::NAN, (false, false)),
    ];
    let coverage = vec![(
        "Invented Survey".to_string(),
        Moc::from_cells(6, &(640..700).collect::<Vec<u64>>()),
    )];
    let map = fig::posterior_map("map", "run", &cells, &coverage, "").unwrap();
    check(
        &map,
        &[
            "probability per deg²:",
            "68 % region",
            "95 % region",
            "covered by Invented Survey",
        ],
    );
    assert!(map.caption.contains("Invented Survey (purple)"), "{}", map.caption);
    // Bins: one without draws (a gap, named in the caption), open ends at bins 0 and 2.
    let rows = vec![
        ExcludedRow {
            quantity: "all".into(),
            bin: 0,
            lo: None,
            hi: None,
            n_prior: 20,
            w_prior: 20.0,
            excluded_fraction: 0.25,
            excluded_fraction_err: 0.1,
        },
        excluded_row("h_mag", 0, 0.0, 10, 0.3),
        excluded_row("h_mag", 1, 1.0, 0, f64::NAN),
        excluded_row("h_mag", 2, 2.0, 10, 0.2),
    ];
    let f = fig::excluded_fraction("h_mag", &rows, "").unwrap();
    check(
        &f,
        &[
            "absolute magnitude H (mag)",
            "excluded fraction (dimensionless)",
            "whole prior",
        ],
    );
    assert!(f.caption.contains("1 of 3 bins hold no draw") && f.caption.contains("25.00% ± 10.00%"));
    // Survivors' magnitudes: weight 1 at 20.0–20.1 and 3 at 22.0–22.1. The weighted median
    // lies a third into the second bin, 22.03 (unweighted it would be 20.1); the 90 % point
    // 2.6/3 into it, 22.09 (worked by hand from the definition of a histogram quantile).
    let mags = fig::survivors_magnitude(&[(20.0, 20.1, 1.0), (22.0, 22.1, 3.0)], "").unwrap();
    check(&mags, &["apparent magnitude (mag)", "share of the survivors per bin"]);
    assert!(mags.caption.contains("(22.03 and 22.09 mag)"), "{}", mags.caption);
    let rates = fig::survivors_rate(&cells, "").unwrap();
    check(&rates, &["rate of motion (arcsec/h)"]);
    // No survivor anywhere: still a figure, saying so.
    let none = fig::survivors_rate(&cells[2..], "").unwrap();
    check(&none, &["no survivors"]);
}
