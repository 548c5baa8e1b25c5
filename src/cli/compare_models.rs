//! `seine compare-models`: arguments and printing; the run is `seine::commands::compare_models`.

use std::path::PathBuf;

use seine::Result;
use seine::analysis::space::Space;
use seine::commands::compare_models::{CompareModelsOptions, ModelInput, compare, parse_density, parse_frame};

use super::catalogue::{CatalogueArgs, TrialFitArgs};
use super::common::RunArgs;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue (objects table).
    #[arg(long)]
    pub observed: PathBuf,
    #[command(flatten)]
    pub selection: CatalogueArgs,
    #[command(flatten)]
    pub fit: TrialFitArgs,
    /// A model population NAME=OBJECTS (e.g. cloned simulation particles); repeat.
    #[arg(long = "model", required = true)]
    pub models: Vec<String>,
    /// NAME=N: model NAME stands for N real objects; adds the Poisson term of the number detected (extended likelihood).
    #[arg(long = "population-size")]
    pub population_sizes: Vec<String>,
    /// Observable space, comma-separated: a_au, e, q_au, Q_au, inc_deg, node_deg, argperi_deg, varpi_deg, h_mag.
    #[arg(long, default_value = "a_au,q_au,inc_deg,varpi_deg")]
    pub space: String,
    /// Density of the detected model objects: kde (kernels in log a, q; reflected e, i; von Mises angles) or binned.
    #[arg(long, default_value = "kde")]
    pub density: String,
    /// Binned density: equal-width bins per dimension (working coordinates).
    #[arg(long, default_value_t = 8)]
    pub bins: usize,
    /// Binned density: total pseudo-count in objects, spread evenly over all bins.
    #[arg(long, default_value_t = 1.0)]
    pub prior_objects: f64,
    /// Synthetic catalogues per model for the goodness-of-fit and marginal p-values.
    #[arg(long, default_value_t = 1000)]
    pub synthetic: u64,
    /// Bootstrap replicates for the model-sample error of ln L.
    #[arg(long, default_value_t = 200)]
    pub bootstrap: u64,
    /// Convert every table's elements to this frame (heliocentric or barycentric); without it, mixed frames are refused.
    #[arg(long)]
    pub frame: Option<String>,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let opts = CompareModelsOptions {
        space: Space::parse(&a.space)?,
        models: ModelInput::parse_all(&a.models, &a.population_sizes)?,
        density: parse_density(&a.density, a.bins, a.prior_objects)?,
        frame: parse_frame(a.frame.as_deref())?,
        surveys: a.surveys,
        observed: a.observed,
        selection: a.selection.selection()?,
        fit: a.fit.options()?,
        synthetic: a.synthetic,
        bootstrap: a.bootstrap,
        run: a.run.options()?,
    };
    a.run.print(&compare(&opts)?);
    Ok(())
}
