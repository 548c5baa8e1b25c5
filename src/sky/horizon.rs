//! The local sky of a site: the altitude of the Sun and of fields, airmass and twilight.
//!
//! * ICRS → mean equator and equinox of date: the IAU 1976 precession angles ζ, z, θ of
//!   Lieske et al. (1977, A&A 58, 1), in the form of Meeus, *Astronomical Algorithms*
//!   (2nd ed., 1998), eq. 21.2–21.4 with the starting epoch J2000. The 23 mas frame bias
//!   and the nutation are neglected: they move an altitude by < 0.003° (Δε ≤ 9.2″) and an
//!   hour angle by the equation of the equinoxes (≤ 1.2 s of time, < 0.005°).
//! * Greenwich mean sidereal time: IAU 2006, GMST = ERA + the polynomial of Capitaine,
//!   Wallace & Chapront (2003, A&A 412, 567, eq. 42), as in ERFA's `gmst06`, with UT1 = UTC.
//! * Annual aberration to first order in v/c (Explanatory Supplement 1992, §3.252), so that
//!   altitudes are the observed (unrefracted) ones; the Sun is topocentric (parallax 8.8″).
//! * Altitude: sin h = sin φ sin δ + cos φ cos δ cos H, φ the geodetic latitude, no refraction.
//! * Airmass: Kasten & Young (1989, Appl. Opt. 28, 4735),
//!   X = 1 / (cos z + 0.50572 (96.07995° − z)^−1.6364), z in degrees; plane-parallel sec z also given.
//!
//! Checked against astropy's AltAz frame (pressure 0) in `tests/reference/fixtures/sun_altaz.csv`
//! and `twilight.csv`.

use nalgebra::{Matrix3, Vector3};

use super::earth::EarthSun;
use super::observer::{Site, earth_rotation_angle};
use crate::error::Result;
use crate::foundation::constants::C_AU_PER_DAY;
use crate::foundation::units::{ARCSEC, DEG};
use crate::time::{MJD_J2000, MjdTdb, MjdUtc};

/// IAU 1976 precession matrix, ICRS (≈ mean J2000) → mean equator and equinox of date.
/// The formula's argument is TT; TDB differs by < 2 ms, which turns the matrix by < 1e-13 rad.
pub fn precession_matrix(tdb: MjdTdb) -> Matrix3<f64> {
    let t = (tdb.0 - MJD_J2000) / 36525.0;
    let zeta = (2306.2181 * t + 0.30188 * t * t + 0.017998 * t * t * t) * ARCSEC;
    let z = (2306.2181 * t + 1.09468 * t * t + 0.018203 * t * t * t) * ARCSEC;
    let theta = (2004.3109 * t - 0.42665 * t * t - 0.041833 * t * t * t) * ARCSEC;
    // P = R3(−z) · R2(θ) · R3(−ζ)
    rot_z(-z) * rot_y(theta) * rot_z(-zeta)
}

/// Rotation of the coordinate axes about z by `a` (a vector's components in the turned axes).
fn rot_z(a: f64) -> Matrix3<f64> {
    let (s, c) = a.sin_cos();
    Matrix3::new(c, s, 0.0, -s, c, 0.0, 0.0, 0.0, 1.0)
}

fn rot_y(a: f64) -> Matrix3<f64> {
    let (s, c) = a.sin_cos();
    Matrix3::new(c, 0.0, -s, 0.0, 1.0, 0.0, s, 0.0, c)
}

/// Greenwich mean sidereal time (radians), IAU 2006: ERA(UT1) + polynomial in TT centuries,
/// with UT1 taken as UTC and TT as TDB (< 2 ms apart: < 1e-12 rad in the polynomial).
pub fn gmst_rad(ut1: MjdUtc, tdb: MjdTdb) -> f64 {
    let t = (tdb.0 - MJD_J2000) / 36525.0;
    let poly =
        0.014506 + t * (4612.156534 + t * (1.3915817 + t * (-0.00000044 + t * (-0.000029956 - t * 0.0000000368))));
    (earth_rotation_angle(ut1) + poly * ARCSEC).rem_euclid(std::f64::consts::TAU)
}

