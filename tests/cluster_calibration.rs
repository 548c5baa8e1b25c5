//! Calibration of the bias-aware clustering test (methods.md, "Bias-aware clustering test"):
//! under the null every p-value the command prints — the eight marginal ones, Fisher's
//! combination of pole and perihelion, the global (look-elsewhere) one, and those of sample
//! cuts — must be uniform, on lopsided invented surveys; the quoted errors must cover the
//! Monte Carlo noise of maps and catalogues (two seeds agree); and the test must find a real
//! clustering (von Mises, κ = 2, 20 objects).
//!
//! How it is made cheap without leaving the engine: for every object of a case the engine
//! tabulates its true detection map on a fine grid (72 × 72 cells of 5°). That table is the
//! truth of the test's world. A null catalogue draws every object's (ϖ, Ω) from its truth
//! (isotropic angles conditioned on discovery, exactly); the test then builds its own adaptive
//! maps on the default 36 × 36 grid by passes of trials whose outcomes are Bernoulli draws
//! with the truth's cell means — what an engine trial in that cell is, in distribution — so
//! every null catalogue gets fresh, independent maps of the size the command builds, and the
//! truth has structure inside the test's cells (the smoothing of the test's histograms is
//! inside what is measured). Statistical criteria: rejection counts within 3.5 binomial
//! standard deviations of 5% and 1% (common practice, no source), Kolmogorov–Smirnov p above
//! 10⁻³.

mod common;

use common::{check_uniform, ecliptic_fields, survey};

use std::f64::consts::TAU;
use std::path::Path;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use rayon::prelude::*;
use seine::analysis::bias_map::{BiasMap, MapAxes, MapBudget, MapGrid, bias_maps};
use seine::analysis::cluster_test::{Angles, Cut, TestOptions, cluster_test};
use seine::engine::PreparedSurvey;
use seine::population::objects::ObjectTable;

/// Null catalogues per case (the brief asks for at least 500).
const NULLS: usize = 1000;
/// Synthetic catalogues per test.
const TRIALS: u64 = 1000;
/// Cells per axis of the truth tables (5°).
const FINE: usize = 72;

fn test_grid() -> MapGrid {
    MapGrid {
        axes: MapAxes::VarpiNode,
        n_x: 36,
        n_node: 36,
    }
}

fn default_budget() -> MapBudget {
    MapBudget {
        min_discoveries: seine::analysis::bias_map::DEFAULT_MIN_DISCOVERIES,
        max_trials: seine::analysis::bias_map::DEFAULT_MAX_TRIALS_PER_OBJECT,
    }
}

/// One object's true detection probability on the fine grid (x = ϖ outer, Ω inner).
struct Truth {
    id: i64,
    fine: Vec<f64>,
    cumulative: Vec<f64>,
    /// The means over the test grid's cells (2 × 2 fine cells each).
    coarse: Vec<f64>,
}

impl Truth {
    fn new(id: i64, fine: Vec<f64>) -> Self {
        let mut acc = 0.0;
        let cumulative = fine
            .iter()
            .map(|p| {
                acc += p;
                acc
            })
            .collect();
        let g = test_grid();
        let r = FINE / g.n_x;
        let coarse = (0..g.cells())
            .map(|c| {
                let (ix, iy) = (c / g.n_node, c % g.n_node);
                let mut s = 0.0;
                for dx in 0..r {
                    for dy in 0..r {
                        s += fine[(ix * r + dx) * FINE + iy * r + dy];
                    }
                }
                s / (r * r) as f64
            })
            .collect();
        Truth {
            id,
            fine,
            cumulative,
            coarse,
        }
    }

    /// A flat truth: every angle equally detectable (no survey bias).
    fn flat(id: i64) -> Self {
        Truth::new(id, vec![0.01; FINE * FINE])
    }

    fn mean_p(&self) -> f64 {
        self.fine.iter().sum::<f64>() / self.fine.len() as f64
    }

    /// (ϖ, Ω) of an isotropic object conditioned on discovery.
    fn draw(&self, rng: &mut Pcg64) -> (f64, f64) {
        let total = self.cumulative[self.cumulative.len() - 1];
        let u = rng.random::<f64>() * total;
        let c = self.cumulative.partition_point(|x| *x <= u).min(self.fine.len() - 1);
        let step = TAU / FINE as f64;
        (
            ((c / FINE) as f64 + rng.random::<f64>()) * step,
            ((c % FINE) as f64 + rng.random::<f64>()) * step,
        )
    }

