//! Orbit fits to simulated astrometry: exact recovery without noise, honest errors on long
//! arcs (pulls unit normal and χ² distributed as χ², by Kolmogorov–Smirnov), and the short-arc
//! classes with their prior.

mod common;
#[path = "common/fit_scenario.rs"]
mod scenario;

use common::Fixture;
use seine::fit::Observation;
use seine::sky::frames::unit_vector;
use seine::sky::observer::observer_states;
use seine::survey::visits::night_of;
use seine::time::TimeScale;

use rand::SeedableRng;
use rand_pcg::Pcg64;
use scenario::*;
use seine::analysis::two_sample::kolmogorov_sf;
use seine::fit::chart::elements_at;
use seine::fit::{OrbitFit, Quality, fit_orbit};
use seine::orbit::kepler::wrap_pi;
use seine::orbit::{Center, Elements, Orbit};
use statrs::distribution::{ChiSquared, ContinuousCDF, Normal};

/// One-sample Kolmogorov–Smirnov p-value of `x` against the CDF `cdf` (asymptotic
/// Kolmogorov distribution with the small-sample form of `kolmogorov_sf`).
fn ks_p(x: &[f64], cdf: impl Fn(f64) -> f64) -> (f64, f64) {
    let mut v = x.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len() as f64;
    let d = v
        .iter()
        .enumerate()
        .map(|(i, &xi)| {
            let f = cdf(xi);
            (f - i as f64 / n).max((i + 1) as f64 / n - f)
        })
        .fold(0.0, f64::max);
    (d, kolmogorov_sf(v.len(), d))
}

fn element_vector(el: &Elements) -> [f64; 6] {
    el.to_array()
}

/// (fit − truth)/σ for the six elements, the truth taken at the fit's epoch.
fn pulls(fit: &OrbitFit, orbit: &Orbit) -> [f64; 6] {
    let el = fit.elements.expect("a fit");
    let truth = element_vector(&elements_at(orbit, el.epoch_mjd_tdb));
    let got = element_vector(&el);
    std::array::from_fn(|k| {
        let d = got[k] - truth[k];
        let d = if k >= 3 { wrap_pi(d) } else { d };
        d / fit.sigma(k).unwrap()
    })
}

#[test]
fn noise_free_long_arc_recovers_the_orbit_exactly() {
    // The fit uses the model that made the data: without noise it must return the truth,
    // to far below σ, with χ² ≈ 0 and the multi-opposition class.
    let mut rng = Pcg64::seed_from_u64(11);
    for _ in 0..5 {
        let orbit = Orbit::new(draw_elements(&mut rng));
        let obs = observations(&orbit, &long_arc(opposition_mjd(&orbit)), 0.1, None);
        let fit = fit_orbit(&obs, Center::Heliocentric);
        assert_eq!(fit.quality, Quality::MultiOpposition);
        assert!(fit.chi2 < 1e-6, "χ² {} without noise", fit.chi2);
        for (k, p) in pulls(&fit, &orbit).iter().enumerate() {
            assert!(p.abs() < 1e-3, "element {k}: pull {p} without noise");
        }
    }
}

#[test]
fn long_arc_pulls_are_unit_normal_and_chi2_is_chi2() {
    // 300 invented objects over three oppositions (36 detections of 0.1″ each): if the
    // covariance is honest, each element's pulls are N(0, 1) and χ² follows χ²(2n − 6)
    // (the fit is nearly linear over its error ellipsoid on such arcs). Reference
    // distributions: statrs Normal and ChiSquared; KS p-values from the Kolmogorov distribution.
    let mut rng = Pcg64::seed_from_u64(2026);
    let n_objects = 300;
    let mut pull: [Vec<f64>; 6] = Default::default();
    let mut chi2 = Vec::new();
    let mut dof = 0.0;
    for _ in 0..n_objects {
        let orbit = Orbit::new(draw_elements(&mut rng));
        let obs = observations(&orbit, &long_arc(opposition_mjd(&orbit)), 0.1, Some(&mut rng));
        let fit = fit_orbit(&obs, Center::Heliocentric);
        assert_eq!(fit.quality, Quality::MultiOpposition, "arc {} d", fit.arc_days);
        for (k, p) in pulls(&fit, &orbit).into_iter().enumerate() {
            pull[k].push(p);
        }
        chi2.push(fit.chi2);
        dof = (2 * fit.n_obs - 6) as f64;
    }
    let normal = Normal::new(0.0, 1.0).unwrap();
    for (k, name) in ["a", "e", "inc", "node", "argperi", "mean_anomaly"].iter().enumerate() {
        let (d, p) = ks_p(&pull[k], |x| normal.cdf(x));
        let mean = pull[k].iter().sum::<f64>() / n_objects as f64;
        let sd = (pull[k].iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n_objects - 1) as f64).sqrt();
        eprintln!("pull {name}: mean {mean:+.3}, sd {sd:.3}, KS D {d:.4}, p {p:.3}");
        assert!(p > 0.01, "pulls of {name} are not unit normal: KS p = {p}");
        assert!((sd - 1.0).abs() < 0.15, "pull sd of {name} = {sd}");
    }
    let chi = ChiSquared::new(dof).unwrap();
    let (d, p) = ks_p(&chi2, |x| chi.cdf(x));
    let mean = chi2.iter().sum::<f64>() / n_objects as f64;
    eprintln!("χ²: mean {mean:.2} for {dof} dof, KS D {d:.4}, p {p:.3}");
    assert!(p > 0.01, "χ² is not χ²({dof}): KS p = {p}");
}

