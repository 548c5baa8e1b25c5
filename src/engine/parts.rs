//! Partitioned, resumable output of `observe`: every finished chunk is written as plain
//! Parquet part files (`DIR/parts/objects/part-00003.parquet`,
//! `DIR/parts/detections/part-00003.parquet`: one directory per table, so each is a dataset)
//! and recorded in `DIR/manifest.json` with its row range, row counts, content hashes and
//! partial summary. A rerun with `--resume` reuses the chunks whose entry matches the run
//! (same inputs, seed, shard, chunk size) and whose files still hash the same; the final
//! tables are then assembled from the parts, so an interrupted and resumed run writes
//! exactly what an uninterrupted one does. The parts directory is also a dataset that
//! polars, pandas, DuckDB or Spark read without `seine`.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::outputs::{self, DETECTIONS, OBJECTS};
use super::summary::Summary;
use crate::error::{Error, Result, io_at};
pub use crate::io::provenance::file_sha256;
use crate::io::table::{Format, write_atomic};

pub const MANIFEST: &str = "manifest.json";
pub const PARTS: &str = "parts";

/// What makes two runs the same run: a chunk of one may stand in for a chunk of the other.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RunKey {
    pub seine_version: String,
    /// SHA-256 of every spec and table read, in the order read (paths are not compared:
    /// the same files may be named differently on another node).
    pub input_sha256: Vec<String>,
    pub seed: u64,
    /// (k, n) of `--shard K/N`, or none for the whole table.
    pub shard: Option<(usize, usize)>,
    /// Rows of the whole objects table (before sharding).
    pub n_objects_input: usize,
    pub chunk_size: usize,
    /// How candidates were chosen (the engine figures in the summary depend on it).
    pub candidates: String,
    pub surveys: Vec<String>,
    /// The orbit-fit options (`--fit-orbits`), if any.
    #[serde(default)]
    pub fit: Option<String>,
}

/// One finished chunk.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ChunkEntry {
    pub index: usize,
    /// Object rows [lo, hi) of the input table.
    pub rows: (usize, usize),
    pub objects_rows: usize,
    pub detections_rows: usize,
    pub objects_sha256: String,
    pub detections_sha256: String,
    /// The chunk's own counts, summed into the run's summary.
    pub summary: Summary,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Manifest {
    pub run: RunKey,
    /// Object rows [lo, hi) of this shard.
    pub rows: (usize, usize),
    /// The inputs by path, for people (the key compares hashes only).
    pub inputs: Vec<crate::io::provenance::InputHash>,
    pub chunks: Vec<ChunkEntry>,
    /// True once the final tables were assembled.
    pub complete: bool,
}

/// The part file of one chunk of one table (`objects` or `detections`).
pub fn part_path(dir: &Path, table: &str, index: usize) -> PathBuf {
    dir.join(PARTS).join(table).join(format!("part-{index:05}.parquet"))
}

impl Manifest {
    pub fn new(run: RunKey, rows: (usize, usize), inputs: Vec<crate::io::provenance::InputHash>) -> Self {
        Manifest {
            run,
            rows,
            inputs,
            chunks: Vec::new(),
            complete: false,
        }
    }

    /// The manifest in `dir`, if there is a readable one.
    pub fn read(dir: &Path) -> Result<Option<Manifest>> {
        let path = dir.join(MANIFEST);
        if !path.exists() {
            return Ok(None);
        }
        let text = std::fs::read_to_string(&path).map_err(|e| io_at(&path, e))?;
        serde_json::from_str(&text)
            .map(Some)
            .map_err(|e| Error::input(format!("{}: not a seine manifest: {e}", path.display())))
    }

    /// Rewrite the manifest atomically (after every chunk, so a kill loses at most the chunk in flight).
    pub fn write(&self, dir: &Path) -> Result<()> {
        let json = serde_json::to_string_pretty(self).expect("manifest serializes");
        write_atomic(&dir.join(MANIFEST), json.as_bytes())
    }

    /// The entries of `old` that this run may reuse: same run key, same chunk ranges, and
    /// part files that still exist with the recorded hashes. Stops at the first gap, since
    /// chunks are finished in order.
    pub fn reusable(&self, old: &Manifest, dir: &Path) -> Vec<ChunkEntry> {
        if old.run != self.run || old.rows != self.rows {
            return Vec::new();
        }
        let lo = self.rows.0;
        let mut keep = Vec::new();
        for (i, e) in old.chunks.iter().enumerate() {
            let start = lo + i * self.run.chunk_size;
            let expect = (start, (start + self.run.chunk_size).min(self.rows.1));
            let same = |table: &str, sha: &str| file_sha256(&part_path(dir, table, i)).is_ok_and(|h| h == sha);
            if e.index != i || e.rows != expect || !same(OBJECTS, &e.objects_sha256) {
                break;
            }
            if !same(DETECTIONS, &e.detections_sha256) {
                break;
            }
            keep.push(e.clone());
        }
        keep
    }
}

/// Remove what a previous run left in `dir` that this run will write again: the final
/// tables (present only when a run completed) and temporary files of killed writers.
/// Part files are overwritten chunk by chunk; stale ones past the end are removed.
pub fn clear_stale(dir: &Path, keep_chunks: usize) -> Result<()> {
    for table in [OBJECTS, DETECTIONS] {
        for format in [Format::Parquet, Format::Csv] {
            let path = outputs::path(dir, table, format);
            remove_if_present(&crate::io::table::sidecar_path(&path))?;
            remove_if_present(&path)?;
        }
    }
    remove_if_present(&dir.join(outputs::SUMMARY))?;
    remove_temporaries(dir)?;
    for table in [OBJECTS, DETECTIONS] {
        let parts = dir.join(PARTS).join(table);
        let Ok(entries) = std::fs::read_dir(&parts) else {
            continue;
        };
        remove_temporaries(&parts)?;
        for entry in entries.flatten() {
            let path = entry.path();
            if part_index(&path).is_some_and(|i| i >= keep_chunks) {
                remove_if_present(&path)?;
            }
        }
    }
    Ok(())
}

/// The chunk index of a part file name such as `part-00003.parquet`.
fn part_index(path: &Path) -> Option<usize> {
    let stem = path.file_stem()?.to_str()?;
    if path.extension()? != "parquet" {
        return None;
    }
    stem.strip_prefix("part-")?.parse().ok()
}

/// Temporary files (`.NAME.PID.tmp`) left by a writer that was killed.
fn remove_temporaries(dir: &Path) -> Result<()> {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return Ok(());
    };
    for entry in entries.flatten() {
        let name = entry.file_name().to_string_lossy().into_owned();
        if name.starts_with('.') && name.ends_with(".tmp") {
            remove_if_present(&entry.path())?;
        }
    }
    Ok(())
}

fn remove_if_present(path: &Path) -> Result<()> {
    match std::fs::remove_file(path) {
        Err(e) if e.kind() != std::io::ErrorKind::NotFound => Err(io_at(path, e)),
        _ => Ok(()),
    }
}
