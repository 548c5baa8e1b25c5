//! `merge`: shard outputs → exactly the tables one run would have written. Shards are put
//! in shard order (from their manifests, whatever the order given), their part files are
//! streamed into one table each (memory bounded by a part), and their summaries are added.

use std::path::{Path, PathBuf};

use super::outputs::{self, DETECTIONS, OBJECTS};
use super::parts::{MANIFEST, Manifest, file_sha256, part_path};
use super::run::concat_tables;
use super::summary::Summary;
use crate::error::{Error, Result, io_at};
use crate::io::provenance::Provenance;
use crate::io::table::read_provenance;
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
    refuse_output_among_inputs(dirs, out)?;
    let shards = ordered_shards(dirs)?;
    check_parts_present(&shards)?;
    let result = write_merged(&shards, out, format, provenance);
    if result.is_err() {
        // Nothing written on failure: remove whatever of the merged outputs was finished.
        for name in [OBJECTS, DETECTIONS] {
            let _ = std::fs::remove_file(outputs::path(out, name, format));
        }
        let _ = std::fs::remove_file(super::discoveries::path(out, format));
    }
    result
}

/// An output that is one of the inputs (or inside one) would be overwritten while read.
pub fn refuse_output_among_inputs(inputs: &[PathBuf], out: &Path) -> Result<()> {
    let canon = |p: &Path| std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf());
    let out_c = match out.parent().filter(|p| !p.as_os_str().is_empty()) {
        Some(parent) if !out.exists() => canon(parent).join(out.file_name().unwrap_or_default()),
        _ => canon(out),
    };
    for p in inputs {
        let p_c = canon(p);
        if out_c == p_c || (p.is_dir() && out_c.starts_with(&p_c)) {
            return Err(Error::input(format!(
                "merge --out {}: it is one of the inputs ({}); expected a new output",
                out.display(),
                p.display()
            )));
        }
    }
    Ok(())
}

/// Every part a manifest lists must be there, and be the file the manifest recorded (its
/// SHA-256: a damaged or replaced part is refused), before anything is written.
fn check_parts_present(shards: &[(PathBuf, Manifest)]) -> Result<()> {
    for (dir, m) in shards {
        for c in &m.chunks {
            for (table, sha) in [(OBJECTS, &c.objects_sha256), (DETECTIONS, &c.detections_sha256)] {
                let p = part_path(dir, table, c.index);
                if !p.is_file() {
                    return Err(Error::input(format!(
                        "{}: missing part {} listed in its {MANIFEST}; rerun that shard with --resume",
                        dir.display(),
                        p.display()
                    )));
                }
                if file_sha256(&p)? != *sha {
                    return Err(Error::input(format!(
                        "{}: part {} differs from the checksum in its {MANIFEST} (damaged or \
                         replaced); rerun that shard with --resume",
                        dir.display(),
                        p.display()
                    )));
                }
            }
        }
    }
    Ok(())
}