#[test]
fn one_night_uses_the_velocity_prior_and_gives_a_distance_not_an_orbit() {
    // Three detections over 80 minutes: the class is single_night, the prior is flagged, the
    // distance is found to tens of per cent (Earth's reflex motion against the bound-orbit
    // prior), while a is known only roughly (σa/a large).
    let mut rng = Pcg64::seed_from_u64(5);
    let mut distance_err = Vec::new();
    for _ in 0..40 {
        let orbit = Orbit::new(draw_elements(&mut rng));
        let obs = observations(
            &orbit,
            &schedule(opposition_mjd(&orbit), &[0.0], 3),
            0.1,
            Some(&mut rng),
        );
        let fit = fit_orbit(&obs, Center::Heliocentric);
        assert_eq!(fit.quality, Quality::SingleNight);
        let el = fit.elements.expect("a one-night fit gives an orbit");
        let (r_fit, _) = Orbit::new(el).state(el.epoch_mjd_tdb);
        let (r_true, _) = orbit.state(el.epoch_mjd_tdb);
        distance_err.push((r_fit.norm() / r_true.norm() - 1.0).abs());
        assert!(
            fit.sigma(0).unwrap() / el.a_au > 0.05,
            "σa/a = {}",
            fit.sigma(0).unwrap() / el.a_au
        );
    }
    distance_err.sort_by(f64::total_cmp);
    let median = distance_err[distance_err.len() / 2];
    eprintln!("one night: median |r_fit/r_true − 1| = {median:.3}");
    assert!(median < 0.3, "median distance error {median}");
}

#[test]
fn a_week_is_a_short_arc_with_the_radial_prior() {
    // Two visits on each of nights 0, 1 and 7: the radial rate is not measured, so the γ̇
    // prior enters (short_arc), and the fit still goes through the detections (χ² near 2n − 6).
    let mut rng = Pcg64::seed_from_u64(8);
    let mut classes = Vec::new();
    for _ in 0..20 {
        let orbit = Orbit::new(draw_elements(&mut rng));
        let obs = observations(
            &orbit,
            &schedule(opposition_mjd(&orbit), &[0.0, 1.0, 7.0], 2),
            0.1,
            Some(&mut rng),
        );
        let fit = fit_orbit(&obs, Center::Heliocentric);
        assert!(fit.elements.is_some());
        assert!(fit.chi2 < 30.0, "χ² {} for 12 residuals", fit.chi2);
        classes.push(fit.quality);
    }
    assert!(classes.iter().all(|q| *q == Quality::ShortArc), "{classes:?}");
}

#[test]
fn eccentric_objects_near_perihelion_get_orbits_from_a_month() {
    // The tutorial's hard case (validation.md, one season): a 150–600 AU, e 0.75–0.9, at
    // perihelion, seen on 11 nights over 30 days (two visits a night, 0.1″). Moving nearly at
    // the escape speed, their trial orbits cross e = 1; with bound trial orbits only, such fits
    // stalled at the wall (29 of these 40 failed, measured by refusing unbound trial states;
    // 45 of 100 in the tutorial). Now each gets an orbit through its detections, unless its
    // best orbit is unbound even with the velocity prior (none of these 40).
    let mut rng = Pcg64::seed_from_u64(12);
    let nights: Vec<f64> = (0..11).map(|k| 3.0 * k as f64).collect();
    let (mut failed, mut measured) = (0, 0);
    let n = 40;
    for _ in 0..n {
        let mut el = draw_elements(&mut rng);
        el.a_au = 150.0 * 4f64.powf(rand::RngExt::random::<f64>(&mut rng));
        el.e = 0.75 + 0.15 * rand::RngExt::random::<f64>(&mut rng);
        el.mean_anomaly_rad = 0.0;
        let orbit = Orbit::new(el);
        let obs = observations(
            &orbit,
            &schedule(opposition_mjd(&orbit), &nights, 2),
            0.1,
            Some(&mut rng),
        );
        let fit = fit_orbit(&obs, Center::Heliocentric);
        match fit.quality {
            Quality::Failed => failed += 1,
            q => {
                measured += usize::from(q == Quality::OneOpposition);
                // At its minimum: χ² of 44 residuals less 6 parameters below 4 per dof
                // (χ²(38) has a tail below 10⁻¹⁰ there; statrs ChiSquared).
                assert!(fit.chi2 < 4.0 * 38.0, "{q:?} fit with χ² {}", fit.chi2);
                assert!(fit.elements.is_some_and(|e| e.e < 1.0));
            }
        }
    }
    eprintln!("perihelion month: {failed} failed, {measured} one_opposition of {n}");
    assert!(failed <= n / 8, "{failed} of {n} failed");
    assert!(measured > 0, "no fit without prior");
}

#[test]
fn too_few_detections_fail_cleanly() {
    let mut rng = Pcg64::seed_from_u64(3);
    let orbit = Orbit::new(draw_elements(&mut rng));
    let obs = observations(
        &orbit,
        &schedule(opposition_mjd(&orbit), &[0.0], 2),
        0.1,
        Some(&mut rng),
    );
    let fit = fit_orbit(&obs, Center::Heliocentric);
    assert_eq!(fit.quality, Quality::Failed);
    assert!(fit.elements.is_none() && fit.covariance.is_none());
    assert_eq!(fit.n_obs, 2);
}

