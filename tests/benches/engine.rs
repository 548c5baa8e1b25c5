//! Engine benchmark (run on demand: `cargo bench --bench engine -- [N_OBJECTS] [N_VISITS]`).
//!
//! A 3-year survey of an ecliptic band centred on opposition from the invented site Sorrel
//! Peak: each night ~N_VISITS/900 visits in triplets an hour apart, 1°-radius fields
//! tiling ±10° of ecliptic latitude around the anti-Sun point; objects a scattered-disk-like
//! population (a 30–1000 AU log-uniform, q ≥ 30 AU, i < 40°). Prints wall time, objects per
//! second, candidates per in-field event. Figures go to notebooks-free-docs/performance.md.

use std::path::Path;
use std::time::Instant;

use seine::engine::{ObserveOptions, PreparedSurvey, observe};
use seine::io::Provenance;
use seine::io::objects::ObjectTable;
use seine::survey::Survey;

#[path = "../common/mod.rs"]
mod common;

fn main() {
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let (n_obj, n_vis) = (
        args.first().copied().unwrap_or(100_000),
        args.get(1).copied().unwrap_or(100_000),
    );
    let dir = tempfile::tempdir().unwrap();
    let t = Instant::now();
    let s = Survey::load(&common::bench_survey(dir.path(), n_vis)).unwrap();
    let gen_s = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let prepared = vec![PreparedSurvey::new(s)];
    let prep_s = t.elapsed().as_secs_f64();
    println!("generated the visits in {gen_s:.2} s");
    let objs = ObjectTable::from_frame(common::bench_objects(n_obj), Path::new("bench")).unwrap();
    let t = Instant::now();
    let report = observe(
        &prepared,
        &objs,
        &dir.path().join("out"),
        &ObserveOptions::default(),
        &Provenance::current(),
    )
    .unwrap();
    let run_s = t.elapsed().as_secs_f64();
    let s = &report.summary;
    println!(
        "objects {n_obj}, visits {}, threads {}: prepare {prep_s:.2} s, observe {run_s:.2} s ({:.0} objects/s), in-field events {}, candidates/event {:.2}, discovered {}",
        prepared[0].len(),
        rayon::current_num_threads(),
        s.objects_per_second,
        s.in_field_events,
        s.candidates_per_in_field_event,
        s.n_detected
    );
}
