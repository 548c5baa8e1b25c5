//! Shared helpers of the integration tests: fixture access and running the binary.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Output;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use seine::io::table::{Columns, frame_f64, read_table};
use seine::sky::frames::{ecliptic_to_radec, icrs_to_ecliptic, lon_lat};
use seine::sky::observer::observer_states;
use seine::time::TimeScale;

pub fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference/fixtures")
        .join(name)
}

/// Numeric columns of a fixture, by name.
pub struct Fixture {
    pub df: polars::prelude::DataFrame,
    pub path: PathBuf,
}

impl Fixture {
    pub fn load(name: &str) -> Self {
        let path = fixture(name);
        let df = read_table(&path).unwrap_or_else(|e| panic!("{e}"));
        Fixture { df, path }
    }
    pub fn col(&self, name: &str) -> Vec<f64> {
        Columns::new(&self.df, &self.path)
            .f64(name)
            .unwrap_or_else(|e| panic!("{e}"))
    }
    pub fn len(&self) -> usize {
        self.df.height()
    }
}

pub fn seine(args: &[&str]) -> Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_seine"))
        .args(args)
        .output()
        .expect("run seine")
}

pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// `DIR/bright.toml`: an invented population of bright, near, low-inclination objects, of
/// which the invented synoptic survey discovers enough to list and count.
pub fn bright_population(dir: &Path) -> PathBuf {
    write(
        dir,
        "bright.toml",
        "[population]\nname = \"bright test disk\"\nepoch_mjd = 60676.0\n\n[orbit]\n\
         a_au = { dist = \"uniform\", lo = 40.0, hi = 80.0 }\nq_au = { dist = \"uniform\", lo = 30.0, hi = 40.0 }\n\
         inc_deg = { dist = \"uniform\", lo = 0.0, hi = 10.0 }\n\n[photometry]\n\
         h_mag = { dist = \"uniform\", lo = 3.0, hi = 6.0 }\n",
    )
}

/// Write a small CSV file into a directory.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// The engine benchmark's survey (see tests/benches/engine.rs): ~`n_visits` visits over 3
/// years of an ecliptic band around opposition, in triplets. Returns the spec's path.
pub fn bench_survey(dir: &Path, n_visits: usize) -> PathBuf {
    let nights = 900;
    let per_night = (n_visits / nights / 3).max(1);
    let mut rng = Pcg64::seed_from_u64(5);
    let mut csv = String::from("visit_id,mjd,ra_deg,dec_deg,band,depth_mag\n");
    let mut id = 0;
    for k in 0..nights {
        let t0 = 60676.1 + k as f64 * (1095.0 / nights as f64);
        let obs = observer_states(&[t0], TimeScale::Utc, None).unwrap()[0];
        let anti = icrs_to_ecliptic(&(obs.pos - obs.sun_pos));
        let (lon0, _) = lon_lat(&anti);
        for f in 0..per_night {
            let lon = lon0 + ((f % 20) as f64 - 10.0).to_radians() * 1.7;
            let lat = (((f / 20) as f64) * 1.7 - 10.0 + rng.random::<f64>()).to_radians();
            let (ra, dec) = ecliptic_to_radec(lon, lat);
            for rep in 0..3 {
                csv.push_str(&format!(
                    "{id},{},{},{},r,24.5\n",
                    t0 + 0.04 * rep as f64 + 0.001 * f as f64,
                    ra.to_degrees(),
                    dec.to_degrees()
                ));
                id += 1;
            }
        }
    }
    std::fs::write(dir.join("bench.csv"), csv).unwrap();
    let spec = "[survey]\nname = \"bench\"\nvisits = \"bench.csv\"\n[site]\nlongitude_deg = 19.3\nlatitude_deg = 20.6\nelevation_m = 2350.0\n[field]\nshape = \"circle\"\nradius_deg = 1.0\n[linking]\nmin_detections_per_night = 2\nmin_nights = 2\n";
    std::fs::write(dir.join("bench.toml"), spec).unwrap();
    dir.join("bench.toml")
}

/// The nine columns of an objects table, in the order of `objects_frame`'s rows.
pub const OBJECT_COLUMNS: [&str; 9] = [
    "id",
    "a_au",
    "e",
    "inc_deg",
    "node_deg",
    "argperi_deg",
    "mean_anomaly_deg",
    "epoch_mjd",
    "h_mag",
];

/// An objects table from rows of (id, a, e, i, Ω, ω, M, epoch, H).
pub fn objects_frame(rows: impl IntoIterator<Item = [f64; 9]>) -> polars::prelude::DataFrame {
    let mut cols: Vec<Vec<f64>> = vec![Vec::new(); 9];
    for row in rows {
        for (c, v) in cols.iter_mut().zip(row) {
            c.push(v);
        }
    }
    frame_f64(OBJECT_COLUMNS.iter().zip(cols).map(|(n, c)| (*n, c)).collect())
}

