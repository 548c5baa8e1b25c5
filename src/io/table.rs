//! Reading and writing tables by extension (`.csv`, `.parquet`), with column access that
//! names the file, the row and the column when a value is not what was expected, and
//! writes that go to a temporary name first so that no half-written table is ever left.

use std::fs::File;
use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::provenance::Provenance;
use crate::error::{Error, Result, io_at};
use crate::interrupt::temporary_for;
pub use crate::interrupt::temporary_name;

/// Table formats, chosen by the file extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Csv,
    Parquet,
}

impl Format {
    pub fn of(path: &Path) -> Result<Format> {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(|e| e.to_ascii_lowercase())
            .as_deref()
        {
            Some("csv") => Ok(Format::Csv),
            Some("parquet") | Some("pq") => Ok(Format::Parquet),
            _ => Err(Error::input(format!(
                "{}: expected a table ending in .csv or .parquet",
                path.display()
            ))),
        }
    }
    /// A format by name, as `--format parquet|csv` gives it.
    pub fn parse(name: &str) -> Result<Format> {
        match name {
            "parquet" => Ok(Format::Parquet),
            "csv" => Ok(Format::Csv),
            other => Err(Error::input(format!("--format `{other}`: expected parquet or csv"))),
        }
    }

    pub fn extension(self) -> &'static str {
        match self {
            Format::Csv => "csv",
            Format::Parquet => "parquet",
        }
    }
}

/// Read a whole table; the error names the file and says what was wrong.
pub fn read_table(path: &Path) -> Result<DataFrame> {
    let format = Format::of(path)?;
    if path.is_dir() {
        return Err(Error::input(format!(
            "{}: is a directory, expected a table file",
            path.display()
        )));
    }
    if !path.exists() {
        return Err(Error::input(format!("{}: no such file", path.display())));
    }
    if format == Format::Csv {
        check_csv_header(path)?;
    }
    let df = match format {
        Format::Csv => CsvReadOptions::default()
            .with_has_header(true)
            .with_infer_schema_length(Some(10_000))
            .try_into_reader_with_file_path(Some(path.to_path_buf()))
            .and_then(|r| r.finish()),
        Format::Parquet => {
            let f = File::open(path).map_err(|e| io_at(path, e))?;
            guard_parquet(path, || super::parquet_pages::check_page_headers(path, |n| (0, n)))??;
            guard_parquet(path, || ParquetReader::new(f).finish())?
        }
    };
    df.map_err(|e| unreadable(path, format, &e))
}

/// The reader's error as one sentence: its first line, and for CSV the row where it stopped
/// (the reader gives a byte offset, the row is counted here).
fn unreadable(path: &Path, format: Format, e: &PolarsError) -> Error {
    let text = e.to_string();
    let first = text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty())
        .unwrap_or("")
        .to_string();
    let row = (format == Format::Csv)
        .then(|| csv_row_of_offset(path, &text))
        .flatten()
        .map_or(String::new(), |r| format!(" row {r}"));
    Error::input(format!(
        "{}{row}: not a readable {} table: {first}",
        path.display(),
        format.extension()
    ))
}

/// The data row (counted from 1 after the header) at the byte offset a CSV error names, if any.
fn csv_row_of_offset(path: &Path, message: &str) -> Option<usize> {
    let after = message.split("offset in the file is ").nth(1)?;
    let offset: usize = after.split_whitespace().next()?.parse().ok()?;
    let bytes = std::fs::read(path).ok()?;
    let upto = &bytes[..offset.min(bytes.len())];
    Some(upto.iter().filter(|b| **b == b'\n').count())
}

/// A CSV header must be UTF-8 with unique column names: the reader would otherwise replace
/// an invalid byte (so that a known column goes unrecognised and its default is used) or
/// rename a duplicate (so that one of two columns is silently used).
fn check_csv_header(path: &Path) -> Result<()> {
    use std::io::{BufRead, BufReader, Read};
    let f = File::open(path).map_err(|e| Error::input(format!("{}: cannot open the table: {e}", path.display())))?;
    let mut line = Vec::new();
    BufReader::new(f)
        .take(1 << 20)
        .read_until(b'\n', &mut line)
        .map_err(|e| io_at(path, e))?;
    let header = std::str::from_utf8(&line).map_err(|e| {
        Error::input(format!(
            "{}: the header line: expected UTF-8 text, found an invalid byte at byte {}",
            path.display(),
            e.valid_up_to() + 1
        ))
    })?;
    let mut seen = std::collections::HashSet::new();
    for name in header.trim_end_matches(['\n', '\r']).split(',') {
        let name = name.trim().trim_matches('"');
        if !seen.insert(name) {
            return Err(Error::input(format!(
                "{}: the header line: column `{name}` appears twice; expected unique column names",
                path.display()
            )));
        }
    }
    Ok(())
}

