//! Where the analysis commands write: `DIR/<stem>.<ext>` tables (Parquet or CSV, with the
//! provenance) and `DIR/summary.json` (the command's numbers, its conclusion, the provenance).

use std::path::{Path, PathBuf};

use polars::prelude::{Column, DataFrame, NamedFrom, Series};

use super::Provenance;
use super::sink::TableSink;
use super::table::{Format, write_atomic, write_table};
use crate::error::{Error, Result};

/// The table `DIR/<stem>.parquet` (or `.csv`) an analysis wrote, when there is one.
pub fn find_table(dir: &Path, stem: &str) -> Option<PathBuf> {
    [Format::Parquet, Format::Csv]
        .into_iter()
        .map(|f| dir.join(format!("{stem}.{}", f.extension())))
        .find(|p| p.is_file())
}

/// The file name of every command's numbers and conclusion in its output directory.
pub const SUMMARY: &str = "summary.json";

/// Where the analysis commands write: `DIR/<stem>.<ext>` tables and `DIR/summary.json`.
pub struct OutDir {
    pub dir: PathBuf,
    pub format: Format,
    pub provenance: Provenance,
}

impl OutDir {
    pub fn new(dir: &Path, format: Format, provenance: Provenance) -> Self {
        OutDir {
            dir: dir.to_path_buf(),
            format,
            provenance,
        }
    }

    pub fn table(&self, stem: &str) -> PathBuf {
        self.dir.join(format!("{stem}.{}", self.format.extension()))
    }

    /// Write a table built from columns (all of one length).
    pub fn write(&self, stem: &str, columns: Vec<Column>) -> Result<PathBuf> {
        let mut df = frame(columns)?;
        let path = self.table(stem);
        write_table(&mut df, &path, &self.provenance)?;
        Ok(path)
    }

    /// A table `DIR/<stem>.<ext>` written a batch of rows at a time (for tables too large to
    /// hold whole); every batch is a `frame` of columns of one length.
    pub fn sink(&self, stem: &str) -> Result<TableSink> {
        TableSink::create(&self.table(stem), self.provenance.clone())
    }

    /// Write `summary.json`: the command's numbers, its conclusion and the provenance.
    pub fn summary(&self, mut value: serde_json::Value, conclusion: &str) -> Result<PathBuf> {
        value["conclusion"] = conclusion.into();
        value["provenance"] = serde_json::to_value(&self.provenance).map_err(|e| Error::io(e.to_string()))?;
        let path = self.dir.join(SUMMARY);
        let text = serde_json::to_string_pretty(&value).map_err(|e| Error::io(e.to_string()))?;
        write_atomic(&path, text.as_bytes())?;
        Ok(path)
    }
}

/// A table of columns (all of one length).
pub fn frame(columns: Vec<Column>) -> Result<DataFrame> {
    let height = columns.first().map_or(0, |c| c.len());
    DataFrame::new(height, columns).map_err(|e| Error::io(e.to_string()))
}

/// A column of named values.
pub fn col<T>(name: &str, v: Vec<T>) -> Column
where
    Series: NamedFrom<Vec<T>, [T]>,
{
    <Series as NamedFrom<Vec<T>, [T]>>::new(name.into(), v).into()
}

/// The columns of a list of proportions in an output table: `discovered` (count), `fraction`
/// (weighted), `n_eff`, `std_error`, `wilson_lo`, `wilson_hi`.
pub fn proportion_columns(p: &[crate::statistics::Proportion]) -> Vec<polars::prelude::Column> {
    vec![
        col("discovered", p.iter().map(|x| x.k).collect::<Vec<u64>>()),
        col("fraction", p.iter().map(|x| x.fraction).collect::<Vec<f64>>()),
        col("n_eff", p.iter().map(|x| x.n_eff).collect::<Vec<f64>>()),
        col("std_error", p.iter().map(|x| x.std_error).collect::<Vec<f64>>()),
        col("wilson_lo", p.iter().map(|x| x.lower).collect::<Vec<f64>>()),
        col("wilson_hi", p.iter().map(|x| x.upper).collect::<Vec<f64>>()),
    ]
}

/// Values with the non-finite ones as empty cells: for chances a command withholds (NaN).
pub fn finite_or_empty(v: Vec<f64>) -> Vec<Option<f64>> {
    v.into_iter().map(|x| x.is_finite().then_some(x)).collect()
}
