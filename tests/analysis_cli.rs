//! The analysis commands through the binary: outputs, conclusions, determinism across
//! thread counts and shards, and bad input (exit status 2).

mod common;

use std::path::Path;

use common::{ecliptic_fields, seine, stderr, survey};
use seine::io::table::{Columns, read_table};

/// Two invented surveys (a wide ecliptic one and a lopsided patch) and a small catalogue.
fn setup(dir: &Path) {
    let wide = ecliptic_fields(&(0..12).map(|k| 30.0 * k as f64).collect::<Vec<_>>());
    let nights: Vec<f64> = (0..12).map(|k| 60400.0 + 30.4 * k as f64).collect();
    survey(dir, "wide", 16.0, 23.0, &wide, &nights);
    survey(
        dir,
        "patch",
        10.0,
        22.5,
        &ecliptic_fields(&[0.0, 20.0]),
        &[60580.0, 60590.0, 60945.0],
    );
    let mut csv = String::from("id,a_au,e,inc_deg,node_deg,argperi_deg,mean_anomaly_deg,epoch_mjd,h_mag\n");
    for i in 0..12 {
        let f = i as f64;
        csv.push_str(&format!(
            "{},{},{},{},{},{},{},60400,{}\n",
            10 + i,
            45.0 + 3.0 * f,
            0.35 + 0.02 * ((7 * i) % 12) as f64,
            2.0 + ((5 * i) % 12) as f64,
            (37.0 * f) % 360.0,
            (300.0 + 11.0 * f) % 360.0,
            (97.0 * f) % 360.0,
            5.0 + 0.1 * f
        ));
    }
    std::fs::write(dir.join("catalog.csv"), csv).unwrap();
}

fn run_ok(args: &[&str]) -> String {
    let o = seine(args);
    assert!(o.status.success(), "{args:?}: {}", stderr(&o));
    stderr(&o)
}

fn csv_col(path: &Path, name: &str) -> Vec<f64> {
    let df = read_table(path).unwrap();
    Columns::new(&df, path).f64(name).unwrap()
}

/// A column that may hold NaN (e.g. a ratio in a bin where no survey found anything).
fn csv_col_nan(path: &Path, name: &str) -> Vec<f64> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let k = lines.next().unwrap().split(',').position(|h| h == name).unwrap();
    lines
        .map(|l| l.split(',').nth(k).unwrap().parse::<f64>().unwrap_or(f64::NAN))
        .collect()
}

#[test]
fn detectability_is_deterministic_across_threads_and_shards() {
    let d = tempfile::tempdir().unwrap();
    let p = |s: &str| d.path().join(s).display().to_string();
    setup(d.path());
    let base = [
        "detectability",
        "--survey",
        &p("wide.toml"),
        "--survey",
        &p("patch.toml"),
        "--objects",
        &p("catalog.csv"),
        "--clones",
        "30",
        "--format",
        "csv",
    ];
    let msg = run_ok(&[&base[..], &["--out", &p("t1"), "--threads", "1"]].concat());
    assert!(msg.contains("Median chance of discovery"), "{msg}");
    run_ok(&[&base[..], &["--out", &p("t2"), "--threads", "2"]].concat());
    let one = csv_col(&d.path().join("t1/detectability.csv"), "p_discover");
    assert_eq!(one, csv_col(&d.path().join("t2/detectability.csv"), "p_discover"));
    assert!(one.iter().any(|p| *p > 0.0), "nothing discoverable: {one:?}");
    let mut sharded = Vec::new();
    for k in 0..3 {
        run_ok(
            &[
                &base[..],
                &["--out", &p(&format!("s{k}")), "--shard", &format!("{k}/3")],
            ]
            .concat(),
        );
        sharded.extend(csv_col(&d.path().join(format!("s{k}/detectability.csv")), "p_discover"));
    }
    assert_eq!(one, sharded);
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.path().join("t1/summary.json")).unwrap()).unwrap();
    assert!(summary["conclusion"].as_str().unwrap().contains("12 objects"));
    // The population mode: every object lands in one cell of the selection function (or outside).
    let msg = run_ok(&[
        "detectability",
        "--survey",
        &p("wide.toml"),
        "--population",
        &p("catalog.csv"),
        "--out",
        &p("sf"),
        "--format",
        "csv",
    ]);
    assert!(msg.contains("selection_function"), "{msg}");
    let n = csv_col(&d.path().join("sf/selection_function.csv"), "n_objects");
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.path().join("sf/summary.json")).unwrap()).unwrap();
    let outside = summary["objects_outside_grid"].as_f64().unwrap();
    assert_eq!(n.iter().sum::<f64>() + outside, 12.0, "every object in one cell");
    for (f, (lo, hi)) in csv_col(&d.path().join("sf/selection_function.csv"), "fraction")
        .iter()
        .zip(
            csv_col(&d.path().join("sf/selection_function.csv"), "wilson_lo")
                .into_iter()
                .zip(csv_col(&d.path().join("sf/selection_function.csv"), "wilson_hi")),
        )
    {
        assert!(lo <= *f && *f <= hi, "{lo} {f} {hi}");
    }
}

