//! Observe's table of discoveries, `seine table`, and the planner's warning when a plan cannot
//! keep its revisits: each checked against what it is derived from (the objects table, a
//! plain count, the visits the planner wrote), through the binary as a user runs it.

mod common;

use std::path::{Path, PathBuf};

use seine::io::table::{Columns, read_table};

fn run_ok(args: &[&str]) -> std::process::Output {
    let o = common::seine(args);
    assert!(o.status.success(), "seine {args:?}: {}", common::stderr(&o));
    o
}

fn s(p: &Path) -> String {
    p.to_str().unwrap().to_string()
}

/// The synoptic plan and bright invented objects observed through it (some are found).
fn observed(dir: &Path, format: &str) -> PathBuf {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs");
    run_ok(&[
        "plan",
        "--plan",
        &s(&root.join("synoptic-plan.toml")),
        "--out",
        &s(&dir.join("syn.csv")),
    ]);
    common::bright_population(dir);
    let objects = dir.join("objects.parquet");
    run_ok(&[
        "draw",
        "--spec",
        &s(&dir.join("bright.toml")),
        "--count",
        "2000",
        "--seed",
        "4",
        "--out",
        &s(&objects),
        "--quiet",
    ]);
    let out = dir.join("run");
    run_ok(&[
        "observe",
        "--survey",
        &s(&dir.join("syn.survey.toml")),
        "--objects",
        &s(&objects),
        "--out",
        &s(&out),
        "--format",
        format,
        "--quiet",
    ]);
    out
}

#[test]
fn discoveries_are_the_detected_objects_in_order_of_discovery() {
    let tmp = tempfile::tempdir().unwrap();
    let run = observed(tmp.path(), "csv");
    let (obj_path, disc_path) = (run.join("objects.csv"), run.join("discoveries.csv"));
    let (objects, found) = (read_table(&obj_path).unwrap(), read_table(&disc_path).unwrap());
    let o = Columns::new(&objects, &obj_path);
    let d = Columns::new(&found, &disc_path);
    let detected: Vec<bool> = o.str("detected").unwrap().iter().map(|x| x == "true").collect();
    let ids = o.i64("id").unwrap();
    let mjd: Vec<Option<f64>> = objects
        .column("discovery_mjd")
        .unwrap()
        .as_materialized_series()
        .f64()
        .unwrap()
        .iter()
        .collect();
    // The objects table's discovered rows, by (discovery_mjd, id).
    let mut expected: Vec<(f64, i64)> = (0..ids.len())
        .filter(|&i| detected[i])
        .map(|i| (mjd[i].expect("a discovery has an epoch"), ids[i]))
        .collect();
    expected.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    assert!(expected.len() >= 5, "too few discoveries to test: {}", expected.len());
    let got: Vec<(f64, i64)> = d
        .f64("discovery_mjd")
        .unwrap()
        .into_iter()
        .zip(d.i64("id").unwrap())
        .collect();
    assert_eq!(got, expected);
    let names: Vec<String> = found.get_column_names().iter().map(|c| c.to_string()).collect();
    assert_eq!(names[0], "id");
    assert!(!names.contains(&"detected".to_string()));
    for c in seine::engine::discoveries::CIRCUMSTANCES {
        assert!(names.contains(&c.to_string()), "{c} missing: {names:?}");
    }
    // The library reads it back, and an analysis takes it as its catalogue.
    let rows = seine::engine::discoveries::read(&disc_path).unwrap();
    assert_eq!(rows.len(), expected.len());
    assert!(rows.iter().all(|r| r.rate_arcsec_per_hr > 0.0 && r.r_au > 20.0));
    run_ok(&[
        "detectability",
        "--survey",
        &s(&tmp.path().join("syn.survey.toml")),
        "--objects",
        &s(&disc_path),
        "--clones",
        "5",
        "--out",
        &s(&tmp.path().join("det")),
        "--quiet",
    ]);
}