#[test]
fn agrees_with_an_independent_scipy_fit() {
    // Source: tests/reference/make_fit_fixtures.py — scipy.optimize.least_squares on the
    // heliocentric state, with pyerfa epv00 Earth and Sun, astropy's site vector and numpy
    // Kepler propagation; the same measured positions fitted here must give the same minimum.
    let obs = Fixture::load("fit_observations.csv");
    let reference = Fixture::load("fit_reference.csv");
    let (id, mjd, ra, dec, sigma) = (
        obs.col("id"),
        obs.col("mjd_utc"),
        obs.col("ra_deg"),
        obs.col("dec_deg"),
        obs.col("sigma_arcsec"),
    );
    let names = ["a_au", "e", "inc_deg", "node_deg", "argperi_deg", "mean_anomaly_deg"];
    let mut worst_pull: f64 = 0.0;
    let mut worst_sigma: f64 = 0.0;
    for (r, &object) in reference.col("id").iter().enumerate() {
        let rows: Vec<usize> = (0..obs.len()).filter(|&k| id[k] == object).collect();
        let epochs: Vec<f64> = rows.iter().map(|&k| mjd[k]).collect();
        let states = observer_states(&epochs, TimeScale::Utc, Some(&site())).unwrap();
        let measured: Vec<Observation> = rows
            .iter()
            .zip(&states)
            .map(|(&k, o)| {
                let u = unit_vector(ra[k].to_radians(), dec[k].to_radians());
                Observation::at(*o, night_of(mjd[k], site().longitude_deg), u, sigma[k] * ARCSEC)
            })
            .collect();
        let fit = fit_orbit(&measured, Center::Heliocentric);
        assert!(
            matches!(fit.quality, Quality::OneOpposition | Quality::MultiOpposition),
            "object {object}: {:?} (no prior expected)",
            fit.quality
        );
        let el = fit.elements.unwrap();
        assert!((el.epoch_mjd_tdb - reference.col("epoch_mjd_tdb")[r]).abs() < 1e-8);
        let got = element_vector(&el);
        for (k, name) in names.iter().enumerate() {
            let scale = if k >= 2 { std::f64::consts::PI / 180.0 } else { 1.0 };
            let py = reference.col(name)[r] * scale;
            let py_sigma = reference.col(&format!("sigma_{name}"))[r] * scale;
            let d = if k >= 3 { wrap_pi(got[k] - py) } else { got[k] - py };
            let pull = d / py_sigma;
            let ratio = fit.sigma(k).unwrap() / py_sigma - 1.0;
            worst_pull = worst_pull.max(pull.abs());
            worst_sigma = worst_sigma.max(ratio.abs());
            assert!(
                pull.abs() < 0.05,
                "object {object} {name}: differs from scipy by {pull} σ"
            );
            assert!(
                ratio.abs() < 0.05,
                "object {object} {name}: σ differs from scipy's by {ratio}"
            );
        }
        let chi2 = reference.col("chi2")[r];
        assert!(
            (fit.chi2 - chi2).abs() < 0.01 * chi2 + 0.05,
            "object {object}: χ² {} vs {chi2}",
            fit.chi2
        );
    }
    eprintln!("against scipy: worst element difference {worst_pull:.4} σ, worst σ ratio − 1 {worst_sigma:.4}");
}

/// The synoptic example plan and 2000 bright invented objects, observed with `--fit-orbits`
/// (extra options appended); returns the run directory.
fn observed_with_fits(dir: &std::path::Path, name: &str, extra: &[&str]) -> std::path::PathBuf {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs");
    let s = |p: &std::path::Path| p.to_string_lossy().into_owned();
    let spec = dir.join("syn.survey.toml");
    if !spec.exists() {
        let ok = |o: std::process::Output| assert!(o.status.success(), "{}", common::stderr(&o));
        ok(common::seine(&[
            "plan",
            "--plan",
            &s(&root.join("synoptic-plan.toml")),
            "--out",
            &s(&dir.join("syn.csv")),
        ]));
        common::bright_population(dir);
        ok(common::seine(&[
            "draw",
            "--spec",
            &s(&dir.join("bright.toml")),
            "--count",
            "2000",
            "--seed",
            "4",
            "--out",
            &s(&dir.join("objects.parquet")),
            "--quiet",
        ]));
    }
    let out = dir.join(name);
    let mut args = vec![
        "observe".to_string(),
        "--survey".into(),
        s(&spec),
        "--objects".into(),
        s(&dir.join("objects.parquet")),
        "--out".into(),
        s(&out),
        "--fit-orbits".into(),
        "--quiet".into(),
    ];
    args.extend(extra.iter().map(|x| x.to_string()));
    let refs: Vec<&str> = args.iter().map(String::as_str).collect();
    let o = common::seine(&refs);
    assert!(o.status.success(), "{}", common::stderr(&o));
    out
}

fn nullable(df: &polars::prelude::DataFrame, name: &str) -> Vec<Option<f64>> {
    df.column(name)
        .unwrap_or_else(|_| panic!("no column {name}"))
        .as_materialized_series()
        .cast(&polars::prelude::DataType::Float64)
        .unwrap()
        .f64()
        .unwrap()
        .iter()
        .collect()
}

