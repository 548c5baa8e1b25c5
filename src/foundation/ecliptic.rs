//! The rotation between ecliptic J2000 axes (those of orbital elements) and ICRS axes (those
//! of sky positions). It sits below both `orbit` (which turns an orbit's plane into ICRS
//! once per object) and `sky` (which converts directions).

use super::units::ARCSEC;
use nalgebra::Vector3;

/// Obliquity of the ecliptic at J2000 used with ecliptic orbital elements: 84381.448″
/// (IAU 1976; Lieske et al. 1977, A&A 58, 1, from memory), the obliquity of the usual "ecliptic and mean
/// equinox of J2000" frame of orbital elements. IAU 2006 gives 84381.406″; the 0.042″
/// difference moves no position by more than that.
pub const OBLIQUITY_J2000: f64 = 84381.448 * ARCSEC;

/// Rotate a vector from ecliptic J2000 axes to ICRS axes (rotation about x by ε).
#[inline]
pub fn ecliptic_to_icrs(v: &Vector3<f64>) -> Vector3<f64> {
    let (s, c) = OBLIQUITY_J2000.sin_cos();
    Vector3::new(v.x, c * v.y - s * v.z, s * v.y + c * v.z)
}

/// Rotate a vector from ICRS axes to ecliptic J2000 axes.
#[inline]
pub fn icrs_to_ecliptic(v: &Vector3<f64>) -> Vector3<f64> {
    let (s, c) = OBLIQUITY_J2000.sin_cos();
    Vector3::new(v.x, c * v.y + s * v.z, -s * v.y + c * v.z)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_rotations_are_inverse_and_turn_the_ecliptic_pole() {
        // The ecliptic pole lies at ICRS (0, −sin ε, cos ε) by the definition of the rotation.
        let pole = ecliptic_to_icrs(&Vector3::new(0.0, 0.0, 1.0));
        assert!((pole - Vector3::new(0.0, -OBLIQUITY_J2000.sin(), OBLIQUITY_J2000.cos())).norm() < 1e-15);
        let v = Vector3::new(0.3, -1.2, 2.5);
        assert!((icrs_to_ecliptic(&ecliptic_to_icrs(&v)) - v).norm() < 1e-14);
        // ε = 23.4392911° (IAU 1976, from memory).
        assert!((OBLIQUITY_J2000.to_degrees() - 23.439_291_1).abs() < 1e-7);
    }
}
