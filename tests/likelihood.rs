//! Model likelihoods, weights and frames: the density machinery against scipy, the element
//! frames against ERFA and rebound (fixtures of `tests/reference/make_likelihood_fixtures.py`;
//! sources named beside each check), and the statistical standard through the engine on a
//! lopsided invented survey: the true model's goodness-of-fit p is uniform, ln L does not drift
//! with the model's size nor with where the angles' zero is, and importance-weighted yields equal
//! plain sampling's.

mod common;

use std::path::Path;

use common::{Fixture, draw, ecliptic_fields, ks_uniform_p, survey};
use nalgebra::DMatrix;
use seine::analysis::compare::{CompareOptions, DensityChoice, score_model, shared_estimator};
use seine::analysis::likelihood::{Bandwidth, Estimator, Kde, Kernel, ModelDensity};
use seine::analysis::model_sample::{Detected, MODEL_CHUNK_ROWS, Model};
use seine::analysis::space::{Coordinate, Space};
use seine::analysis::trial_selection::TrialSelection;
use seine::engine::PreparedSurvey;
use seine::orbit::{Center, Elements};
use seine::population::objects::{ObjectSource, ObjectTable};
use seine::population::recenter::recenter;
use seine::population::resonance::neptune_mean_longitude;
use seine::statistics::{Tally, kish_n_of};

#[test]
fn weighted_kernel_density_and_kish_n_against_scipy() {
    // Source: scipy.stats.gaussian_kde(data, weights=w), Scott's rule; its `neff` is Kish's
    // effective sample size (kde_weighted_data.csv, kde_weighted_eval.csv).
    let d = Fixture::load("kde_weighted_data.csv");
    let (x0, x1, w) = (d.col("x0"), d.col("x1"), d.col("weight"));
    let factor = d.col("factor")[0];
    let neff = d.col("neff")[0];
    assert!(
        (kish_n_of(&w) - neff).abs() < 1e-9 * neff,
        "Kish n {} vs {neff}",
        kish_n_of(&w)
    );
    let pts: Vec<Vec<f64>> = x0.iter().zip(&x1).map(|(a, b)| vec![*a, *b]).collect();
    let kde = Kde::new(&pts, &w).unwrap();
    assert!((kde.factor - factor).abs() < 1e-14, "{} vs {factor}", kde.factor);
    let e = Fixture::load("kde_weighted_eval.csv");
    let mut worst: f64 = 0.0;
    for ((a, b), want) in e.col("x0").into_iter().zip(e.col("x1")).zip(e.col("density")) {
        let got = kde.pdf(&[a, b]);
        worst = worst.max((got - want).abs() / want);
    }
    assert!(worst < 1e-10, "worst relative difference {worst:e}");
}

#[test]
fn von_mises_kernel_against_scipy() {
    // Source: scipy.stats.vonmises.pdf(x, kappa, loc) (vonmises_pdf.csv); our densities are per
    // degree, scipy's per radian.
    let f = Fixture::load("vonmises_pdf.csv");
    let (kappa, loc, x, want) = (f.col("kappa"), f.col("loc_rad"), f.col("x_rad"), f.col("pdf_per_rad"));
    let mut worst: f64 = 0.0;
    for i in 0..f.len() {
        let bw = Bandwidth {
            factor: 1.0,
            covariance: DMatrix::zeros(0, 0),
            kappa: vec![kappa[i]],
        };
        let k = Kernel::new(&[Coordinate::Angle], &bw).unwrap();
        let d = ModelDensity::new(&Estimator::Kernel(k), &[vec![loc[i].to_degrees()]], &[1.0]).unwrap();
        let got = d.pdf(&[x[i].to_degrees()]) * 180.0 / std::f64::consts::PI;
        worst = worst.max((got - want[i]).abs() / want[i].max(1e-300));
    }
    assert!(worst < 1e-12, "worst relative difference {worst:e}");
}

fn elements(v: [f64; 7]) -> Elements {
    Elements {
        a_au: v[0],
        e: v[1],
        inc_rad: v[2].to_radians(),
        node_rad: v[3].to_radians(),
        argperi_rad: v[4].to_radians(),
        mean_anomaly_rad: v[5].to_radians(),
        epoch_mjd_tdb: v[6],
        center: Center::Heliocentric,
    }
}