#[test]
fn observe_fit_orbits_writes_the_contract_columns_honestly() {
    use seine::io::table::read_table;
    let tmp = tempfile::tempdir().unwrap();
    let run = observed_with_fits(tmp.path(), "run", &["--threads", "2"]);
    let objects = read_table(&run.join("objects.parquet")).unwrap();
    let contract = [
        "fit_a_au",
        "fit_e",
        "fit_inc_deg",
        "fit_node_deg",
        "fit_argperi_deg",
        "fit_mean_anomaly_deg",
        "fit_epoch_mjd",
        "sigma_a_au",
        "sigma_e",
        "sigma_inc_deg",
        "arc_days",
        "n_fit_obs",
        "fit_chi2",
    ];
    let detected: Vec<bool> = objects
        .column("detected")
        .unwrap()
        .as_materialized_series()
        .bool()
        .unwrap()
        .iter()
        .map(|v| v.unwrap())
        .collect();
    let n_detected = nullable(&objects, "n_detected");
    let n_fit = nullable(&objects, "n_fit_obs");
    let (a, fit_a, sigma_a) = (
        nullable(&objects, "a_au"),
        nullable(&objects, "fit_a_au"),
        nullable(&objects, "sigma_a_au"),
    );
    let quality: Vec<Option<String>> = objects
        .column("fit_quality")
        .unwrap()
        .as_materialized_series()
        .str()
        .unwrap()
        .iter()
        .map(|v| v.map(str::to_string))
        .collect();
    for name in contract {
        let v = nullable(&objects, name);
        for (k, d) in detected.iter().enumerate() {
            if !d {
                assert!(v[k].is_none(), "{name} filled for an undiscovered object (row {k})");
            }
        }
    }
    let mut pulls = Vec::new();
    let mut found = 0;
    let mut failed = 0;
    let chi2 = nullable(&objects, "fit_chi2");
    for k in 0..detected.len() {
        if !detected[k] {
            continue;
        }
        found += 1;
        // Span `all`: every detection is fitted.
        assert_eq!(n_fit[k], n_detected[k], "row {k}");
        let q = Quality::parse(quality[k].as_deref().unwrap()).expect("a known class");
        if q == Quality::Failed {
            failed += 1;
            continue;
        }
        // A fit that reached its minimum goes through its detections: χ² per degree of
        // freedom near 1 (χ²(2n − 6) has a 1e-6 tail below 4 for the ≥ 6 dof here; statrs
        // ChiSquared). A stalled fit (χ² of thousands) must be flagged `failed`, not given.
        let dof = 2.0 * n_fit[k].unwrap() - 6.0;
        assert!(
            chi2[k].unwrap() / dof < 4.0,
            "row {k}: {q:?} fit with χ² {} for {dof} dof",
            chi2[k].unwrap()
        );
        if matches!(q, Quality::OneOpposition | Quality::MultiOpposition) {
            // The elements are at the first detection's epoch, the truth at the input's: a
            // moves only by the two-body round trip, so the pull in a is meaningful.
            pulls.push((fit_a[k].unwrap() - a[k].unwrap()) / sigma_a[k].unwrap());
        }
    }
    assert!(found > 50, "only {found} discoveries");
    assert!(pulls.len() > 20, "only {} fits without prior", pulls.len());
    let within = pulls.iter().filter(|p| p.abs() < 3.0).count() as f64 / pulls.len() as f64;
    eprintln!(
        "{found} discoveries, {failed} failed, {} without prior, {:.1}% of a-pulls within 3σ",
        pulls.len(),
        100.0 * within
    );
    // A unit normal has 99.73 % within 3σ; 850 fits give 99.8 %. The limit was 95 %, loosened to
    // 94 % (94.8 % measured) while stalled fits, about one in eight, were reported as orbits;
    // with those flagged `failed` it is tightened to 99 % (validation.md).
    assert!(within > 0.99, "a-pulls within 3σ: {within}");
    // Failed fits: 122 of 975 here while the model refused unbound trial orbits (fits stalled
    // against the bound-orbit wall); none since it propagates any conic (universal variables,
    // validation.md). A few per cent would mean the fit got worse.
    assert!((failed as f64) < 0.02 * found as f64, "{failed} of {found} fits failed");
    // The discoveries table carries the same columns.
    let disc = read_table(&run.join("discoveries.parquet")).unwrap();
    for name in contract {
        assert!(disc.column(name).is_ok(), "discoveries lacks {name}");
    }
    // One thread gives the same fits (each object measures with its own stream).
    let one = observed_with_fits(tmp.path(), "run1", &["--threads", "1"]);
    let again = read_table(&one.join("objects.parquet")).unwrap();
    for name in ["fit_a_au", "fit_chi2", "sigma_e"] {
        assert_eq!(
            nullable(&objects, name),
            nullable(&again, name),
            "{name} depends on threads"
        );
    }
}

#[test]
fn a_short_span_fits_fewer_detections_and_flags_its_prior() {
    use seine::io::table::read_table;
    let tmp = tempfile::tempdir().unwrap();
    let night = observed_with_fits(tmp.path(), "night", &["--fit-span", "discovery-night"]);
    let all = observed_with_fits(tmp.path(), "all", &[]);
    let n = read_table(&night.join("discoveries.parquet")).unwrap();
    let a = read_table(&all.join("discoveries.parquet")).unwrap();
    let (n_night, n_all) = (nullable(&n, "n_fit_obs"), nullable(&a, "n_fit_obs"));
    let prior: Vec<Option<bool>> = n
        .column("fit_prior")
        .unwrap()
        .as_materialized_series()
        .bool()
        .unwrap()
        .iter()
        .collect();
    for k in 0..n_night.len() {
        assert!(n_night[k] <= n_all[k], "row {k}");
        // One night: the velocity prior always enters (or too few detections to fit).
        assert_ne!(prior[k], Some(false), "row {k}: a one-night fit without prior");
    }
}