#[test]
fn bias_map_then_cluster_test_and_the_same_in_one_step() {
    let d = tempfile::tempdir().unwrap();
    let p = |s: &str| d.path().join(s).display().to_string();
    setup(d.path());
    let grid = ["--grid", "8,6", "--per-cell", "3"];
    let (wide, catalog) = (p("wide.toml"), p("catalog.csv"));
    // bias-map on the catalogue into `out`, with more options.
    let bias_map = |out: &str, more: &[&str]| {
        let base = [
            "bias-map",
            "--survey",
            &wide,
            "--objects",
            &catalog,
            "--out",
            out,
            "--format",
            "csv",
        ];
        run_ok(&[&base[..], &grid, more].concat())
    };
    let msg = bias_map(&p("bm"), &[]);
    assert!(msg.contains("8×6 grid"), "{msg}");
    assert!(d.path().join("bm/maps/10.svg").exists());
    let pcol = csv_col(&d.path().join("bm/bias_map.csv"), "p_discover");
    assert_eq!(pcol.len(), 12 * 48);
    // Every discovered trial's angles beside the map table, as many as the cells' discoveries.
    let found = csv_col(&d.path().join("bm/bias_map.csv"), "discovered")
        .iter()
        .sum::<f64>();
    let angles = csv_col(&d.path().join("bm/map_discoveries.csv"), "varpi_deg");
    assert_eq!(angles.len() as f64, found);
    assert!(angles.iter().all(|x| (0.0..360.0).contains(x)));
    let common = ["--catalog", &p("catalog.csv"), "--trials", "300", "--format", "csv"];
    let from_table = run_ok(
        &[
            &["cluster-test", "--bias-map", &p("bm/bias_map.csv"), "--out", &p("ct1")][..],
            &common,
        ]
        .concat(),
    );
    let in_one = run_ok(
        &[
            &["cluster-test", "--survey", &p("wide.toml"), "--out", &p("ct2")][..],
            &common,
            &grid,
        ]
        .concat(),
    );
    assert!(
        from_table.contains("bias-aware chance") && from_table.contains("without bias correction"),
        "{from_table}"
    );
    // The maps are the same (same seed, same streams), and the discovered angles are read back
    // from beside the table, so the p-values are the same.
    let a = csv_col(&d.path().join("ct1/cluster_test.csv"), "p_bias_aware");
    assert_eq!(a, csv_col(&d.path().join("ct2/cluster_test.csv"), "p_bias_aware"));
    assert_eq!(from_table.lines().nth(1), in_one.lines().nth(1));
    // Maps made in two shards, given as two tables, give the same test again.
    for k in 0..2 {
        bias_map(&p(&format!("bm{k}")), &["--shard", &format!("{k}/2"), "--no-svg"]);
    }
    let (t0, t1) = (p("bm0/bias_map.csv"), p("bm1/bias_map.csv"));
    run_ok(
        &[
            &["cluster-test", "--bias-map", &t0, "--bias-map", &t1, "--out", &p("ct3")][..],
            &common,
        ]
        .concat(),
    );
    assert_eq!(a, csv_col(&d.path().join("ct3/cluster_test.csv"), "p_bias_aware"));
    // Another catalogue whose ids overlap (id 13 is another object): its maps are refused,
    // naming the id, and nothing is written.
    let other = std::fs::read_to_string(d.path().join("catalog.csv"))
        .unwrap()
        .replace("\n13,54,", "\n13,61,");
    std::fs::write(d.path().join("other.csv"), other).unwrap();
    let o = seine(&[
        "cluster-test",
        "--bias-map",
        &p("bm/bias_map.csv"),
        "--catalog",
        &p("other.csv"),
        "--trials",
        "300",
        "--out",
        &p("ct4"),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let msg = stderr(&o);
    assert!(msg.contains("a_au") && msg.contains("id 13"), "{msg}");
    assert!(!d.path().join("ct4").exists());
}

#[test]
fn cluster_test_keeps_its_null_samples_and_rose_band_and_the_report_reads_them() {
    let d = tempfile::tempdir().unwrap();
    let p = |s: &str| d.path().join(s).display().to_string();
    setup(d.path());
    let trials = 150;
    let cluster_test = |catalog: &str, out: &str| {
        run_ok(&[
            "cluster-test",
            "--survey",
            &p("wide.toml"),
            "--catalog",
            &p(catalog),
            "--grid",
            "8,6",
            "--per-cell",
            "3",
            "--trials",
            &trials.to_string(),
            "--rose-bins",
            "12",
            "--format",
            "csv",
            "--out",
            &p(out),
        ])
    };
    cluster_test("catalog.csv", "ct");
    let ct = d.path().join("ct");
    // The null table: one row per sampled statistic and trial, statistic by statistic.
    let (null_path, test_path, rose_path) = (
        ct.join("cluster_null.csv"),
        ct.join("cluster_test.csv"),
        ct.join("rose.csv"),
    );
    let null = read_table(&null_path).unwrap();
    let c = Columns::new(&null, &null_path);
    let (stat, trial, value) = (
        c.str("statistic").unwrap(),
        c.i64("trial").unwrap(),
        c.f64("value").unwrap(),
    );
    // Every reported statistic has its null samples: the eight, Fisher's combination and the
    // global one.
    assert_eq!(stat.len(), 10 * trials);
    assert_eq!(&trial[..trials], &(0..trials as i64).collect::<Vec<_>>()[..]);
    let unit = |i: &usize| !["pole_and_perihelion", "global"].contains(&stat[*i].as_str());
    assert!(
        (0..stat.len()).filter(unit).all(|i| (0.0..=1.0).contains(&value[i])),
        "R/n, V and lengths lie in [0, 1]"
    );
    // The p-values of cluster_test.csv are the fractions of those samples that reach the observed
    // value: p = (1 + #{T ≥ T_obs}) / (1 + N).
    let tests = read_table(&test_path).unwrap();
    let tc = Columns::new(&tests, &test_path);
    let names = tc.str("statistic").unwrap();
    let observed = csv_col_nan(&test_path, "observed");
    let p_bias = tc.f64("p_bias_aware").unwrap();
    // Every row, the combined and global ones included: their samples are the synthetic
    // catalogues' own combined statistics (pooled ranks).
    assert_eq!(names[0], "global");
    for (j, name) in names.iter().enumerate() {
        let reach = (0..stat.len())
            .filter(|&i| stat[i] == *name && value[i] >= observed[j])
            .count();
        let want = (1 + reach) as f64 / (1 + trials) as f64;
        assert!((p_bias[j] - want).abs() < 1e-12, "{name}: {} vs {want}", p_bias[j]);
    }
    // The rose: 12 bins per angle; the observed counts add up to the catalogue, the band is ordered.
    let rose = read_table(&rose_path).unwrap();
    let rc = Columns::new(&rose, &rose_path);
    let q = rc.str("quantity").unwrap();
    let (obs, lo, med, hi) = (
        rc.f64("observed").unwrap(),
        rc.f64("null_lo").unwrap(),
        rc.f64("null_median").unwrap(),
        rc.f64("null_hi").unwrap(),
    );
    for angle in ["varpi_deg", "node_deg", "argperi_deg"] {
        let rows: Vec<usize> = (0..q.len()).filter(|&i| q[i] == angle).collect();
        assert_eq!(rows.len(), 12, "{angle}");
        assert_eq!(rows.iter().map(|&i| obs[i]).sum::<f64>(), 12.0, "{angle}");
        assert!(rows.iter().all(|&i| lo[i] <= med[i] && med[i] <= hi[i]), "{angle}");
        assert!(rows.iter().any(|&i| hi[i] > 0.0), "{angle}: an empty band");
    }
    assert_eq!(rc.f64("bin_hi_deg").unwrap()[11], 360.0);
    // Weights count in the rose: the same catalogue at weight 2 each (same ids, seed and maps,
    // so the same synthetic angles) doubles the observed counts and every bound of the band.
    let text = std::fs::read_to_string(d.path().join("catalog.csv")).unwrap();
    let weighted: Vec<String> = text
        .lines()
        .enumerate()
        .map(|(i, l)| format!("{l},{}", if i == 0 { "weight" } else { "2" }))
        .collect();
    std::fs::write(d.path().join("catalog_w.csv"), weighted.join("\n") + "\n").unwrap();
    cluster_test("catalog_w.csv", "ct_w");
    let rose_w_path = d.path().join("ct_w").join("rose.csv");
    let rose_w = read_table(&rose_w_path).unwrap();
    let rw = Columns::new(&rose_w, &rose_w_path);
    for (col, plain) in [
        ("observed", &obs),
        ("null_lo", &lo),
        ("null_median", &med),
        ("null_hi", &hi),
    ] {
        let w = rw.f64(col).unwrap();
        assert!(
            w.iter().zip(plain.iter()).all(|(w, p)| (w - 2.0 * p).abs() < 1e-9),
            "{col}: weight 2 does not double the rose"
        );
    }
    // The report of the output directory shows the null distributions and the banded roses.
    run_ok(&["report", &p("ct")]);
    let html = std::fs::read_to_string(ct.join("index.html")).unwrap();
    for f in [
        "cluster_null_rayleigh_varpi",
        "cluster_null_mean_pole",
        "rose_varpi_deg",
        "rose_node_deg",
    ] {
        assert!(html.contains(&format!("figures/{f}.svg")), "{f} missing");
    }
    assert!(
        html.contains("the bias-aware null"),
        "the roses carry the bias-aware band"
    );
    // Parquet by default, with the same names.
    run_ok(&[
        "cluster-test",
        "--catalog",
        &p("catalog.csv"),
        "--bias-map",
        &p("ct/bias_map.csv"),
        "--trials",
        "20",
        "--out",
        &p("ctp"),
    ]);
    for f in ["cluster_test.parquet", "cluster_null.parquet", "rose.parquet"] {
        assert!(d.path().join("ctp").join(f).exists(), "{f}");
    }
    let bad = seine(&[
        "cluster-test",
        "--catalog",
        &p("catalog.csv"),
        "--survey",
        &p("wide.toml"),
        "--rose-bins",
        "0",
        "--out",
        &p("ct0"),
    ]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(stderr(&bad).contains("--rose-bins"), "{}", stderr(&bad));
    assert!(!d.path().join("ct0").exists(), "nothing is written for a bad option");
}

#[test]
fn yield_and_compare_models_write_tables_and_conclusions() {
    let d = tempfile::tempdir().unwrap();
    let p = |s: &str| d.path().join(s).display().to_string();
    setup(d.path());
    let msg = run_ok(&[
        "yield",
        "--survey",
        &p("wide.toml"),
        "--survey",
        &p("patch.toml"),
        "--objects",
        &p("catalog.csv"),
        "--out",
        &p("y"),
        "--format",
        "csv",
    ]);
    assert!(
        msg.contains("wide:") && msg.contains("patch:") && msg.contains("Most discoveries"),
        "{msg}"
    );
    let ratio = csv_col_nan(&d.path().join("y/yield.csv"), "ratio_to_best");
    assert!(ratio.iter().filter(|r| r.is_finite()).all(|r| *r >= 0.0));
    // Rows come in blocks of (wide, patch, any) per bin: "any" finds at least what each finds.
    let found = csv_col(&d.path().join("y/yield.csv"), "discovered");
    for b in found.chunks(3) {
        assert!(b[2] >= b[0].max(b[1]), "{b:?}");
    }
    assert!(found.iter().sum::<f64>() > 0.0);
    // yield_cadence: each survey's revisit interval and its discoveries, which the distance bins
    // of yield.csv partition.
    let yc = d.path().join("y/yield_cadence.csv");
    let df = read_table(&yc).unwrap();
    let c = Columns::new(&df, &yc);
    assert_eq!(c.str("plan").unwrap(), ["wide", "patch"]);
    let yt = read_table(&d.path().join("y/yield.csv")).unwrap();
    let ytc = Columns::new(&yt, &yc);
    let (surv, quant) = (ytc.str("survey").unwrap(), ytc.str("quantity").unwrap());
    for (k, name) in ["wide", "patch"].iter().enumerate() {
        let in_bins: f64 = (0..surv.len())
            .filter(|&i| surv[i] == *name && quant[i] == "r_discovery_au")
            .map(|i| found[i])
            .sum();
        assert_eq!(c.f64("n_discovered").unwrap()[k], in_bins, "{name}");
    }
    assert_eq!(c.i64("n_objects").unwrap(), [12, 12]);
    // The patch is seen on nights 10 and 355 nights apart: its median interval is one of those.
    let days = c.f64("cadence_days").unwrap();
    assert!(days.iter().all(|d| *d >= 1.0), "{days:?}");
    assert!([10.0, 355.0].contains(&days[1]), "{days:?}");
    run_ok(&["report", &p("y")]);
    let html = std::fs::read_to_string(d.path().join("y/index.html")).unwrap();
    assert!(
        html.contains("figures/yield_cadence.svg"),
        "the report of a yield run shows its figure"
    );
    // A cadence plan is built first, then compared like any survey.
    let plan = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/deep-plan.toml");
    let msg = run_ok(&[
        "yield",
        "--plan",
        &plan.display().to_string(),
        "--survey",
        &p("wide.toml"),
        "--objects",
        &p("catalog.csv"),
        "--out",
        &p("yp"),
        "--format",
        "csv",
        "--seed",
        "3",
    ]);
    assert!(
        d.path().join("yp/plans/deep-plan.survey.toml").exists() && msg.contains("any:"),
        "{msg}"
    );
    // Two invented "models": the catalogue itself cloned with fresh M, and a shifted copy.
    let cat = std::fs::read_to_string(d.path().join("catalog.csv")).unwrap();
    let mut m1 = String::from(cat.lines().next().unwrap());
    let mut m2 = m1.clone();
    for k in 0..20 {
        for line in cat.lines().skip(1) {
            let f: Vec<&str> = line.split(',').collect();
            let id: i64 = f[0].parse::<i64>().unwrap() * 100 + k;
            let m = (k as f64 * 18.0 + 7.0) % 360.0;
            let a2: f64 = f[1].parse::<f64>().unwrap() * 1.6;
            m1.push_str(&format!(
                "\n{id},{},{},{},{},{},{m},60400,{}",
                f[1], f[2], f[3], f[4], f[5], f[8]
            ));
            m2.push_str(&format!(
                "\n{id},{a2},{},{},{},{},{m},60400,{}",
                f[2], f[3], f[4], f[5], f[8]
            ));
        }
    }
    std::fs::write(d.path().join("m1.csv"), m1 + "\n").unwrap();
    std::fs::write(d.path().join("m2.csv"), m2 + "\n").unwrap();
    for density in ["kde", "binned"] {
        let out = p(&format!("cm_{density}"));
        let msg = run_ok(&[
            "compare-models",
            "--survey",
            &p("wide.toml"),
            "--observed",
            &p("catalog.csv"),
            "--model",
            &format!("near={}", p("m1.csv")),
            "--model",
            &format!("far={}", p("m2.csv")),
            "--space",
            "a_au,q_au,inc_deg",
            "--density",
            density,
            "--synthetic",
            "200",
            "--out",
            &out,
            "--format",
            "csv",
        ]);
        assert!(msg.contains("near is favoured over far"), "{density}: {msg}");
        let ll = csv_col(&Path::new(&out).join("models.csv"), "log_likelihood");
        assert!(ll[0] > ll[1], "{density}: {ll:?}");
        // 3 observables × 2 tests × 2 models, each p-value a Monte Carlo one: (1 + #)/(1 + 200).
        let p = csv_col(&Path::new(&out).join("marginals.csv"), "p_value");
        assert_eq!(p.len(), 12);
        assert!(p.iter().all(|x| *x >= 1.0 / 201.0 && *x <= 1.0), "{p:?}");
        let err = csv_col(&Path::new(&out).join("models.csv"), "log_likelihood_error");
        assert!(err.iter().all(|e| e.is_finite() && *e >= 0.0), "{err:?}");
    }
}

#[test]
fn bad_input_exits_2_with_a_clear_message() {
    let d = tempfile::tempdir().unwrap();
    let p = |s: &str| d.path().join(s).display().to_string();
    setup(d.path());
    let cases: Vec<(Vec<String>, &str)> = vec![
        (
            vec![
                "detectability".into(),
                "--survey".into(),
                p("wide.toml"),
                "--objects".into(),
                p("catalog.csv"),
                "--out".into(),
                p("x"),
                "--redraw".into(),
                "sideways".into(),
            ],
            "--redraw",
        ),
        (
            vec![
                "bias-map".into(),
                "--survey".into(),
                p("wide.toml"),
                "--objects".into(),
                p("catalog.csv"),
                "--out".into(),
                p("x"),
                "--grid".into(),
                "8".into(),
            ],
            "--grid",
        ),
        (
            vec![
                "cluster-test".into(),
                "--catalog".into(),
                p("catalog.csv"),
                "--out".into(),
                p("x"),
            ],
            "--bias-map",
        ),
        (
            vec![
                "compare-models".into(),
                "--survey".into(),
                p("wide.toml"),
                "--observed".into(),
                p("catalog.csv"),
                "--model".into(),
                "nameless".into(),
                "--out".into(),
                p("x"),
            ],
            "NAME=OBJECTS",
        ),
        (
            vec![
                "yield".into(),
                "--survey".into(),
                p("wide.toml"),
                "--objects".into(),
                p("missing.csv"),
                "--out".into(),
                p("x"),
            ],
            "missing.csv",
        ),
    ];
    let compare = |extra: &[&str]| -> Vec<String> {
        let mut v: Vec<String> = [
            "compare-models",
            "--survey",
            &p("wide.toml"),
            "--observed",
            &p("catalog.csv"),
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        v.extend(extra.iter().map(|s| s.to_string()));
        v.extend(["--out".to_string(), p("x")]);
        v
    };
    let model = format!("a={}", p("catalog.csv"));
    let model_b = format!("b={}", p("catalog.csv"));
    let empty = format!("={}", p("catalog.csv"));
    let mut cases = cases;
    cases.extend([
        (compare(&["--model", &model, "--model", &model]), "given twice"),
        (compare(&["--model", &empty]), "needs a name"),
        (compare(&["--model", &model, "--synthetic", "0"]), "--synthetic 0"),
        (
            compare(&["--model", &model, "--space", "a_au,a_au"]),
            "`a_au` is named twice",
        ),
        (
            compare(&["--model", &model, "--frame", "galactic"]),
            "--frame `galactic`",
        ),
        (
            compare(&["--model", &model, "--population-size", &format!("{}=10", "c")]),
            "no --model is named `c`",
        ),
        (
            compare(&[
                "--model",
                &model,
                "--model",
                &model_b,
                "--density",
                "binned",
                "--prior-objects=-1",
            ]),
            "--prior-objects",
        ),
        (
            vec![
                "detectability".into(),
                "--survey".into(),
                p("wide.toml"),
                "--objects".into(),
                p("catalog.csv"),
                "--clones".into(),
                "100000000".into(),
                "--out".into(),
                p("x"),
            ],
            "--over-budget",
        ),
    ]);
    for (args, needle) in cases {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let o = seine(&args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
        assert!(stderr(&o).contains(needle), "{args:?}: {}", stderr(&o));
        assert!(!d.path().join("x").exists(), "{args:?}: a refused run writes nothing");
    }
    // yield with a plan and an unreadable population: refused before anything is built.
    let plan = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/deep-plan.toml");
    let o = seine(&[
        "yield",
        "--plan",
        &plan.display().to_string(),
        "--objects",
        &p("missing.csv"),
        "--out",
        &p("y0"),
    ]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(!d.path().join("y0").exists(), "yield wrote something when it refused");
}

#[test]
fn compare_models_refuses_mixed_frames_or_converts_them() {
    let d = tempfile::tempdir().unwrap();
    let p = |s: &str| d.path().join(s).display().to_string();
    setup(d.path());
    // The catalogue marked barycentric; the model (40 fresh-M copies of it) heliocentric.
    let cat = std::fs::read_to_string(d.path().join("catalog.csv")).unwrap();
    let bary: String = cat
        .lines()
        .enumerate()
        .map(|(k, l)| format!("{l},{}\n", if k == 0 { "frame" } else { "barycentric" }))
        .collect();
    std::fs::write(d.path().join("bary.csv"), bary).unwrap();
    let mut model = String::from(cat.lines().next().unwrap());
    for k in 0..40 {
        for line in cat.lines().skip(1) {
            let f: Vec<&str> = line.split(',').collect();
            let id = f[0].parse::<i64>().unwrap() * 100 + k;
            let m = (k as f64 * 9.0 + 3.0) % 360.0;
            model.push_str(&format!(
                "\n{id},{},{},{},{},{},{m},60400,{}",
                f[1], f[2], f[3], f[4], f[5], f[8]
            ));
        }
    }
    std::fs::write(d.path().join("m.csv"), model + "\n").unwrap();
    let args = |frame: &[&str], out: &str| -> Vec<String> {
        let mut v: Vec<String> = [
            "compare-models",
            "--survey",
            &p("wide.toml"),
            "--observed",
            &p("bary.csv"),
            "--model",
            &format!("m={}", p("m.csv")),
            "--space",
            "a_au,inc_deg",
            "--synthetic",
            "50",
            "--bootstrap",
            "20",
            "--format",
            "csv",
            "--out",
            &p(out),
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        v.extend(frame.iter().map(|s| s.to_string()));
        v
    };
    let refused = seine(&args(&[], "mixed").iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(refused.status.code(), Some(2), "{}", stderr(&refused));
    assert!(
        stderr(&refused).contains("must share a frame") && stderr(&refused).contains("--frame"),
        "{}",
        stderr(&refused)
    );
    assert!(!d.path().join("mixed").exists());
    let msg = run_ok(
        &args(&["--frame", "heliocentric"], "converted")
            .iter()
            .map(String::as_str)
            .collect::<Vec<_>>(),
    );
    assert!(msg.contains("heliocentric elements"), "{msg}");
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.path().join("converted/summary.json")).unwrap()).unwrap();
    assert_eq!(summary["frame"], "heliocentric");
}
