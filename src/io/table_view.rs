//! `seine table`: look at and convert the tables seine reads and writes, so that no other
//! tool is needed to read them. A view is a table file, an optional choice of columns and
//! any number of row filters (`COLUMN OP VALUE`, all of which must hold); it can be
//! described (columns, types, empty cells, range), shown (the first rows, as CSV), counted,
//! or written to another table (Parquet ↔ CSV by extension, with provenance).

use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::provenance::Provenance;
use super::table::{Format, read_table, write_table};
use crate::error::{Error, Result, io_at};

/// A comparison of a row filter.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Op {
    Eq,
    Ne,
    Lt,
    Le,
    Gt,
    Ge,
}

impl Op {
    /// Longest symbols first, so that `<=` is not read as `<`.
    const SYMBOLS: [(&'static str, Op); 6] = [
        ("==", Op::Eq),
        ("!=", Op::Ne),
        ("<=", Op::Le),
        (">=", Op::Ge),
        ("<", Op::Lt),
        (">", Op::Gt),
    ];

    fn holds(self, o: std::cmp::Ordering) -> bool {
        use std::cmp::Ordering::*;
        match self {
            Op::Eq => o == Equal,
            Op::Ne => o != Equal,
            Op::Lt => o == Less,
            Op::Le => o != Greater,
            Op::Gt => o == Greater,
            Op::Ge => o != Less,
        }
    }
}

/// One row filter: `COLUMN OP VALUE`, e.g. `a_au > 150`, `detected == true`,
/// `discovery_survey == Sorrel Peak deep stare`.
#[derive(Debug, Clone, PartialEq)]
pub struct Filter {
    pub column: String,
    pub op: Op,
    pub value: String,
}

impl Filter {
    pub fn parse(text: &str) -> Result<Filter> {
        let found = Op::SYMBOLS
            .iter()
            .filter_map(|(sym, op)| text.find(sym).map(|at| (at, *sym, *op)))
            .min_by_key(|(at, sym, _)| (*at, std::cmp::Reverse(sym.len())));
        let Some((at, sym, op)) = found else {
            return Err(Error::input(format!(
                "--where `{text}`: expected COLUMN OP VALUE with OP one of == != < <= > >= (e.g. `a_au > 150`)"
            )));
        };
        let (column, value) = (text[..at].trim(), text[at + sym.len()..].trim());
        if column.is_empty() || value.is_empty() {
            return Err(Error::input(format!(
                "--where `{text}`: expected a column name before `{sym}` and a value after it"
            )));
        }
        Ok(Filter {
            column: column.to_string(),
            op,
            value: value.trim_matches(['"', '\'']).to_string(),
        })
    }

    /// The rows of `df` where the filter holds; an empty cell never matches.
    fn mask(&self, df: &DataFrame, path: &Path) -> Result<Vec<bool>> {
        let col = df.column(&self.column).map_err(|_| {
            let names: Vec<String> = df.get_column_names().iter().map(|s| s.to_string()).collect();
            Error::input(format!(
                "--where: {} has no column `{}` (columns: {})",
                path.display(),
                self.column,
                names.join(", ")
            ))
        })?;
        let s = col.as_materialized_series();
        let dtype = s.dtype();
        if dtype.is_primitive_numeric() {
            let x: f64 = self.value.parse().map_err(|_| {
                Error::input(format!(
                    "--where: column `{}` holds numbers; `{}` is not one",
                    self.column, self.value
                ))
            })?;
            let v = s.cast(&DataType::Float64).map_err(|e| io_at(path, e))?;
            let v = v.f64().map_err(|e| io_at(path, e))?;
            return Ok(v
                .iter()
                .map(|c| c.is_some_and(|c| self.op.holds(c.total_cmp(&x))))
                .collect());
        }
        if matches!(dtype, DataType::Boolean) {
            let want = match self.value.to_ascii_lowercase().as_str() {
                "true" | "1" => true,
                "false" | "0" => false,
                other => {
                    return Err(Error::input(format!(
                        "--where: column `{}` is true or false; `{other}` is neither",
                        self.column
                    )));
                }
            };
            let v = s.bool().map_err(|e| io_at(path, e))?;
            return Ok(v
                .iter()
                .map(|c| c.is_some_and(|c| self.op.holds(c.cmp(&want))))
                .collect());
        }
        let v = s.cast(&DataType::String).map_err(|e| io_at(path, e))?;
        let v = v.str().map_err(|e| io_at(path, e))?;
        Ok(v.iter()
            .map(|c| c.is_some_and(|c| self.op.holds(c.cmp(self.value.as_str()))))
            .collect())
    }
}

/// What to look at: a table, some of its columns (all when empty) and row filters.
#[derive(Debug, Clone, Default)]
pub struct View {
    pub input: PathBuf,
    pub columns: Vec<String>,
    pub filters: Vec<Filter>,
}

impl View {
    /// The rows that pass every filter, with the chosen columns in the order given.
    pub fn rows(&self) -> Result<DataFrame> {
        let df = read_table(&self.input)?;
        let mut keep = vec![true; df.height()];
        for f in &self.filters {
            for (k, m) in keep.iter_mut().zip(f.mask(&df, &self.input)?) {
                *k &= m;
            }
        }
        let mask = BooleanChunked::from_slice("keep".into(), &keep);
        let df = df.filter(&mask).map_err(|e| io_at(&self.input, e))?;
        if self.columns.is_empty() {
            return Ok(df);
        }
        for c in &self.columns {
            if df.column(c).is_err() {
                return Err(Error::input(format!(
                    "--columns: {} has no column `{c}`",
                    self.input.display()
                )));
            }
        }
        df.select(self.columns.iter().map(|c| c.as_str()))
            .map_err(|e| io_at(&self.input, e))
    }