/// Kasten & Young (1989) relative airmass at a true altitude (radians); infinite below −6°.
pub fn airmass_kasten_young(alt_rad: f64) -> f64 {
    let z_deg = 90.0 - alt_rad / DEG;
    if z_deg >= 96.0 {
        return f64::INFINITY;
    }
    1.0 / ((z_deg * DEG).cos() + 0.50572 * (96.07995 - z_deg).powf(-1.6364))
}

/// Plane-parallel airmass sec z; infinite at or below the horizon.
pub fn airmass_secz(alt_rad: f64) -> f64 {
    if alt_rad <= 0.0 {
        f64::INFINITY
    } else {
        1.0 / alt_rad.sin()
    }
}

/// The sky above a site at one UTC instant: turns ICRS directions into altitudes.
#[derive(Debug, Clone)]
pub struct LocalSky {
    /// ICRS → (x toward the local meridian on the equator of date, y, z toward the pole of date).
    to_local: Matrix3<f64>,
    sin_lat: f64,
    cos_lat: f64,
    /// Observer's barycentric velocity over c (for aberration).
    beta: Vector3<f64>,
    /// Topocentric geometric direction of the Sun, ICRS, unit vector.
    pub sun_dir: Vector3<f64>,
    /// The site's geocentric position, ICRS axes, AU.
    pub site_geo: Vector3<f64>,
}

impl LocalSky {
    /// `earth` must be the Earth and Sun at the TDB of `utc_mjd`. Fails for a UTC epoch the
    /// leap-second table does not cover (before 1972).
    pub fn new(site: &Site, utc: MjdUtc, earth: &EarthSun) -> Result<Self> {
        let tdb = utc.to_tdb()?;
        let last = gmst_rad(utc, tdb) + site.longitude_deg * DEG;
        let to_local = rot_z(last) * precession_matrix(tdb);
        let lat = site.latitude_deg * DEG;
        let (site_pos, site_vel) = site.geocentric(utc);
        let sun = -earth.earth_helio - site_pos;
        Ok(LocalSky {
            to_local,
            sin_lat: lat.sin(),
            cos_lat: lat.cos(),
            beta: (earth.earth_bary_vel() + site_vel) / C_AU_PER_DAY,
            sun_dir: sun.normalize(),
            site_geo: site_pos,
        })
    }

    /// Observed altitude (radians, no refraction) of an ICRS unit vector.
    pub fn altitude(&self, dir: &Vector3<f64>) -> f64 {
        let apparent = dir + self.beta - dir * dir.dot(&self.beta);
        let v = self.to_local * apparent.normalize();
        (self.sin_lat * v.z + self.cos_lat * v.x).clamp(-1.0, 1.0).asin()
    }

    pub fn sun_altitude(&self) -> f64 {
        self.altitude(&self.sun_dir)
    }

    /// Angle between an ICRS direction and the Sun, radians.
    pub fn solar_elongation(&self, dir: &Vector3<f64>) -> f64 {
        crate::sky::frames::separation(dir, &self.sun_dir)
    }
}

/// The Sun's altitude (radians) at a site and UTC MJD, with an exact Earth ephemeris.
pub fn sun_altitude(site: &Site, utc: MjdUtc) -> Result<f64> {
    let tdb = utc.to_tdb()?;
    Ok(LocalSky::new(site, utc, &super::earth::earth_sun_exact(tdb.0))?.sun_altitude())
}

/// UTC MJD of local mean noon that starts night `night` (the DESIGN.md night numbering).
pub fn night_start_utc(site: &Site, night: i64) -> f64 {
    night as f64 + 0.5 - site.longitude_deg / 360.0
}