#[test]
fn bad_fit_options_exit_2_naming_the_option() {
    let tmp = tempfile::tempdir().unwrap();
    let objects = common::bright_population(tmp.path());
    let cases: [(&[&str], &str); 3] = [
        (&["--fit-orbits", "--fit-span", "forever"], "--fit-span"),
        (
            &["--fit-orbits", "--astrometric-sigma-arcsec=-1"],
            "--astrometric-sigma-arcsec",
        ),
        (
            &["--fit-orbits", "--astrometric-floor-arcsec", "nan"],
            "--astrometric-floor-arcsec",
        ),
    ];
    for (extra, option) in cases {
        let out = tmp.path().join("out");
        let mut args = vec![
            "observe",
            "--survey",
            "nowhere.toml",
            "--objects",
            objects.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ];
        args.extend_from_slice(extra);
        let o = common::seine(&args);
        assert_eq!(o.status.code(), Some(2), "{}", common::stderr(&o));
        assert!(common::stderr(&o).contains(option), "{}", common::stderr(&o));
        assert!(!out.exists(), "nothing written on bad options");
    }
}

/// One string column with empty cells.
fn nullable_str(df: &polars::prelude::DataFrame, name: &str) -> Vec<Option<String>> {
    df.column(name)
        .unwrap_or_else(|_| panic!("no column {name}"))
        .as_materialized_series()
        .str()
        .unwrap()
        .iter()
        .map(|v| v.map(str::to_string))
        .collect()
}

#[test]
fn the_orbit_quality_cut_selects_what_it_says() {
    // cluster-test on a fitted catalogue with a cut (arc ≥ 100 d, σa/a ≤ 0.002, classes
    // one_opposition or multi_opposition): the objects it maps and tests must be exactly the
    // rows of the discoveries table that pass the cut, computed here from its own columns,
    // and the rose counts of ϖ must be those of the *fitted* Ω + ω of those rows.
    use seine::io::table::read_table;
    let tmp = tempfile::tempdir().unwrap();
    let run = observed_with_fits(tmp.path(), "run", &[]);
    let catalogue = run.join("discoveries.parquet");
    let disc = read_table(&catalogue).unwrap();
    let ids = nullable(&disc, "id");
    let (fit_a, sigma_a, arc) = (
        nullable(&disc, "fit_a_au"),
        nullable(&disc, "sigma_a_au"),
        nullable(&disc, "arc_days"),
    );
    let (fit_node, fit_argperi, true_node, true_argperi) = (
        nullable(&disc, "fit_node_deg"),
        nullable(&disc, "fit_argperi_deg"),
        nullable(&disc, "node_deg"),
        nullable(&disc, "argperi_deg"),
    );
    let class = nullable_str(&disc, "fit_quality");
    let passes = |k: usize| {
        let good_class = matches!(class[k].as_deref(), Some("one_opposition" | "multi_opposition"));
        let long = arc[k].is_some_and(|d| d >= 100.0);
        let sharp = match (fit_a[k], sigma_a[k]) {
            (Some(a), Some(s)) => s / a <= 0.002,
            _ => false,
        };
        good_class && long && sharp
    };
    let expected: Vec<usize> = (0..ids.len()).filter(|&k| passes(k)).collect();
    assert!(
        expected.len() >= 20 && expected.len() + 20 <= ids.len(),
        "the cut should keep some and leave out some: {} of {}",
        expected.len(),
        ids.len()
    );
    let out = tmp.path().join("cluster");
    let s = |p: &std::path::Path| p.to_string_lossy().into_owned();
    // The cut, as a paper's.
    let cut = [
        "--fitted-elements",
        "--min-arc-days",
        "100",
        "--max-sigma-a-frac",
        "0.002",
        "--fit-quality",
        "one_opposition,multi_opposition",
    ];
    let (survey, catalogue_arg) = (s(&tmp.path().join("syn.survey.toml")), s(&catalogue));
    let head = ["cluster-test", "--survey", &survey, "--catalog", &catalogue_arg];
    let o = common::seine(
        &[
            &head[..],
            &cut[..],
            &[
                "--grid",
                "4,4",
                "--per-cell",
                "2",
                "--trials",
                "200",
                "--replicas",
                "2",
                "--rose-bins",
                "12",
                "--drop-undiscovered",
                "--quiet",
                "--out",
                &s(&out),
            ],
        ]
        .concat(),
    );
    let err = common::stderr(&o);
    assert!(o.status.success(), "{err}");
    // The message names how many were kept and left out.
    let said = format!("{} objects (fitted elements", expected.len());
    let left = format!("{} left out by the cut", ids.len() - expected.len());
    assert!(err.contains(&said) && err.contains(&left), "{err}");
    // The bias maps put their trials through the same fit and cut (methods.md, "Bias maps of
    // a catalogue of fitted orbits"), each trial at a, e, i drawn from the row's fit errors:
    // the summary and every map row say so. So made, the bias-aware chances on fitted elements
    // are shown calibrated for a one-opposition sample with σa/a ≤ 0.25 (validation.md); this
    // cut also keeps multi-opposition fits, outside that case, so they are withheld and the
    // summary says why; the naive ones stay.
    let said: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let key = said["selection"].as_str().unwrap_or_default().to_string();
    assert!(
        key.contains("fitted elements") && key.contains("arc ≥ 100 days") && key.contains("fit span all"),
        "{said}"
    );
    assert!(key.ends_with("a, e, i drawn from the fit's errors"), "{said}");
    let why = said["chances_withheld"].as_str().unwrap_or_default();
    assert!(why.contains("one_opposition") && why.contains("0.25"), "{said}");
    let test = read_table(&out.join("cluster_test.parquet")).unwrap();
    assert!(
        nullable(&test, "p_bias_aware").iter().all(Option::is_none),
        "a bias-aware chance printed outside the calibrated selection"
    );
    assert!(nullable(&test, "p_naive").iter().any(Option::is_some));
    let recorded = nullable_str(&read_table(&out.join("bias_map.parquet")).unwrap(), "selection");
    assert!(
        recorded.iter().all(|k| k.as_deref() == Some(key.as_str())),
        "{recorded:?}"
    );
    // Those maps given back for the same cut with another fit span: another selection, refused
    // (exit 2, one sentence naming the map table and both selections, nothing written).
    let again = tmp.path().join("again");
    let maps = s(&out.join("bias_map.parquet"));
    let head = ["cluster-test", "--catalog", &catalogue_arg, "--bias-map", &maps];
    let o = common::seine(
        &[
            &head[..],
            &cut[..],
            &[
                "--fit-span",
                "discovery",
                "--drop-undiscovered",
                "--quiet",
                "--out",
                &s(&again),
            ],
        ]
        .concat(),
    );
    let err = common::stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("bias_map.parquet") && err.contains("fit span all") && err.contains("fit span discovery"),
        "{err}"
    );
    assert!(!again.exists(), "nothing written for refused maps");
    // The same cut on true elements: calibrated too (tests/fit_calibration.rs), chances printed.
    let true_out = tmp.path().join("true");
    let head = ["cluster-test", "--survey", &survey, "--catalog", &catalogue_arg];
    let o = common::seine(
        &[
            &head[..],
            &cut[1..],
            &[
                "--grid",
                "4,4",
                "--per-cell",
                "2",
                "--trials",
                "200",
                "--replicas",
                "2",
                "--drop-undiscovered",
                "--quiet",
                "--out",
                &s(&true_out),
            ],
        ]
        .concat(),
    );
    assert!(o.status.success(), "{}", common::stderr(&o));
    let said: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(true_out.join("summary.json")).unwrap()).unwrap();
    assert!(
        said["selection"].as_str().unwrap_or_default().contains("true elements"),
        "{said}"
    );
    let test = read_table(&true_out.join("cluster_test.parquet")).unwrap();
    assert!(
        nullable(&test, "p_bias_aware").iter().all(Option::is_some),
        "a bias-aware chance missing on true elements with the cut"
    );
    // Every kept object has its map, and no other.
    let maps = read_table(&out.join("bias_map.parquet")).unwrap();
    let mut mapped: Vec<i64> = nullable(&maps, "id").into_iter().map(|v| v.unwrap() as i64).collect();
    mapped.dedup();
    let mut want: Vec<i64> = expected.iter().map(|&k| ids[k].unwrap() as i64).collect();
    want.sort_unstable();
    mapped.sort_unstable();
    mapped.dedup();
    assert_eq!(mapped, want, "bias-mapped ids differ from the rows that pass the cut");
    // The rose counts of ϖ: the fitted angles of the kept rows (less any dropped for a map
    // without discoveries, named in summary.json).
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let dropped: Vec<i64> = summary["dropped_undiscovered_ids"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_i64().unwrap())
        .collect();
    let histogram = |node: &[Option<f64>], argperi: &[Option<f64>]| {
        let mut h = vec![0u64; 12];
        for &k in &expected {
            if dropped.contains(&(ids[k].unwrap() as i64)) {
                continue;
            }
            let varpi = (node[k].unwrap() + argperi[k].unwrap()).rem_euclid(360.0);
            h[((varpi / 30.0) as usize).min(11)] += 1;
        }
        h
    };
    let rose = read_table(&out.join("rose.parquet")).unwrap();
    let quantity = nullable_str(&rose, "quantity");
    let observed = nullable(&rose, "observed");
    let varpi: Vec<u64> = (0..quantity.len())
        .filter(|&r| quantity[r].as_deref() == Some("varpi_deg"))
        .map(|r| observed[r].unwrap() as u64)
        .collect();
    let fitted = histogram(&fit_node, &fit_argperi);
    assert_eq!(varpi, fitted, "rose counts of ϖ are not those of the fitted elements");
    eprintln!(
        "cut kept {} of {} ({} dropped without discoveries); ϖ counts fitted {fitted:?}, true {:?}",
        expected.len(),
        ids.len(),
        dropped.len(),
        histogram(&true_node, &true_argperi)
    );
}

