//! `seine observe`: run objects through one or more surveys. The engine is `engine::run`; its
//! tables are written by `engine::run` and `engine::discoveries`; this is the command: load the
//! surveys and objects into the provenance, run, and say what was found.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::AtomicBool;

use super::{Outcome, load_surveys};
use crate::engine::run::{ChunkColumns, observe_source};
use crate::engine::summary::Summary;
use crate::engine::{Candidates, ObserveOptions};
use crate::error::Result;
use crate::fit::FitOptions;
use crate::io::Provenance;
use crate::io::table::Format;
use crate::population::objects::ObjectSource;

/// The options of `seine observe`.
#[derive(Debug, Clone)]
pub struct ObserveCommand {
    pub surveys: Vec<PathBuf>,
    pub objects: PathBuf,
    pub out: PathBuf,
    pub seed: u64,
    pub shard: Option<(usize, usize)>,
    /// Reuse an interrupted run's finished chunks, and keep this run's parts.
    pub resume: bool,
    pub chunk_size: usize,
    pub format: Format,
    /// Every visit tested exactly instead of the index (verification).
    pub brute_force: bool,
    pub progress: bool,
    /// Fit orbits to the discovered objects' detections.
    pub fit: Option<FitOptions>,
    /// Raised to stop between chunks (an interruption).
    pub stop: Option<Arc<AtomicBool>>,
}

/// Run `seine observe`.
pub fn observe(opts: &ObserveCommand) -> Result<Outcome> {
    let mut prov = Provenance::current().with_seed(opts.seed);
    let surveys = load_surveys(&opts.surveys, &mut prov)?;
    // A Parquet table is read chunk by chunk (bounded memory); a CSV table whole.
    let objects = ObjectSource::open(&opts.objects, opts.shard)?;
    prov.add_input(&opts.objects)?;
    let engine = ObserveOptions {
        seed: opts.seed,
        shard: opts.shard,
        format: opts.format,
        candidates: if opts.brute_force {
            Candidates::All
        } else {
            Candidates::Indexed
        },
        progress: opts.progress,
        chunk_size: opts.chunk_size,
        resume: opts.resume,
        stop: opts.stop.clone(),
        extra_columns: opts.fit.map(|f| Arc::new(f) as Arc<dyn ChunkColumns>),
    };
    let report = observe_source(&surveys, &objects, &opts.out, &engine, &prov)?;
    let s = &report.summary;
    let mut conclusion = format!("seine observe: {} objects, {}", s.n_objects, found(s));
    if report.chunks_reused > 0 {
        conclusion += &format!("\nresumed: {} of {} chunks reused", report.chunks_reused, report.chunks);
    }
    conclusion += &format!(
        "\n{} discoveries in {}",
        report.n_discoveries,
        report.discoveries_path.display()
    );
    Ok(Outcome {
        written: vec![
            report.objects_path,
            report.detections_path,
            report.discoveries_path,
            report.summary_path,
        ],
        conclusion,
        notes: Vec::new(),
    })
}

/// What a run found and what it cost: discoveries (and their share), secured objects, in-field
/// events, candidates per event, objects per second.
pub fn found(s: &Summary) -> String {
    format!(
        "{} discovered ({:.2}%), {} secured; {} in-field events, {:.2} candidates per event; {:.0} objects/s",
        s.n_detected,
        100.0 * s.detected_fraction,
        s.n_secured,
        s.in_field_events,
        s.candidates_per_in_field_event,
        s.objects_per_second
    )
}
