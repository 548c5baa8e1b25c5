//! Streaming table output: chunks are appended to a temporary file (Parquet row groups
//! through polars' batched writer, or CSV rows) and the file is renamed into place only
//! when `finish` succeeds, so memory does not grow with the table and no half-written
//! table is ever left behind (a sink dropped unfinished removes its temporary file).

use std::fs::File;
use std::path::{Path, PathBuf};

use polars::io::csv::write::BatchedWriter as CsvBatched;
use polars::io::parquet::write::BatchedWriter as ParquetBatched;
use polars::prelude::*;

use super::provenance::Provenance;
use super::table::{Format, sidecar_path, write_atomic};
use crate::error::{Error, Result, io_at};
use crate::interrupt::temporary_for;

enum Writer {
    /// Not yet opened: the schema comes with the first chunk.
    Pending,
    Csv(CsvBatched<File>),
    Parquet(ParquetBatched<File>),
}

/// A table being written chunk by chunk.
pub struct TableSink {
    path: PathBuf,
    tmp: PathBuf,
    format: Format,
    provenance: Provenance,
    /// Extra Parquet key-value metadata (e.g. the text of the spec that made the table).
    extra: Vec<(String, String)>,
    writer: Writer,
    finished: bool,
}

impl TableSink {
    /// Prepare to write `path` (.csv or .parquet); nothing appears at `path` before `finish`.
    pub fn create(path: &Path, provenance: Provenance) -> Result<Self> {
        let format = Format::of(path)?;
        if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
            std::fs::create_dir_all(parent)
                .map_err(|e| Error::input(format!("{}: cannot create the output directory: {e}", parent.display())))?;
        }
        let tmp = temporary_for(path);
        Ok(TableSink {
            path: path.to_path_buf(),
            tmp,
            format,
            provenance,
            extra: Vec::new(),
            writer: Writer::Pending,
            finished: false,
        })
    }

    /// Add a Parquet key-value pair beside the provenance (ignored for CSV, whose sidecar
    /// holds the provenance with the inputs' hashes).
    pub fn with_metadata(mut self, key: &str, value: &str) -> Self {
        self.extra.push((key.to_string(), value.to_string()));
        self
    }

    /// Append one chunk; every chunk must have the columns of the first.
    pub fn write(&mut self, df: &DataFrame) -> Result<()> {
        if matches!(self.writer, Writer::Pending) {
            self.open(&df.schema())?;
        }
        // The batched writers walk the chunks of all columns together: columns sliced from a
        // table read in several chunks (CSV) next to fresh single-chunk ones must be aligned.
        let mut aligned;
        let df = if df.should_rechunk() {
            aligned = df.clone();
            aligned.align_chunks();
            &aligned
        } else {
            df
        };
        let r = match &mut self.writer {
            Writer::Csv(w) => w.write_batch(df),
            Writer::Parquet(w) => w.write_batch(df),
            Writer::Pending => unreachable!("opened above"),
        };
        r.map_err(|e| io_at(&self.path, e))
    }

    fn open(&mut self, schema: &Schema) -> Result<()> {
        let f = File::create(&self.tmp)
            .map_err(|e| Error::input(format!("{}: cannot write here: {e}", self.path.display())))?;
        let w = match self.format {
            Format::Csv => CsvWriter::new(f).include_header(true).batched(schema).map(Writer::Csv),
            // LZ4 (raw): random doubles hardly compress, and zstd (the polars default)
            // costs more time than the draw itself.
            Format::Parquet => ParquetWriter::new(f)
                .with_compression(ParquetCompression::Lz4Raw)
                .with_key_value_metadata(Some(KeyValueMetadata::from_static(self.key_values())))
                .batched(schema)
                .map(Writer::Parquet),
        };
        self.writer = w.map_err(|e| io_at(&self.path, e))?;
        Ok(())
    }

    fn key_values(&self) -> Vec<(String, String)> {
        let mut kv = self.provenance.key_values();
        kv.extend(self.extra.iter().cloned());
        kv
    }

    /// Close the file, make it durable, write the CSV provenance sidecar and rename into place.
    pub fn finish(mut self) -> Result<()> {
        let r = match std::mem::replace(&mut self.writer, Writer::Pending) {
            Writer::Csv(mut w) => w.finish(),
            Writer::Parquet(w) => w.finish().map(|_| ()),
            Writer::Pending => return Err(Error::io(format!("{}: no rows were written", self.path.display()))),
        };
        r.map_err(|e| io_at(&self.path, e))?;
        File::open(&self.tmp)
            .and_then(|f| f.sync_all())
            .map_err(|e| io_at(&self.path, e))?;
        if self.format == Format::Csv {
            write_atomic(&sidecar_path(&self.path), self.provenance.to_json().as_bytes())?;
        }
        std::fs::rename(&self.tmp, &self.path).map_err(|e| io_at(&self.path, e))?;
        self.finished = true;
        Ok(())
    }
}

impl Drop for TableSink {
    fn drop(&mut self) {
        if !self.finished {
            self.writer = Writer::Pending;
            let _ = std::fs::remove_file(&self.tmp);
        }
    }
}