fn write_merged(
    shards: &[(PathBuf, Manifest)],
    out: &Path,
    format: Format,
    provenance: Provenance,
) -> Result<MergeReport> {
    let first = &shards[0].1;
    let mut prov = provenance;
    prov.inputs = first.inputs.clone();
    prov.seed = Some(first.run.seed);
    let objects_path = outputs::path(out, OBJECTS, format);
    let detections_path = outputs::path(out, DETECTIONS, format);
    let parts = |table: &str| -> Vec<PathBuf> {
        shards
            .iter()
            .flat_map(|(dir, m)| m.chunks.iter().map(move |c| part_path(dir, table, c.index)))
            .collect()
    };
    for (table, path) in [(OBJECTS, &objects_path), (DETECTIONS, &detections_path)] {
        concat_tables(&parts(table), path, prov.clone(), None, false)?;
    }
    let discoveries_path = super::discoveries::path(out, format);
    super::discoveries::write(&parts(OBJECTS), &discoveries_path, &prov)?;
    let summary = merged_summary(shards)?;
    let summary_path = out.join(outputs::SUMMARY);
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
        let path = dir.join(outputs::SUMMARY);
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

/// Concatenate tables with the same columns. Shards of `draw --shard K/N` (stamped in their
/// provenance) are checked to be the N shards of one run (same spec, seed and count), each
/// once and with its rows, and put in shard order; other tables are taken in the order given.
pub fn merge_tables(inputs: &[PathBuf], out: &Path, mut provenance: Provenance) -> Result<usize> {
    let first = inputs
        .first()
        .ok_or_else(|| Error::input("merge: expected at least one table"))?;
    refuse_output_among_inputs(inputs, out)?;
    let inputs = order_table_shards(inputs)?;
    let schema = read_table(first)?.schema().clone();
    let mut rows = 0;
    for (p, expected_rows) in &inputs {
        let df = read_table(p)?;
        if df.schema() != &schema {
            return Err(Error::input(format!(
                "{}: its columns differ from those of {}; expected shards of one table",
                p.display(),
                first.display()
            )));
        }
        if let Some(n) = expected_rows.filter(|n| *n != df.height() as u64) {
            return Err(Error::input(format!(
                "{}: {} rows, expected {n} for its shard; the table is incomplete or altered",
                p.display(),
                df.height()
            )));
        }
        rows += df.height();
        provenance.add_input(p)?;
    }
    let paths: Vec<PathBuf> = inputs.into_iter().map(|(p, _)| p).collect();
    concat_tables(&paths, out, provenance, None, false)?;
    Ok(rows)
}

/// The tables in merge order, each with the rows its shard stamp implies (None: unstamped).
fn order_table_shards(inputs: &[PathBuf]) -> Result<Vec<(PathBuf, Option<u64>)>> {
    let provs: Vec<Option<Provenance>> = inputs.iter().map(|p| read_provenance(p).ok()).collect();
    let stamped = provs
        .iter()
        .filter(|p| p.as_ref().is_some_and(|p| p.shard.is_some()))
        .count();
    if stamped == 0 {
        return Ok(inputs.iter().map(|p| (p.clone(), None)).collect());
    }
    let stamp_of = |i: usize| provs[i].as_ref().and_then(|p| p.shard.map(|s| (p, s)));
    let (p0, s0) = stamp_of(0).ok_or_else(|| not_a_shard(&inputs[0]))?;
    if s0.count != inputs.len() as u64 {
        return Err(Error::input(format!(
            "merge: {} is shard {} of {}, but {} tables are given; expected each of the {} shards of the draw exactly once",
            inputs[0].display(),
            s0.index,
            s0.count,
            inputs.len(),
            s0.count
        )));
    }
    let mut by_index: Vec<Option<PathBuf>> = vec![None; s0.count as usize];
    for (i, path) in inputs.iter().enumerate() {
        let (p, s) = stamp_of(i).ok_or_else(|| not_a_shard(path))?;
        let same_run = p
            .inputs
            .iter()
            .map(|h| &h.sha256)
            .eq(p0.inputs.iter().map(|h| &h.sha256))
            && p.seed == p0.seed
            && (s.count, s.total_rows) == (s0.count, s0.total_rows)
            && s.index < s.count;
        if !same_run {
            return Err(Error::input(format!(
                "{}: not a shard of the same draw as {} (spec, seed, count or shard count differ)",
                path.display(),
                inputs[0].display()
            )));
        }
        let slot = &mut by_index[s.index as usize];
        if let Some(other) = slot.replace(path.clone()) {
            return Err(Error::input(format!(
                "{}: shard {}/{} is given twice (also {}); expected each shard once",
                path.display(),
                s.index,
                s.count,
                other.display()
            )));
        }
    }
    let missing: Vec<String> = (0..s0.count)
        .filter(|k| by_index[*k as usize].is_none())
        .map(|k| k.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(Error::input(format!(
            "merge: expected each of the {} shards of the draw exactly once; missing: [{}]",
            s0.count,
            missing.join(", ")
        )));
    }
    Ok(by_index
        .into_iter()
        .enumerate()
        .map(|(k, p)| {
            let rows = crate::shard::shard_range(s0.total_rows, Some((k as u64, s0.count)));
            (p.expect("every shard present"), Some(rows.end - rows.start))
        })
        .collect())
}

fn not_a_shard(path: &Path) -> Error {
    Error::input(format!(
        "{}: not a shard written by `seine draw --shard K/N`, while other inputs are; merge the shards of one draw",
        path.display()
    ))
}
