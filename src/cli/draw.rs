//! `seine draw`: draw a population from a spec, or clone the particles of an `[import]` spec.

use std::path::PathBuf;
use std::time::Instant;

use seine::io::Provenance;
use seine::io::sink::TableSink;
use seine::io::table::Format;
use seine::population::clone::Cloner;
use seine::population::sampler::CHUNK;
use seine::population::{Population, Spec};
use seine::shard::shard_ids;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Population spec (TOML); with an `[import]` table it clones a table of particles instead.
    #[arg(long)]
    pub spec: PathBuf,
    /// Number of objects (ids 0..N). With an `[import]` spec: omit it (particles × clones).
    #[arg(long)]
    pub count: Option<u64>,
    /// Run seed: object k is the same for the same seed whatever the shard or thread count.
    #[arg(long)]
    pub seed: u64,
    /// Output objects table (.parquet, or .csv with a .provenance.json sidecar).
    #[arg(long)]
    pub out: PathBuf,
    /// Shard K of N (K from 0): a contiguous block of the ids; the shards' union is the whole.
    #[command(flatten)]
    pub shard: super::common::ShardArgs,
    /// Worker threads (default: all cores). The objects do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// No summary on stderr.
    #[arg(long)]
    pub quiet: bool,
    /// Draw more objects than one run's budget (configuration.md, "Budgets"): it is meant.
    #[arg(long)]
    pub over_budget: bool,
}

/// Bytes per object of the output, for the free-space check (Parquet ~120, CSV ~250).
fn bytes_per_object(out: &std::path::Path) -> f64 {
    match Format::of(out) {
        Ok(Format::Csv) => 250.0,
        _ => 120.0,
    }
}

/// Refuse a draw past its budget or the free space of the output's file system.
fn check_budget(a: &Args, objects: u64) -> Result<()> {
    seine::budget::check(seine::budget::DRAW_OBJECTS, objects as f64, "--count", a.over_budget)?;
    seine::budget::check_disk(&a.out, objects as f64 * bytes_per_object(&a.out))
}

pub fn run(a: Args) -> Result<()> {
    Format::of(&a.out)?;
    match a.threads {
        Some(0) => return Err(Error::input("--threads 0: expected at least 1 thread")),
        Some(n) => rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .map_err(|e| Error::input(format!("--threads {n}: {e}")))?
            .install(|| run_in_pool(a)),
        None => run_in_pool(a),
    }
}

fn run_in_pool(a: Args) -> Result<()> {
    let shard = a.shard.resolve()?.map(|(k, n)| (k as u64, n as u64));
    let spec = Spec::read(&a.spec)?;
    let text = std::fs::read_to_string(&a.spec).unwrap_or_default();
    let mut prov = Provenance::current().with_seed(a.seed);
    prov.add_input(&a.spec)?;
    let total = match &spec {
        Spec::Draw(_) => a.count.unwrap_or(0),
        Spec::Clone(_) => 0, // set below, once the particles are read
    };
    prov.shard = shard.map(|(index, count)| seine::io::provenance::ShardStamp {
        index,
        count,
        total_rows: total,
    });
    let started = Instant::now();
    let (objects, note) = match spec {
        Spec::Draw(pop) => draw(&a, &pop, shard, prov, &text)?,
        Spec::Clone(c) => {
            let cloner = Cloner::read(c)
                .map_err(|e| Error::input(format!("{}: key `import.objects`: {e}", a.spec.display())))?;
            prov.add_input(&cloner.spec.objects)?;
            clone(&a, &cloner, shard, prov, &text)?
        }
    };
    if !a.quiet {
        let secs = started.elapsed().as_secs_f64();
        eprintln!(
            "seine draw: {objects} objects → {} in {secs:.2} s{note}",
            a.out.display()
        );
    }
    Ok(())
}

fn draw(a: &Args, pop: &Population, shard: Option<(u64, u64)>, prov: Provenance, text: &str) -> Result<(u64, String)> {
    let count = a
        .count
        .ok_or_else(|| Error::input("--count: expected the number of objects to draw"))?;
    if count == 0 {
        return Err(Error::input("--count 0: expected at least 1 object"));
    }
    let ids = shard_ids(count, shard);
    check_budget(a, (ids.end - ids.start) as u64)?;
    let pilot = pop
        .pilot(a.seed)
        .map_err(|e| Error::input(format!("{}: {e}", a.spec.display())))?;
    let mut sink = TableSink::create(&a.out, prov)?.with_metadata("seine.population_spec", text);
    let (objects, attempts) = pop.draw_into(a.seed, ids, &mut sink)?;
    sink.finish()?;
    let acceptance = if attempts > 0 {
        objects as f64 / attempts as f64
    } else {
        pilot
    };
    Ok((
        objects,
        format!("; constraint acceptance {acceptance:.4} (pilot {pilot:.4})"),
    ))
}

fn clone(
    a: &Args,
    cloner: &Cloner,
    shard: Option<(u64, u64)>,
    mut prov: Provenance,
    text: &str,
) -> Result<(u64, String)> {
    let total = cloner.count();
    if let Some(stamp) = prov.shard.as_mut() {
        stamp.total_rows = total;
    }
    if let Some(c) = a.count.filter(|c| *c != total) {
        return Err(Error::input(format!(
            "--count {c}: an [import] spec makes particles × clones = {total} objects; omit --count"
        )));
    }
    let ids = shard_ids(total, shard);
    check_budget(a, (ids.end - ids.start) as u64)?;
    let mut sink = TableSink::create(&a.out, prov)?.with_metadata("seine.population_spec", text);
    let mut start = ids.start;
    loop {
        let end = (start + CHUNK as i64).min(ids.end);
        sink.write(&cloner.clone_ids(a.seed, start..end)?)?;
        start = end;
        if start >= ids.end {
            break;
        }
    }
    sink.finish()?;
    Ok((
        (ids.end - ids.start) as u64,
        format!("; {} particles × {} clones", cloner.table.len(), cloner.spec.clones),
    ))
}
