//! Distribution and robustness of `observe`, `draw` and `merge` through the binary: part
//! files and `--resume` after a real SIGKILL or SIGINT, shards merged back into one run,
//! thread-count invariance, shards from the Slurm environment, and `seine provenance`.

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

use polars::prelude::DataFrame;
use seine::io::Provenance;
use seine::io::table::{read_table, write_table};

mod common;
use common::{bench_objects, bench_survey, stderr, walk};

const BIN: &str = env!("CARGO_BIN_EXE_seine");

/// A scenario big enough that a run with small chunks takes a few seconds.
struct Scenario {
    dir: tempfile::TempDir,
    spec: PathBuf,
    objects: PathBuf,
}

fn scenario(n_objects: usize, n_visits: usize) -> Scenario {
    let dir = tempfile::tempdir().unwrap();
    let spec = bench_survey(dir.path(), n_visits);
    let objects = dir.path().join("objects.parquet");
    write_table(&mut bench_objects(n_objects), &objects, &Provenance::current()).unwrap();
    Scenario { dir, spec, objects }
}

impl Scenario {
    fn observe_cmd(&self, out: &str, extra: &[&str]) -> Command {
        let mut c = Command::new(BIN);
        c.arg("observe");
        if !extra.contains(&"--seed") {
            c.args(["--seed", "7"]);
        }
        c.arg("--survey")
            .arg(&self.spec)
            .arg("--objects")
            .arg(&self.objects)
            .arg("--out")
            .arg(self.dir.path().join(out))
            .args(extra)
            .env_remove("SLURM_ARRAY_TASK_ID")
            .env_remove("SLURM_ARRAY_TASK_COUNT");
        c
    }
    fn observe(&self, out: &str, extra: &[&str]) -> Output {
        let o = self.observe_cmd(out, extra).output().unwrap();
        assert_eq!(o.status.code(), Some(0), "observe {extra:?}: {}", stderr(&o));
        o
    }
    fn path(&self, p: &str) -> PathBuf {
        self.dir.path().join(p)
    }
}

fn table(p: &Path) -> DataFrame {
    read_table(p).unwrap_or_else(|e| panic!("{e}"))
}

/// Every column and row of the two output directories' tables agree, and their summaries
/// agree but for the timings.
fn assert_same_outputs(a: &Path, b: &Path) {
    for t in ["objects.parquet", "detections.parquet", "discoveries.parquet"] {
        let (x, y) = (table(&a.join(t)), table(&b.join(t)));
        assert_eq!(x.height(), y.height(), "{t}: row counts");
        assert!(
            x.equals_missing(&y),
            "{t} differs between {} and {}",
            a.display(),
            b.display()
        );
    }
    assert_eq!(summary_counts(a), summary_counts(b), "summary.json");
}

/// summary.json without the timings (which differ from run to run), floats rounded.
fn summary_counts(dir: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(dir.join("summary.json")).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let m = v.as_object_mut().unwrap();
    m.remove("elapsed_s");
    m.remove("objects_per_second");
    round_floats(&mut v);
    v
}

fn round_floats(v: &mut serde_json::Value) {
    match v {
        serde_json::Value::Number(n) if n.is_f64() => {
            let x = n.as_f64().unwrap();
            *v = serde_json::json!(format!("{x:.9e}"));
        }
        serde_json::Value::Array(a) => a.iter_mut().for_each(round_floats),
        serde_json::Value::Object(o) => o.values_mut().for_each(round_floats),
        _ => {}
    }
}

/// Wait until the run has finished at least `chunks` chunks (from its manifest), then signal it.
fn interrupt_after(child: &mut Child, out: &Path, chunks: usize, signal: &str) {
    let t = Instant::now();
    loop {
        let done = std::fs::read_to_string(out.join("manifest.json"))
            .ok()
            .and_then(|s| serde_json::from_str::<serde_json::Value>(&s).ok())
            .map_or(0, |m| m["chunks"].as_array().map_or(0, |c| c.len()));
        if done >= chunks {
            break;
        }
        assert!(
            child.try_wait().unwrap().is_none(),
            "the run ended before it could be interrupted"
        );
        assert!(t.elapsed() < Duration::from_secs(120), "no chunk finished in 120 s");
        std::thread::sleep(Duration::from_millis(20));
    }
    let pid = child.id().to_string();
    let st = Command::new("kill").args([signal, &pid]).status().unwrap();
    assert!(st.success());
}

fn assert_no_temporaries(out: &Path) {
    let leftovers: Vec<_> = walk(out)
        .into_iter()
        .filter(|p| p.to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "temporary files left: {leftovers:?}");
}

fn no_final_tables(out: &Path) {
    for t in ["objects.parquet", "detections.parquet", "summary.json"] {
        assert!(!out.join(t).exists(), "{t} exists after an interrupted run");
    }
}