fn angle_diff_deg(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(360.0);
    d.min(360.0 - d)
}

#[test]
fn heliocentric_to_barycentric_against_erfa_and_rebound() {
    // Source: the Sun's barycentric state from erfa.epv00, elements ↔ states by rebound
    // (recenter.csv). Tolerances follow the Sun's agreement with epv00 (4e-7 AU, methods.md):
    // at 1500 AU an error δv in the Sun's velocity moves a by 2 a² δv/√(GM a) ~ 1e-6 relative.
    let f = Fixture::load("recenter.csv");
    let c = |n: &str| f.col(n);
    let (mut worst_a, mut worst_e, mut worst_ang): (f64, f64, f64) = (0.0, 0.0, 0.0);
    let (mut largest_shift, mut at_a) = (0.0f64, 0.0);
    for i in 0..f.len() {
        let h = elements([
            c("a_au")[i],
            c("e")[i],
            c("inc_deg")[i],
            c("node_deg")[i],
            c("argperi_deg")[i],
            c("mean_anomaly_deg")[i],
            c("epoch_mjd")[i],
        ]);
        let b = recenter(&h, Center::Barycentric).unwrap();
        let want_a = c("bary_a_au")[i];
        worst_a = worst_a.max((b.a_au - want_a).abs() / want_a);
        worst_e = worst_e.max((b.e - c("bary_e")[i]).abs());
        for (got, want) in [
            (b.inc_rad.to_degrees(), c("bary_inc_deg")[i]),
            (b.node_rad.to_degrees(), c("bary_node_deg")[i]),
            (b.argperi_rad.to_degrees(), c("bary_argperi_deg")[i]),
            (b.mean_anomaly_rad.to_degrees(), c("bary_mean_anomaly_deg")[i]),
        ] {
            worst_ang = worst_ang.max(angle_diff_deg(got, want) * b.e.max(0.05));
        }
        // And back: the round trip is exact to rounding.
        let back = recenter(&b, Center::Heliocentric).unwrap();
        assert!((back.a_au - h.a_au).abs() < 1e-9 * h.a_au, "round trip {i}");
        if (b.a_au / h.a_au - 1.0).abs() > largest_shift {
            (largest_shift, at_a) = ((b.a_au / h.a_au - 1.0).abs(), h.a_au);
        }
    }
    eprintln!(
        "recenter vs ERFA+rebound: a {worst_a:.1e} relative, e {worst_e:.1e}, angles × e {worst_ang:.1e} deg; \
         largest helio→bary change of a {:.2}% (a = {at_a:.0} AU)",
        100.0 * largest_shift
    );
    assert!(
        worst_a < 2e-5 && worst_e < 2e-6 && worst_ang < 2e-3,
        "{worst_a} {worst_e} {worst_ang}"
    );
    assert!(largest_shift > 0.01, "the frames differ by per cents at hundreds of AU");
}

#[test]
fn neptune_mean_longitude_against_erfa_plan94() {
    // Source: erfa.plan94 positions (Simon et al. 1994), osculating
    // mean longitude by rebound (neptune_longitude.csv). plan94 and VSOP87 differ by their
    // perturbation series; 0.05° is far below what the resonant geometry needs.
    let f = Fixture::load("neptune_longitude.csv");
    let mut worst: f64 = 0.0;
    for (t, want) in f.col("tdb_mjd").into_iter().zip(f.col("mean_longitude_deg")) {
        worst = worst.max(angle_diff_deg(neptune_mean_longitude(t).to_degrees(), want));
    }
    eprintln!("Neptune's mean longitude: VSOP87 vs plan94 within {worst:.4}°");
    assert!(worst < 0.05, "{worst}");
}

/// A lopsided survey: four 10° fields on the ecliptic at λ = 0–45°, a few nights around the
/// patch's opposition in two years, shallow: eccentric objects are found near perihelion only.
fn lopsided(dir: &Path) -> PreparedSurvey {
    let fields = ecliptic_fields(&[0.0, 15.0, 30.0, 45.0]);
    let nights = [60580.0, 60590.0, 60600.0, 60945.0, 60955.0, 60965.0];
    survey(dir, "lopsided", 10.0, 22.0, &fields, &nights)
}

