//! `seine draw` as a user runs it: outputs, provenance, shards, cloning, and bad specs
//! (one message with the key path, exit status 2, no output file).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use polars::prelude::DataFrame;
use seine::io::table::{read_parquet_metadata, read_table};

const SPEC: &str = r#"
[population]
name = "test disk"
epoch_mjd = 60676.0
frame = "barycentric"
[orbit]
a_au = { dist = "power-law", k = -1.5, lo = 50.0, hi = 1000.0 }
q_au = { dist = "uniform", lo = 30.0, hi = 40.0 }
inc_deg = { dist = "isotropic" }
[photometry]
h_mag = { dist = "knee", alpha_bright = 0.9, alpha_faint = 0.4, break_mag = 8.3, lo = 4.0, hi = 10.0 }
"#;

fn seine(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_seine"))
        .args(args)
        .output()
        .expect("seine runs")
}

fn write_spec(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn draw(spec: &Path, out: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        "draw",
        "--spec",
        spec.to_str().unwrap(),
        "--seed",
        "42",
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    args.extend_from_slice(extra);
    seine(&args)
}

fn ok(o: &Output) {
    assert!(
        o.status.success(),
        "seine failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

#[test]
fn draws_parquet_with_provenance_and_csv_by_extension() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "pop.toml", SPEC);
    let out = dir.path().join("objects.parquet");
    ok(&draw(&spec, &out, &["--count", "1000"]));
    let df = read_table(&out).unwrap();
    assert_eq!(df.height(), 1000);
    for c in [
        "id",
        "a_au",
        "e",
        "q_au",
        "inc_deg",
        "node_deg",
        "argperi_deg",
        "mean_anomaly_deg",
        "epoch_mjd",
        "h_mag",
    ] {
        assert!(df.column(c).is_ok(), "missing {c}");
    }
    let md = read_parquet_metadata(&out).unwrap();
    let prov = &md.iter().find(|(k, _)| k == "seine.provenance").unwrap().1;
    assert!(prov.contains("\"seed\":42") && prov.contains("pop.toml") && prov.contains(seine::version()));
    assert!(
        md.iter()
            .any(|(k, v)| k == "seine.population_spec" && v.contains("test disk"))
    );
    let csv = dir.path().join("objects.csv");
    ok(&draw(&spec, &csv, &["--count", "1000"]));
    assert!(read_table(&csv).unwrap().height() == 1000);
    assert!(dir.path().join("objects.csv.provenance.json").exists());
}

fn sorted_by_id(mut df: DataFrame) -> DataFrame {
    df = df.sort(["id"], Default::default()).unwrap();
    df
}

/// Shards are disjoint and their union is the whole, object for object.
#[test]
fn shard_union_equals_the_whole() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "pop.toml", SPEC);
    let whole = dir.path().join("whole.parquet");
    ok(&draw(&spec, &whole, &["--count", "3001"]));
    let mut union: Option<DataFrame> = None;
    for k in 0..3 {
        let part = dir.path().join(format!("part{k}.parquet"));
        ok(&draw(&spec, &part, &["--count", "3001", "--shard", &format!("{k}/3")]));
        let df = read_table(&part).unwrap();
        union = Some(match union {
            None => df,
            Some(mut u) => {
                u.vstack_mut(&df).unwrap();
                u
            }
        });
    }
    let union = sorted_by_id(union.unwrap());
    assert!(union.equals(&read_table(&whole).unwrap()));
}

#[test]
fn clones_particles_with_parent_ids_and_extra_columns() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("particles.csv"),
        "id,a_au,e,inc_deg,node_deg,argperi_deg,mean_anomaly_deg,epoch_mjd,h_mag,sim_tag\n\
         7,250.0,0.8,12.0,230.0,300.0,5.0,60676.0,7.0,11\n\
         9,310.0,0.85,20.0,255.0,310.0,355.0,60676.0,7.5,12\n",
    )
    .unwrap();
    let spec = write_spec(
        dir.path(),
        "clone.toml",
        "[import]\nobjects = \"particles.csv\"\nclones = 4000\nrotate_node = true\n\
         h_mag = { dist = \"exponential\", alpha = 0.6, lo = 5.0, hi = 9.0 }\n",
    );
    let out = dir.path().join("clones.parquet");
    ok(&draw(&spec, &out, &[]));
    let df = read_table(&out).unwrap();
    assert_eq!(df.height(), 8000);
    let parent = df.column("parent_id").unwrap().i64().unwrap();
    assert_eq!(
        (parent.get(0), parent.get(3999), parent.get(4000)),
        (Some(7), Some(7), Some(9))
    );
    let tag = df.column("sim_tag").unwrap().i64().unwrap();
    assert_eq!((tag.get(0), tag.get(7999)), (Some(11), Some(12)));
    let a = df.column("a_au").unwrap().f64().unwrap();
    assert_eq!(a.get(4001), Some(310.0));
    // Fresh M: uniform on [0, 360): its mean is 180 within 5 standard errors (σ = 360/√12).
    let m: Vec<f64> = df
        .column("mean_anomaly_deg")
        .unwrap()
        .f64()
        .unwrap()
        .into_no_null_iter()
        .collect();
    let mean = m.iter().sum::<f64>() / m.len() as f64;
    assert!(
        (mean - 180.0).abs() < 5.0 * 360.0 / 12f64.sqrt() / (m.len() as f64).sqrt(),
        "{mean}"
    );
    let h: Vec<f64> = df.column("h_mag").unwrap().f64().unwrap().into_no_null_iter().collect();
    assert!(h.iter().all(|h| (5.0..=9.0).contains(h)) && h.iter().any(|h| *h != 7.0));
    // A shard of the clones is the same rows as in the whole.
    let part = dir.path().join("part.parquet");
    ok(&draw(&spec, &part, &["--shard", "1/2"]));
    let p = read_table(&part).unwrap();
    assert!(p.equals(&df.slice(4000, 4000)));
}

