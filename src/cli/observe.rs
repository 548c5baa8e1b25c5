//! `seine observe`: run objects through one or more surveys.

use std::path::PathBuf;

use seine::Result;
use seine::engine::run::observe_source;
use seine::engine::{Candidates, ObserveOptions, PreparedSurvey};
use seine::io::Provenance;
use seine::io::objects::{ObjectSource, ObjectTable};
use seine::survey::Survey;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (an object is found when any survey finds it).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Objects table (CSV or Parquet).
    #[arg(long)]
    pub objects: PathBuf,
    /// Output directory: objects.parquet, detections.parquet, discoveries.parquet (the
    /// discovered objects in order of discovery: the catalogue an analysis starts from),
    /// summary.json and manifest.json; parts/ (one pair of Parquet files per chunk) while
    /// running, kept afterwards only with --resume or --shard (`seine merge` reads them).
    #[arg(long)]
    pub out: PathBuf,
    /// Run seed: with the object ids it fixes every random draw.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    #[command(flatten)]
    pub shard: super::common::ShardArgs,
    /// Reuse the finished chunks of an interrupted run of the same inputs in --out, and keep
    /// this run's parts for the next rerun (otherwise they are removed once assembled).
    #[arg(long)]
    pub resume: bool,
    /// Objects per chunk: the unit of memory, of part files and of the work a kill can lose.
    #[arg(long, default_value_t = 20_000)]
    pub chunk_size: usize,
    /// Table format of the outputs: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// Test every visit exactly instead of using the index (slow; for verification).
    #[arg(long)]
    pub brute_force: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
}

pub fn run(a: Args) -> Result<()> {
    super::common::set_threads(a.threads)?;
    let format = super::common::parse_format(&a.format)?;
    let shard = a.shard.resolve()?;
    let mut prov = Provenance::current().with_seed(a.seed);
    let mut surveys = Vec::new();
    for path in &a.surveys {
        let s = Survey::load(path)?;
        prov.add_input(path)?;
        prov.add_input(&s.visits_path)?;
        surveys.push(PreparedSurvey::new(s));
    }
    super::common::check_unique_survey_names(&surveys)?;
    // A Parquet table is read chunk by chunk (bounded memory); a CSV table whole.
    let table;
    let objects = match seine::io::table::Format::of(&a.objects)? {
        seine::io::table::Format::Parquet => ObjectSource::parquet(&a.objects, shard)?,
        seine::io::table::Format::Csv => {
            table = ObjectTable::read(&a.objects)?;
            ObjectSource::Table(&table)
        }
    };
    prov.add_input(&a.objects)?;
    let opts = ObserveOptions {
        seed: a.seed,
        shard,
        format,
        candidates: if a.brute_force {
            Candidates::All
        } else {
            Candidates::Indexed
        },
        progress: !a.quiet,
        chunk_size: a.chunk_size,
        resume: a.resume,
        stop: Some(super::common::stop_flag()?),
    };
    let report = observe_source(&surveys, &objects, &a.out, &opts, &prov)?;
    let s = &report.summary;
    if !a.quiet {
        eprintln!(
            "seine observe: {} objects, {} discovered ({:.2}%), {} secured; {} in-field events, {:.2} candidates per event; {:.0} objects/s",
            s.n_objects,
            s.n_detected,
            100.0 * s.detected_fraction,
            s.n_secured,
            s.in_field_events,
            s.candidates_per_in_field_event,
            s.objects_per_second
        );
        if report.chunks_reused > 0 {
            eprintln!("resumed: {} of {} chunks reused", report.chunks_reused, report.chunks);
        }
        eprintln!(
            "wrote {}, {}, {} ({} discoveries), {}",
            report.objects_path.display(),
            report.detections_path.display(),
            report.discoveries_path.display(),
            report.n_discoveries,
            report.summary_path.display()
        );
    }
    Ok(())
}