#[test]
fn objects_without_ids_get_their_row_numbers() {
    let tmp = tempfile::tempdir().unwrap();
    let run = observed(tmp.path(), "parquet");
    // The same objects without their id column, as CSV: discoveries keep the row numbers.
    let no_id = tmp.path().join("no-id.csv");
    let cols = "a_au,e,inc_deg,node_deg,argperi_deg,mean_anomaly_deg,epoch_mjd,h_mag";
    run_ok(&[
        "table",
        &s(&tmp.path().join("objects.parquet")),
        "--columns",
        cols,
        "--out",
        &s(&no_id),
    ]);
    let out = tmp.path().join("run-no-id");
    run_ok(&[
        "observe",
        "--survey",
        &s(&tmp.path().join("syn.survey.toml")),
        "--objects",
        &s(&no_id),
        "--out",
        &s(&out),
        "--quiet",
    ]);
    let with = read_table(&run.join("discoveries.parquet")).unwrap();
    let without = read_table(&out.join("discoveries.parquet")).unwrap();
    let ids = |df: &polars::prelude::DataFrame, p: &Path| Columns::new(df, p).i64("id").unwrap();
    // The drawn ids are the row numbers, so both runs name the same objects.
    assert_eq!(ids(&with, &run), ids(&without, &out));
}

#[test]
fn table_looks_counts_filters_and_converts() {
    let tmp = tempfile::tempdir().unwrap();
    let run = observed(tmp.path(), "parquet");
    let objects = run.join("objects.parquet");
    let o = run_ok(&["table", &s(&objects)]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("2000 rows") && text.contains("a_au") && text.contains("f64"),
        "{text}"
    );
    // --where against a count made here.
    let df = read_table(&objects).unwrap();
    let c = Columns::new(&df, &objects);
    let (a, det) = (
        c.f64("a_au").unwrap(),
        df.column("detected").unwrap().bool().unwrap().clone(),
    );
    let expected = a
        .iter()
        .zip(det.iter())
        .filter(|(a, d)| **a > 60.0 && d.unwrap())
        .count();
    let o = run_ok(&[
        "table",
        &s(&objects),
        "--where",
        "detected == true",
        "--where",
        "a_au > 60",
        "--count",
    ]);
    assert_eq!(String::from_utf8_lossy(&o.stdout).trim(), expected.to_string());
    // --head prints CSV with the chosen columns.
    let o = run_ok(&["table", &s(&objects), "--columns", "id,a_au", "--head", "3"]);
    let head = String::from_utf8_lossy(&o.stdout);
    assert_eq!(head.lines().count(), 4, "{head}");
    assert!(head.starts_with("id,a_au\n"), "{head}");
    // Parquet → CSV → Parquet keeps every value.
    let (csv, back) = (tmp.path().join("o.csv"), tmp.path().join("back.parquet"));
    run_ok(&["table", &s(&objects), "--columns", "id,a_au,e,h_mag", "--out", &s(&csv)]);
    run_ok(&["table", &s(&csv), "--out", &s(&back)]);
    let (x, y) = (read_table(&csv).unwrap(), read_table(&back).unwrap());
    assert!(x.equals_missing(&y));
    assert_eq!(Columns::new(&y, &back).f64("a_au").unwrap(), c.f64("a_au").unwrap());
    // Bad filters: exit status 2, one sentence naming what is wrong.
    for (bad, says) in [
        ("a_au ~ 3", "COLUMN OP VALUE"),
        ("nope > 1", "no column `nope`"),
        ("a_au > x", "not one"),
    ] {
        let o = common::seine(&["table", &s(&objects), "--where", bad]);
        assert_eq!(o.status.code(), Some(2), "{bad}");
        let err = common::stderr(&o);
        assert!(err.contains(says) && err.trim().lines().count() == 1, "{bad}: {err}");
    }
    let o = common::seine(&["table", &s(&objects), "--out", &s(&objects)]);
    assert_eq!(o.status.code(), Some(2), "overwriting the input is refused");
}

