//! Clustering-test benchmark (run on demand: `cargo bench --bench cluster -- [N_OBJECTS]
//! [N_VISITS]`): adaptive bias maps at the default grid and budget (36 × 36, 300 discoveries,
//! cap 500 000 trials) for a catalogue of N_OBJECTS (default 20) discovered objects, then the
//! test at its defaults (10⁴ synthetic catalogues, 20 bootstrap replicas of the maps).
//!
//! The survey is the engine benchmark's (3 years of an ecliptic band around opposition from
//! the invented site Sorrel Peak, N_VISITS visits, default 100 000); the catalogue is the
//! first N_OBJECTS discoveries of its scattered-disk-like population. Figures go to
//! notebooks-free-docs/performance.md.

use std::path::Path;
use std::time::Instant;

use seine::analysis::bias_map::{
    DEFAULT_MAX_TRIALS_PER_OBJECT, DEFAULT_MIN_DISCOVERIES, MapAxes, MapBudget, MapGrid, bias_maps,
};
use seine::analysis::cluster_test::{Angles, TestOptions, cluster_test};
use seine::engine::{ObserveOptions, PreparedSurvey, observe};
use seine::io::Provenance;
use seine::population::objects::ObjectTable;
use seine::survey::Survey;

#[path = "../common/mod.rs"]
mod common;

fn main() {
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let (n_cat, n_vis) = (
        args.first().copied().unwrap_or(20),
        args.get(1).copied().unwrap_or(100_000),
    );
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![PreparedSurvey::new(
        Survey::load(&common::bench_survey(dir.path(), n_vis)).unwrap(),
    )];
    let population =
        ObjectTable::from_frame(common::bench_objects(20 * n_cat.max(1) * 10), Path::new("bench")).unwrap();
    let out = dir.path().join("observed");
    observe(
        &surveys,
        &population,
        &out,
        &ObserveOptions::default(),
        &Provenance::current(),
    )
    .unwrap();
    let found = ObjectTable::read(&out.join("discoveries.parquet")).unwrap();
    let n = n_cat.min(found.len());
    let grid = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x: 36,
        n_node: 36,
    };
    let budget = MapBudget {
        min_discoveries: DEFAULT_MIN_DISCOVERIES,
        max_trials: DEFAULT_MAX_TRIALS_PER_OBJECT,
    };
    let t = Instant::now();
    let maps = bias_maps(&found, 0..n, &surveys, grid, budget, 1, &|| {});
    let map_s = t.elapsed().as_secs_f64();
    let trials: u64 = maps.iter().map(|m| m.total_trials()).sum();
    let fewest = maps.iter().map(|m| m.total_discoveries()).min().unwrap_or(0);
    let hardest = maps.iter().map(|m| m.mean_p()).fold(1.0, f64::min);
    println!(
        "visits {}, threads {}: adaptive maps of {n} objects in {map_s:.1} s ({trials} engine trials, {:.0} trials/s; \
         fewest discoveries {fewest}, smallest mean chance {hardest:.4})",
        surveys[0].len(),
        rayon::current_num_threads(),
        trials as f64 / map_s
    );
    let cat = Angles::of(&found).select(&(0..n).collect::<Vec<_>>());
    let t = Instant::now();
    let res = cluster_test(&cat, &maps, &TestOptions::default(), &|| {}).unwrap();
    println!(
        "cluster test, {} synthetic catalogues × (1 + {} replicas): {:.2} s; global p {:.4} ± {:.4}",
        res.trials,
        res.replicas,
        t.elapsed().as_secs_f64(),
        res.results[0].p_bias_aware,
        res.results[0].p_bias_aware_error
    );
}
