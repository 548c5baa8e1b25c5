//! `merge`: shard outputs → exactly the tables one run would have written. Shards are put
//! in shard order (from their manifests, whatever the order given), their part files are
//! streamed into one table each (memory bounded by a part), and their summaries are added.

use std::path::{Path, PathBuf};

use super::parts::{MANIFEST, Manifest, part_path};
use super::run::concat_tables;
use super::summary::Summary;
use crate::error::{Error, Result, io_at};
use crate::io::provenance::Provenance;
use crate::io::table::{Format, read_table, write_atomic};

/// What a merge wrote.
#[derive(Debug, Clone)]
pub struct MergeReport {
    pub shards: usize,
    pub summary: Summary,
    pub objects_path: PathBuf,
    pub detections_path: PathBuf,
    pub discoveries_path: PathBuf,
    pub summary_path: PathBuf,
}

/// Merge the output directories of `observe --shard K/N` (all N of them) into `out`.
pub fn merge_observe(dirs: &[PathBuf], out: &Path, format: Format, provenance: Provenance) -> Result<MergeReport> {
    let shards = ordered_shards(dirs)?;
    let first = &shards[0].1;
    let mut prov = provenance;
    prov.inputs = first.inputs.clone();
    prov.seed = Some(first.run.seed);
    let ext = format.extension();
    let objects_path = out.join(format!("objects.{ext}"));
    let detections_path = out.join(format!("detections.{ext}"));
    let parts = |table: &str| -> Vec<PathBuf> {
        shards
            .iter()
            .flat_map(|(dir, m)| m.chunks.iter().map(move |c| part_path(dir, table, c.index)))
            .collect()
    };
    for (table, path) in [("objects", &objects_path), ("detections", &detections_path)] {
        concat_tables(&parts(table), path, prov.clone(), None, false)?;
    }
    let discoveries_path = super::discoveries::path(out, format);
    super::discoveries::write(&parts("objects"), &discoveries_path, &prov)?;
    let summary = merged_summary(&shards)?;
    let summary_path = out.join("summary.json");
    write_atomic(&summary_path, summary.to_json().as_bytes())?;
    Ok(MergeReport {
        shards: shards.len(),
        summary,
        objects_path,
        detections_path,
        discoveries_path,
        summary_path,
    })
}

/// Read each directory's manifest, check that they are the N shards of one finished run,
/// and return them in shard order.
fn ordered_shards(dirs: &[PathBuf]) -> Result<Vec<(PathBuf, Manifest)>> {
    let mut shards = Vec::new();
    for d in dirs {
        let m = Manifest::read(d)?.ok_or_else(|| {
            Error::input(format!(
                "{}: no {MANIFEST}; expected the output directory of `seine observe`",
                d.display()
            ))
        })?;
        if !m.complete {
            return Err(Error::input(format!(
                "{}: the run did not finish; rerun that shard with --resume before merging",
                d.display()
            )));
        }
        shards.push((d.clone(), m));
    }
    let Some((d0, m0)) = shards.first().cloned() else {
        return Err(Error::input("merge: expected at least one directory"));
    };
    let n = m0.run.shard.map_or(1, |(_, n)| n);
    for (d, m) in &shards {
        let mut a = m.run.clone();
        let mut b = m0.run.clone();
        (a.shard, b.shard) = (None, None);
        if a != b || m.run.shard.map_or(1, |(_, n)| n) != n {
            return Err(Error::input(format!(
                "{}: not a shard of the same run as {} (inputs, seed, shard count or options differ)",
                d.display(),
                d0.display()
            )));
        }
    }
    shards.sort_by_key(|(_, m)| m.run.shard.map_or(0, |(k, _)| k));
    let ks: Vec<usize> = shards.iter().map(|(_, m)| m.run.shard.map_or(0, |(k, _)| k)).collect();
    if ks != (0..n).collect::<Vec<_>>() {
        let missing: Vec<String> = (0..n).filter(|k| !ks.contains(k)).map(|k| k.to_string()).collect();
        return Err(Error::input(format!(
            "merge: expected each of the {n} shards 0..{} exactly once; missing: [{}], given: {ks:?}",
            n - 1,
            missing.join(", ")
        )));
    }
    Ok(shards)
}

/// The shards' summaries added, fractions recomputed, engine time summed.
fn merged_summary(shards: &[(PathBuf, Manifest)]) -> Result<Summary> {
    let mut total: Option<Summary> = None;
    for (dir, _) in shards {
        let path = dir.join("summary.json");
        let text = std::fs::read_to_string(&path).map_err(|e| io_at(&path, e))?;
        let s: Summary = serde_json::from_str(&text)
            .map_err(|e| Error::input(format!("{}: not a seine summary: {e}", path.display())))?;
        match &mut total {
            None => total = Some(s),
            Some(t) => t
                .absorb(&s)
                .map_err(|e| Error::input(format!("{}: {e}", path.display())))?,
        }
    }
    let mut t = total.expect("at least one shard");
    let elapsed = t.elapsed_s;
    t.finish(elapsed);
    Ok(t)
}

/// Concatenate tables with the same columns (e.g. the shards of `draw`), in the order given.
pub fn merge_tables(inputs: &[PathBuf], out: &Path, mut provenance: Provenance) -> Result<usize> {
    let first = inputs
        .first()
        .ok_or_else(|| Error::input("merge: expected at least one table"))?;
    let schema = read_table(first)?.schema().clone();
    let mut rows = 0;
    for p in inputs {
        let df = read_table(p)?;
        if df.schema() != &schema {
            return Err(Error::input(format!(
                "{}: its columns differ from those of {}; expected shards of one table",
                p.display(),
                first.display()
            )));
        }
        rows += df.height();
        provenance.add_input(p)?;
    }
    concat_tables(inputs, out, provenance, None, false)?;
    Ok(rows)
}