    /// (ϖ, Ω) of an object of a population whose ϖ follows a von Mises law (mean μ, κ),
    /// conditioned on discovery: the truth times the von Mises density, by rejection.
    fn draw_clustered(&self, mu: f64, kappa: f64, rng: &mut Pcg64) -> (f64, f64) {
        loop {
            let (x, node) = self.draw(rng);
            if rng.random::<f64>() < (kappa * ((x - mu).cos() - 1.0)).exp() {
                return (x, node);
            }
        }
    }

    /// The map the test would build: passes of one trial per cell, each a Bernoulli draw with
    /// the truth's cell mean, under the command's default budget.
    fn simulated_map(&self, rng: &mut Pcg64) -> BiasMap {
        let mut map = BiasMap::empty(self.id, test_grid());
        map.grow(default_budget(), |_| {
            (0..self.coarse.len())
                .map(|c| (rng.random::<f64>() < self.coarse[c]).then(|| self.inside(c, rng)))
                .collect()
        });
        map
    }

    /// The angles of a discovered trial in test cell c: a fine cell inside it with
    /// probability ∝ its truth, then uniform inside that.
    fn inside(&self, c: usize, rng: &mut Pcg64) -> (f64, f64) {
        let g = test_grid();
        let r = FINE / g.n_x;
        let (ix, iy) = (c / g.n_node, c % g.n_node);
        let sub: Vec<(usize, usize)> = (0..r * r).map(|k| (ix * r + k / r, iy * r + k % r)).collect();
        let total: f64 = sub.iter().map(|(x, y)| self.fine[x * FINE + y]).sum();
        let mut u = rng.random::<f64>() * total;
        let mut pick = sub[sub.len() - 1];
        for (x, y) in &sub {
            u -= self.fine[x * FINE + y];
            if u < 0.0 {
                pick = (*x, *y);
                break;
            }
        }
        let step = TAU / FINE as f64;
        (
            (pick.0 as f64 + rng.random::<f64>()) * step,
            (pick.1 as f64 + rng.random::<f64>()) * step,
        )
    }
}

/// A case: a catalogue's fixed elements (angles redrawn per null catalogue) and each object's
/// truth.
struct Case {
    name: &'static str,
    template: Angles,
    truths: Vec<Truth>,
    cuts: Vec<Cut>,
}

impl Case {
    /// The catalogue with these (ϖ, Ω), one pair per object.
    fn catalogue(&self, angles: &[(f64, f64)]) -> Angles {
        let t = &self.template;
        let mut cat = t.select(&(0..t.ids.len()).collect::<Vec<_>>());
        for j in 0..cat.ids.len() {
            let (varpi, node) = angles[j];
            cat.node[j] = node;
            cat.argperi[j] = (varpi - node).rem_euclid(TAU);
        }
        cat
    }

    /// Every printed bias-aware p-value of one catalogue (with fresh simulated maps), and the
    /// names of the rows.
    fn test(&self, cat: &Angles, rng: &mut Pcg64, replicas: u32) -> (Vec<String>, Vec<f64>, Vec<f64>, Vec<f64>) {
        let maps: Vec<BiasMap> = self.truths.iter().map(|t| t.simulated_map(rng)).collect();
        let opt = TestOptions {
            trials: TRIALS,
            seed: rng.random(),
            replicas,
            cuts: self.cuts.clone(),
            ..TestOptions::default()
        };
        let r = cluster_test(cat, &maps, &opt, &|| {}).unwrap();
        let names = r.results.iter().map(|x| x.statistic.clone()).collect();
        let p = r.results.iter().map(|x| x.p_bias_aware).collect();
        let err = r.results.iter().map(|x| x.p_bias_aware_error).collect();
        let naive = r.results.iter().map(|x| x.p_naive).collect();
        (names, p, err, naive)
    }

    /// p-values of `NULLS` null catalogues: (row names, bias-aware [null][row], naive [null][row]).
    fn nulls(&self) -> (Vec<String>, Vec<Vec<f64>>, Vec<Vec<f64>>) {
        let out: Vec<_> = (0..NULLS)
            .into_par_iter()
            .map(|k| {
                // The null catalogue's angles and the maps from separate streams.
                let mut sky = Pcg64::seed_from_u64(1000 + k as u64);
                let angles: Vec<_> = self.truths.iter().map(|t| t.draw(&mut sky)).collect();
                let mut maps = Pcg64::seed_from_u64(u64::MAX - k as u64);
                self.test(&self.catalogue(&angles), &mut maps, 0)
            })
            .collect();
        let names = out[0].0.clone();
        let p = out.iter().map(|o| o.1.clone()).collect();
        let naive = out.iter().map(|o| o.3.clone()).collect();
        (names, p, naive)
    }
}

