//! Reference frames: ecliptic J2000 ↔ ICRS, right ascension and declination, galactic.

use crate::foundation::units::TAU;
use nalgebra::{Matrix3, Vector3};

/// The ecliptic J2000 ↔ ICRS rotation is defined in the foundation (below `orbit`, which uses
/// it too); it is offered here with the other frame conversions.
pub use crate::foundation::ecliptic::{OBLIQUITY_J2000, ecliptic_to_icrs, icrs_to_ecliptic};

/// Longitude in [0, 2π) and latitude of a vector (RA/Dec for ICRS, λ/β for ecliptic).
#[inline]
pub fn lon_lat(v: &Vector3<f64>) -> (f64, f64) {
    let lon = v.y.atan2(v.x).rem_euclid(TAU);
    let lat = (v.z / v.norm()).clamp(-1.0, 1.0).asin();
    (lon, lat)
}

/// Unit vector from a longitude and latitude.
#[inline]
pub fn unit_vector(lon: f64, lat: f64) -> Vector3<f64> {
    let (sl, cl) = lon.sin_cos();
    let (sb, cb) = lat.sin_cos();
    Vector3::new(cb * cl, cb * sl, sb)
}

/// Ecliptic longitude and latitude (radians) of an ICRS direction given as RA/Dec.
pub fn radec_to_ecliptic(ra: f64, dec: f64) -> (f64, f64) {
    lon_lat(&icrs_to_ecliptic(&unit_vector(ra, dec)))
}

/// RA/Dec (radians) of an ecliptic J2000 longitude and latitude.
pub fn ecliptic_to_radec(lon: f64, lat: f64) -> (f64, f64) {
    lon_lat(&ecliptic_to_icrs(&unit_vector(lon, lat)))
}

/// Angular separation of two unit vectors, radians (the atan2 form is accurate at all angles).
#[inline]
pub fn separation(a: &Vector3<f64>, b: &Vector3<f64>) -> f64 {
    a.cross(b).norm().atan2(a.dot(b))
}

/// ICRS → galactic rotation, the matrix A_G of ESA 1997, SP-1200, vol. 1, §1.5.3 (written from
/// memory; checked against ERFA's `eraIcrs2g` and astropy on 200 points in tests/astrometry.rs).
pub fn icrs_to_galactic_matrix() -> Matrix3<f64> {
    Matrix3::new(
        -0.054_875_560_4,
        -0.873_437_090_2,
        -0.483_835_015_5, //
        0.494_109_427_9,
        -0.444_829_630_0,
        0.746_982_244_5, //
        -0.867_666_149_0,
        -0.198_076_373_4,
        0.455_983_776_2,
    )
}

/// Galactic longitude and latitude (radians) of an ICRS RA/Dec.
pub fn radec_to_galactic(ra: f64, dec: f64) -> (f64, f64) {
    lon_lat(&(icrs_to_galactic_matrix() * unit_vector(ra, dec)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ecliptic_equatorial_handbook_example() {
        // Meeus, Astronomical Algorithms (2nd ed.), example 13.a, from memory:
        // α = 116.328942°, δ = +28.026183° gives λ = 113.215630°, β = +6.684170° with
        // ε = 23.4392911° (J2000, IAU 1976 = 84381.448″).
        let (l, b) = radec_to_ecliptic(116.328942f64.to_radians(), 28.026183f64.to_radians());
        assert!((l.to_degrees() - 113.215630).abs() < 2e-6, "{}", l.to_degrees());
        assert!((b.to_degrees() - 6.684170).abs() < 2e-6, "{}", b.to_degrees());
        let (ra, dec) = ecliptic_to_radec(l, b);
        assert!((ra.to_degrees() - 116.328942).abs() < 1e-9);
        assert!((dec.to_degrees() - 28.026183).abs() < 1e-9);
    }

    #[test]
    fn galactic_centre_and_pole() {
        // ESA 1997, SP-1200, vol. 1, §1.5.3: the north galactic pole is at ICRS
        // α = 192.85948°, δ = +27.12825°; the galactic centre (l = b = 0) at
        // α = 266.40499°, δ = −28.93617° (from memory).
        let (_, b) = radec_to_galactic(192.85948f64.to_radians(), 27.12825f64.to_radians());
        assert!((b.to_degrees() - 90.0).abs() < 1e-4);
        let (l, b) = radec_to_galactic(266.40499f64.to_radians(), (-28.93617f64).to_radians());
        let l = if l > std::f64::consts::PI { l - TAU } else { l };
        assert!(l.to_degrees().abs() < 1e-4 && b.to_degrees().abs() < 1e-4, "{l} {b}");
    }
}
