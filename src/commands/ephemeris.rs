//! `seine ephemeris` as a library call: the positions of an objects table's objects at the
//! epochs of a table or at every visit of a survey, written as one table. The ephemerides
//! are `population::ephemeris`; this is the run: the epochs, the site, the provenance.

use std::path::PathBuf;

use super::Outcome;
use crate::error::{Error, Result};
use crate::io::Provenance;
use crate::io::table::{Columns, Format, read_table, write_table};
use crate::population::ephemeris::ephemeris_table;
use crate::population::objects::ObjectTable;
use crate::sky::observer::Site;
use crate::survey::Survey;
use crate::time::TimeScale;

/// Where the epochs come from.
#[derive(Debug, Clone, PartialEq)]
pub enum Epochs {
    /// A table with a column `mjd`, in the given time scale.
    Table(PathBuf, TimeScale),
    /// Every visit of a survey spec, in the survey's time scale, from its site.
    Survey(PathBuf),
}

/// The options of `seine ephemeris`.
#[derive(Debug, Clone, PartialEq)]
pub struct EphemerisOptions {
    /// Objects table (CSV or Parquet).
    pub objects: PathBuf,
    pub epochs: Epochs,
    /// Output table (.csv or .parquet).
    pub out: PathBuf,
    /// Observatory site; none: the survey's site with `Epochs::Survey`, else the geocentre.
    pub site: Option<Site>,
}

impl EphemerisOptions {
    /// Refuse an output name that is not a table, before anything is read.
    pub fn validate(&self) -> Result<()> {
        Format::of(&self.out)?;
        Ok(())
    }
}

/// Run `seine ephemeris`.
pub fn ephemeris(opts: &EphemerisOptions) -> Result<Outcome> {
    opts.validate()?;
    let objects = ObjectTable::read(&opts.objects)?;
    let mut prov = Provenance::current();
    prov.add_input(&opts.objects)?;
    let mut site = opts.site;
    let (mjd, scale) = match &opts.epochs {
        Epochs::Table(path, scale) => {
            let mjd = Columns::new(&read_table(path)?, path).f64("mjd")?;
            if mjd.is_empty() {
                return Err(Error::input(format!(
                    "{}: the epochs table has no rows",
                    path.display()
                )));
            }
            prov.add_input(path)?;
            (mjd, *scale)
        }
        Epochs::Survey(spec) => {
            let survey = Survey::load(spec)?;
            prov.add_input(spec)?;
            prov.add_input(&survey.visits_path)?;
            site = site.or(survey.site);
            (survey.visits.mjd.clone(), survey.time_scale)
        }
    };
    let mut df = ephemeris_table(&objects, &mjd, scale, site.as_ref())?;
    write_table(&mut df, &opts.out, &prov)?;
    Ok(Outcome {
        written: vec![opts.out.clone()],
        conclusion: format!(
            "seine ephemeris: {} objects × {} epochs → {}",
            objects.len(),
            mjd.len(),
            opts.out.display()
        ),
        notes: Vec::new(),
    })
}

/// Parse `--site LON_DEG,LAT_DEG[,ELEV_M]` (east longitude, geodetic WGS84) into a site.
pub fn parse_site(s: &str) -> Result<Site> {
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
