//! `seine merge` as a library call: shard outputs → one. Directories written by `observe
//! --shard K/N` become the tables one run would have written (`engine::merge`), directories
//! written by `hideout --shard K/N` the outputs of one hideout run, their tallies added
//! (`hideout::merge_dirs`); tables written by `draw --shard K/N` are concatenated in the
//! order given. This file only decides which of the three the inputs are.

use std::path::PathBuf;

use super::Outcome;
use crate::engine::merge::{merge_observe, merge_tables};
use crate::error::{Error, Result};
use crate::io::Provenance;
use crate::io::table::Format;

/// The options of `seine merge`.
#[derive(Debug, Clone, PartialEq)]
pub struct MergeOptions {
    /// `observe` or `hideout` output directories (any order), or `draw` tables (in shard order).
    pub inputs: Vec<PathBuf>,
    /// A directory for `observe` and `hideout` shards, a table file for `draw` shards.
    pub out: PathBuf,
    /// Table format of merged directories.
    pub format: Format,
}

/// What the inputs are: one kind only.
enum Shards {
    Hideout,
    Observe,
    Tables,
}

impl MergeOptions {
    /// The kind of the inputs, refusing a mixture.
    fn validate(&self) -> Result<Shards> {
        let n = self.inputs.len();
        let hideout = self.inputs.iter().filter(|p| crate::hideout::is_output_dir(p)).count();
        let dirs = self.inputs.iter().filter(|p| p.is_dir()).count();
        if hideout > 0 {
            if hideout != n {
                return Err(Error::input(
                    "merge: expected only hideout output directories, or none (observe directories or tables)",
                ));
            }
            return Ok(Shards::Hideout);
        }
        match dirs {
            0 => Ok(Shards::Tables),
            d if d == n => Ok(Shards::Observe),
            _ => Err(Error::input(
                "merge: expected only observe output directories or only table files, not both",
            )),
        }
    }
}

/// Run `seine merge`.
pub fn merge(opts: &MergeOptions) -> Result<Outcome> {
    let prov = Provenance::current();
    let n = opts.inputs.len();
    let (written, conclusion) = match opts.validate()? {
        Shards::Hideout => {
            let w = crate::hideout::merge_dirs(&opts.inputs, &opts.out, opts.format, &prov)?;
            let text = format!(
                "seine merge: {n} hideout shards, {} draws → {}",
                w.summary.n_draws,
                w.dir.display()
            );
            (vec![w.dir.clone()], text)
        }
        Shards::Observe => {
            let r = merge_observe(&opts.inputs, &opts.out, opts.format, prov)?;
            let text = format!(
                "seine merge: {} shards, {} objects, {} discovered → {}, {}, {}, {}",
                r.shards,
                r.summary.n_objects,
                r.summary.n_detected,
                r.objects_path.display(),
                r.detections_path.display(),
                r.discoveries_path.display(),
                r.summary_path.display()
            );
            let written = vec![r.objects_path, r.detections_path, r.discoveries_path, r.summary_path];
            (written, text)
        }
        Shards::Tables => {
            let rows = merge_tables(&opts.inputs, &opts.out, prov)?;
            let text = format!("seine merge: {n} tables, {rows} rows → {}", opts.out.display());
            (vec![opts.out.clone()], text)
        }
    };
    Ok(Outcome {
        written,
        conclusion,
        notes: Vec::new(),
    })
}
