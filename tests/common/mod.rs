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
