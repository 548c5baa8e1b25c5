//! Selection-function analyses through the engine: detectability, bias maps, and the
//! calibration and power of the bias-aware clustering test on small invented surveys.

mod common;

use common::{ecliptic_fields, ks_uniform_p, survey};

use std::f64::consts::TAU;
use std::path::Path;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use seine::analysis::bias_map::{BiasMap, MapAxes, MapGrid, bias_maps};
use seine::analysis::cluster_test::{Angles, cluster_test};
use seine::analysis::trials::TrialObject;
use seine::engine::PreparedSurvey;
use seine::io::objects::ObjectTable;
use seine::population::Distribution;

/// A strongly lopsided survey: four 10° fields on the ecliptic at λ = 0–45°, observed on a
/// few nights around opposition of that patch in two years, shallow enough that eccentric
/// objects are found only near perihelion.
fn lopsided(dir: &Path) -> PreparedSurvey {
    let fields = ecliptic_fields(&[0.0, 15.0, 30.0, 45.0]);
    let nights = [60580.0, 60590.0, 60600.0, 60945.0, 60955.0, 60965.0];
    survey(dir, "lopsided", 10.0, 22.0, &fields, &nights)
}

/// A survey all around the ecliptic through the year: close to unbiased in ϖ.
fn wide(dir: &Path) -> PreparedSurvey {
    let fields = ecliptic_fields(&(0..12).map(|k| 30.0 * k as f64).collect::<Vec<_>>());
    let nights: Vec<f64> = (0..24).map(|k| 60400.0 + 15.2 * k as f64).collect();
    survey(dir, "wide", 16.0, 23.0, &fields, &nights)
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

/// Angles (Ω, ω, M) of an isotropic population, conditioned on discovery by the surveys:
/// redraw until the engine finds the object (rejection sampling through the real pipeline).
fn discovered_angles(t: &ObjectTable, i: usize, surveys: &[PreparedSurvey], rng: &mut Pcg64) -> (f64, f64) {
    let mut obj = TrialObject::new(t, i);
    let mut scratch = Vec::new();
    for _ in 0..200_000 {
        let mut el = obj.elements();
        el.node = rng.random::<f64>() * TAU;
        el.argperi = rng.random::<f64>() * TAU;
        el.mean_anomaly = rng.random::<f64>() * TAU;
        let trial = rng.random::<u32>() as i64;
        if obj.observe(el, surveys, 5, trial, &mut scratch).discovered() {
            return (el.node, el.argperi);
        }
    }
    panic!("object {i} is never discovered");
}

fn maps(t: &ObjectTable, surveys: &[PreparedSurvey], n_x: usize, per_cell: u64) -> Vec<BiasMap> {
    let grid = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x,
        n_node: 12,
        per_cell,
    };
    bias_maps(t, 0..t.len(), surveys, grid, 77)
}

/// Calibration: the catalogue's (a, e, i, H) are fixed; every replica redraws its angles
/// from an isotropic population seen through the lopsided survey.
fn calibration(replicas: usize, trials: u64) -> (Vec<f64>, Vec<f64>) {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    // Keep ten objects that the survey can find at all (mean discovery probability ≥ 0.5%).
    let base = catalogue(40, 3, |_, _| (0.0, 0.0, 0.0));
    let all_maps = maps(&base, &surveys, 24, 12);
    let rows: Vec<usize> = (0..base.len())
        .filter(|i| all_maps[*i].mean_p() >= 0.005)
        .take(10)
        .collect();
    assert_eq!(rows.len(), 10, "too few findable objects");
    let maps: Vec<BiasMap> = rows.iter().map(|i| all_maps[*i].clone()).collect();
    let all = Angles::of(&base);
    let (mut p_bias, mut p_naive) = (Vec::new(), Vec::new());
    let mut rng = Pcg64::seed_from_u64(99);
    for _ in 0..replicas {
        let mut cat = Angles {
            ids: rows.iter().map(|i| all.ids[*i]).collect(),
            inc: rows.iter().map(|i| all.inc[*i]).collect(),
            node: vec![0.0; rows.len()],
            argperi: vec![0.0; rows.len()],
        };
        for (j, i) in rows.iter().enumerate() {
            let (node, argperi) = discovered_angles(&base, *i, &surveys, &mut rng);
            (cat.node[j], cat.argperi[j]) = (node, argperi);
        }
        let r = cluster_test(&cat, &maps, trials, rng.random()).unwrap();
        p_bias.push(r.results[0].p_bias_aware);
        p_naive.push(r.results[0].p_naive);
    }
    (p_bias, p_naive)
}

fn check_calibration(replicas: usize, trials: u64) {
    let (pb, pn) = calibration(replicas, trials);
    let rejects = pn.iter().filter(|p| **p < 0.05).count() as f64 / pn.len() as f64;
    let ks = ks_uniform_p(&pb);
    let bias_rejects = pb.iter().filter(|p| **p < 0.05).count() as f64 / pb.len() as f64;
    eprintln!(
        "calibration, {replicas} replicas: naive rejects {rejects:.2} at 5%, bias-aware {bias_rejects:.2}; KS p of bias-aware p-values vs uniform {ks:.3}"
    );
    assert!(rejects > 0.5, "the naive test should reject often: {rejects}");
    assert!(ks > 0.01, "bias-aware p-values not uniform: KS p = {ks}");
}

#[test]
fn calibration_quick_bias_aware_p_values_are_uniform() {
    check_calibration(25, 400);
}

#[test]
#[ignore = "long: 200 replicas"]
fn calibration_full_bias_aware_p_values_are_uniform() {
    check_calibration(200, 1000);
}

/// Power: ϖ from a von Mises of κ = 2 in a 20-object catalogue seen by the wide survey.
fn power(replicas: usize, trials: u64) -> f64 {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![wide(dir.path())];
    let base = catalogue(20, 8, |_, _| (0.0, 0.0, 0.0));
    let maps = maps(&base, &surveys, 12, 6);
    let mut rng = Pcg64::seed_from_u64(4);
    let mut found = 0;
    for _ in 0..replicas {
        let vm = Distribution::VonMises {
            mean: 360.0 * rng.random::<f64>(),
            kappa: 2.0,
        };
        let mut cat = Angles::of(&base);
        for i in 0..base.len() {
            let varpi = vm.sample(&mut rng).to_radians();
            cat.node[i] = rng.random::<f64>() * TAU;
            cat.argperi[i] = (varpi - cat.node[i]).rem_euclid(TAU);
        }
        let r = cluster_test(&cat, &maps, trials, rng.random()).unwrap();
        found += (r.results[0].p_bias_aware < 0.05) as usize;
    }
    found as f64 / replicas as f64
}

#[test]
fn power_quick_von_mises_clustering_is_found() {
    let p = power(10, 300);
    eprintln!("power, 10 replicas: {p:.2}");
    assert!(p >= 0.8, "power {p}");
}

#[test]
#[ignore = "long: 100 replicas"]
fn power_full_von_mises_clustering_is_found() {
    let p = power(100, 1000);
    eprintln!("power, 100 replicas: {p:.2}");
    assert!(p >= 0.8, "power {p}");
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
            base.elements[m.id as usize].inc.to_degrees()
        );
        assert!(
            (mean - 22.5).abs() < 45.0,
            "object {}: map-weighted mean ϖ {mean:.0}°",
            m.id
        );
    }
}