/// Read a table a part at a time: a Parquet table one row group after another (so that a
/// table written in row groups, as `TableSink` writes, is never held whole), a CSV table at
/// once. `f` gets each part and the row of the file where it starts; a table without rows
/// gives one empty part (its columns).
pub fn read_table_parts(path: &Path, mut f: impl FnMut(&DataFrame, usize) -> Result<()>) -> Result<()> {
    if Format::of(path)? == Format::Csv || path.is_dir() || !path.exists() {
        return f(&read_table(path)?, 0);
    }
    let file = File::open(path).map_err(|e| io_at(path, e))?;
    let groups = guard_parquet(path, move || {
        ParquetReader::new(file)
            .get_metadata()
            .map(|md| md.row_groups.iter().map(|g| g.num_rows()).collect::<Vec<usize>>())
    })?
    .map_err(|e| unreadable(path, Format::Parquet, &e))?;
    let mut lo = 0;
    for n in groups.into_iter().filter(|n| *n > 0) {
        let (df, _, _) = read_parquet_rows(path, |_| (lo, lo + n))?;
        f(&df, lo)?;
        lo += n;
    }
    if lo == 0 {
        let (df, _, _) = read_parquet_rows(path, |_| (0, 0))?;
        f(&df, 0)?;
    }
    Ok(())
}

/// Rows `[lo, hi)` of a Parquet table (only those are read), and the table's total row count.
/// `range` maps the total to the wanted rows (e.g. a shard's slice).
pub fn read_parquet_rows(path: &Path, range: impl Fn(usize) -> (usize, usize)) -> Result<(DataFrame, usize, usize)> {
    let bad = |e: PolarsError| unreadable(path, Format::Parquet, &e);
    if path.is_dir() {
        return Err(Error::input(format!(
            "{}: is a directory, expected a table file",
            path.display()
        )));
    }
    let f = File::open(path).map_err(|e| Error::input(format!("{}: cannot open the table: {e}", path.display())))?;
    guard_parquet(path, || super::parquet_pages::check_page_headers(path, &range))??;
    let (df, lo, total) = guard_parquet(path, move || {
        let mut reader = ParquetReader::new(f);
        let total = reader.num_rows()?;
        let (lo, hi) = range(total);
        let df = reader.with_slice(Some((lo, hi - lo))).finish()?;
        Ok((df, lo, total))
    })?
    .map_err(bad)?;
    Ok((df, lo, total))
}

/// Run a Parquet read, turning a panic of the reader into the usual refusal. The Parquet
/// library can panic on a damaged file (a corrupted page or footer) instead of returning an
/// error; a damaged input must end in one sentence and exit status 2, never in a panic, and
/// the panic's own message and backtrace are not printed above that sentence.
fn guard_parquet<T>(path: &Path, read: impl FnOnce() -> T) -> Result<T> {
    let _quiet = QuietParquetPanics::begin();
    std::panic::catch_unwind(std::panic::AssertUnwindSafe(read)).map_err(|_| {
        Error::input(format!(
            "{}: not a readable parquet table: the file is damaged (its pages or footer cannot be decoded)",
            path.display()
        ))
    })
}

/// While at least one guarded read runs, panics raised inside the Parquet library are not
/// reported by the panic hook (they become a refusal); every other panic still is. The hook is
/// process-wide and the library panics on its own worker threads, hence a count, not a flag.
struct QuietParquetPanics;

static GUARDED_READS: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

impl QuietParquetPanics {
    fn begin() -> Self {
        static HOOK: std::sync::Once = std::sync::Once::new();
        HOOK.call_once(|| {
            let report = std::panic::take_hook();
            std::panic::set_hook(Box::new(move |info| {
                let in_parquet = info.location().is_some_and(|l| l.file().contains("polars"));
                if !(in_parquet && GUARDED_READS.load(std::sync::atomic::Ordering::SeqCst) > 0) {
                    report(info)
                }
            }));
        });
        GUARDED_READS.fetch_add(1, std::sync::atomic::Ordering::SeqCst);
        QuietParquetPanics
    }
}

impl Drop for QuietParquetPanics {
    fn drop(&mut self) {
        GUARDED_READS.fetch_sub(1, std::sync::atomic::Ordering::SeqCst);
    }
}