const ECCENTRIC: &str = r#"
[population]
name = "eccentric test disk"
epoch_mjd = 60400.0
[orbit]
a_au = { dist = "uniform", lo = 40.0, hi = 80.0 }
e = { dist = "uniform", lo = 0.4, hi = 0.6 }
inc_deg = { dist = "uniform", lo = 0.0, hi = 15.0 }
[photometry]
h_mag = { dist = "uniform", lo = 5.0, hi = 6.5 }
"#;

fn options(observed: &ObjectTable, synthetic: u64, bootstrap: u64) -> CompareOptions {
    CompareOptions {
        observed: observed.clone(),
        models: Vec::new(),
        space: Space::parse("a_au,q_au,inc_deg,varpi_deg").unwrap(),
        density: DensityChoice::Kernel,
        synthetic,
        bootstrap,
        seed: 11,
        frame: None,
        selection: TrialSelection::Discovered,
    }
}

/// Catalogues of `n` objects: disjoint sets of the discoveries of a sky population that is
/// independent of the model's sample (other ids).
fn catalogues(surveys: &[PreparedSurvey], space: &Space, spec: &str, count: usize, n: usize) -> Vec<Vec<Vec<f64>>> {
    let sky = draw(spec, 5, 10_000_000, 180_000);
    let found = seine::analysis::compare::detected_rows(&sky, surveys, 77);
    assert!(
        found.len() >= count * n,
        "{} discoveries for {count} × {n}",
        found.len()
    );
    let pts = space.points(&sky, &found);
    pts.chunks(n).take(count).map(|c| c.to_vec()).collect()
}