    /// Write the view's rows to `out` (format by extension), recording the input.
    pub fn convert(&self, out: &Path) -> Result<usize> {
        Format::of(out)?;
        if same_file(&self.input, out) {
            return Err(Error::input(format!(
                "--out {}: is the input table; choose another file",
                out.display()
            )));
        }
        let mut df = self.rows()?;
        let mut prov = Provenance::current();
        prov.add_input(&self.input)?;
        write_table(&mut df, out, &prov)?;
        Ok(df.height())
    }
}

fn same_file(a: &Path, b: &Path) -> bool {
    a == b
        || a.canonicalize()
            .ok()
            .zip(b.canonicalize().ok())
            .is_some_and(|(x, y)| x == y)
}

/// One column's description.
#[derive(Debug, Clone, PartialEq)]
pub struct ColumnInfo {
    pub name: String,
    pub dtype: String,
    pub empty: usize,
    /// Smallest and largest value, as text (numbers and strings; none for an empty column).
    pub range: Option<(String, String)>,
}

/// Name, type, empty cells and range of every column.
pub fn describe(df: &DataFrame) -> Vec<ColumnInfo> {
    df.columns()
        .iter()
        .map(|c| {
            let s = c.as_materialized_series();
            ColumnInfo {
                name: c.name().to_string(),
                dtype: s.dtype().to_string(),
                empty: s.null_count(),
                range: range_of(s),
            }
        })
        .collect()
}

fn range_of(s: &Series) -> Option<(String, String)> {
    if s.dtype().is_primitive_numeric() {
        let v = s.cast(&DataType::Float64).ok()?;
        let (lo, hi) = v
            .f64()
            .ok()?
            .iter()
            .flatten()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| (a.min(x), b.max(x)));
        return (lo <= hi).then(|| (number(lo), number(hi)));
    }
    let v = s.cast(&DataType::String).ok()?;
    let ca = v.str().ok()?;
    let lo = ca.iter().flatten().min()?;
    let hi = ca.iter().flatten().max()?;
    Some((lo.to_string(), hi.to_string()))
}

/// A number as it reads best: integers plainly, others to 6 significant digits.
fn number(x: f64) -> String {
    if x.fract() == 0.0 && x.abs() < 1e15 {
        format!("{x:.0}")
    } else {
        format!("{}", format!("{x:.5e}").parse::<f64>().unwrap_or(x))
    }
}

/// The first `n` rows as CSV text (header first).
pub fn head_csv(df: &DataFrame, n: usize) -> Result<String> {
    let mut head = df.head(Some(n));
    let mut buf = Vec::new();
    CsvWriter::new(&mut buf)
        .include_header(true)
        .finish(&mut head)
        .map_err(|e| Error::io(e.to_string()))?;
    Ok(String::from_utf8_lossy(&buf).into_owned())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn filters_parse_their_operator() {
        let f = Filter::parse("a_au >= 150").unwrap();
        assert_eq!((f.column.as_str(), f.op, f.value.as_str()), ("a_au", Op::Ge, "150"));
        let f = Filter::parse("discovery_survey == \"Deep One\"").unwrap();
        assert_eq!((f.op, f.value.as_str()), (Op::Eq, "Deep One"));
        assert_eq!(Filter::parse("q_au<40").unwrap().op, Op::Lt);
        assert!(Filter::parse("a_au 150").is_err());
        assert!(Filter::parse("> 3").is_err());
    }

    #[test]
    fn numbers_read_plainly() {
        assert_eq!(number(150.0), "150");
        assert_eq!(number(0.123456789), "0.123457");
    }
}
