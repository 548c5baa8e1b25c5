//! `seine table FILE`: look at a table (its columns, its first rows, how many rows pass a
//! filter) or convert it (Parquet ↔ CSV, optionally some columns or rows only).

use std::path::PathBuf;

use seine::Result;
use seine::io::table_view::{Filter, View, describe, head_csv};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// The table (.parquet or .csv). With no other option: its columns (type, empty cells,
    /// smallest and largest value) and row count.
    pub file: PathBuf,
    /// Print the first N rows (after --where and --columns) as CSV.
    #[arg(long, value_name = "N")]
    pub head: Option<usize>,
    /// Keep the rows where COLUMN OP VALUE holds (OP: == != < <= > >=; text compares as text,
    /// `true`/`false` for flags); repeat for several conditions, all of which must hold.
    #[arg(long = "where", value_name = "COLUMN OP VALUE")]
    pub filters: Vec<String>,
    /// Keep these columns, in this order (comma-separated).
    #[arg(long, value_delimiter = ',')]
    pub columns: Vec<String>,
    /// Print only the number of rows (after --where).
    #[arg(long)]
    pub count: bool,
    /// Write the rows (after --where and --columns) to this table: .csv or .parquet.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

pub fn run(a: Args) -> Result<()> {
    let view = View {
        input: a.file.clone(),
        columns: a.columns.clone(),
        filters: a.filters.iter().map(|f| Filter::parse(f)).collect::<Result<_>>()?,
    };
    if let Some(out) = &a.out {
        let n = view.convert(out)?;
        eprintln!("seine table: {n} rows → {}", out.display());
        return Ok(());
    }
    let rows = view.rows()?;
    if a.count {
        outln!("{}", rows.height());
    } else if let Some(n) = a.head {
        out!("{}", head_csv(&rows, n)?);
    } else {
        outln!("{}: {} rows, {} columns", a.file.display(), rows.height(), rows.width());
        let info = describe(&rows);
        let w = info.iter().map(|c| c.name.len()).max().unwrap_or(0);
        let t = info.iter().map(|c| c.dtype.len()).max().unwrap_or(0);
        for c in info {
            let range = c.range.map_or("(empty)".into(), |(lo, hi)| format!("{lo} … {hi}"));
            let empty = if c.empty > 0 {
                format!("  ({} empty)", c.empty)
            } else {
                String::new()
            };
            outln!("  {:w$}  {:t$}  {range}{empty}", c.name, c.dtype);
        }
    }
    Ok(())
}