#[test]
fn goodness_of_fit_is_calibrated_and_ln_l_does_not_drift() {
    // The null itself, through the engine (no outside number): 200 catalogues of the true
    // model's discoveries (an independent sky population) give uniform goodness-of-fit and
    // marginal p-values; a quarter of the model's objects gives the same ln L within its quoted
    // error; a wrong model is rejected.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    let (count, n) = (200, 10);
    let true_objects = draw(ECCENTRIC, 3, 0, 120_000);
    let opts = options(&true_objects, 100, 10);
    let model = Model {
        name: "true".into(),
        objects: true_objects.into(),
        population_size: None,
    };
    let quarter = Model {
        name: "quarter".into(),
        objects: draw(ECCENTRIC, 3, 0, 30_000).into(),
        population_size: None,
    };
    // A wrong model: semi-major axes half as large again.
    let wrong_spec = ECCENTRIC.replace("lo = 40.0, hi = 80.0", "lo = 60.0, hi = 120.0");
    let wrong = Model {
        name: "wrong".into(),
        objects: draw(&wrong_spec, 3, 0, 120_000).into(),
        population_size: None,
    };
    let det: Vec<Detected> = [&model, &quarter, &wrong]
        .iter()
        .map(|m| Detected::of(m, &opts.space, &surveys, opts.seed).unwrap())
        .collect();
    eprintln!(
        "detected: true {} of {}, quarter {}, wrong {}",
        det[0].rows.len(),
        model.objects.len(),
        det[1].rows.len(),
        det[2].rows.len()
    );
    let cats = catalogues(&surveys, &opts.space, ECCENTRIC, count, n);
    // One bandwidth for all three (the rule of compare-models).
    let est = shared_estimator(&opts.space, opts.density, &cats[0], n as f64, &det).unwrap();
    let (mut p_true, mut p_wrong, mut marg) = (Vec::new(), Vec::new(), vec![Vec::new(); 8]);
    let (mut drift, mut drift_sigma) = (Vec::new(), Vec::new());
    for (c, cat) in cats.iter().enumerate() {
        let mut o = opts.clone();
        o.seed = 1000 + c as u64;
        let drift_case = c < 30;
        o.bootstrap = if drift_case { 100 } else { 2 };
        let s = score_model(0, &model, &det[0], &est, cat, &o).unwrap();
        p_true.push(s.gof_p);
        for (k, m) in s.marginals.iter().enumerate() {
            marg[k].push(m.p_value);
        }
        if drift_case {
            let q = score_model(1, &quarter, &det[1], &est, cat, &o).unwrap();
            drift.push(q.log_likelihood - s.log_likelihood);
            drift_sigma.push(q.log_likelihood_error);
            p_wrong.push(score_model(2, &wrong, &det[2], &est, cat, &o).unwrap().gof_p);
        }
    }
    // Drift: the quarter-size model gives the same ln L within its quoted error (the quarter is
    // a subset of the full sample, so the difference's spread is at most the quarter's error).
    let z: Vec<f64> = drift.iter().zip(&drift_sigma).map(|(d, s)| d / s).collect();
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    let mean_z = mean(&z);
    eprintln!(
        "ln L(quarter) − ln L(full) over {} catalogues: mean {:+.3} nats, mean quoted error {:.3}, \
         mean z {mean_z:+.2}, largest |z| {:.2}",
        z.len(),
        mean(&drift),
        mean(&drift_sigma),
        z.iter().fold(0.0f64, |m, x| m.max(x.abs()))
    );
    let ks = ks_uniform_p(&p_true);
    let reject = p_true.iter().filter(|p| **p < 0.05).count() as f64 / count as f64;
    let wrong_reject = p_wrong.iter().filter(|p| **p < 0.05).count() as f64 / p_wrong.len() as f64;
    eprintln!(
        "goodness of fit of the true model over {count} catalogues of {n}: KS p vs uniform {ks:.3}, \
         rejection at 5% {reject:.3}; wrong model rejected in {wrong_reject:.2} of {}",
        p_wrong.len()
    );
    let marg_ks: Vec<f64> = marg.iter().map(|p| ks_uniform_p(p)).collect();
    eprintln!("marginal tests (ks, ad of a, q, i; kuiper, watson of varpi): KS p vs uniform {marg_ks:.3?}");
    assert!(ks > 0.01, "goodness-of-fit p not uniform: KS p {ks}");
    // 200 catalogues: the 5% rate has a binomial sd of 1.5%.
    assert!((0.015..=0.095).contains(&reject), "rejection rate {reject}");
    assert!(marg_ks.iter().all(|p| *p > 0.001), "{marg_ks:?}");
    assert!(z.iter().all(|x| x.abs() < 4.0), "{z:?}");
    assert!(mean_z.abs() < 0.5, "systematic drift: mean z {mean_z}");
    assert!(
        wrong_reject > 0.5,
        "the wrong model is rejected too rarely: {wrong_reject}"
    );
}

#[test]
fn a_model_read_a_chunk_at_a_time_keeps_the_sample_of_the_whole_table() {
    // compare-models reads a Parquet model MODEL_CHUNK_ROWS rows at a time and keeps only its
    // sample (model_sample.rs). Every row is judged on its own id's streams, so the sample must
    // be the one of the same table held whole, with a frame conversion too: the same rows, ids,
    // points, weights, detected fraction and, for ν's bootstrap, every object's id and weight.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    let table = draw(ECCENTRIC, 3, 0, MODEL_CHUNK_ROWS as i64 + 20_000);
    let path = dir.path().join("model.parquet");
    seine::io::write_table(&mut table.frame.clone(), &path, &seine::io::Provenance::current()).unwrap();
    let whole = Model {
        name: "m".into(),
        objects: table.into(),
        population_size: Some(1e6),
    };
    let chunked = Model {
        objects: ObjectSource::parquet(&path, None).unwrap(),
        ..whole.clone()
    };
    let space = Space::parse("a_au,q_au,inc_deg,varpi_deg").unwrap();
    for to in [None, Some(Center::Barycentric)] {
        let sample =
            |m: &Model| Detected::selected_in(m, &space, &surveys, 11, &TrialSelection::Discovered, to).unwrap();
        let (a, b) = (sample(&whole), sample(&chunked));
        assert!(
            b.rows.iter().any(|r| *r >= MODEL_CHUNK_ROWS),
            "no detection in the second chunk: the test shows nothing"
        );
        assert_eq!(b.population.as_ref().map(Vec::len), Some(whole.objects.len()));
        assert_eq!(a, b, "frame {to:?}");
    }
}

