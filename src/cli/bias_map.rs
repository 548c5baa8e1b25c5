//! `seine bias-map`: arguments and printing; the run is `seine::commands::bias_map`.

use std::path::PathBuf;

use seine::analysis::bias_map::{DEFAULT_MAX_TRIALS_PER_OBJECT, DEFAULT_MIN_DISCOVERIES, MapAxes, MapGrid};
use seine::commands::bias_map::{BiasMapOptions, MapOptions, bias_map};
use seine::{Error, Result};

use super::catalogue::{CatalogueArgs, TrialFitArgs};
use super::common::{RunArgs, ShardArgs};

/// Grid and trial options shared with `cluster-test`.
#[derive(clap::Args, Debug, Clone)]
pub struct GridArgs {
    /// Cells along the first angle and along Ω: NX,NNODE.
    #[arg(long, default_value = "36,36")]
    pub grid: String,
    /// Trials are added a pass at a time (one per cell, angles uniform inside the cell, M
    /// uniform) until an object's map holds this many discoveries.
    #[arg(long, default_value_t = DEFAULT_MIN_DISCOVERIES)]
    pub min_discoveries: u64,
    /// Trial cap per object: no pass is started that would exceed it. An object still without
    /// a discovery is named in a warning (cluster-test refuses it unless --drop-undiscovered).
    #[arg(long, default_value_t = DEFAULT_MAX_TRIALS_PER_OBJECT)]
    pub max_trials_per_object: u64,
    /// Exactly this many trials per cell instead (no adaptive passes).
    #[arg(long)]
    pub per_cell: Option<u64>,
    /// Map axes: varpi-node (ϖ, Ω) or argperi-node (ω, Ω).
    #[arg(long, default_value = "varpi-node")]
    pub axes: String,
    /// Run past the budget of trials and memory (configuration.md, "Budgets"); give it only for a run meant to be this large
    #[arg(long)]
    pub over_budget: bool,
    #[command(flatten)]
    pub fit: TrialFitArgs,
}

impl GridArgs {
    pub fn options(&self) -> Result<MapOptions> {
        let bad = || {
            Error::input(format!(
                "--grid `{}`: expected NX,NNODE, two whole numbers ≥ 1",
                self.grid
            ))
        };
        let (x, y) = self.grid.split_once(',').ok_or_else(bad)?;
        let (n_x, n_node): (usize, usize) = (
            x.trim().parse().map_err(|_| bad())?,
            y.trim().parse().map_err(|_| bad())?,
        );
        if n_x == 0 || n_node == 0 {
            return Err(bad());
        }
        let axes = MapAxes::parse(&self.axes)
            .ok_or_else(|| Error::input(format!("--axes `{}`: expected varpi-node or argperi-node", self.axes)))?;
        Ok(MapOptions {
            grid: MapGrid { axes, n_x, n_node },
            min_discoveries: self.min_discoveries,
            max_trials_per_object: self.max_trials_per_object,
            per_cell: self.per_cell,
            over_budget: self.over_budget,
            fit: self.fit.options()?,
        })
    }
}

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Catalogue of objects (CSV or Parquet).
    #[arg(long)]
    pub objects: PathBuf,
    #[command(flatten)]
    pub selection: CatalogueArgs,
    #[command(flatten)]
    pub grid: GridArgs,
    #[command(flatten)]
    pub run: RunArgs,
    /// Shard K of N (K from 0; or from SLURM_ARRAY_TASK_ID): a contiguous slice of the catalogue objects.
    #[command(flatten)]
    pub shard: ShardArgs,
    /// Do not write the SVG heat maps.
    #[arg(long)]
    pub no_svg: bool,
}

pub fn run(a: Args) -> Result<()> {
    let opts = BiasMapOptions {
        surveys: a.surveys,
        objects: a.objects,
        selection: a.selection.selection()?,
        maps: a.grid.options()?,
        shard: a.shard.resolve()?,
        svg: !a.no_svg,
        run: a.run.options()?,
    };
    a.run.print(&bias_map(&opts)?);
    Ok(())
}
