//! The observer: the geocentre, or an observatory site carried by the Earth's rotation.
//!
//! * Site: geodetic longitude (east positive), latitude and height on the WGS84 ellipsoid
//!   (a = 6378.137 km, f = 1/298.257223563; NIMA TR8350.2) to a terrestrial vector.
//! * Terrestrial → celestial: a rotation by the Earth rotation angle (IAU 2000 Resolution
//!   B1.8: ERA = 2π (0.7790572732640 + 1.00273781191135448 (JD_UT1 − 2451545.0))), with
//!   UT1 taken as UTC (|UT1 − UTC| < 0.9 s moves a site by < 0.4 km). Precession–nutation
//!   and polar motion of the site vector are neglected: they turn a 6400 km vector by
//!   < 0.2° over 1990–2040, which shifts a body at 30 AU by < 0.002″.

use nalgebra::Vector3;
use serde::{Deserialize, Serialize};

use rayon::prelude::*;

use super::earth::{EarthSource, EarthSun};
use crate::error::Result;
use crate::foundation::constants::AU_KM;
use crate::foundation::units::TAU;
use crate::time::{JD_MINUS_MJD, MjdTdb, MjdUtc, TimeScale, to_tdb, to_utc};

const WGS84_A_KM: f64 = 6378.137;
const WGS84_F: f64 = 1.0 / 298.257223563;
/// Earth's rotation rate in rad per UT1 day (IAU 2000 ERA rate).
const ERA_RATE: f64 = TAU * 1.002_737_811_911_354_48;

#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Site {
    pub longitude_deg: f64,
    pub latitude_deg: f64,
    #[serde(default)]
    pub elevation_m: f64,
}

impl Site {
    /// The site's position in the terrestrial frame, AU.
    pub fn terrestrial_au(&self) -> Vector3<f64> {
        let (lon, lat) = (self.longitude_deg.to_radians(), self.latitude_deg.to_radians());
        let e2 = WGS84_F * (2.0 - WGS84_F);
        let (sl, cl) = lat.sin_cos();
        let n = WGS84_A_KM / (1.0 - e2 * sl * sl).sqrt();
        let h = self.elevation_m / 1000.0;
        Vector3::new(
            (n + h) * cl * lon.cos(),
            (n + h) * cl * lon.sin(),
            (n * (1.0 - e2) + h) * sl,
        ) / AU_KM
    }

    /// Geocentric position (AU) and velocity (AU/day) of the site, ICRS axes, at a UTC MJD.
    pub fn geocentric(&self, utc: MjdUtc) -> (Vector3<f64>, Vector3<f64>) {
        let r = self.terrestrial_au();
        let (s, c) = earth_rotation_angle(utc).sin_cos();
        let pos = Vector3::new(c * r.x - s * r.y, s * r.x + c * r.y, r.z);
        let vel = Vector3::new(-pos.y, pos.x, 0.0) * ERA_RATE;
        (pos, vel)
    }

    /// Local Earth rotation angle (the analogue of local sidereal time), radians.
    pub fn local_rotation_angle(&self, utc: MjdUtc) -> f64 {
        (earth_rotation_angle(utc) + self.longitude_deg.to_radians()).rem_euclid(TAU)
    }

    /// Check the values, naming the key that is out of range.
    pub fn problem(&self) -> Option<String> {
        if !(-360.0..=360.0).contains(&self.longitude_deg) {
            return Some(format!(
                "site.longitude_deg: expected -360..360, found {}",
                self.longitude_deg
            ));
        }
        if !(-90.0..=90.0).contains(&self.latitude_deg) {
            return Some(format!(
                "site.latitude_deg: expected -90..90, found {}",
                self.latitude_deg
            ));
        }
        if !(-500.0..=10000.0).contains(&self.elevation_m) {
            return Some(format!(
                "site.elevation_m: expected -500..10000 m, found {}",
                self.elevation_m
            ));
        }
        None
    }
}

/// Earth rotation angle (radians, [0, 2π)) at a UTC epoch taken as UT1 (IAU 2000).
pub fn earth_rotation_angle(ut1: MjdUtc) -> f64 {
    // Split the day fraction off first to keep precision.
    let d = ut1.0 + JD_MINUS_MJD - 2451545.0;
    let frac = d.rem_euclid(1.0);
    (TAU * (frac + 0.779_057_273_264_0 + 0.002_737_811_911_354_48 * d)).rem_euclid(TAU)
}

/// Where the observer is, barycentric ICRS, at one instant.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ObserverState {
    pub tdb_mjd: f64,
    pub pos: Vector3<f64>,
    pub vel: Vector3<f64>,
    pub sun_pos: Vector3<f64>,
    pub sun_vel: Vector3<f64>,
}

impl ObserverState {
    /// The observer at a site (the geocentre for `None`); `earth` is the Earth and Sun at `tdb`,
    /// and `utc` the same instant in UTC (it turns the site with the Earth).
    pub fn new(earth: &EarthSun, site: Option<&Site>, utc: MjdUtc, tdb: MjdTdb) -> Self {
        let (dp, dv) = site.map_or((Vector3::zeros(), Vector3::zeros()), |s| s.geocentric(utc));
        ObserverState {
            tdb_mjd: tdb.0,
            pos: earth.earth_bary() + dp,
            vel: earth.earth_bary_vel() + dv,
            sun_pos: earth.sun_bary,
            sun_vel: earth.sun_bary_vel,
        }
    }

    /// The observer at the geocentre, which needs no UTC: `earth` is the Earth and Sun at `tdb`.
    pub fn geocentre(earth: &EarthSun, tdb: MjdTdb) -> Self {
        ObserverState {
            tdb_mjd: tdb.0,
            pos: earth.earth_bary(),
            vel: earth.earth_bary_vel(),
            sun_pos: earth.sun_bary,
            sun_vel: earth.sun_bary_vel,
        }
    }
}

/// Observer states for a list of epochs given in `scale`.
pub fn observer_states(mjd: &[f64], scale: TimeScale, site: Option<&Site>) -> Result<Vec<ObserverState>> {
    let tdb: Vec<MjdTdb> = mjd.iter().map(|&t| to_tdb(t, scale)).collect::<Result<_>>()?;
    let utc: Vec<MjdUtc> = mjd.iter().map(|&t| to_utc(t, scale)).collect::<Result<_>>()?;
    let source = EarthSource::for_epochs(&tdb.iter().map(|t| t.0).collect::<Vec<f64>>());
    Ok(tdb
        .par_iter()
        .zip(utc.par_iter())
        .map(|(&t, &u)| ObserverState::new(&source.at(t.0), site, u, t))
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::time::MJD_J2000;

    #[test]
    fn era_at_j2000() {
        // At JD(UT1) 2451545.0 the ERA is 2π × 0.7790572732640 by definition.
        let era = earth_rotation_angle(MjdUtc(MJD_J2000));
        assert!((era - TAU * 0.779_057_273_264).abs() < 1e-12);
    }

    #[test]
    fn equator_site_radius() {
        let s = Site {
            longitude_deg: 0.0,
            latitude_deg: 0.0,
            elevation_m: 0.0,
        };
        assert!((s.terrestrial_au().norm() * AU_KM - WGS84_A_KM).abs() < 1e-6);
        let p = Site {
            longitude_deg: 0.0,
            latitude_deg: 90.0,
            elevation_m: 0.0,
        };
        // Polar radius b = a (1 − f) = 6356.752 km.
        assert!((p.terrestrial_au().norm() * AU_KM - 6356.752314).abs() < 1e-3);
    }
}
