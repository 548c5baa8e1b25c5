//! `seine yield`: arguments and printing; the run is `seine::commands::yields`.

use std::path::PathBuf;

use seine::Result;
use seine::analysis::yields::{DEFAULT_A_EDGES, DEFAULT_H_EDGES, DEFAULT_R_EDGES};
use seine::commands::yields::{YieldOptions, yield_comparison};
use seine::statistics::parse_edges;

use super::common::RunArgs;

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("compared").required(true).multiple(true).args(["surveys", "plans"])))]
pub struct Args {
    /// Survey spec (TOML); repeat to compare surveys. At least one --survey or --plan.
    #[arg(long = "survey")]
    pub surveys: Vec<PathBuf>,
    /// Cadence plan (TOML): built first into DIR/plans/<name>.csv and its survey spec; repeat.
    /// At least one --survey or --plan.
    #[arg(long = "plan")]
    pub plans: Vec<PathBuf>,
    /// The population (objects table) to run through every survey.
    #[arg(long)]
    pub objects: PathBuf,
    /// Bin edges of the heliocentric distance at discovery, AU (comma-separated).
    #[arg(long, default_value = DEFAULT_R_EDGES)]
    pub r_edges: String,
    /// Bin edges of the absolute magnitude H, mag (comma-separated).
    #[arg(long, default_value = DEFAULT_H_EDGES)]
    pub h_edges: String,
    /// Bin edges of the semi-major axis a, AU (comma-separated).
    #[arg(long, default_value = DEFAULT_A_EDGES)]
    pub a_edges: String,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let opts = YieldOptions {
        r_edges: parse_edges("--r-edges", &a.r_edges)?,
        h_edges: parse_edges("--h-edges", &a.h_edges)?,
        a_edges: parse_edges("--a-edges", &a.a_edges)?,
        surveys: a.surveys,
        plans: a.plans,
        objects: a.objects,
        run: a.run.options()?,
    };
    a.run.print(&yield_comparison(&opts)?);
    Ok(())
}
