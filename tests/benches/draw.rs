//! Benchmark of the population sampler (ignored by default; see Cargo.toml for the command).
//! Prints objects per second for generation alone on 1 thread and on all threads, and for
//! the whole chunked draw into a Parquet file.

use std::path::Path;
use std::time::Instant;

use seine::io::Provenance;
use seine::io::sink::TableSink;
use seine::population::Spec;

fn spec(name: &str) -> seine::population::Population {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("survey-configs/populations")
        .join(name);
    match Spec::read(&path).unwrap() {
        Spec::Draw(p) => *p,
        Spec::Clone(_) => unreachable!("a draw spec"),
    }
}

fn rate(label: &str, n: i64, f: impl FnOnce()) {
    let t = Instant::now();
    f();
    let s = t.elapsed().as_secs_f64();
    println!(
        "{label}: {n} objects in {s:.3} s = {:.2} million objects/s",
        n as f64 / s / 1e6
    );
}

#[test]
#[ignore]
fn bench_draw() {
    for name in ["scattered-disk.toml", "clustered-detached.toml"] {
        let pop = spec(name);
        let n = 4_000_000;
        let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().unwrap();
        rate(&format!("{name} generate, 1 thread"), n, || {
            one.install(|| drop(pop.draw_ids(1, 0..n).unwrap()));
        });
        let threads = rayon::current_num_threads();
        rate(&format!("{name} generate, {threads} threads"), n, || {
            drop(pop.draw_ids(1, 0..n).unwrap())
        });
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("objects.parquet");
        rate(
            &format!("{name} generate + frame + write parquet, {threads} threads"),
            n,
            || {
                let mut sink = TableSink::create(&out, Provenance::current()).unwrap();
                pop.draw_into(1, 0..n, &mut sink).unwrap();
                sink.finish().unwrap();
            },
        );
    }
}