/// Parquet key-value metadata of a file (the provenance lives there).
pub fn read_parquet_metadata(path: &Path) -> Result<Vec<(String, String)>> {
    let f = File::open(path).map_err(|e| io_at(path, e))?;
    let md = guard_parquet(path, move || ParquetReader::new(f).get_metadata().cloned())?
        .map_err(|e| Error::input(format!("{}: not a readable parquet table: {e}", path.display())))?;
    Ok(md
        .key_value_metadata()
        .as_ref()
        .map(|kv| {
            kv.iter()
                .map(|k| (k.key.clone(), k.value.clone().unwrap_or_default()))
                .collect()
        })
        .unwrap_or_default())
}

/// The provenance of a table written by seine: the Parquet key-value metadata, or the
/// sidecar `FILE.provenance.json` of a CSV table.
pub fn read_provenance(path: &Path) -> Result<Provenance> {
    use super::provenance::METADATA_KEY;
    if !path.is_file() {
        return Err(Error::input(format!("{}: no such file", path.display())));
    }
    let (text, from) = match Format::of(path)? {
        Format::Parquet => {
            let kv = read_parquet_metadata(path)?;
            let v = kv.into_iter().find(|(k, _)| k == METADATA_KEY).map(|(_, v)| v);
            let v = v.ok_or_else(|| {
                Error::input(format!(
                    "{}: no `{METADATA_KEY}` metadata; not written by seine",
                    path.display()
                ))
            })?;
            (v, path.to_path_buf())
        }
        Format::Csv => {
            let side = sidecar_path(path);
            let t = std::fs::read_to_string(&side)
                .map_err(|e| Error::input(format!("{}: cannot read the provenance sidecar: {e}", side.display())))?;
            (t, side)
        }
    };
    serde_json::from_str(&text).map_err(|e| Error::input(format!("{}: not seine provenance: {e}", from.display())))
}

/// Write a table atomically (temporary name, then rename) with provenance: in the Parquet
/// key-value metadata, or for CSV in a sidecar `<file>.provenance.json`.
pub fn write_table(df: &mut DataFrame, path: &Path, provenance: &Provenance) -> Result<()> {
    let format = Format::of(path)?;
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        std::fs::create_dir_all(parent)
            .map_err(|e| Error::input(format!("{}: cannot create the output directory: {e}", parent.display())))?;
    }
    let tmp = temporary_for(path);
    let result = (|| {
        let mut f =
            File::create(&tmp).map_err(|e| Error::input(format!("{}: cannot write here: {e}", path.display())))?;
        match format {
            Format::Csv => CsvWriter::new(&mut f).include_header(true).finish(df),
            Format::Parquet => ParquetWriter::new(&mut f)
                .with_key_value_metadata(Some(KeyValueMetadata::from_static(provenance.key_values())))
                .finish(df)
                .map(|_| ()),
        }
        .map_err(|e| io_at(path, e))?;
        f.sync_all().map_err(|e| io_at(path, e))?;
        if format == Format::Csv {
            let side = sidecar_path(path);
            write_atomic(&side, provenance.to_json().as_bytes())?;
        }
        std::fs::rename(&tmp, path).map_err(|e| io_at(path, e))
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// Write bytes atomically (temporary name in the same directory, then rename).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        std::fs::create_dir_all(parent)
            .map_err(|e| Error::input(format!("{}: cannot create the output directory: {e}", parent.display())))?;
    }
    let tmp = temporary_for(path);
    std::fs::write(&tmp, bytes).map_err(|e| Error::input(format!("{}: cannot write here: {e}", path.display())))?;
    std::fs::rename(&tmp, path).map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        io_at(path, e)
    })
}

/// The provenance sidecar of a CSV table.
pub fn sidecar_path(path: &Path) -> PathBuf {
    let mut s = path.as_os_str().to_owned();
    s.push(".provenance.json");
    PathBuf::from(s)
}

/// Typed, checked access to the columns of a table read from `path`.
pub struct Columns<'a> {
    pub df: &'a DataFrame,
    pub path: &'a Path,
    /// Row of the file where `df` starts (a slice read from a larger table), so that
    /// messages give the row of the file.
    pub row_offset: usize,
}

impl<'a> Columns<'a> {
    pub fn new(df: &'a DataFrame, path: &'a Path) -> Self {
        Columns {
            df,
            path,
            row_offset: 0,
        }
    }

    /// The same, for a slice of the file that starts at row `offset` (0-based).
    pub fn at_offset(df: &'a DataFrame, path: &'a Path, offset: usize) -> Self {
        Columns {
            df,
            path,
            row_offset: offset,
        }
    }

    pub fn has(&self, name: &str) -> bool {
        self.df.column(name).is_ok()
    }

    pub fn len(&self) -> usize {
        self.df.height()
    }

