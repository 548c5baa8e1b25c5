//! Argument parsing (clap derive) and one file per subcommand. No science here.

use clap::{Parser, Subcommand};

use seine::Result;

/// `println!` for the commands' standard output: a closed stdout (`seine demo | head -1`) is a
/// normal end, not a panic (see `write_stdout`).
macro_rules! outln {
    ($($arg:tt)*) => { crate::seine_cli::write_stdout(format_args!("{}\n", format_args!($($arg)*))) };
}

/// `print!` with the same handling of a closed stdout.
macro_rules! out {
    ($($arg:tt)*) => { crate::seine_cli::write_stdout(format_args!($($arg)*)) };
}

/// Write to stdout; when the reader has gone (a closed pipe), end the process quietly with
/// status 0 as command-line tools do. Output files are written under temporary names and
/// renamed when complete, and text is printed between those writes, so none is left half-done.
pub fn write_stdout(text: std::fmt::Arguments) {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    if out.write_fmt(text).and_then(|_| out.flush()).is_err() {
        std::process::exit(0);
    }
}

pub mod arguments;
mod bias_map;
mod catalogue;
mod cluster_test;
mod common;
mod compare_models;
mod demo;
mod detectability;
mod draw;
mod ephemeris;
mod hideout;
mod merge;
mod observe;
mod plan;
mod provenance;
mod report;
mod table;
mod yields;

#[derive(Parser, Debug)]
#[command(
    name = "seine",
    version,
    about = "Forward-model what a sky survey of the distant solar system would detect",
    long_about = "seine draws synthetic distant objects (or takes simulation particles), carries each \
    one through a survey's visit history and reports which would have been found.\n\n\
    Tables are CSV or Parquet by extension. Errors name the file, row or key and exit with status 2."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Astrometric positions, distances, phase angle, magnitude and rate of motion of objects at epochs.
    Ephemeris(ephemeris::Args),
    /// Run objects through one or more surveys' pointing histories: who would have been found.
    Observe(observe::Args),
    /// Cadence plan → visits table, matching survey spec and coverage report (greedy scheduler).
    Plan(plan::Args),
    /// Draw a synthetic population from a spec (or clone simulation particles) into an objects table.
    Draw(draw::Args),
    /// Per-object discovery probability with unobserved angles redrawn; selection function on (a, q, i, H) bins.
    Detectability(detectability::Args),
    /// Discovery probability of each catalogue object over a (varpi, node) grid, M redrawn (AJ 154, 65).
    BiasMap(bias_map::Args),
    /// Bias-aware significance of the clustering of varpi, node, poles and perihelia (AJ 157, 62), beside the naive one.
    ClusterTest(cluster_test::Args),
    /// Compare surveys on one population: discoveries by distance at discovery, H and a, with errors.
    Yield(yields::Args),
    /// Likelihood of the observed catalogue under each model's detected distribution, ratio, fit and marginal tests.
    CompareModels(compare_models::Args),
    /// Where a hypothetical planet could still hide given surveys that found nothing; where to look next.
    Hideout(hideout::Args),
    /// Run the whole job on a built-in invented example and write a report.
    Demo(demo::Args),
    /// Combine shard outputs (observe directories or draw tables) into what one run would write.
    Merge(merge::Args),
    /// Print the provenance of a table: tool version, command line, input hashes, seed.
    Provenance(provenance::Args),
    /// Rebuild the HTML report (index.html and SVG figures) of an output directory.
    Report(report::Args),
    /// Look at a table (columns, first rows, a row filter) or convert it (Parquet ↔ CSV).
    Table(table::Args),
}

pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Ephemeris(a) => ephemeris::run(a),
        Command::Demo(a) => demo::run(a),
        Command::CompareModels(a) => compare_models::run(a),
        Command::Yield(a) => yields::run(a),
        Command::ClusterTest(a) => cluster_test::run(a),
        Command::BiasMap(a) => bias_map::run(a),
        Command::Detectability(a) => detectability::run(a),
        Command::Draw(a) => draw::run(a),
        Command::Hideout(a) => hideout::run(a),
        Command::Observe(a) => observe::run(a),
        Command::Plan(a) => plan::run(a),
        Command::Merge(a) => merge::run(a),
        Command::Provenance(a) => provenance::run(a),
        Command::Report(a) => report::run(a),
        Command::Table(a) => table::run(a),
    }
}