/// The engine benchmark's objects: a scattered-disk-like population (a 30–1000 AU, q ≥ 30 AU).
pub fn bench_objects(n: usize) -> polars::prelude::DataFrame {
    let mut rng = Pcg64::seed_from_u64(6);
    objects_frame((0..n).map(|i| {
        let a = 30.0 * (1000f64 / 30.0).powf(rng.random::<f64>());
        let e = rng.random::<f64>() * (1.0 - 30.0 / a);
        [
            i as f64,
            a,
            e,
            40.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            61000.0,
            4.0 + 6.0 * rng.random::<f64>(),
        ]
    }))
}

/// Every file and directory below `dir`, sorted (to check that nothing was left behind).
pub fn walk(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).unwrap().flatten() {
        let p = e.path();
        if p.is_dir() {
            out.extend(walk(&p));
        }
        out.push(p);
    }
    out.sort();
    out
}

/// Write a geocentric survey (circle fields of `radius` deg, step efficiency at `depth`)
/// with one visit per (night, field) and load it.
pub fn survey(
    dir: &Path,
    name: &str,
    radius: f64,
    depth: f64,
    fields: &[(f64, f64)],
    nights: &[f64],
) -> seine::engine::PreparedSurvey {
    let mut csv = String::from("mjd,ra_deg,dec_deg,band,depth_mag\n");
    for t in nights {
        for (k, (ra, dec)) in fields.iter().enumerate() {
            csv.push_str(&format!("{},{ra},{dec},r,{depth}\n", t + 0.01 * k as f64));
        }
    }
    std::fs::write(dir.join(format!("{name}.csv")), csv).unwrap();
    let spec = format!(
        "[survey]\nname = \"{name}\"\nvisits = \"{name}.csv\"\n[field]\nshape = \"circle\"\nradius_deg = {radius}\n\
         [efficiency]\nmodel = \"step\"\n"
    );
    let p = dir.join(format!("{name}.toml"));
    std::fs::write(&p, spec).unwrap();
    seine::engine::PreparedSurvey::new(seine::survey::Survey::load(&p).unwrap_or_else(|e| panic!("{e}")))
}

/// Fields on the ecliptic at these longitudes (deg), as equatorial (RA, Dec).
pub fn ecliptic_fields(lons: &[f64]) -> Vec<(f64, f64)> {
    let eps = 23.439_f64.to_radians();
    lons.iter()
        .map(|l| {
            let l = l.to_radians();
            let (ra, dec) = ((l.sin() * eps.cos()).atan2(l.cos()), (eps.sin() * l.sin()).asin());
            (ra.to_degrees().rem_euclid(360.0), dec.to_degrees())
        })
        .collect()
}

/// KS p-value of a sample of p-values against the uniform distribution on [0, 1].
pub fn ks_uniform_p(p: &[f64]) -> f64 {
    let mut v = p.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len() as f64;
    let d = v
        .iter()
        .enumerate()
        .map(|(i, x)| (x - i as f64 / n).max((i as f64 + 1.0) / n - x))
        .fold(0.0, f64::max);
    seine::analysis::two_sample::kolmogorov_sf(v.len(), d)
}

/// Rejections at 5% and 1% within 3.5 binomial standard deviations (common practice, no
/// source), and KS uniformity (p above 10⁻³), for every row of p-values (`p[null][row]`);
/// prints the table, and fails naming every row out of bounds.
pub fn check_uniform(case: &str, names: &[String], p: &[Vec<f64>]) {
    let m = p.len() as f64;
    let mut failures = Vec::new();
    eprintln!("{case}: {} null catalogues", p.len());
    eprintln!("  {:<34} {:>8} {:>8} {:>8}", "statistic", "≤5%", "≤1%", "KS p");
    for (k, name) in names.iter().enumerate() {
        let col: Vec<f64> = p.iter().map(|row| row[k]).collect();
        let rate = |a: f64| col.iter().filter(|x| **x <= a).count() as f64;
        let ks = ks_uniform_p(&col);
        eprintln!("  {name:<34} {:>8.4} {:>8.4} {ks:>8.3}", rate(0.05) / m, rate(0.01) / m);
        for a in [0.05, 0.01] {
            let sd = (m * a * (1.0 - a)).sqrt();
            if (rate(a) - m * a).abs() > 3.5 * sd + 1.0 {
                failures.push(format!("{name}: {} of {m} at {a}", rate(a)));
            }
        }
        if ks < 1e-3 {
            failures.push(format!("{name}: KS p = {ks}"));
        }
    }
    assert!(failures.is_empty(), "{case}: {failures:?}");
}

/// `n` objects of a population spec (TOML text), ids from `first`.
pub fn draw(spec: &str, seed: u64, first: i64, n: i64) -> seine::population::objects::ObjectTable {
    use seine::population::Spec;
    let Spec::Draw(p) = Spec::parse(spec, Path::new("test.toml")).unwrap() else {
        panic!("a draw spec")
    };
    let df = p.frame(p.draw_ids(seed, first..first + n).unwrap());
    seine::population::objects::ObjectTable::from_frame(df, Path::new("drawn.parquet")).unwrap()
}
