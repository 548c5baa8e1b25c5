//! Heliocentric ↔ barycentric elements: the same position and velocity at the epoch, shifted by
//! the Sun's barycentric state (VSOP87A planets with IAU 2009 masses, `sky::earth`, rotated to
//! the ecliptic J2000 frame of the elements), and turned back into elements with GM_sun or the
//! total GM of the Sun and planets. See methods.md, "Frames of elements".

use std::collections::HashMap;

use nalgebra::Vector3;

use crate::error::{Error, Result};
use crate::orbit::{Center, Elements};
use crate::population::objects::ObjectTable;
use crate::sky::earth::earth_sun_exact;
use crate::sky::frames::icrs_to_ecliptic;

/// The Sun's barycentric position (AU) and velocity (AU/day) in the ecliptic J2000 frame.
pub fn sun_barycentric_ecliptic(tdb_mjd: f64) -> (Vector3<f64>, Vector3<f64>) {
    let s = earth_sun_exact(tdb_mjd);
    (icrs_to_ecliptic(&s.sun_bary), icrs_to_ecliptic(&s.sun_bary_vel))
}

/// The elements of the same state relative to `to`, given the Sun's barycentric state at the
/// epoch; None when the converted orbit is not bound.
pub fn recenter_with(el: &Elements, to: Center, sun: (Vector3<f64>, Vector3<f64>)) -> Option<Elements> {
    if el.center == to {
        return Some(*el);
    }
    let (r, v) = el.to_state();
    let (r, v) = match to {
        Center::Barycentric => (r + sun.0, v + sun.1),
        Center::Heliocentric => (r - sun.0, v - sun.1),
    };
    let out = Elements::from_state(&r, &v, el.epoch_mjd_tdb, to);
    out.problem().is_none().then_some(out)
}

/// The elements of the same state relative to `to`.
pub fn recenter(el: &Elements, to: Center) -> Option<Elements> {
    recenter_with(el, to, sun_barycentric_ecliptic(el.epoch_mjd_tdb))
}

/// Convert every row of a table to `to` (the Sun's state computed once per distinct epoch);
/// `what` names the table in the message of an orbit that stops being bound.
pub fn recenter_table(t: &mut ObjectTable, to: Center, what: &str) -> Result<()> {
    let mut suns: HashMap<u64, (Vector3<f64>, Vector3<f64>)> = HashMap::new();
    for i in 0..t.len() {
        let el = t.elements[i];
        if el.center == to {
            continue;
        }
        let sun = *suns
            .entry(el.epoch_mjd_tdb.to_bits())
            .or_insert_with(|| sun_barycentric_ecliptic(el.epoch_mjd_tdb));
        t.elements[i] = recenter_with(&el, to, sun).ok_or_else(|| {
            Error::input(format!(
                "{what}: object {} is not on a bound orbit once converted from {} to {} elements",
                t.ids[i],
                el.center.name(),
                to.name()
            ))
        })?;
    }
    Ok(())
}
