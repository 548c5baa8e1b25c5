//! Ephemerides of many objects at many epochs: the library side of `seine ephemeris`.

use polars::prelude::*;
use rayon::prelude::*;

use super::apparent::observe_from;
use super::earth::EarthSource;
use super::observer::{ObserverState, Site};
use super::photometry::{apparent_mag, light_curve_offset};
use crate::error::Result;
use crate::io::objects::ObjectTable;
use crate::orbit::Orbit;
use crate::time::{TimeScale, to_tdb_mjd, to_utc_mjd};

/// Observer states for a list of epochs given in `scale`.
pub fn observer_states(mjd: &[f64], scale: TimeScale, site: Option<&Site>) -> Result<Vec<ObserverState>> {
    let tdb: Vec<f64> = mjd.iter().map(|&t| to_tdb_mjd(t, scale)).collect::<Result<_>>()?;
    let utc: Vec<f64> = mjd.iter().map(|&t| to_utc_mjd(t, scale)).collect::<Result<_>>()?;
    let source = EarthSource::for_epochs(&tdb);
    Ok(tdb
        .par_iter()
        .zip(utc.par_iter())
        .map(|(&t, &u)| ObserverState::new(&source.at(t), site, u, t))
        .collect())
}

/// One row per object and epoch, ordered by object then epoch:
/// `id, mjd, ra_deg, dec_deg, r_au, delta_au, phase_deg, mag, elong_deg,
/// rate_arcsec_per_hr, rate_pa_deg` (mag in the reference band; mjd as given).
pub fn ephemeris_table(objects: &ObjectTable, mjd: &[f64], scale: TimeScale, site: Option<&Site>) -> Result<DataFrame> {
    let observers = observer_states(mjd, scale, site)?;
    let rows: Vec<Vec<[f64; 10]>> = (0..objects.len())
        .into_par_iter()
        .map(|i| {
            let orbit = Orbit::new(objects.elements[i]);
            let mut tau = f64::NAN;
            observers
                .iter()
                .zip(mjd)
                .map(|(obs, &t)| {
                    let a = observe_from(&orbit, obs, tau);
                    tau = a.light_time_days;
                    let lc = light_curve_offset(objects.lc_amp_mag[i], objects.lc_period_days[i], 0.0, obs.tdb_mjd);
                    let mag = apparent_mag(objects.h_mag[i], a.r_au, a.delta_au, a.phase, &objects.phase_law[i]) + lc;
                    [
                        t,
                        a.ra.to_degrees(),
                        a.dec.to_degrees(),
                        a.r_au,
                        a.delta_au,
                        a.phase.to_degrees(),
                        mag,
                        a.elongation.to_degrees(),
                        a.rate_arcsec_per_hr(),
                        a.rate_pa_deg(),
                    ]
                })
                .collect()
        })
        .collect();
    let names = [
        "mjd",
        "ra_deg",
        "dec_deg",
        "r_au",
        "delta_au",
        "phase_deg",
        "mag",
        "elong_deg",
        "rate_arcsec_per_hr",
        "rate_pa_deg",
    ];
    let n = objects.len() * mjd.len();
    let ids: Vec<i64> = objects
        .ids
        .iter()
        .flat_map(|&id| std::iter::repeat_n(id, mjd.len()))
        .collect();
    let mut cols = vec![Column::new("id".into(), ids)];
    for (k, name) in names.iter().enumerate() {
        let v: Vec<f64> = rows.iter().flat_map(|r| r.iter().map(move |row| row[k])).collect();
        cols.push(Column::new((*name).into(), v));
    }
    Ok(DataFrame::new(n, cols).expect("columns of one length"))
}
