//! `seine observe` against an independent brute force.
//!
//! Outside source: `tests/reference/make_engine_fixtures.py`, a Python brute force, every
//! object against every visit, on pyerfa (UTC→TDB, `epv00` Earth and Sun), astropy
//! (`EarthLocation.get_gcrs_posvel`, the site), rebound (two-body orbits) and numpy (light
//! time, its own gnomonic footprint test, magnitudes, ±0.5 h finite-difference rates, and
//! the linking rules written from their documented text in DESIGN.md). Three invented surveys
//! from the invented site Sorrel Peak: a 1.2° circle, a 2.6° × 1.4° rectangle turned by a
//! per-visit `rotation_deg`, and that rectangle with chip gaps (stripes 0.06° wide every 0.3°
//! along the turned x axis, shifted per visit by `dither_x_deg`: the gap test written in
//! Python from configuration.md), with fields across RA 0/360 and over both poles; 40
//! invented objects (30–1500 AU, e ≤ 0.95, a third of them retrograde). Detection is
//! deterministic (step efficiency, peak 1, no random loss), so every decision can be
//! compared exactly. Borderline cases (within 0.5″ of an edge or a gap's edge, 0.001 mag of
//! the depth, 1% of a rate limit) were redrawn by the generator
//! (`fixtures/engine/generation.log`).

mod common;

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

use polars::prelude::*;
use seine::io::table::{Columns, read_table};

const SURVEYS: [(&str, &str); 3] = [
    ("engref-circle", "circle"),
    ("engref-rect", "rect"),
    ("engref-gaps", "gaps"),
];

fn engine_fixture(name: &str) -> PathBuf {
    common::fixture("engine").join(name)
}

fn load(path: &Path) -> DataFrame {
    read_table(path).unwrap_or_else(|e| panic!("{e}"))
}

fn f64s(df: &DataFrame, path: &Path, name: &str) -> Vec<f64> {
    Columns::new(df, path).f64(name).unwrap_or_else(|e| panic!("{e}"))
}

fn i64s(df: &DataFrame, path: &Path, name: &str) -> Vec<i64> {
    Columns::new(df, path).i64(name).unwrap_or_else(|e| panic!("{e}"))
}

/// Any column as optional strings (booleans as "true"/"false", nulls as None).
fn strs(df: &DataFrame, name: &str) -> Vec<Option<String>> {
    let c = df
        .column(name)
        .unwrap_or_else(|e| panic!("column {name}: {e}"))
        .cast(&DataType::String)
        .unwrap();
    let ca = c.str().unwrap();
    (0..ca.len()).map(|i| ca.get(i).map(str::to_string)).collect()
}

fn bools(df: &DataFrame, name: &str) -> Vec<bool> {
    strs(df, name)
        .into_iter()
        .map(|s| match s.as_deref() {
            Some("true") => true,
            Some("false") => false,
            other => panic!("column {name}: expected a boolean, found {other:?}"),
        })
        .collect()
}

/// Run `seine observe --format csv` on the fixture objects and the given surveys.
fn observe(out: &Path, surveys: &[&str]) {
    let specs: Vec<String> = surveys
        .iter()
        .map(|s| engine_fixture(&format!("survey_{s}.toml")).display().to_string())
        .collect();
    let objects = engine_fixture("objects.csv").display().to_string();
    let out_s = out.display().to_string();
    let mut args = vec!["observe"];
    for s in &specs {
        args.extend(["--survey", s.as_str()]);
    }
    args.extend([
        "--objects",
        &objects,
        "--out",
        &out_s,
        "--format",
        "csv",
        "--quiet",
        "--seed",
        "7",
    ]);
    let o = common::seine(&args);
    assert!(o.status.success(), "seine observe failed: {}", common::stderr(&o));
}

/// (mjd → visit_id) of a survey's visits table (epochs are unique within a survey).
fn visit_ids_by_mjd(file: &str) -> BTreeMap<u64, i64> {
    let p = engine_fixture(&format!("visits_{file}.csv"));
    let df = load(&p);
    let m = f64s(&df, &p, "mjd");
    let ids = i64s(&df, &p, "visit_id");
    let out: BTreeMap<u64, i64> = m.iter().map(|t| t.to_bits()).zip(ids).collect();
    assert_eq!(out.len(), m.len(), "visit epochs must be unique");
    out
}

