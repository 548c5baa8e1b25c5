//! A low-precision Moon and the sky brightness it adds, for the planner's Moon penalty.
//!
//! * Position: the low-precision formulae of the Astronomical Almanac (section D; from memory),
//!   geocentric ecliptic longitude, latitude and horizontal parallax of date, good to about 0.3°
//!   in longitude, 0.2° in latitude; made topocentric with the site vector. Checked against
//!   Meeus, *Astronomical Algorithms* (2nd ed.), example 47.a (values from memory).
//! * Sky brightness: Krisciunas & Schaefer (1991, PASP 103, 1033; equations from memory),
//!   B_moon = f(ρ) I* 10^(−0.4 k X(Z_moon)) (1 − 10^(−0.4 k X(Z))) nanolamberts, with
//!   I* = 10^(−0.4 (3.84 + 0.026 |α| + 4e−9 α⁴)), f(ρ) = 10^5.36 (1.06 + cos² ρ) + 10^(6.15 − ρ/40),
//!   X(Z) = (1 − 0.96 sin² Z)^(−1/2), α the lunar phase angle and ρ the Moon–field separation
//!   in degrees; a dark sky of V mag/arcsec² is B₀ = 34.08 exp(20.7233 − 0.92104 V) nL.
//! * Depth penalty of a background-limited detection: Δm = 1.25 log10((B₀ + B_moon)/B₀).

use nalgebra::Vector3;

use super::horizon::precession_matrix;
use crate::error::Result;
use crate::foundation::constants::AU_KM;
use crate::foundation::units::DEG;
use crate::sky::frames::{separation, unit_vector};
use crate::time::{MJD_J2000, MjdTdb, MjdUtc};

const EARTH_RADIUS_KM: f64 = 6378.14;

/// Geocentric ecliptic longitude, latitude (of date, radians) and distance (km) of the Moon.
/// The series' argument is TT; TDB differs by < 2 ms, far below the series' accuracy.
pub fn moon_ecliptic_of_date(tdb: MjdTdb) -> (f64, f64, f64) {
    let t = (tdb.0 - MJD_J2000) / 36525.0;
    let s = |a: f64, b: f64| ((a + b * t) * DEG).sin();
    let c = |a: f64, b: f64| ((a + b * t) * DEG).cos();
    let lon = 218.32 + 481267.881 * t + 6.29 * s(135.0, 477198.87) - 1.27 * s(259.3, -413335.36)
        + 0.66 * s(235.7, 890534.22)
        + 0.21 * s(269.9, 954397.74)
        - 0.19 * s(357.5, 35999.05)
        - 0.11 * s(186.5, 966404.03);
    let lat =
        5.13 * s(93.3, 483202.02) + 0.28 * s(228.2, 960400.89) - 0.28 * s(318.3, 6003.15) - 0.17 * s(217.6, -407332.21);
    let parallax = 0.9508
        + 0.0518 * c(135.0, 477198.87)
        + 0.0095 * c(259.3, -413335.36)
        + 0.0078 * c(235.7, 890534.22)
        + 0.0028 * c(269.9, 954397.74);
    (
        lon.rem_euclid(360.0) * DEG,
        lat * DEG,
        EARTH_RADIUS_KM / (parallax * DEG).sin(),
    )
}

/// Geocentric ICRS position of the Moon, AU (TT taken as TDB, as above).
pub fn moon_geocentric_icrs(tdb: MjdTdb) -> Vector3<f64> {
    let (lon, lat, dist_km) = moon_ecliptic_of_date(tdb);
    let t = (tdb.0 - MJD_J2000) / 36525.0;
    // Mean obliquity of date (IAU 1976 leading terms), then back from the equator of date to ICRS.
    let eps = (84381.448 - 46.815 * t) / 3600.0 * DEG;
    let e = unit_vector(lon, lat);
    let (se, ce) = eps.sin_cos();
    let equ_of_date = Vector3::new(e.x, ce * e.y - se * e.z, se * e.y + ce * e.z);
    precession_matrix(tdb).transpose() * equ_of_date * (dist_km / AU_KM)
}