#[test]
fn compare_models_puts_its_model_objects_through_the_catalogues_fit_and_cut() {
    // compare-models on a fitted catalogue with a cut, the model being the very objects the
    // catalogue was observed from, at the same seed: each model object is observed, measured
    // and fitted on its own streams as `observe --fit-orbits` did (methods.md, "A catalogue of
    // fitted orbits with an orbit-quality cut"), so the model's detected objects must be
    // exactly the catalogue's rows that pass the cut, at the same fitted elements; the
    // goodness of fit and marginal chances are printed (calibrated: tests/fit_calibration.rs),
    // and the summary records the selection.
    use seine::io::table::read_table;
    let tmp = tempfile::tempdir().unwrap();
    let run = observed_with_fits(tmp.path(), "run", &[]);
    let catalogue = run.join("discoveries.parquet");
    let s = |p: &std::path::Path| p.to_string_lossy().into_owned();
    let out = tmp.path().join("compare");
    let model = format!("same={}", s(&tmp.path().join("objects.parquet")));
    let o = common::seine(&[
        "compare-models",
        "--survey",
        &s(&tmp.path().join("syn.survey.toml")),
        "--observed",
        &s(&catalogue),
        "--fitted-elements",
        "--max-sigma-a-frac",
        "0.01",
        "--model",
        &model,
        "--space",
        "a_au,e,inc_deg,varpi_deg",
        "--synthetic",
        "200",
        "--bootstrap",
        "20",
        "--quiet",
        "--out",
        &s(&out),
    ]);
    let err = common::stderr(&o);
    assert!(o.status.success(), "{err}");
    assert!(!err.contains("caution"), "the selection is modelled: {err}");
    let said: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let key = said["selection"].as_str().unwrap_or_default();
    assert!(
        key.contains("fitted elements, σa/a ≤ 0.01") && key.contains("fit span all"),
        "{said}"
    );
    let p = said["models"][0]["gof_p"].as_f64().unwrap_or(f64::NAN);
    assert!(p > 0.0 && p <= 1.0, "goodness of fit not printed: {said}");
    let marginals = read_table(&out.join("marginals.parquet")).unwrap();
    assert!(nullable(&marginals, "p_value").iter().all(Option::is_some));
    // The catalogue's rows that pass, computed here from its own columns.
    let disc = read_table(&catalogue).unwrap();
    let (ids, fit_a, sigma_a) = (
        nullable(&disc, "id"),
        nullable(&disc, "fit_a_au"),
        nullable(&disc, "sigma_a_au"),
    );
    let class = nullable_str(&disc, "fit_quality");
    let mut want: Vec<(i64, f64)> = (0..ids.len())
        .filter(|&k| {
            class[k].as_deref().is_some_and(|c| c != "failed")
                && matches!((fit_a[k], sigma_a[k]), (Some(a), Some(sa)) if sa / a <= 0.01)
        })
        .map(|k| (ids[k].unwrap() as i64, fit_a[k].unwrap()))
        .collect();
    assert!(
        want.len() >= 10 && want.len() + 10 <= ids.len(),
        "the cut should keep some and leave out some: {} of {}",
        want.len(),
        ids.len()
    );
    let det = read_table(&out.join("detected.parquet")).unwrap();
    let mut got: Vec<(i64, f64)> = nullable(&det, "id")
        .into_iter()
        .zip(nullable(&det, "a_au"))
        .map(|(i, a)| (i.unwrap() as i64, a.unwrap()))
        .collect();
    want.sort_by_key(|x| x.0);
    got.sort_by_key(|x| x.0);
    assert_eq!(
        got.iter().map(|x| x.0).collect::<Vec<_>>(),
        want.iter().map(|x| x.0).collect::<Vec<_>>(),
        "the model's detected objects are not the catalogue's rows that pass the cut"
    );
    for ((id, a), (_, fit)) in got.iter().zip(&want) {
        assert!(
            (a - fit).abs() <= 1e-9 * fit,
            "object {id}: model's fitted a {a} vs catalogue's {fit}"
        );
    }
}