/// n objects (a 40–80 AU unless told, e, i < 15°, H) with zero angles, as an objects table.
fn objects(n: usize, seed: u64, e: (f64, f64), h: (f64, f64)) -> ObjectTable {
    let mut rng = Pcg64::seed_from_u64(seed);
    let df = common::objects_frame((0..n).map(|i| {
        let a = 40.0 + 40.0 * rng.random::<f64>();
        let ecc = e.0 + (e.1 - e.0) * rng.random::<f64>();
        let inc = 15.0 * rng.random::<f64>();
        let hm = h.0 + (h.1 - h.0) * rng.random::<f64>();
        [i as f64, a, ecc, inc, 0.0, 0.0, 0.0, 60400.0, hm]
    }));
    ObjectTable::from_frame(df, Path::new("catalogue.csv")).unwrap()
}

/// The objects at `rows` of a table, as a table of their own (zero angles).
fn subset(table: &ObjectTable, rows: &[usize]) -> ObjectTable {
    let df = common::objects_frame(rows.iter().map(|i| {
        let e = &table.elements[*i];
        [
            table.ids[*i] as f64,
            e.a_au,
            e.e,
            e.inc_rad.to_degrees(),
            0.0,
            0.0,
            0.0,
            60400.0,
            table.h_mag[*i],
        ]
    }));
    ObjectTable::from_frame(df, Path::new("catalogue.csv")).unwrap()
}

/// The engine's fine truth tables (`per_cell` trials in each 5° cell) of the first `n` objects
/// whose mean chance of discovery, probed on a coarse grid, lies in `keep`.
fn engine_case(
    name: &'static str,
    table: &ObjectTable,
    surveys: &[PreparedSurvey],
    per_cell: u64,
    keep: (f64, f64),
    n: usize,
    cuts: Vec<Cut>,
) -> Case {
    let coarse = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x: 18,
        n_node: 18,
    };
    let probe = bias_maps(
        table,
        0..table.len(),
        surveys,
        coarse,
        MapBudget::fixed(8, coarse),
        76,
        &|| {},
    );
    let rows: Vec<usize> = (0..table.len())
        .filter(|i| (keep.0..keep.1).contains(&probe[*i].mean_p()))
        .take(n)
        .collect();
    let mut means: Vec<f64> = probe.iter().map(BiasMap::mean_p).collect();
    means.sort_by(f64::total_cmp);
    assert_eq!(
        rows.len(),
        n,
        "{name}: too few objects with mean chance in {keep:?}: {means:.4?}"
    );
    let chosen = subset(table, &rows);
    let fine = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x: FINE,
        n_node: FINE,
    };
    let maps = bias_maps(
        &chosen,
        0..n,
        surveys,
        fine,
        MapBudget::fixed(per_cell, fine),
        77,
        &|| {},
    );
    let truths: Vec<Truth> = maps
        .iter()
        .map(|m| Truth::new(m.id, (0..fine.cells()).map(|c| m.p(c)).collect()))
        .collect();
    for t in &truths {
        eprintln!("{name}: object {} mean chance {:.4}", t.id, t.mean_p());
    }
    Case {
        name,
        template: Angles::of(&chosen),
        truths,
        cuts,
    }
}

/// Fields on one quarter of the ecliptic (λ = 0–90°), observed a few nights a year around the
/// opposition of that patch, shallow: eccentric objects are found only near perihelion there.
fn quarter(dir: &Path) -> PreparedSurvey {
    let fields = ecliptic_fields(&[0.0, 18.0, 36.0, 54.0, 72.0, 90.0]);
    let nights = [60580.0, 60595.0, 60610.0, 60945.0, 60960.0, 60975.0];
    survey(dir, "quarter", 10.0, 22.0, &fields, &nights)
}

/// A survey all around the ecliptic through the year: close to unbiased in ϖ.
fn wide(dir: &Path) -> PreparedSurvey {
    let fields = ecliptic_fields(&(0..12).map(|k| 30.0 * k as f64).collect::<Vec<_>>());
    let nights: Vec<f64> = (0..24).map(|k| 60400.0 + 15.2 * k as f64).collect();
    survey(dir, "wide", 16.0, 23.0, &fields, &nights)
}

