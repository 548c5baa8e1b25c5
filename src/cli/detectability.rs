//! `seine detectability`: arguments and printing; the run is `seine::commands::detectability`.

use std::path::PathBuf;

use seine::Result;
use seine::analysis::detectability::Redraw;
use seine::analysis::selection::GridEdges;
use seine::commands::detectability::{DetectabilityOptions, Subject, detectability};

use seine::statistics::parse_edges;

use super::catalogue::{CatalogueArgs, TrialFitArgs};
use super::common::{RunArgs, ShardArgs};

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("input").required(true).args(["objects", "population"])))]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Catalogue of objects (CSV or Parquet): each object's chance with its a, e, i and H kept.
    /// One of --objects or --population is required.
    #[arg(long)]
    pub objects: Option<PathBuf>,
    #[command(flatten)]
    pub selection: CatalogueArgs,
    #[command(flatten)]
    pub fit: TrialFitArgs,
    /// A population sample (e.g. from seine draw): the selection function P(discovered | a, q, i, H cell).
    /// One of --objects or --population is required.
    #[arg(long)]
    pub population: Option<PathBuf>,
    /// Trials (clones) per catalogue object.
    #[arg(long, default_value_t = 1000)]
    pub clones: u64,
    /// Angles redrawn besides M: m (none), node, argperi, or all.
    #[arg(long, default_value = "all")]
    pub redraw: String,
    /// Allow more than 10^8 trials (objects × clones) in one run.
    #[arg(long)]
    pub over_budget: bool,
    #[command(flatten)]
    pub run: RunArgs,
    /// Shard K of N (K from 0; or from SLURM_ARRAY_TASK_ID): a contiguous slice of the catalogue objects.
    #[command(flatten)]
    pub shard: ShardArgs,
    /// Cell edges of the selection function in semi-major axis a, AU (comma-separated), with
    /// --population.
    #[arg(long, default_value = "0,30,50,100,250,1000,100000")]
    pub a_edges: String,
    /// Bin edges of the grid in perihelion distance q, AU (comma-separated).
    #[arg(long, default_value = "0,30,40,50,75,100,100000")]
    pub q_edges: String,
    /// Bin edges of the grid in inclination i, degrees (comma-separated).
    #[arg(long, default_value = "0,10,20,30,45,90,180")]
    pub inc_edges: String,
    /// Bin edges of the grid in absolute magnitude H, mag (comma-separated).
    #[arg(long, default_value = "-5,3,4,5,6,7,8,9,10,20")]
    pub h_edges: String,
}

pub fn run(a: Args) -> Result<()> {
    let redraw = Redraw::parse(&a.redraw)?;
    let edges = GridEdges {
        a_au: parse_edges("--a-edges", &a.a_edges)?,
        q_au: parse_edges("--q-edges", &a.q_edges)?,
        inc_deg: parse_edges("--inc-edges", &a.inc_edges)?,
        h_mag: parse_edges("--h-edges", &a.h_edges)?,
    };
    let subject = match (a.population, a.objects) {
        (Some(objects), _) => Subject::Population { objects, edges },
        (None, objects) => Subject::Catalogue {
            objects: objects.expect("clap requires --objects or --population"),
            selection: a.selection.selection()?,
            fit: a.fit.options()?,
            clones: a.clones,
            redraw,
            shard: a.shard.resolve()?,
            over_budget: a.over_budget,
        },
    };
    let opts = DetectabilityOptions {
        surveys: a.surveys,
        subject,
        run: a.run.options()?,
    };
    a.run.print(&detectability(&opts)?);
    Ok(())
}
