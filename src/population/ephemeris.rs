//! Ephemerides of many objects at many epochs: the library side of `seine ephemeris`.
//!
//! It reads the objects table, so it sits above `sky` (which knows no table).

use polars::prelude::*;
use rayon::prelude::*;

use crate::error::Result;
use crate::orbit::Orbit;
use crate::population::objects::ObjectTable;
use crate::sky::apparent::observe_from;
use crate::sky::observer::{Site, observer_states};
use crate::sky::photometry::{apparent_mag, light_curve_offset};
use crate::time::TimeScale;

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