#[test]
fn unbiased_survey_every_p_value_bias_aware_and_naive_is_uniform() {
    // No survey bias: the bias-aware null is the naive one, so the naive p-values (Rayleigh
    // by Zar's approximation, Kuiper analytically, the others by Monte Carlo) must be uniform
    // too. Cut at a ≥ 60 au exercises the sub-samples.
    let table = objects(15, 3, (0.4, 0.6), (5.0, 6.5));
    let case = Case {
        name: "flat",
        template: Angles::of(&table),
        truths: (0..15).map(|i| Truth::flat(i as i64)).collect(),
        cuts: vec![Cut::AMin(60.0)],
    };
    let (names, p, naive) = case.nulls();
    check_uniform(case.name, &names, &p);
    check_uniform("flat, naive", &names, &naive);
}

#[test]
fn quarter_of_the_ecliptic_every_p_value_is_uniform() {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![quarter(dir.path())];
    let table = objects(60, 3, (0.4, 0.6), (5.0, 6.5));
    let case = engine_case("quarter", &table, &surveys, 4, (0.005, 1.0), 15, vec![]);
    let (names, p, _) = case.nulls();
    check_uniform(case.name, &names, &p);
}

#[test]
fn objects_seen_only_near_perihelion_every_p_value_is_uniform() {
    // Very eccentric and faint: bright enough only within a few tens of degrees of
    // perihelion, so each map is a narrow ridge.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![wide(dir.path())];
    let table = objects(80, 5, (0.75, 0.85), (6.5, 8.0));
    let case = engine_case(
        "perihelion",
        &table,
        &surveys,
        4,
        (0.002, 1.0),
        12,
        vec![Cut::QMin(12.0)],
    );
    let (names, p, _) = case.nulls();
    check_uniform(case.name, &names, &p);
}

#[test]
fn rarely_detectable_objects_every_p_value_is_uniform() {
    // Objects the quarter survey finds less than one time in 125 (mean chance 0.01–0.8%):
    // maps of tens of thousands of trials, the hard case of the issue.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![quarter(dir.path())];
    let table = objects(400, 9, (0.4, 0.6), (5.5, 8.0));
    let case = engine_case("rare", &table, &surveys, 8, (0.0001, 0.008), 10, vec![]);
    let (names, p, _) = case.nulls();
    check_uniform(case.name, &names, &p);
}

/// The wide survey's truth tables of 20 objects (mean chance ≥ 0.5%).
fn wide_case(dir: &Path) -> Case {
    let surveys = vec![wide(dir)];
    let table = objects(40, 8, (0.4, 0.6), (5.0, 6.5));
    engine_case("wide", &table, &surveys, 4, (0.005, 1.0), 20, vec![])
}

#[test]
fn power_a_von_mises_clustering_of_20_objects_is_found() {
    // ϖ of the population from a von Mises law of κ = 2 (random mean direction), seen through
    // the wide survey: the bias-aware Rayleigh test of ϖ must reject at 5% in ≥ 80% of
    // catalogues. The global p-value pays for looking at 9 statistics; its power is printed.
    let dir = tempfile::tempdir().unwrap();
    let case = wide_case(dir.path());
    let replicas = 300;
    let out: Vec<(f64, f64)> = (0..replicas)
        .into_par_iter()
        .map(|k| {
            let mut sky = Pcg64::seed_from_u64(7000 + k as u64);
            let mu = sky.random::<f64>() * TAU;
            let angles: Vec<_> = case
                .truths
                .iter()
                .map(|t| t.draw_clustered(mu, 2.0, &mut sky))
                .collect();
            let mut maps = Pcg64::seed_from_u64(k as u64);
            let (names, p, _, _) = case.test(&case.catalogue(&angles), &mut maps, 0);
            let at = |n: &str| p[names.iter().position(|x| x == n).unwrap()];
            (at("rayleigh_varpi"), at("global"))
        })
        .collect();
    let power = |k: usize| out.iter().filter(|x| [x.0, x.1][k] < 0.05).count() as f64 / replicas as f64;
    eprintln!(
        "power at κ = 2, N = 20, {replicas} catalogues: Rayleigh ϖ {:.3}, global {:.3}",
        power(0),
        power(1)
    );
    assert!(power(0) >= 0.8, "power {}", power(0));
}