#[test]
fn detectability_gives_the_chance_of_entering_the_cut_catalogue() {
    // detectability on a fitted catalogue with a cut: each discovered trial is measured,
    // fitted and cut as the catalogue's objects were, so beside the chance of discovery it
    // gives the chance of entering the cut catalogue, never above it, and below it where the
    // cut bites; a plain run has no such columns.
    use seine::io::table::read_table;
    let tmp = tempfile::tempdir().unwrap();
    let run = observed_with_fits(tmp.path(), "run", &[]);
    let s = |p: &std::path::Path| p.to_string_lossy().into_owned();
    let (survey, catalogue) = (
        s(&tmp.path().join("syn.survey.toml")),
        s(&run.join("discoveries.parquet")),
    );
    let out = tmp.path().join("chances");
    let head = ["detectability", "--survey", &survey, "--objects", &catalogue];
    let cut = ["--fitted-elements", "--max-sigma-a-frac", "0.01"];
    let tail = ["--clones", "10", "--quiet", "--out", &s(&out)];
    let o = common::seine(&[&head[..], &cut[..], &tail[..]].concat());
    assert!(o.status.success(), "{}", common::stderr(&o));
    let said: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert!(
        said["selection"]
            .as_str()
            .is_some_and(|k| k.contains("σa/a ≤ 0.01") && k.contains("fit span all")),
        "{said}"
    );
    let t = read_table(&out.join("detectability.parquet")).unwrap();
    let (found, entered) = (nullable(&t, "discovered"), nullable(&t, "entered"));
    let (p, p_enter) = (nullable(&t, "p_discover"), nullable(&t, "p_enter"));
    assert!(found.len() >= 10, "{} objects", found.len());
    for k in 0..found.len() {
        assert!(
            entered[k].unwrap() <= found[k].unwrap(),
            "row {k}: entered more often than discovered"
        );
        assert!((p_enter[k].unwrap() - entered[k].unwrap() / 10.0).abs() < 1e-12);
        assert!(p_enter[k].unwrap() <= p[k].unwrap());
    }
    let (sum_found, sum_entered): (f64, f64) = (found.iter().flatten().sum(), entered.iter().flatten().sum());
    assert!(
        sum_entered > 0.0 && sum_entered < sum_found,
        "the cut should keep some discovered trials and lose some: {sum_entered} of {sum_found}"
    );
    eprintln!("{sum_entered} of {sum_found} discovered trials pass the cut");
    // Without a selection: the table as before, no entering columns.
    let plain = tmp.path().join("plain");
    let tail = ["--clones", "5", "--quiet", "--out", &s(&plain)];
    let o = common::seine(&[&head[..], &tail[..]].concat());
    assert!(o.status.success(), "{}", common::stderr(&o));
    let t = read_table(&plain.join("detectability.parquet")).unwrap();
    assert!(t.column("p_enter").is_err());
}

