//! `seine merge`: shard outputs → one. Directories written by `observe --shard K/N` become
//! the tables one run would have written, directories written by `hideout --shard K/N` the
//! outputs of one hideout run (their tallies added); tables written by `draw --shard K/N`
//! (files) are concatenated in the order given.

use std::path::PathBuf;

use seine::engine::merge::{merge_observe, merge_tables};
use seine::io::Provenance;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Shard outputs: `observe` directories (any order: their manifests give the shard order),
    /// `hideout` directories (any order), or `draw` tables (.parquet/.csv, in shard order).
    #[arg(required = true)]
    pub inputs: Vec<PathBuf>,
    /// Output: a directory for `observe` and `hideout` shards, a table file for `draw` shards.
    #[arg(long)]
    pub out: PathBuf,
    /// Table format of merged `observe` and `hideout` outputs: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// No summary on stderr.
    #[arg(long)]
    pub quiet: bool,
}

pub fn run(a: Args) -> Result<()> {
    let dirs = a.inputs.iter().filter(|p| p.is_dir()).count();
    let prov = Provenance::current();
    let hideout_dirs = a.inputs.iter().filter(|p| seine::hideout::is_output_dir(p)).count();
    if hideout_dirs > 0 {
        if hideout_dirs != a.inputs.len() {
            return Err(Error::input(
                "merge: expected only hideout output directories, or none (observe directories or tables)",
            ));
        }
        let format = super::common::parse_format(&a.format)?;
        let w = seine::hideout::merge_dirs(&a.inputs, &a.out, format, &prov)?;
        if !a.quiet {
            eprintln!(
                "seine merge: {} hideout shards, {} draws → {}",
                a.inputs.len(),
                w.summary.n_draws,
                w.dir.display()
            );
        }
        return Ok(());
    }
    if dirs == a.inputs.len() {
        let format = super::common::parse_format(&a.format)?;
        let r = merge_observe(&a.inputs, &a.out, format, prov)?;
        if !a.quiet {
            eprintln!(
                "seine merge: {} shards, {} objects, {} discovered → {}, {}, {}, {}",
                r.shards,
                r.summary.n_objects,
                r.summary.n_detected,
                r.objects_path.display(),
                r.detections_path.display(),
                r.discoveries_path.display(),
                r.summary_path.display()
            );
        }
        return Ok(());
    }
    if dirs > 0 {
        return Err(Error::input(
            "merge: expected only observe output directories or only table files, not both",
        ));
    }
    let rows = merge_tables(&a.inputs, &a.out, prov)?;
    if !a.quiet {
        eprintln!(
            "seine merge: {} tables, {rows} rows → {}",
            a.inputs.len(),
            a.out.display()
        );
    }
    Ok(())
}
