//! The page headers of a Parquet file checked before polars decodes its pages.
//!
//! A damaged page header can give a page a negative count of values. The decoder takes it as an
//! unsigned size and reserves a bitmap of about 2^64 bits, the allocation fails, and an
//! allocation failure aborts the process: it is no panic, so `guard_parquet` cannot turn it
//! into the usual refusal (found by `tests/fuzz.rs`). Reading the headers costs one pass over
//! them through a memory map; the pages themselves are neither read nor decompressed here.

use std::fs::File;
use std::io::Cursor;
use std::path::Path;

use polars_buffer::Buffer;
use polars_parquet::parquet::page::{CompressedPage, DataPageHeader};
use polars_parquet::parquet::read::{get_page_iterator, read_metadata};

use crate::error::{Error, Result};

/// Larger pages than this are refused as damaged (the writer of any table here writes pages
/// of at most a few MB; polars' own reader uses the same order of limit).
const MAX_PAGE_BYTES: usize = 1 << 30;

/// `Ok` when no column chunk and no data page of the row groups holding rows `range(total rows)`
/// (the rows about to be read, which are the groups polars decodes; a part of a table read in
/// chunks checks only its own groups, so reading a table part by part checks each group once)
/// claims a negative count of values; otherwise the
/// refusal of a damaged file. (A count too large for its page is left to the reader: it
/// reserves at most 2^31 bits for it, then finds the page too short and returns an error.) A file whose footer or headers
/// cannot be read at all is left to the reader, which reports it as an error. The header reader
/// can panic on some damage: call this inside `guard_parquet`, like the reader.
pub fn check_page_headers(path: &Path, range: impl Fn(usize) -> (usize, usize)) -> Result<()> {
    let damaged = |what: String| {
        Error::input(format!(
            "{}: not a readable parquet table: the file is damaged ({what})",
            path.display()
        ))
    };
    let Ok(file) = File::open(path) else { return Ok(()) };
    // SAFETY: the map is only read, within this call; a file changed by another process while
    // it is read gives wrong bytes, which the checks below and the reader refuse.
    let Ok(map) = (unsafe { memmap2::Mmap::map(&file) }) else {
        return Ok(());
    };
    let bytes = Buffer::from_owner(map);
    let Ok(meta) = read_metadata(&mut Cursor::new(bytes.clone())) else {
        return Ok(());
    };
    let (lo, hi) = range(meta.num_rows);
    let mut first_row = 0usize;
    for (g, group) in meta.row_groups.iter().enumerate() {
        let rows = first_row..first_row.saturating_add(group.num_rows());
        first_row = rows.end;
        if rows.start >= hi || rows.end <= lo {
            continue;
        }
        for column in group.parquet_columns() {
            let name = column.descriptor().path_in_schema.join(".");
            if column.num_values() < 0 {
                return Err(damaged(format!(
                    "column `{name}` of row group {g} claims {} values",
                    column.num_values()
                )));
            }
            let Ok(pages) = get_page_iterator(column, Cursor::new(bytes.clone()), vec![], MAX_PAGE_BYTES) else {
                return Ok(());
            };
            for page in pages {
                // After an unreadable header the iterator repeats its error forever: stop there.
                let page = match page {
                    Ok(CompressedPage::Data(page)) => page,
                    Ok(CompressedPage::Dict(_)) => continue,
                    Err(_) => return Ok(()),
                };
                let n = match page.header() {
                    DataPageHeader::V1(h) => h.num_values,
                    DataPageHeader::V2(h) => h.num_values,
                };
                if n < 0 {
                    return Err(damaged(format!(
                        "a page of column `{name}` in row group {g} claims {n} values"
                    )));
                }
            }
        }
    }
    Ok(())
}