/// Each bad spec: exit status 2, one message naming the key path, and no output file.
#[test]
fn bad_specs_fail_with_the_key_path_and_no_output() {
    let dir = tempfile::tempdir().unwrap();
    let cases: Vec<(&str, String, &str)> = vec![
        ("unknown key", SPEC.replace("inc_deg =", "inclination ="), "inclination"),
        (
            "unknown distribution",
            SPEC.replace("\"isotropic\"", "\"isotropik\""),
            "orbit.inc_deg",
        ),
        (
            "lo > hi",
            SPEC.replace("lo = 30.0, hi = 40.0", "lo = 40.0, hi = 30.0"),
            "orbit.q_au",
        ),
        (
            "sigma <= 0",
            SPEC.replace("{ dist = \"isotropic\" }", "{ dist = \"rayleigh\", sigma = -1.0 }"),
            "orbit.inc_deg",
        ),
        (
            "kappa < 0",
            format!("{SPEC}\n[importance]\nmean_anomaly_deg = {{ dist = \"von-mises\", mean = 0.0, kappa = -2.0 }}\n"),
            "importance.mean_anomaly_deg",
        ),
        (
            "impossible constraint",
            format!("{SPEC}\n[constraints]\naphelion_au = [1.0, 20.0]\n"),
            "constraints.aphelion_au",
        ),
        (
            "impossible constraint on a drawn range",
            format!("{SPEC}\n[constraints]\nq_au = [50.0, 60.0]\n"),
            "constraints.q_au",
        ),
        ("wrong type", SPEC.replace("k = -1.5", "k = \"steep\""), "orbit.a_au"),
        (
            "missing epoch",
            SPEC.replace("epoch_mjd = 60676.0", ""),
            "population.epoch_mjd",
        ),
        (
            "two parametrizations",
            SPEC.replace("[photometry]", "e = { dist = \"fixed\", value = 0.5 }\n[photometry]"),
            "orbit",
        ),
    ];
    for (what, text, key) in cases {
        let spec = write_spec(dir.path(), "bad.toml", &text);
        let out = dir.path().join("bad.parquet");
        let o = draw(&spec, &out, &["--count", "100"]);
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{what}: {err}");
        assert!(
            err.contains(key) && err.contains("bad.toml"),
            "{what}: message lacks `{key}`: {err}"
        );
        assert_eq!(err.trim().lines().count(), 1, "{what}: expected one line: {err}");
        assert!(!out.exists(), "{what}: output written");
        let leftovers: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.path().extension().is_some_and(|x| x == "tmp"))
            .collect();
        assert!(leftovers.is_empty(), "{what}: temporary file left");
    }
}

#[test]
fn unknown_key_suggests_the_nearest() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "bad.toml", &SPEC.replace("q_au =", "q_ua ="));
    let o = draw(&spec, &dir.path().join("x.parquet"), &["--count", "10"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("did you mean `q_au`") && err.contains("line "), "{err}");
}

/// Every example spec draws and gives a valid objects table (the examples must not rot).
#[test]
fn example_specs_draw_valid_objects_tables() {
    let dir = tempfile::tempdir().unwrap();
    let examples = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/populations");
    let mut n = 0;
    for entry in std::fs::read_dir(&examples).unwrap() {
        let spec = entry.unwrap().path();
        if spec.extension().is_none_or(|e| e != "toml") {
            continue;
        }
        let text = std::fs::read_to_string(&spec).unwrap();
        let out = dir
            .path()
            .join(format!("{}.parquet", spec.file_stem().unwrap().to_string_lossy()));
        let count: &[&str] = if text.contains("[import]") {
            &[]
        } else {
            &["--count", "2000"]
        };
        ok(&draw(&spec, &out, count));
        let t = seine::population::objects::ObjectTable::read(&out).unwrap();
        assert!(t.len() >= 100, "{}", spec.display());
        n += 1;
    }
    assert!(n >= 4, "expected the four example specs, found {n}");
}

/// The table does not depend on the thread count (DESIGN: randomness), byte for byte.
#[test]
fn thread_count_does_not_change_the_table() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "pop.toml", SPEC);
    let (one, two) = (dir.path().join("one.csv"), dir.path().join("two.csv"));
    ok(&draw(&spec, &one, &["--count", "50000", "--threads", "1"]));
    ok(&draw(&spec, &two, &["--count", "50000", "--threads", "2"]));
    assert_eq!(std::fs::read(&one).unwrap(), std::fs::read(&two).unwrap());
}