#[test]
fn killed_run_resumes_to_identical_output() {
    let s = scenario(2000, 9000);
    let chunked = ["--chunk-size", "150"];
    let t = Instant::now();
    s.observe("whole", &chunked);
    eprintln!("uninterrupted run: {:.2} s", t.elapsed().as_secs_f64());
    // A second SIGINT ends the run at once (during the chunk in flight): its temporaries go too.
    for (signal, name, twice) in [
        ("-KILL", "killed", false),
        ("-INT", "interrupted", false),
        ("-INT", "interrupted-twice", true),
    ] {
        let out = s.path(name);
        let mut child = s.observe_cmd(name, &chunked).stderr(Stdio::piped()).spawn().unwrap();
        interrupt_after(&mut child, &out, 3, signal);
        if twice {
            std::thread::sleep(Duration::from_millis(5));
            let st = Command::new("kill")
                .args([signal, &child.id().to_string()])
                .status()
                .unwrap();
            assert!(st.success());
        }
        let o = child.wait_with_output().unwrap();
        if signal == "-INT" {
            // A clean stop: status 2 and the advice to resume (or, stopped at once, the word).
            assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
            let said = if twice { "interrupted" } else { "--resume" };
            assert!(stderr(&o).contains(said), "{}", stderr(&o));
        } else {
            assert_eq!(o.status.code(), None, "SIGKILL ends the process without a status");
        }
        no_final_tables(&out);
        if signal == "-INT" {
            assert_no_temporaries(&out);
        }
        let resumed = s.observe(name, &[&chunked[..], &["--resume"]].concat());
        assert!(stderr(&resumed).contains("chunks reused"), "{}", stderr(&resumed));
        assert_same_outputs(&s.path("whole"), &out);
        assert_no_temporaries(&out);
    }
}

#[test]
fn resume_reuses_chunks_and_refuses_a_changed_run() {
    let s = scenario(400, 3000);
    let chunked = ["--chunk-size", "100"];
    // A run asked to be resumable keeps its parts; a plain run removes them once assembled.
    s.observe("plain", &chunked);
    assert!(!s.path("plain/parts").exists(), "a plain run left its parts");
    s.observe("a", &[&chunked[..], &["--resume"]].concat());
    assert!(s.path("a/parts/objects/part-00003.parquet").exists());
    assert_same_outputs(&s.path("plain"), &s.path("a"));
    let o = s.observe("a", &[&chunked[..], &["--resume"]].concat());
    assert!(stderr(&o).contains("resumed: 4 of 4 chunks reused"), "{}", stderr(&o));
    // Another seed is another run: no chunk of the first may be reused.
    let o = s.observe("a", &[&chunked[..], &["--resume", "--seed", "8"]].concat());
    assert!(!stderr(&o).contains("resumed"), "{}", stderr(&o));
    s.observe("b", &[&chunked[..], &["--seed", "8"]].concat());
    assert_same_outputs(&s.path("a"), &s.path("b"));
}

#[test]
fn shards_merged_equal_one_run_in_any_order() {
    let s = scenario(500, 3000);
    s.observe("whole", &["--chunk-size", "60"]);
    let n = 3;
    for k in 0..n {
        s.observe(
            &format!("shard{k}"),
            &["--chunk-size", "60", "--shard", &format!("{k}/{n}")],
        );
    }
    // Given out of order: the manifests put them in shard order.
    let o = merge([s.path("shard2"), s.path("shard0"), s.path("shard1")], s.path("merged"));
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert_same_outputs(&s.path("whole"), &s.path("merged"));
    // A missing shard is refused, naming it.
    let o = merge([s.path("shard0"), s.path("shard2")], s.path("bad"));
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("missing: [1]"), "{}", stderr(&o));
    assert!(!s.path("bad/objects.parquet").exists());
}

#[test]
fn thread_count_does_not_change_observe() {
    let s = scenario(300, 3000);
    s.observe("t1", &["--threads", "1", "--chunk-size", "70"]);
    s.observe("t2", &["--threads", "2", "--chunk-size", "110"]);
    assert_same_outputs(&s.path("t1"), &s.path("t2"));
}

fn draw(dir: &Path, out: &str, extra: &[&str], env: &[(&str, &str)]) {
    let spec = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/populations/clustered-detached.toml");
    let o = Command::new(BIN)
        .args(["draw", "--quiet", "--count", "30000", "--seed", "11", "--spec"])
        .arg(spec)
        .arg("--out")
        .arg(dir.join(out))
        .args(extra)
        .env_remove("SLURM_ARRAY_TASK_ID")
        .env_remove("SLURM_ARRAY_TASK_COUNT")
        .envs(env.iter().copied())
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "draw {extra:?} {env:?}: {}", stderr(&o));
}

