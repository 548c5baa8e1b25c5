//! `seine draw`: draw a population from a spec, or clone the particles of an `[import]` spec,
//! into an objects table. The sampler is `population::sampler`, the cloner
//! `population::clone`; this is the run: the shard's ids, the budget, the provenance.

use std::path::PathBuf;
use std::time::Instant;

use super::Outcome;
use crate::error::{Error, Result};
use crate::io::Provenance;
use crate::io::sink::TableSink;
use crate::io::table::Format;
use crate::population::clone::Cloner;
use crate::population::sampler::CHUNK;
use crate::population::{Population, Spec};
use crate::shard::shard_ids;

/// The options of `seine draw`.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawOptions {
    /// Population spec (TOML); with an `[import]` table it clones a table of particles.
    pub spec: PathBuf,
    /// Number of objects (ids 0..N); none with an `[import]` spec.
    pub count: Option<u64>,
    pub seed: u64,
    /// The objects table to write (.parquet or .csv).
    pub out: PathBuf,
    /// Shard (k, n) of the ids.
    pub shard: Option<(usize, usize)>,
    /// Draw more objects than one run's budget: it is meant.
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
fn check_budget(a: &DrawOptions, objects: u64) -> Result<()> {
    crate::budget::check(crate::budget::DRAW_OBJECTS, objects as f64, "--count", a.over_budget)?;
    crate::budget::check_disk(&a.out, objects as f64 * bytes_per_object(&a.out))
}

/// Run `seine draw` (in the current worker pool).
pub fn draw_objects(a: &DrawOptions) -> Result<Outcome> {
    Format::of(&a.out)?;
    let shard = a.shard.map(|(k, n)| (k as u64, n as u64));
    let spec = Spec::read(&a.spec)?;
    let text = std::fs::read_to_string(&a.spec).unwrap_or_default();
    let mut prov = Provenance::current().with_seed(a.seed);
    prov.add_input(&a.spec)?;
    let total = match &spec {
        Spec::Draw(_) => a.count.unwrap_or(0),
        Spec::Clone(_) => 0, // set below, once the particles are read
    };
    prov.shard = shard.map(|(index, count)| crate::io::provenance::ShardStamp {
        index,
        count,
        total_rows: total,
    });
    let started = Instant::now();
    let (objects, note) = match spec {
        Spec::Draw(pop) => draw(a, &pop, shard, prov, &text)?,
        Spec::Clone(c) => {
            let cloner = Cloner::read(c)
                .map_err(|e| Error::input(format!("{}: key `import.objects`: {e}", a.spec.display())))?;
            prov.add_input(&cloner.spec.objects)?;
            clone(a, &cloner, shard, prov, &text)?
        }
    };
    let secs = started.elapsed().as_secs_f64();
    Ok(Outcome {
        conclusion: format!(
            "seine draw: {objects} objects → {} in {secs:.2} s{note}",
            a.out.display()
        ),
        written: vec![a.out.clone()],
        notes: Vec::new(),
    })
}

fn draw(
    a: &DrawOptions,
    pop: &Population,
    shard: Option<(u64, u64)>,
    prov: Provenance,
    text: &str,
) -> Result<(u64, String)> {
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
    a: &DrawOptions,
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
