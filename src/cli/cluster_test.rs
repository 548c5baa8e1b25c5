//! `seine cluster-test`: arguments and printing; the run is `seine::commands::cluster_test`.

use std::path::PathBuf;

use seine::Result;
use seine::analysis::cluster_test::{self as ct, Cut, TestOptions};
use seine::commands::cluster_test::{ClusterTestOptions, cluster_test};

use super::bias_map::GridArgs;
use super::catalogue::CatalogueArgs;
use super::common::RunArgs;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey")]
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue (objects table): its Ω and ω are tested.
    #[arg(long)]
    pub catalog: PathBuf,
    #[command(flatten)]
    pub selection: CatalogueArgs,
    /// Bias maps written by `seine bias-map` for these objects (otherwise computed here);
    /// repeat for the tables of several shards.
    #[arg(long)]
    pub bias_map: Vec<PathBuf>,
    #[command(flatten)]
    pub grid: GridArgs,
    /// Synthetic catalogues for the Monte Carlo p-values.
    #[arg(long, default_value_t = ct::DEFAULT_TRIALS)]
    pub trials: u64,
    /// Bootstrap replicas of the bias maps: the quoted errors cover the maps' noise (at least 2).
    #[arg(long, default_value_t = ct::DEFAULT_REPLICAS)]
    pub replicas: u32,
    /// Test the sub-samples a ≥ A (au) too, e.g. 150,250; the global p-value covers them.
    #[arg(long, value_delimiter = ',')]
    pub cut_a_min: Vec<f64>,
    /// Test the sub-samples q ≥ Q (au) too, e.g. 40,42; the global p-value covers them.
    #[arg(long, value_delimiter = ',')]
    pub cut_q_min: Vec<f64>,
    /// Leave out the objects whose bias map holds no discovery (otherwise the test refuses them).
    #[arg(long)]
    pub drop_undiscovered: bool,
    /// Equal angular bins over 0–360° of the rose counts of ϖ, Ω and ω (`rose.*`).
    #[arg(long, default_value_t = ct::DEFAULT_ROSE_BINS)]
    pub rose_bins: usize,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let cuts = (a.cut_a_min.iter().map(|a| Cut::AMin(*a)))
        .chain(a.cut_q_min.iter().map(|q| Cut::QMin(*q)))
        .collect();
    let opts = ClusterTestOptions {
        test: TestOptions {
            trials: a.trials,
            seed: a.run.seed,
            rose_bins: a.rose_bins,
            replicas: a.replicas,
            cuts,
        },
        maps: a.grid.options()?,
        surveys: a.surveys,
        catalog: a.catalog,
        selection: a.selection.selection()?,
        bias_maps: a.bias_map,
        drop_undiscovered: a.drop_undiscovered,
        run: a.run.options()?,
    };
    a.run.print(&cluster_test(&opts)?);
    Ok(())
}