/// A plan over `nights` nights of a fixed region `lon_span_deg` wide, every night.
fn small_plan(dir: &Path, name: &str, lon_span_deg: f64) -> PathBuf {
    let text = format!(
        "[plan]\nname = \"{name}\"\nfirst_night = 61440\nlast_night = 61449\nseed = 1\nexposure_s = 60.0\n\
         overhead_s = 20.0\nmax_airmass = 2.0\nmin_solar_elongation_deg = 90.0\n\n\
         [site]\nlongitude_deg = 19.3\nlatitude_deg = 20.6\nelevation_m = 2350.0\n\n\
         [field]\nshape = \"rectangle\"\nwidth_deg = 2.0\nheight_deg = 2.0\n\n\
         [region]\nmode = \"fixed\"\necliptic_lat_min_deg = -4.0\necliptic_lat_max_deg = 4.0\n\
         ecliptic_lon_min_deg = 130.0\necliptic_lon_max_deg = {}\n\n\
         [revisit]\nvisits_per_night = 3\nspacing_min = 30.0\nevery_nights = 1\n\n\
         [depth]\nzenith_mag = 23.0\n",
        130.0 + lon_span_deg
    );
    common::write(dir, &format!("{name}.toml"), &text)
}

#[test]
fn the_planner_warns_when_the_nights_cannot_hold_the_revisits() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    // 8 fields × 3 visits × 80 s: a few minutes a night, kept every night.
    let fits = small_plan(d, "fits", 8.0);
    let o = run_ok(&["plan", "--plan", &s(&fits), "--out", &s(&d.join("fits.csv"))]);
    assert!(!common::stderr(&o).contains("warning"), "{}", common::stderr(&o));
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("fits.coverage.json")).unwrap()).unwrap();
    assert_eq!(json["revisits"]["achieved_median_days"], 1.0);
    assert_eq!(
        json["revisits"]["fields_as_designed"],
        json["revisits"]["fields_revisited"]
    );
    // The same fields under weather that loses 60% of the nights over a month: whole nights go,
    // so the calendar intervals grow (the achieved median is above the designed one night),
    // but every field is seen on every night the plan observed: kept, no warning.
    let text = std::fs::read_to_string(&fits)
        .unwrap()
        .replacen("seed = 1\n", "seed = 1\nweather_loss = 0.6\n", 1)
        .replacen("last_night = 61449", "last_night = 61469", 1);
    let cloudy = common::write(d, "cloudy.toml", &text);
    let o = run_ok(&[
        "plan",
        "--plan",
        &s(&cloudy),
        "--out",
        &s(&d.join("cloudy.csv")),
        "--quiet",
    ]);
    assert!(
        common::stderr(&o).is_empty(),
        "--quiet with a kept plan says nothing: {}",
        common::stderr(&o)
    );
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("cloudy.coverage.json")).unwrap()).unwrap();
    let r = &json["revisits"];
    assert!(r["achieved_median_days"].as_f64().unwrap() > 1.0, "{r}");
    assert_eq!(r["fields_as_designed"], r["fields_revisited"], "{r}");
    assert!(r["observing_nights"].as_u64().unwrap() < 21, "{r}");
    // 360 fields × 3 visits × 80 s = 24 h a night: the fields take turns.
    let crowded = small_plan(d, "crowded", 180.0);
    let o = run_ok(&["plan", "--plan", &s(&crowded), "--out", &s(&d.join("crowded.csv"))]);
    let err = common::stderr(&o);
    assert!(
        err.contains("warning") && err.contains("designed every night") && err.contains("achieved median"),
        "{err}"
    );
    // The achieved median interval, recounted from the visits the planner wrote.
    let path = d.join("crowded.csv");
    let v = read_table(&path).unwrap();
    let c = Columns::new(&v, &path);
    let (field, night) = (c.i64("field_id").unwrap(), c.i64("night").unwrap());
    let mut by: std::collections::BTreeMap<i64, Vec<i64>> = Default::default();
    for (f, n) in field.iter().zip(&night) {
        by.entry(*f).or_default().push(*n);
    }
    let mut gaps: Vec<i64> = Vec::new();
    for ns in by.values_mut() {
        ns.sort_unstable();
        ns.dedup();
        gaps.extend(ns.windows(2).map(|w| w[1] - w[0]));
    }
    gaps.sort_unstable();
    let n = gaps.len();
    let median = if n % 2 == 1 {
        gaps[n / 2] as f64
    } else {
        0.5 * (gaps[n / 2 - 1] + gaps[n / 2]) as f64
    };
    assert!(median > 1.0, "the crowded plan should slip: median {median}");
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("crowded.coverage.json")).unwrap()).unwrap();
    assert_eq!(json["revisits"]["achieved_median_days"].as_f64(), Some(median));
    assert!(err.contains(&format!("achieved median {} nights", median)), "{err}");
}
