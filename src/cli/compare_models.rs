//! `seine compare-models`: arguments and printing; the run is `seine::commands::compare_models`.

use std::path::PathBuf;

use seine::analysis::compare::DensityChoice;
use seine::analysis::space::Space;
use seine::commands::compare_models::{CompareModelsOptions, ModelInput, compare};
use seine::orbit::Center;
use seine::{Error, Result};

use super::common::{CatalogueArgs, RunArgs, TrialFitArgs};

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

/// `NAME=VALUE`.
fn pair<'a>(option: &str, s: &'a str, value: &str) -> Result<(&'a str, &'a str)> {
    s.split_once('=')
        .ok_or_else(|| Error::input(format!("{option} `{s}`: expected NAME={value}")))
}

pub fn run(a: Args) -> Result<()> {
    let density = match a.density.as_str() {
        "kde" => DensityChoice::Kernel,
        "binned" => DensityChoice::Binned {
            bins: a.bins,
            prior_objects: a.prior_objects,
        },
        other => return Err(Error::input(format!("--density `{other}`: expected kde or binned"))),
    };
    let frame = a
        .frame
        .as_deref()
        .map(|f| {
            Center::parse(f)
                .filter(|_| !f.trim().is_empty())
                .ok_or_else(|| Error::input(format!("--frame `{f}`: expected heliocentric or barycentric")))
        })
        .transpose()?;
    let opts = CompareModelsOptions {
        space: Space::parse(&a.space)?,
        models: models(&a.models, &a.population_sizes)?,
        density,
        frame,
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

/// `--model NAME=OBJECTS` with their `--population-size NAME=N`.
fn models(models: &[String], sizes: &[String]) -> Result<Vec<ModelInput>> {
    let mut by_name = std::collections::HashMap::new();
    for s in sizes {
        let (name, n) = pair("--population-size", s, "N")?;
        let n: f64 = n
            .trim()
            .parse()
            .map_err(|_| Error::input(format!("--population-size `{s}`: expected NAME=N with a number N")))?;
        by_name.insert(name.to_string(), n);
    }
    let mut out = Vec::new();
    for m in models {
        let (name, path) = pair("--model", m, "OBJECTS")?;
        out.push(ModelInput {
            name: name.to_string(),
            objects: PathBuf::from(path),
            population_size: by_name.remove(name),
        });
    }
    if let Some(name) = by_name.keys().next() {
        return Err(Error::input(format!("--population-size: no --model is named `{name}`")));
    }
    Ok(out)
}