    pub fn is_empty(&self) -> bool {
        self.df.height() == 0
    }

    fn missing(&self, name: &str) -> Error {
        let found: Vec<String> = self.df.get_column_names().iter().map(|s| s.to_string()).collect();
        Error::input(format!(
            "{}: missing required column `{name}` (found: {})",
            self.path.display(),
            found.join(", ")
        ))
    }

    /// A numeric column as f64; every value must be present and finite.
    pub fn f64(&self, name: &str) -> Result<Vec<f64>> {
        let col = self.df.column(name).map_err(|_| self.missing(name))?;
        let s = col.as_materialized_series().cast(&DataType::Float64).map_err(|_| {
            Error::input(format!(
                "{}: column `{name}`: expected numbers, found {}",
                self.path.display(),
                col.dtype()
            ))
        })?;
        let ca = s.f64().map_err(|e| io_at(self.path, e))?;
        let raw = col.as_materialized_series();
        ca.iter()
            .enumerate()
            .map(|(i, v)| match v {
                Some(x) if x.is_finite() => Ok(x),
                Some(x) => Err(self.bad_value(i, name, &format!("a finite number, found {x}"))),
                None => {
                    let shown = raw.get(i).map(|a| a.to_string()).unwrap_or_default();
                    let found = if raw.null_count() > 0 && shown == "null" {
                        "an empty value".to_string()
                    } else {
                        format!("`{shown}`")
                    };
                    Err(self.bad_value(i, name, &format!("a number, found {found}")))
                }
            })
            .collect()
    }

    /// An optional numeric column, with a default where the column is absent.
    pub fn f64_or(&self, name: &str, default: f64) -> Result<Vec<f64>> {
        if self.has(name) {
            self.f64(name)
        } else {
            Ok(vec![default; self.len()])
        }
    }

    /// An optional numeric column.
    pub fn f64_opt(&self, name: &str) -> Result<Option<Vec<f64>>> {
        if self.has(name) {
            self.f64(name).map(Some)
        } else {
            Ok(None)
        }
    }

    /// A numeric column whose empty cells are None (e.g. a discovery's columns, empty where
    /// there was none).
    pub fn f64_nullable(&self, name: &str) -> Result<Vec<Option<f64>>> {
        let col = self.df.column(name).map_err(|_| self.missing(name))?;
        let s = col
            .as_materialized_series()
            .cast(&DataType::Float64)
            .map_err(|e| io_at(self.path, e))?;
        Ok(s.f64().map_err(|e| io_at(self.path, e))?.iter().collect())
    }

    /// An integer column (floats with no fractional part are accepted).
    pub fn i64(&self, name: &str) -> Result<Vec<i64>> {
        let v = self.f64(name)?;
        v.iter()
            .enumerate()
            .map(|(i, &x)| {
                if x.fract() == 0.0 && x.abs() < 9.0e15 {
                    Ok(x as i64)
                } else {
                    Err(self.bad_value(i, name, &format!("an integer, found {x}")))
                }
            })
            .collect()
    }

    /// A string column; numbers are shown as text.
    pub fn str(&self, name: &str) -> Result<Vec<String>> {
        let col = self.df.column(name).map_err(|_| self.missing(name))?;
        let s = col
            .as_materialized_series()
            .cast(&DataType::String)
            .map_err(|e| io_at(self.path, e))?;
        let ca = s.str().map_err(|e| io_at(self.path, e))?;
        ca.iter()
            .enumerate()
            .map(|(i, v)| {
                v.map(str::to_string)
                    .ok_or_else(|| self.bad_value(i, name, "a value, found an empty one"))
            })
            .collect()
    }

    /// The error for a bad value at a 0-based row, reported 1-based as people count rows.
    pub fn bad_value(&self, row: usize, name: &str, expected: &str) -> Error {
        Error::input(format!(
            "{} row {}, column `{name}`: expected {expected}",
            self.path.display(),
            self.row_offset + row + 1
        ))
    }

    /// Column names that start with a prefix, with the prefix removed (e.g. `color_`).
    pub fn with_prefix(&self, prefix: &str) -> Vec<String> {
        self.df
            .get_column_names()
            .iter()
            .filter_map(|n| n.strip_prefix(prefix).map(str::to_string))
            .collect()
    }
}

/// Build a DataFrame from named f64 columns (all of the same length).
pub fn frame_f64(columns: Vec<(&str, Vec<f64>)>) -> DataFrame {
    let height = columns.first().map_or(0, |c| c.1.len());
    let cols = columns.into_iter().map(|(n, v)| Column::new(n.into(), v)).collect();
    DataFrame::new(height, cols).expect("columns of one length")
}