#[test]
fn quoted_errors_cover_the_noise_of_maps_and_catalogues() {
    // One catalogue of rarely detectable objects, tested 60 times with fresh maps and fresh
    // synthetic catalogues (new seeds): the spread of its p-values must match the errors the
    // test quotes (from 10 bootstrap replicas of the maps): ratio of the observed standard
    // deviation to the root-mean-square quoted error in [0.6, 1.4] for every row whose p lies
    // away from 0 and 1 (the ratio's own noise at 60 seeds and 10 replicas is about ±15%;
    // common practice, no source).
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![quarter(dir.path())];
    let table = objects(400, 9, (0.4, 0.6), (5.5, 8.0));
    let case = engine_case("rare", &table, &surveys, 8, (0.0001, 0.008), 10, vec![]);
    let mut sky = Pcg64::seed_from_u64(31);
    let angles: Vec<_> = case.truths.iter().map(|t| t.draw(&mut sky)).collect();
    let cat = case.catalogue(&angles);
    let seeds = 60;
    let runs: Vec<_> = (0..seeds)
        .into_par_iter()
        .map(|k| case.test(&cat, &mut Pcg64::seed_from_u64(500 + k as u64), 10))
        .collect();
    let names = &runs[0].0;
    let mut checked = 0;
    for (row, name) in names.iter().enumerate() {
        let p: Vec<f64> = runs.iter().map(|r| r.1[row]).collect();
        let err: Vec<f64> = runs.iter().map(|r| r.2[row]).collect();
        let mean = p.iter().sum::<f64>() / seeds as f64;
        let sd = (p.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (seeds - 1) as f64).sqrt();
        let rms = (err.iter().map(|e| e * e).sum::<f64>() / seeds as f64).sqrt();
        eprintln!("{name:<24} mean p {mean:.4}  sd over seeds {sd:.5}  quoted error (rms) {rms:.5}");
        if (0.02..0.98).contains(&mean) {
            checked += 1;
            assert!(
                (0.6..1.4).contains(&(sd / rms)),
                "{name}: sd over seeds {sd:.5} against quoted {rms:.5}"
            );
        }
    }
    assert!(checked >= 3, "only {checked} rows away from 0 and 1");
}

#[test]
fn two_seeds_through_the_engine_agree_within_the_quoted_errors() {
    // The command's own path: adaptive maps from the engine (default grid and budget), 20
    // replicas, seeds 1 and 2; every p-value agrees within 3 combined standard errors.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![quarter(dir.path())];
    let all = objects(30, 3, (0.4, 0.6), (5.0, 6.0));
    let grid = test_grid();
    let probe = bias_maps(&all, 0..all.len(), &surveys, grid, MapBudget::fixed(1, grid), 5, &|| {});
    let rows: Vec<usize> = (0..all.len()).filter(|i| probe[*i].mean_p() >= 0.01).take(8).collect();
    assert_eq!(rows.len(), 8, "too few findable objects");
    // The catalogue: those objects, angles drawn from their probe maps (close to the null).
    let mut sky = Pcg64::seed_from_u64(12);
    let table = ObjectTable::from_frame(
        common::objects_frame(rows.iter().map(|i| {
            let e = &all.elements[*i];
            let (varpi, node) = probe[*i].sampler().unwrap().sample(&mut sky);
            let argperi = (varpi - node).rem_euclid(TAU);
            let deg = f64::to_degrees;
            [
                all.ids[*i] as f64,
                e.a_au,
                e.e,
                deg(e.inc_rad),
                deg(node),
                deg(argperi),
                0.0,
                60400.0,
                all.h_mag[*i],
            ]
        })),
        Path::new("catalogue.csv"),
    )
    .unwrap();
    let cat = Angles::of(&table);
    let run = |seed: u64| {
        let maps = bias_maps(&table, 0..table.len(), &surveys, grid, default_budget(), seed, &|| {});
        let opt = TestOptions {
            trials: 4000,
            seed,
            ..TestOptions::default()
        };
        cluster_test(&cat, &maps, &opt, &|| {}).unwrap()
    };
    let (a, b) = (run(1), run(2));
    for (x, y) in a.results.iter().zip(&b.results) {
        let tol = 3.0 * x.p_bias_aware_error.hypot(y.p_bias_aware_error);
        eprintln!(
            "{:<24} seed 1: {:.4} ± {:.4}   seed 2: {:.4} ± {:.4}",
            x.statistic, x.p_bias_aware, x.p_bias_aware_error, y.p_bias_aware, y.p_bias_aware_error
        );
        assert!(tol > 0.0, "{}: no error quoted", x.statistic);
        assert!(
            (x.p_bias_aware - y.p_bias_aware).abs() <= tol,
            "{}: {} vs {} (tolerance {tol})",
            x.statistic,
            x.p_bias_aware,
            y.p_bias_aware
        );
    }
}
