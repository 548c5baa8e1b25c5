//! The statistics of `src/analysis/` against outside references (fixtures made by
//! `tests/reference/make_fixtures.py`; sources named beside each check).

mod common;

use common::Fixture;
use seine::analysis::circular::{kuiper_p, kuiper_v, rayleigh_p, rayleigh_p_series, resultant_length};
use seine::analysis::likelihood::Kde;
use seine::analysis::two_sample::{KsMethod, anderson_ksamp, ks_two_sample};
use seine::io::table::Columns;
use seine::statistics::{Z95, wilson};

fn strings(f: &Fixture, name: &str) -> Vec<String> {
    Columns::new(&f.df, &f.path).str(name).unwrap()
}

fn numbers(s: &str) -> Vec<f64> {
    s.split_whitespace().map(|x| x.parse().unwrap()).collect()
}

#[test]
fn rayleigh_and_kuiper_against_astropy() {
    // Source: astropy.stats.rayleightest and astropy.stats.kuiper (fixture rayleigh.csv).
    let f = Fixture::load("rayleigh.csv");
    let (r_ref, p_ref, v_ref, kp_ref) = (f.col("R"), f.col("p_value"), f.col("kuiper_V"), f.col("kuiper_p"));
    let mut worst_zar: f64 = 0.0;
    for (row, s) in strings(&f, "angles_deg").iter().enumerate() {
        let a: Vec<f64> = numbers(s).iter().map(|d| d.to_radians()).collect();
        let r = resultant_length(&a);
        assert!(
            (r - r_ref[row]).abs() < 1e-9 * a.len() as f64,
            "row {row}: R {r} vs {}",
            r_ref[row]
        );
        let p = rayleigh_p_series(a.len(), r);
        assert!(
            (p - p_ref[row]).abs() < 1e-12 + 1e-9 * p_ref[row].abs(),
            "row {row}: p {p} vs {}",
            p_ref[row]
        );
        // Zar's handbook approximation is a different approximation of the same tail.
        worst_zar = worst_zar.max((rayleigh_p(a.len(), r) - p_ref[row]).abs());
        let v = kuiper_v(&a);
        assert!((v - v_ref[row]).abs() < 1e-12, "row {row}: V {v} vs {}", v_ref[row]);
        let kp = kuiper_p(v, a.len());
        assert!(
            (kp - kp_ref[row]).abs() < 1e-9 * kp_ref[row].max(1e-6),
            "row {row}: Kuiper p {kp} vs {}",
            kp_ref[row]
        );
    }
    assert!(worst_zar < 0.01, "Zar vs astropy: {worst_zar}");
    eprintln!("Rayleigh: Zar's approximation within {worst_zar:.2e} of astropy's");
}

#[test]
fn anderson_darling_and_ks_against_scipy() {
    // Source: scipy.stats.anderson_ksamp (midrank) and scipy.stats.ks_2samp (anderson_ksamp.csv).
    let f = Fixture::load("anderson_ksamp.csv");
    let (xs, ys, methods) = (strings(&f, "x"), strings(&f, "y"), strings(&f, "ks_method"));
    let (st, sig, ks, ksp) = (
        f.col("statistic"),
        f.col("significance_level"),
        f.col("ks_statistic"),
        f.col("ks_pvalue"),
    );
    for row in 0..f.len() {
        let (x, y) = (numbers(&xs[row]), numbers(&ys[row]));
        let ad = anderson_ksamp(&[&x, &y]);
        assert!(
            (ad.statistic - st[row]).abs() < 1e-9,
            "row {row}: A {} vs {}",
            ad.statistic,
            st[row]
        );
        assert!(
            (ad.significance - sig[row]).abs() < 1e-9 * sig[row],
            "row {row}: sig {} vs {}",
            ad.significance,
            sig[row]
        );
        let k = ks_two_sample(&x, &y);
        assert!(
            (k.statistic - ks[row]).abs() < 1e-12,
            "row {row}: D {} vs {}",
            k.statistic,
            ks[row]
        );
        let want = if methods[row] == "exact" {
            KsMethod::Exact
        } else {
            KsMethod::Asymptotic
        };
        assert_eq!(k.method, want, "row {row}");
        assert!(
            (k.p_value - ksp[row]).abs() < 1e-8 * ksp[row].max(1e-3),
            "row {row}: KS p {} vs {} ({:?})",
            k.p_value,
            ksp[row],
            k.method
        );
    }
}

#[test]
fn wilson_against_astropy_and_a_textbook() {
    // Source: astropy.stats.binom_conf_interval(interval='wilson', 0.95) (wilson.csv).
    let f = Fixture::load("wilson.csv");
    let (k, n, lo, hi) = (f.col("k"), f.col("n"), f.col("lower"), f.col("upper"));
    for i in 0..f.len() {
        let (l, h) = wilson(k[i], n[i], Z95);
        assert!(
            (l - lo[i]).abs() < 1e-12 && (h - hi[i]).abs() < 1e-12,
            "{}/{}: [{l}, {h}] vs [{}, {}]",
            k[i],
            n[i],
            lo[i],
            hi[i]
        );
    }
    // Textbook: Newcombe 1998, Stat. Med. 17, 857, Table I, method 3 (from memory):
    // 81/263 → 0.2553–0.3662; 15/148 → 0.0624–0.1605; 0/20 → 0–0.1611; 1/29 → 0.0061–0.1718.
    for (k, n, l, h) in [
        (81, 263, 0.2553, 0.3662),
        (15, 148, 0.0624, 0.1605),
        (0, 20, 0.0, 0.1611),
        (1, 29, 0.0061, 0.1718),
    ] {
        let (a, b) = wilson(k as f64, n as f64, Z95);
        assert!(
            (a - l).abs() < 6e-5 && (b - h).abs() < 6e-5,
            "{k}/{n}: [{a:.4}, {b:.4}]"
        );
    }
}

#[test]
fn kernel_density_against_scipy() {
    // Source: scipy.stats.gaussian_kde, Scott's rule (kde_data.csv/kde_eval.csv, kde1_*.csv).
    let d = Fixture::load("kde_data.csv");
    let pts: Vec<Vec<f64>> = d
        .col("x0")
        .into_iter()
        .zip(d.col("x1"))
        .map(|(a, b)| vec![a, b])
        .collect();
    let kde = Kde::new(&pts, &vec![1.0; pts.len()]).unwrap();
    assert!((kde.factor - 0.3684031498640387).abs() < 1e-15);
    let e = Fixture::load("kde_eval.csv");
    for ((x0, x1), want) in e.col("x0").into_iter().zip(e.col("x1")).zip(e.col("density")) {
        let got = kde.pdf(&[x0, x1]);
        assert!((got - want).abs() <= 1e-10 * want, "({x0}, {x1}): {got} vs {want}");
    }
    let d1 = Fixture::load("kde1_data.csv");
    let pts1: Vec<Vec<f64>> = d1.col("x").into_iter().map(|x| vec![x]).collect();
    let kde1 = Kde::new(&pts1, &vec![1.0; pts1.len()]).unwrap();
    assert!((kde1.factor - 0.3465724215775732).abs() < 1e-15);
    let e1 = Fixture::load("kde1_eval.csv");
    for (x, want) in e1.col("x").into_iter().zip(e1.col("density")) {
        let got = kde1.pdf(&[x]);
        assert!((got - want).abs() <= 1e-10 * want, "{x}: {got} vs {want}");
    }
}
