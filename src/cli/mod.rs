//! Argument parsing (clap derive) and one file per subcommand. No science here.

use clap::{Parser, Subcommand};

use seine::Result;

mod common;
mod demo;
mod draw;
mod ephemeris;
mod hideout;
mod observe;
mod plan;

#[derive(Parser, Debug)]
#[command(
    name = "seine",
    version,
    about = "Forward-model what a sky survey of the distant solar system would detect",
    long_about = "seine draws synthetic distant objects (or takes simulation particles), carries each \
    one through a survey's pointing history and reports which would have been found.\n\n\
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
    /// Where a hypothetical planet could still hide given surveys that found nothing; where to look next.
    Hideout(hideout::Args),
    /// Run the whole job on a built-in invented example and write a report.
    Demo(demo::Args),
}

pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Ephemeris(a) => ephemeris::run(a),
        Command::Demo(a) => demo::run(a),
        Command::Draw(a) => draw::run(a),
        Command::Hideout(a) => hideout::run(a),
        Command::Observe(a) => observe::run(a),
        Command::Plan(a) => plan::run(a),
    }
}