#[test]
fn draw_is_thread_invariant_and_shards_from_slurm_merge_to_the_whole() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    draw(d, "t1.parquet", &[], &[("RAYON_NUM_THREADS", "1")]);
    draw(d, "t2.parquet", &[], &[("RAYON_NUM_THREADS", "2")]);
    assert!(table(&d.join("t1.parquet")).equals_missing(&table(&d.join("t2.parquet"))));
    // Task 1 of a 3-task array takes the same shard as --shard 1/3.
    for k in 0..3 {
        let id = k.to_string();
        draw(
            d,
            &format!("s{k}.parquet"),
            &[],
            &[("SLURM_ARRAY_TASK_ID", &id), ("SLURM_ARRAY_TASK_COUNT", "3")],
        );
    }
    draw(d, "explicit1.parquet", &["--shard", "1/3"], &[]);
    assert!(table(&d.join("s1.parquet")).equals_missing(&table(&d.join("explicit1.parquet"))));
    // --shards N overrides the task count (a task resubmitted alone has a count of 1).
    draw(
        d,
        "alone1.parquet",
        &["--shards", "3"],
        &[("SLURM_ARRAY_TASK_ID", "1"), ("SLURM_ARRAY_TASK_COUNT", "1")],
    );
    assert!(table(&d.join("alone1.parquet")).equals_missing(&table(&d.join("s1.parquet"))));
    let o = merge(
        (0..3).map(|k| d.join(format!("s{k}.parquet"))),
        d.join("merged.parquet"),
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(table(&d.join("merged.parquet")).equals_missing(&table(&d.join("t1.parquet"))));
}

#[test]
fn provenance_names_version_command_inputs_and_seed() {
    let s = scenario(50, 300);
    s.observe("out", &["--format", "csv", "--resume"]);
    for file in ["out/objects.csv", "out/parts/detections/part-00000.parquet", "out"] {
        let o = Command::new(BIN)
            .args(["provenance"])
            .arg(s.path(file))
            .output()
            .unwrap();
        assert_eq!(o.status.code(), Some(0), "{file}: {}", stderr(&o));
        let p: Provenance = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(p.version, seine::version());
        assert_eq!(p.seed, Some(7));
        assert!(p.command_line.iter().any(|a| a == "observe"), "{:?}", p.command_line);
        // The survey spec, its visits table and the objects table, each with its SHA-256.
        let names: Vec<&str> = p.inputs.iter().map(|i| i.path.rsplit('/').next().unwrap()).collect();
        assert_eq!(names, ["bench.toml", "bench.csv", "objects.parquet"], "{file}");
        let bytes = std::fs::read(s.path("bench.csv")).unwrap();
        assert_eq!(p.inputs[1].sha256, seine::io::provenance::sha256_hex(&bytes));
    }
    let o = Command::new(BIN)
        .args(["provenance"])
        .arg(s.path("bench.csv"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "a table without provenance");
}

#[test]
fn more_shards_than_objects_merge_to_the_whole() {
    // Two objects over three shards: shard 0 is empty but still writes tables with every column.
    let s = scenario(2, 300);
    s.observe("whole", &[]);
    for k in 0..3 {
        s.observe(&format!("shard{k}"), &["--shard", &format!("{k}/3")]);
    }
    assert_eq!(table(&s.path("shard0/objects.parquet")).height(), 0);
    let o = merge((0..3).map(|k| s.path(&format!("shard{k}"))), s.path("merged"));
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert_same_outputs(&s.path("whole"), &s.path("merged"));
}

/// `seine merge INPUTS --out OUT`.
fn merge<P: AsRef<std::ffi::OsStr>>(inputs: impl IntoIterator<Item = P>, out: PathBuf) -> Output {
    Command::new(BIN)
        .arg("merge")
        .args(inputs)
        .arg("--out")
        .arg(out)
        .output()
        .unwrap()
}

#[test]
fn chunks_across_parquet_row_groups() {
    // Objects written as row groups of 150 rows, read in chunks of 200: every other chunk
    // spans two row groups (a regression: the part writer needs single-piece columns).
    let s = scenario(450, 300);
    let df = bench_objects(450);
    let path = s.path("grouped.parquet");
    let mut sink = seine::io::sink::TableSink::create(&path, Provenance::current()).unwrap();
    for k in 0..3 {
        sink.write(&df.slice(150 * k, 150)).unwrap();
    }
    sink.finish().unwrap();
    s.observe("whole", &[]);
    let o = Command::new(BIN)
        .args(["observe", "--quiet", "--seed", "7", "--chunk-size", "200", "--survey"])
        .arg(&s.spec)
        .arg("--objects")
        .arg(&path)
        .arg("--out")
        .arg(s.path("grouped"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    for t in ["objects.parquet", "detections.parquet", "discoveries.parquet"] {
        let (a, b) = (table(&s.path("whole").join(t)), table(&s.path("grouped").join(t)));
        assert!(a.equals_missing(&b), "{t}");
    }
}