/// Sky brightness added by the Moon (nanolamberts), Krisciunas & Schaefer (1991).
/// `phase_deg`: Sun–Moon–observer angle; `rho_deg`: Moon–field separation; zenith angles in degrees;
/// `k`: extinction, mag per airmass.
pub fn moon_sky_nl(phase_deg: f64, rho_deg: f64, z_moon_deg: f64, z_field_deg: f64, k: f64) -> f64 {
    if z_moon_deg >= 90.0 {
        return 0.0;
    }
    let x = |z: f64| (1.0 - 0.96 * (z * DEG).sin().powi(2)).powf(-0.5);
    let a = phase_deg.abs();
    let istar = 10f64.powf(-0.4 * (3.84 + 0.026 * a + 4e-9 * a.powi(4)));
    let f = 10f64.powf(5.36) * (1.06 + (rho_deg * DEG).cos().powi(2)) + 10f64.powf(6.15 - rho_deg / 40.0);
    f * istar * 10f64.powf(-0.4 * k * x(z_moon_deg)) * (1.0 - 10f64.powf(-0.4 * k * x(z_field_deg)))
}

/// Dark-sky brightness in nanolamberts for V mag/arcsec² (Krisciunas & Schaefer 1991).
pub fn nl_from_mag_arcsec2(v: f64) -> f64 {
    34.08 * (20.7233 - 0.92104 * v).exp()
}

/// The Moon as seen from a site at one instant: topocentric ICRS unit vector and phase angle.
pub struct MoonView {
    pub dir: Vector3<f64>,
    pub phase_deg: f64,
}

/// `site_geo_au`: the site's geocentric ICRS position; `sun_dir`: topocentric Sun direction.
/// Fails for a UTC epoch the leap-second table does not cover (before 1972).
pub fn moon_view(utc: MjdUtc, site_geo_au: &Vector3<f64>, sun_dir: &Vector3<f64>) -> Result<MoonView> {
    let topo = moon_geocentric_icrs(utc.to_tdb()?) - site_geo_au;
    let dir = topo.normalize();
    // The Sun is 390 times farther: the phase angle is 180° minus the Sun–Moon elongation (to 0.15°).
    Ok(MoonView {
        dir,
        phase_deg: 180.0 - separation(&dir, sun_dir) / DEG,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn meeus_example_47a() {
        // Meeus (1998) example 47.a, 1992 April 12.0 TD (from memory): λ = 133.162655°,
        // β = −3.229126°, Δ = 368409.7 km. The low-precision series is good to ~0.3°.
        let tt = MjdTdb(2448724.5 - 2400000.5); // TT, taken as TDB (< 2 ms apart)
        let (lon, lat, d) = moon_ecliptic_of_date(tt);
        assert!((lon / DEG - 133.162655).abs() < 0.3, "{}", lon / DEG);
        assert!((lat / DEG + 3.229126).abs() < 0.2, "{}", lat / DEG);
        assert!((d / 368409.7 - 1.0).abs() < 0.01, "{d}");
    }

    #[test]
    fn full_moon_brightens_the_sky_by_magnitudes() {
        // Full Moon 60° away, both 30° from the zenith, k = 0.172 (KS91's V-band value):
        // about 1400 nL against a 21.7 mag/arcsec² dark sky of 71 nL, i.e. ~18.4 mag/arcsec².
        let b = moon_sky_nl(0.0, 60.0, 30.0, 30.0, 0.172);
        let b0 = nl_from_mag_arcsec2(21.7);
        assert!((b / 1400.0 - 1.0).abs() < 0.05, "{b}");
        assert!((b0 / 71.2 - 1.0).abs() < 0.01, "{b0}");
        assert_eq!(moon_sky_nl(0.0, 60.0, 95.0, 30.0, 0.172), 0.0);
        // A thin crescent adds far less light.
        assert!(moon_sky_nl(150.0, 60.0, 30.0, 30.0, 0.172) < 0.02 * b);
    }
}