#[test]
fn maps_on_fitted_elements_draw_a_e_i_from_each_rows_fit_errors() {
    // On fitted elements each map trial takes its a, e, i from the row's fit error law, read
    // from the row's fitted values, sigma and correlation columns (methods.md, "What the maps'
    // xⱼ are"). The law read back is the table's (means, σ, correlations, row by row); the maps
    // are the same from the same seed on one thread or several, and differ from the plug-in's
    // (maps at the fitted a, e, i), whose trials see other orbits.
    use seine::analysis::bias_map::{MapAxes, MapBudget, MapGrid, selected_bias_maps};
    use seine::analysis::trial_elements::TrialElements;
    use seine::analysis::trial_selection::TrialSelection;
    use seine::fit::FitOptions;
    use seine::fit::catalogue::Selection;
    use seine::io::table::read_table;
    let tmp = tempfile::tempdir().unwrap();
    let run = observed_with_fits(tmp.path(), "run", &[]);
    let catalogue = run.join("discoveries.parquet");
    let selection = Selection {
        fitted: true,
        max_sigma_a_frac: Some(0.01),
        ..Selection::default()
    };
    let (table, _) = selection.read(&catalogue).unwrap();
    let laws = selection.error_laws(&catalogue).unwrap();
    assert_eq!(laws.len(), table.len());
    let disc = read_table(&catalogue).unwrap();
    let ids = nullable(&disc, "id");
    let column = |name: &str| nullable(&disc, name);
    let (sa, se, si) = (column("sigma_a_au"), column("sigma_e"), column("sigma_inc_deg"));
    let (r_ae, r_ai, r_ei) = (
        column("fit_corr_a_e"),
        column("fit_corr_a_inc"),
        column("fit_corr_e_inc"),
    );
    let close = |x: f64, y: f64| (x - y).abs() <= 1e-9 * y.abs().max(1e-300);
    for (r, law) in laws.iter().enumerate() {
        let law = law.as_ref().expect("a passing fit has a covariance");
        let k = ids.iter().position(|v| *v == Some(table.ids[r] as f64)).unwrap();
        let el = table.elements[r];
        assert_eq!(law.mean(), [el.a_au, el.e, el.inc_rad], "row {r}");
        let c = law.covariance();
        let sigma = [sa[k].unwrap(), se[k].unwrap(), si[k].unwrap().to_radians()];
        for (i, s) in sigma.iter().enumerate() {
            assert!(close(c[(i, i)].sqrt(), *s), "row {r}: σ{i} {} vs {s}", c[(i, i)].sqrt());
        }
        for ((i, j), rho) in [((0, 1), &r_ae), ((0, 2), &r_ai), ((1, 2), &r_ei)] {
            let got = c[(i, j)] / (sigma[i] * sigma[j]);
            assert!((got - rho[k].unwrap_or(0.0)).abs() < 1e-9, "row {r}: ρ{i}{j} {got}");
        }
    }
    let surveys = vec![seine::engine::PreparedSurvey::new(
        seine::survey::Survey::load(&tmp.path().join("syn.survey.toml")).unwrap(),
    )];
    let grid = MapGrid {
        axes: MapAxes::VarpiNode,
        n_x: 4,
        n_node: 4,
    };
    let plug_in = TrialSelection::new(&selection, FitOptions::default());
    let drawn = plug_in.clone().with_elements(TrialElements::FitErrorLaw(laws));
    let rows = 0..table.len().min(4);
    let maps = |s: &TrialSelection| {
        let plan = (grid, MapBudget::fixed(3, grid), s);
        selected_bias_maps(&table, rows.clone(), &surveys, plan, 21, &|| {})
    };
    let several = maps(&drawn);
    let one_thread = rayon::ThreadPoolBuilder::new().num_threads(1).build().unwrap();
    assert_eq!(
        several,
        one_thread.install(|| maps(&drawn)),
        "the thread count changed a map"
    );
    assert!(several.iter().any(|m| m.total_discoveries() > 0), "no trial entered");
    assert_ne!(several, maps(&plug_in), "the drawn a, e, i changed nothing");
}

/// Which selections get bias-aware chances on fitted elements: exactly the calibrated case of
/// validation.md (one-opposition fits, σa/a ≤ 0.25, or tighter) and every selection on true
/// elements; a cut that lets in prior-made or multi-opposition fits, or no σa/a cut, is withheld.
#[test]
fn bias_aware_chances_on_fitted_elements_only_where_calibrated() {
    use seine::commands::cluster_test::uncalibrated_selection;
    use seine::fit::catalogue::Selection;
    use seine::fit::quality::Quality::{MultiOpposition, OneOpposition, ShortArc};
    let sel = |fitted, sigma: Option<f64>, qualities: Vec<_>| Selection {
        fitted,
        min_arc_days: Some(30.0),
        max_sigma_a_frac: sigma,
        qualities,
    };
    assert!(uncalibrated_selection(&sel(true, Some(0.25), vec![OneOpposition])).is_none());
    assert!(uncalibrated_selection(&sel(true, Some(0.01), vec![OneOpposition])).is_none());
    assert!(uncalibrated_selection(&sel(false, None, vec![])).is_none());
    assert!(uncalibrated_selection(&sel(false, Some(0.5), vec![ShortArc])).is_none());
    for withheld in [
        sel(true, Some(0.26), vec![OneOpposition]),
        sel(true, None, vec![OneOpposition]),
        sel(true, Some(0.1), vec![]),
        sel(true, Some(0.1), vec![OneOpposition, ShortArc]),
        sel(true, Some(0.1), vec![OneOpposition, MultiOpposition]),
    ] {
        assert!(uncalibrated_selection(&withheld).is_some(), "{withheld:?}");
    }
}