fn sep_arcsec(ra1: f64, dec1: f64, ra2: f64, dec2: f64) -> f64 {
    let (a1, d1, a2, d2) = (ra1.to_radians(), dec1.to_radians(), ra2.to_radians(), dec2.to_radians());
    let u = |a: f64, d: f64| [d.cos() * a.cos(), d.cos() * a.sin(), d.sin()];
    let (p, q) = (u(a1, d1), u(a2, d2));
    let cross = [
        p[1] * q[2] - p[2] * q[1],
        p[2] * q[0] - p[0] * q[2],
        p[0] * q[1] - p[1] * q[0],
    ];
    let dot = p[0] * q[0] + p[1] * q[1] + p[2] * q[2];
    (cross[0].hypot(cross[1]).hypot(cross[2])).atan2(dot).to_degrees() * 3600.0
}

type Key = (String, i64, i64);

struct Row {
    mag: f64,
    ra: f64,
    dec: f64,
    rate: f64,
    detected: bool,
}

fn rows(path: &Path) -> BTreeMap<Key, Row> {
    let df = load(path);
    let (survey, id, visit) = (strs(&df, "survey"), i64s(&df, path, "id"), i64s(&df, path, "visit_id"));
    let (mag, ra, dec, rate) = (
        f64s(&df, path, "mag"),
        f64s(&df, path, "ra_deg"),
        f64s(&df, path, "dec_deg"),
        f64s(&df, path, "rate_arcsec_per_hr"),
    );
    let det = bools(&df, "detected");
    let mut out = BTreeMap::new();
    for k in 0..df.height() {
        let key = (survey[k].clone().unwrap(), id[k], visit[k]);
        let row = Row {
            mag: mag[k],
            ra: ra[k],
            dec: dec[k],
            rate: rate[k],
            detected: det[k],
        };
        assert!(
            out.insert(key.clone(), row).is_none(),
            "{}: duplicate row {key:?}",
            path.display()
        );
    }
    out
}

