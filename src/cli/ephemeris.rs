//! `seine ephemeris`: arguments and printing; the run is `seine::commands::ephemeris`.

use std::path::PathBuf;

use seine::commands::ephemeris::{EphemerisOptions, Epochs, ephemeris, parse_site};
use seine::time::TimeScale;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
#[command(group(clap::ArgGroup::new("when").required(true).args(["epochs", "survey"])))]
pub struct Args {
    /// Objects table (CSV or Parquet): a_au, e (or q_au), inc_deg, node_deg, argperi_deg,
    /// mean_anomaly_deg, epoch_mjd (TDB), h_mag, ...
    #[arg(long)]
    pub objects: PathBuf,
    /// Epochs table with a column `mjd` (UTC unless --time-scale says otherwise). One of
    /// --epochs or --survey is required.
    #[arg(long)]
    pub epochs: Option<PathBuf>,
    /// Instead of --epochs, a survey spec: one row per object and visit, from the survey's
    /// site, in its time scale. One of --epochs or --survey is required.
    #[arg(long)]
    pub survey: Option<PathBuf>,
    /// Output table (.csv or .parquet): id, mjd, ra_deg, dec_deg, r_au, delta_au, phase_deg, mag, ...
    #[arg(long)]
    pub out: PathBuf,
    /// Observatory site as LON_DEG,LAT_DEG[,ELEV_M] (east longitude, geodetic WGS84); default geocentre.
    #[arg(long, allow_hyphen_values = true)]
    pub site: Option<String>,
    /// Time scale of the epochs: utc, tai, tt or tdb.
    #[arg(long, default_value = "utc")]
    pub time_scale: String,
}

pub fn run(a: Args) -> Result<()> {
    let scale = TimeScale::parse(&a.time_scale)
        .ok_or_else(|| Error::input(format!("--time-scale `{}`: expected utc, tai, tt or tdb", a.time_scale)))?;
    let epochs = match (a.epochs, a.survey) {
        (Some(path), _) => Epochs::Table(path, scale),
        (None, Some(spec)) => Epochs::Survey(spec),
        (None, None) => return Err(Error::input("ephemeris: give --epochs or --survey")),
    };
    let opts = EphemerisOptions {
        site: a.site.as_deref().map(parse_site).transpose()?,
        objects: a.objects,
        epochs,
        out: a.out,
    };
    eprintln!("{}", ephemeris(&opts)?.conclusion);
    Ok(())
}
