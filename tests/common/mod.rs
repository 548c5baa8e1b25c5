//! Shared helpers of the integration tests: fixture access and running the binary.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Output;

use seine::io::table::{Columns, read_table};

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

/// Write a small CSV file into a directory.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
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
