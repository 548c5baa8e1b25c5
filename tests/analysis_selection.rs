//! Selection-function analyses through the engine: bias maps on small invented surveys (the
//! clustering test's calibration and power: tests/cluster_calibration.rs).

mod common;

use common::{ecliptic_fields, survey};

use std::path::Path;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use seine::analysis::bias_map::{BiasMap, MapAxes, MapBudget, MapGrid, bias_maps};
use seine::engine::PreparedSurvey;
use seine::population::objects::ObjectTable;

/// A strongly lopsided survey: four 10° fields on the ecliptic at λ = 0–45°, observed on a
/// few nights around opposition of that patch in two years, shallow enough that eccentric
/// objects are found only near perihelion.
fn lopsided(dir: &Path) -> PreparedSurvey {
    let fields = ecliptic_fields(&[0.0, 15.0, 30.0, 45.0]);
    let nights = [60580.0, 60590.0, 60600.0, 60945.0, 60955.0, 60965.0];
    survey(dir, "lopsided", 10.0, 22.0, &fields, &nights)
}

/// n eccentric objects (a 40–80 AU, e 0.4–0.6, i < 15°, H 5–6.5) with the given angles.
fn catalogue(n: usize, seed: u64, angles: impl Fn(usize, &mut Pcg64) -> (f64, f64, f64)) -> ObjectTable {
    let mut rng = Pcg64::seed_from_u64(seed);
    let df = common::objects_frame((0..n).map(|i| {
        let a = 40.0 + 40.0 * rng.random::<f64>();
        let e = 0.4 + 0.2 * rng.random::<f64>();
        let inc = 15.0 * rng.random::<f64>();
        let h = 5.0 + 1.5 * rng.random::<f64>();
        let (node, argperi, m) = angles(i, &mut rng);
        [i as f64, a, e, inc, node, argperi, m, 60400.0, h]
    }));
    ObjectTable::from_frame(df, Path::new("catalogue.csv")).unwrap()
}

fn maps(t: &ObjectTable, surveys: &[PreparedSurvey], n_x: usize, per_cell: u64) -> Vec<BiasMap> {
    let grid = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x,
        n_node: 12,
    };
    bias_maps(
        t,
        0..t.len(),
        surveys,
        grid,
        MapBudget::fixed(per_cell, grid),
        77,
        &|| {},
    )
}

#[test]
fn adaptive_maps_stop_at_their_discoveries_or_their_cap() {
    // The budget of `bias-map`: passes until the asked discoveries, never past the cap; an
    // object the surveys cannot find stops at the cap with an empty map (never filled in).
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    let base = catalogue(6, 3, |_, _| (0.0, 0.0, 0.0));
    let grid = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x: 12,
        n_node: 12,
    };
    let budget = MapBudget {
        min_discoveries: 40,
        max_trials: 144 * 60,
    };
    for m in bias_maps(&base, 0..base.len(), &surveys, grid, budget, 77, &|| {}) {
        let (d, t) = (m.total_discoveries(), m.total_trials());
        assert_eq!(t % 144, 0, "whole passes");
        assert!(m.trials.iter().all(|x| *x == t / 144), "every cell the same trials");
        assert!(t <= budget.max_trials);
        if d < 40 {
            assert!(
                t + 144 > budget.max_trials,
                "object {}: stopped early at {d} in {t}",
                m.id
            );
        } else {
            // The pass before the last had fewer than 40.
            let last_pass_max = 144;
            assert!(d < 40 + last_pass_max, "object {}: {d}", m.id);
        }
        eprintln!("object {}: {d} discoveries in {t} trials", m.id);
    }
    // A hopeless object (far and faint) has no discovery at its cap.
    let faint = common::objects_frame([[0.0, 300.0, 0.1, 5.0, 0.0, 0.0, 0.0, 60400.0, 12.0]]);
    let faint = ObjectTable::from_frame(faint, Path::new("faint.csv")).unwrap();
    let m = &bias_maps(&faint, 0..1, &surveys, grid, budget, 77, &|| {})[0];
    assert_eq!((m.total_discoveries(), m.total_trials()), (0, 144 * 60));
    assert!(m.sampler().is_none(), "no uniform fallback");
}

#[test]
fn bias_maps_favour_perihelia_towards_the_surveyed_patch() {
    // Expected behaviour of AJ 154, 65 (2017): a shallow survey of one patch finds eccentric
    // objects near perihelion, so the discovery probability peaks where ϖ points at the patch
    // (ecliptic longitude 0–45°, centre 22.5°). Geometry, no outside number.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    let base = catalogue(12, 3, |_, _| (0.0, 0.0, 0.0));
    for m in maps(&base, &surveys, 24, 30).iter().filter(|m| m.mean_p() > 0.005) {
        let (mut s, mut c) = (0.0, 0.0);
        for cell in 0..m.trials.len() {
            let (x0, x1, _, _) = m.cell_bounds(cell);
            let x = 0.5 * (x0 + x1);
            (s, c) = (s + m.p(cell) * x.sin(), c + m.p(cell) * x.cos());
        }
        let mean = s.atan2(c).to_degrees();
        eprintln!(
            "object {}: mean p {:.4}, map-weighted mean ϖ {mean:.0}°, inc {:.1}",
            m.id,
            m.mean_p(),
            base.elements[m.id as usize].inc_rad.to_degrees()
        );
        assert!(
            (mean - 22.5).abs() < 45.0,
            "object {}: map-weighted mean ϖ {mean:.0}°",
            m.id
        );
    }
}
