//! Engine benchmark and self-comparison (run on demand:
//! `cargo bench --bench engine -- [N_OBJECTS] [N_VISITS] [N_BRUTE]`).
//!
//! A 3-year survey of an ecliptic band centred on opposition from the invented site Sorrel
//! Peak: each night ~N_VISITS/900 visits in triplets an hour apart, 1°-radius fields
//! tiling ±10° of ecliptic latitude around the anti-Sun point; objects a scattered-disk-like
//! population (a 30–1000 AU log-uniform, q ≥ 30 AU, i < 40°).
//!
//! The machine is shared, so wall times alone mean little. In one process and on the same
//! prepared survey the bench times (1) the engine's per-object work (`Candidates::Indexed`)
//! for every object, (2) the project's own brute force (`Candidates::All`, every visit
//! tested exactly) for the first N_BRUTE objects, checking that both give the same events
//! and verdicts, and (3) the whole `observe` with its outputs. It prints the ratio of the
//! brute force's cost per object to the engine's, wall and CPU time (user + system from
//! /proc), and the candidates per in-field event. Figures go to
//! notebooks-free-docs/performance.md.

use std::path::Path;
use std::time::Instant;

use rayon::prelude::*;
use seine::engine::{Candidates, ObjectOutcome, ObserveOptions, PreparedSurvey, StopRule, observe, observe_object};
use seine::io::Provenance;
use seine::population::objects::ObjectTable;
use seine::rng::{Purpose, object_stream};
use seine::survey::Survey;

#[path = "../common/mod.rs"]
mod common;

/// CPU seconds used by this process so far (user + system, from /proc; 10 ms ticks).
fn cpu_seconds() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let fields: Vec<&str> = stat.rsplit(')').next().unwrap_or("").split_whitespace().collect();
    let ticks = |i: usize| fields.get(i).and_then(|f| f.parse::<f64>().ok()).unwrap_or(0.0);
    (ticks(11) + ticks(12)) / 100.0
}

/// Wall and CPU seconds of `f`, and its result.
fn timed<T>(f: impl FnOnce() -> T) -> (T, f64, f64) {
    let (t, c) = (Instant::now(), cpu_seconds());
    let out = f();
    (out, t.elapsed().as_secs_f64(), cpu_seconds() - c)
}

/// The engine's work for objects 0..n alone (no outputs), as `observe` does it.
fn run(surveys: &[PreparedSurvey], objects: &ObjectTable, n: usize, mode: Candidates) -> Vec<ObjectOutcome> {
    (0..n)
        .into_par_iter()
        .map_init(Vec::new, |scratch, i| {
            let rng = object_stream(0, objects.ids[i], Purpose::Observe);
            observe_object(objects, i, surveys, (mode, StopRule::Everything), rng, scratch)
        })
        .collect()
}

fn main() {
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let arg = |k: usize, default: usize| args.get(k).copied().unwrap_or(default);
    let (n_obj, n_vis) = (arg(0, 100_000), arg(1, 150_000));
    let n_brute = arg(2, 300).min(n_obj);
    let dir = tempfile::tempdir().unwrap();
    let (s, gen_s, _) = timed(|| Survey::load(&common::bench_survey(dir.path(), n_vis)).unwrap());
    let (prepared, prep_s, prep_cpu) = timed(|| vec![PreparedSurvey::new(s)]);
    let objs = ObjectTable::from_frame(common::bench_objects(n_obj), Path::new("bench")).unwrap();
    println!(
        "visits {} generated in {gen_s:.2} s, prepared in {prep_s:.2} s ({prep_cpu:.2} CPU s); threads {}; load average {}",
        prepared[0].len(),
        rayon::current_num_threads(),
        std::fs::read_to_string("/proc/loadavg").unwrap_or_default().trim()
    );

    let (engine, e_wall, e_cpu) = timed(|| run(&prepared, &objs, n_obj, Candidates::Indexed));
    let (brute, b_wall, b_cpu) = timed(|| run(&prepared, &objs, n_brute, Candidates::All));
    for (i, (a, b)) in engine.iter().zip(&brute).enumerate() {
        assert!(
            a.events == b.events && a.surveys == b.surveys,
            "object {i}: the engine and the brute force disagree"
        );
    }
    let events: u64 = engine.iter().map(|o| o.events.len() as u64).sum();
    let candidates: u64 = engine.iter().map(|o| o.candidates).sum();
    let per = |s: f64, n: usize| 1e6 * s / n.max(1) as f64;
    println!(
        "engine: {n_obj} objects in {e_wall:.2} s wall, {e_cpu:.2} CPU s ({:.1} µs CPU per object); in-field events {events}, candidates/event {:.3}",
        per(e_cpu, n_obj),
        candidates as f64 / events.max(1) as f64
    );
    println!(
        "brute force: {n_brute} objects in {b_wall:.2} s wall, {b_cpu:.2} CPU s ({:.1} µs CPU per object); same events and verdicts",
        per(b_cpu, n_brute)
    );
    println!(
        "ratio brute force / engine per object: {:.0}× (wall), {:.0}× (CPU)",
        per(b_wall, n_brute) / per(e_wall, n_obj),
        per(b_cpu, n_brute) / per(e_cpu, n_obj)
    );
    drop((engine, brute));

    let opts = ObserveOptions::default();
    let out = dir.path().join("out");
    let (report, o_wall, o_cpu) = timed(|| observe(&prepared, &objs, &out, &opts, &Provenance::current()).unwrap());
    let s = &report.summary;
    println!(
        "observe (engine + outputs): {o_wall:.2} s wall, {o_cpu:.2} CPU s ({:.0} objects/s); in-field events {}, candidates/event {:.2}, discovered {}; outputs {:.0} MB",
        n_obj as f64 / o_wall,
        s.in_field_events,
        s.candidates_per_in_field_event,
        s.n_detected,
        dir_bytes(&out) as f64 / 1e6
    );
}

/// Bytes of the files under `dir`.
fn dir_bytes(dir: &Path) -> u64 {
    common::walk(dir)
        .iter()
        .filter_map(|p| std::fs::metadata(p).ok())
        .filter(|m| m.is_file())
        .map(|m| m.len())
        .sum()
}