/// The dark interval of a night: (evening, morning) UTC MJDs at which the Sun crosses
/// `sun_alt_deg` around its lowest point, `None` if the Sun never gets that low that night,
/// and the noon-to-noon bounds where it stays below (polar night). `sun_at` gives the Sun's
/// altitude in radians at a UTC MJD (and fails outside the epochs it serves).
pub fn dark_interval(
    site: &Site,
    night: i64,
    sun_alt_deg: f64,
    sun_at: impl Fn(f64) -> Result<f64>,
) -> Result<Option<(f64, f64)>> {
    let noon = night_start_utc(site, night);
    let limit = sun_alt_deg * DEG;
    let f = |t: f64| sun_at(t).map(|alt| alt - limit);
    // The Sun's altitude has one minimum per day, near local midnight; sample to bracket it.
    let samples: Vec<(f64, f64)> = (0..=48)
        .map(|i| noon + i as f64 / 48.0)
        .map(|t| f(t).map(|v| (t, v)))
        .collect::<Result<_>>()?;
    let imin = (0..samples.len())
        .min_by(|&a, &b| samples[a].1.total_cmp(&samples[b].1))
        .unwrap_or(0);
    if samples[imin].1 >= 0.0 {
        return Ok(None);
    }
    // Walk out from the darkest sample to the first samples above the limit; bisect there, or
    // keep the noon-to-noon bound when the Sun stays below the limit (polar night).
    let lo = (0..imin).rev().find(|&i| samples[i].1 >= 0.0);
    let hi = (imin + 1..samples.len()).find(|&i| samples[i].1 >= 0.0);
    let dusk = lo.map_or(Ok(noon), |i| bisect(&f, samples[i].0, samples[i + 1].0))?;
    let dawn = hi.map_or(Ok(noon + 1.0), |i| bisect(&f, samples[i - 1].0, samples[i].0))?;
    Ok(Some((dusk, dawn)))
}

/// Root of f between a and b (f(a), f(b) of opposite sign), to 1e-7 day (< 0.01 s).
fn bisect(f: &impl Fn(f64) -> Result<f64>, mut a: f64, mut b: f64) -> Result<f64> {
    let fa0 = f(a)?;
    while b - a > 1e-7 {
        let m = 0.5 * (a + b);
        if (f(m)? > 0.0) == (fa0 > 0.0) { a = m } else { b = m }
    }
    Ok(0.5 * (a + b))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn polar_day_and_night() {
        // At 80° N the Sun stays up through late June and down through late December.
        let site = Site {
            longitude_deg: 15.0,
            latitude_deg: 80.0,
            elevation_m: 0.0,
        };
        let at = |t: f64| sun_altitude(&site, MjdUtc(t));
        assert_eq!(dark_interval(&site, 61577, -12.0, at).unwrap(), None); // 2027-06-21
        let (a, b) = dark_interval(&site, 61760, -12.0, at).unwrap().unwrap(); // 2027-12-21
        assert!((b - a - 1.0).abs() < 1e-9);
    }

    #[test]
    fn kasten_young_at_zenith_and_horizon() {
        // Kasten & Young (1989) is built to give X = 1 at the zenith; at the horizon their formula
        // gives 37.92 (evaluated from the formula, a self-consistency check). The astropy fixture
        // check in tests/survey.rs is the outside reference.
        assert!((airmass_kasten_young(90.0 * DEG) - 1.0).abs() < 1e-3);
        assert!((airmass_kasten_young(0.0) - 37.9196).abs() < 1e-3);
        assert!(airmass_kasten_young(-7.0 * DEG).is_infinite());
    }

    #[test]
    fn gmst_at_j2000() {
        // GMST at 2000-01-01 12:00 UT1 = 18h 41m 50.54841s (IAU 1982 value; the IAU 2006
        // formula agrees to a few ms). From memory, Explanatory Supplement (1992) §2.24.
        let g = gmst_rad(MjdUtc(MJD_J2000), MjdTdb(MJD_J2000)) / DEG / 15.0;
        let expect = 18.0 + 41.0 / 60.0 + 50.54841 / 3600.0;
        assert!((g - expect).abs() * 3600.0 < 0.05, "{g}");
    }
}
