//! `seine ephemeris`: positions of objects at epochs.

use std::path::PathBuf;

use seine::io::Provenance;
use seine::io::table::{Columns, read_table, write_table};
use seine::population::ephemeris::ephemeris_table;
use seine::population::objects::ObjectTable;
use seine::sky::observer::Site;
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
    /// site, in its time scale.
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
    let mut site = a.site.as_deref().map(parse_site).transpose()?;
    seine::io::table::Format::of(&a.out)?;
    let objects = ObjectTable::read(&a.objects)?;
    let mut prov = Provenance::current();
    prov.add_input(&a.objects)?;
    let (mjd, scale) = match (&a.epochs, &a.survey) {
        (Some(path), _) => {
            let epochs_df = read_table(path)?;
            let mjd = Columns::new(&epochs_df, path).f64("mjd")?;
            if mjd.is_empty() {
                return Err(Error::input(format!(
                    "{}: the epochs table has no rows",
                    path.display()
                )));
            }
            prov.add_input(path)?;
            (mjd, scale)
        }
        (None, Some(spec)) => {
            let survey = seine::survey::Survey::load(spec)?;
            prov.add_input(spec)?;
            prov.add_input(&survey.visits_path)?;
            site = site.or(survey.site);
            (survey.visits.mjd.clone(), survey.time_scale)
        }
        (None, None) => return Err(Error::input("ephemeris: give --epochs or --survey")),
    };
    let mut df = ephemeris_table(&objects, &mjd, scale, site.as_ref())?;
    write_table(&mut df, &a.out, &prov)?;
    eprintln!(
        "seine ephemeris: {} objects × {} epochs → {}",
        objects.len(),
        mjd.len(),
        a.out.display()
    );
    Ok(())
}

/// Parse `LON_DEG,LAT_DEG[,ELEV_M]` into a site.
fn parse_site(s: &str) -> Result<Site> {
    let parts: Vec<&str> = s.split(',').map(str::trim).collect();
    let num = |i: usize, what: &str| -> Result<f64> {
        parts
            .get(i)
            .and_then(|p| p.parse::<f64>().ok())
            .filter(|x| x.is_finite())
            .ok_or_else(|| {
                Error::input(format!(
                    "--site `{s}`: expected LON_DEG,LAT_DEG[,ELEV_M] with a number for {what}"
                ))
            })
    };
    if !(2..=3).contains(&parts.len()) {
        return Err(Error::input(format!("--site `{s}`: expected LON_DEG,LAT_DEG[,ELEV_M]")));
    }
    let site = Site {
        longitude_deg: num(0, "the longitude")?,
        latitude_deg: num(1, "the latitude")?,
        elevation_m: if parts.len() == 3 {
            num(2, "the elevation")?
        } else {
            0.0
        },
    };
    if let Some(p) = site.problem() {
        return Err(Error::input(format!("--site: {p}")));
    }
    Ok(site)
}