#[test]
fn observe_matches_the_python_brute_force() {
    let dir = tempfile::tempdir().unwrap();
    let want = rows(&engine_fixture("expected_in_field.csv"));
    let disc_path = engine_fixture("expected_discovery.csv");
    let disc_df = load(&disc_path);
    let (d_survey, d_id, d_disc, d_visit) = (
        strs(&disc_df, "survey"),
        i64s(&disc_df, &disc_path, "id"),
        bools(&disc_df, "discovered"),
        strs(&disc_df, "discovery_visit_id"),
    );
    // (survey, id) → discovery visit id
    let mut want_disc: BTreeMap<(String, i64), Option<i64>> = BTreeMap::new();
    for k in 0..disc_df.height() {
        let v = d_visit[k].as_deref().map(|s| s.parse::<i64>().unwrap());
        assert_eq!(d_disc[k], v.is_some());
        want_disc.insert((d_survey[k].clone().unwrap(), d_id[k]), v);
    }

    let mut got: BTreeMap<Key, Row> = BTreeMap::new();
    let (mut worst_mag, mut worst_pos, mut worst_rate) = (0.0f64, 0.0f64, 0.0f64);
    let mut n_disc = 0;
    let mut got_disc = Vec::new();
    for (name, file) in SURVEYS {
        let out = dir.path().join(file);
        observe(&out, &[file]);
        got.extend(rows(&out.join("detections.csv")));
        // Discovery per survey: the discovery_mjd of a one-survey run names the visit.
        let p = out.join("objects.csv");
        let df = load(&p);
        let ids = i64s(&df, &p, "id");
        let detected = bools(&df, "detected");
        let mjd = strs(&df, "discovery_mjd");
        let by_mjd = visit_ids_by_mjd(file);
        for k in 0..df.height() {
            let visit = mjd[k].as_deref().map(|s| by_mjd[&s.parse::<f64>().unwrap().to_bits()]);
            let expected = want_disc[&(name.to_string(), ids[k])];
            got_disc.push((name, ids[k], visit, detected[k], expected));
            n_disc += expected.is_some() as usize;
        }
    }
    assert!(n_disc >= 8, "the fixtures should hold several discoveries");

    // In-field sets. Outside source: pyerfa/astropy/rebound positions + numpy gnomonic test.
    let (wk, gk): (BTreeSet<&Key>, BTreeSet<&Key>) = (want.keys().collect(), got.keys().collect());
    let missing: Vec<_> = wk.difference(&gk).collect();
    let extra: Vec<_> = gk.difference(&wk).collect();
    assert!(
        missing.is_empty() && extra.is_empty(),
        "in-field sets differ: {} missing from seine (first {:?}), {} extra (first {:?})",
        missing.len(),
        missing.first(),
        extra.len(),
        extra.first()
    );
    assert!(
        want.len() > 500,
        "expected hundreds of in-field events, found {}",
        want.len()
    );
    for (k, w) in &want {
        let g = &got[k];
        // Magnitudes: h + 5 log10(r Δ) + β·phase + colour, numpy on the pyerfa/rebound geometry.
        worst_mag = worst_mag.max((g.mag - w.mag).abs());
        // Positions: light-time astrometric RA/Dec from the site (pyerfa, astropy, rebound).
        worst_pos = worst_pos.max(sep_arcsec(g.ra, g.dec, w.ra, w.dec));
        // Rates: ±0.5 h finite difference of the full pipeline (numpy); seine's is analytic.
        worst_rate = worst_rate.max((g.rate / w.rate - 1.0).abs());
        // Detection: step efficiency and rate window, decided in numpy.
        assert_eq!(
            g.detected, w.detected,
            "{k:?}: detection differs (mag {} rate {})",
            w.mag, w.rate
        );
    }
    eprintln!(
        "engine reference: {} in-field events; worst |Δmag| {worst_mag:.2e}, position {worst_pos:.2e}″, rate {worst_rate:.2e} rel",
        want.len()
    );
    assert!(worst_mag < 1e-3, "magnitudes differ by up to {worst_mag} mag");
    assert!(worst_pos < 0.2, "positions differ by up to {worst_pos}″");
    assert!(worst_rate < 0.01, "rates differ by up to {worst_rate} relative");

    // Discoveries per survey. Outside source: the linking rules of make_engine_fixtures.py
    // (Python, written from the documented rules), on the numpy detection decisions.
    for (name, id, visit, detected, expected) in got_disc {
        assert_eq!(visit, expected, "{name}, object {id}: discovery visit differs");
        assert_eq!(detected, expected.is_some(), "{name}, object {id}: detected");
    }

    // Both surveys in one run: each survey's outcome is kept, the object counts as found when
    // any survey discovers it, and the discovery is the earliest one (mjd from the visits tables).
    let out = dir.path().join("both");
    observe(&out, &["circle", "rect", "gaps"]);
    let p = out.join("objects.csv");
    let df = load(&p);
    let ids = i64s(&df, &p, "id");
    let detected = bools(&df, "detected");
    let (dmjd, dsurvey) = (strs(&df, "discovery_mjd"), strs(&df, "discovery_survey"));
    let mjd_of: Vec<BTreeMap<i64, f64>> = SURVEYS
        .iter()
        .map(|(_, f)| {
            visit_ids_by_mjd(f)
                .into_iter()
                .map(|(m, v)| (v, f64::from_bits(m)))
                .collect()
        })
        .collect();
    for (name, _) in SURVEYS {
        let col = format!("discovered_{}", name.replace('-', "_"));
        let per = bools(&df, &col);
        for k in 0..df.height() {
            assert_eq!(
                per[k],
                want_disc[&(name.to_string(), ids[k])].is_some(),
                "{col}, object {}",
                ids[k]
            );
        }
    }
    for k in 0..df.height() {
        let first = SURVEYS
            .iter()
            .enumerate()
            .filter_map(|(s, (name, _))| {
                want_disc[&(name.to_string(), ids[k])].map(|v| (mjd_of[s][&v], name.to_string()))
            })
            .min_by(|a, b| a.0.total_cmp(&b.0));
        assert_eq!(detected[k], first.is_some(), "object {}: detected", ids[k]);
        let got_first = dmjd[k]
            .as_deref()
            .map(|m| (m.parse::<f64>().unwrap(), dsurvey[k].clone().unwrap()));
        assert_eq!(got_first, first, "object {}: first discovery", ids[k]);
    }
}