#[test]
fn ln_l_does_not_depend_on_where_the_angles_zero_is() {
    // Rotating every angle of catalogue and model by 180° is a symmetry of the density (von
    // Mises kernels; the bandwidth from the mean resultant length): ln L is unchanged.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    let model = Model {
        name: "m".into(),
        objects: draw(ECCENTRIC, 3, 0, 100_000).into(),
        population_size: None,
    };
    let space = Space::parse("a_au,e,inc_deg,node_deg,varpi_deg").unwrap();
    let det = Detected::of(&model, &space, &surveys, 11).unwrap();
    let cat: Vec<Vec<f64>> = det.points.iter().step_by(7).take(25).cloned().collect();
    let rot = |p: &[Vec<f64>]| -> Vec<Vec<f64>> {
        p.iter()
            .map(|x| vec![x[0], x[1], x[2], (x[3] + 180.0) % 360.0, (x[4] + 180.0) % 360.0])
            .collect()
    };
    let ll = |pts: &[Vec<f64>], cat: &[Vec<f64>]| {
        let mut d = det.clone();
        d.points = pts.to_vec();
        let est = shared_estimator(&space, DensityChoice::Kernel, cat, cat.len() as f64, &[d.clone()]).unwrap();
        ModelDensity::new(&est, &d.points, &d.weights)
            .unwrap()
            .log_likelihood(cat)
    };
    let (a, b) = (ll(&det.points, &cat), ll(&rot(&det.points), &rot(&cat)));
    eprintln!("ln L {a:.6}, rotated by 180°: {b:.6}");
    assert!((a - b).abs() < 1e-8 * a.abs().max(1.0), "{a} vs {b}");
}

#[test]
fn importance_weighted_yield_equals_plain_sampling() {
    // The same population drawn plainly and with proposals for M (towards perihelion) and H
    // (flatter than the target): the weighted discovered fractions agree within their errors;
    // unweighted, the importance sample would overstate the fraction.
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![lopsided(dir.path())];
    let target = ECCENTRIC.replace(
        "h_mag = { dist = \"uniform\", lo = 5.0, hi = 6.5 }",
        "h_mag = { dist = \"exponential\", alpha = 0.8, lo = 4.0, hi = 7.0 }",
    );
    let proposal = format!(
        "{target}\n[importance]\nmean_anomaly_deg = {{ dist = \"von-mises\", mean = 0.0, kappa = 1.5 }}\n\
         h_mag = {{ dist = \"uniform\", lo = 4.0, hi = 7.0 }}\n"
    );
    let plain = draw(&target, 8, 0, 400_000);
    let is = draw(&proposal, 9, 0, 100_000);
    let any = |t: &ObjectTable| -> Tally { seine::analysis::yields::totals(t, &surveys, 3).last().unwrap().0 };
    let (a, b) = (any(&plain).proportion(), any(&is).proportion());
    let unweighted = b.k as f64 / b.n as f64;
    let z = (a.fraction - b.fraction) / a.std_error.hypot(b.std_error);
    eprintln!(
        "discovered: plain {:.4}% ± {:.4}% ({} of {}), importance-weighted {:.4}% ± {:.4}% (n_eff {:.0} of {}), \
         z = {z:+.2}; the importance sample unweighted: {:.3}%",
        100.0 * a.fraction,
        100.0 * a.std_error,
        a.k,
        a.n,
        100.0 * b.fraction,
        100.0 * b.std_error,
        b.n_eff,
        b.n,
        100.0 * unweighted
    );
    assert!(z.abs() < 3.0, "z = {z}");
    assert!(
        (unweighted - a.fraction).abs() > 5.0 * a.std_error,
        "the weights must matter here"
    );
    assert!(
        a.lower <= b.upper && b.lower <= a.upper,
        "the 95% intervals overlap: [{}, {}] vs [{}, {}]",
        a.lower,
        a.upper,
        b.lower,
        b.upper
    );
}
