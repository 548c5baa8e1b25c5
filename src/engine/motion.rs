//! The bounds on motion that the visit index, the coarse track and the reach test share: the
//! length of the index's time blocks (the track's node spacing), the largest distance and
//! speed of the observer, and the largest speed of an object on its orbit. They live apart from the three
//! so that none of those needs another's internals (the index uses the track and the reach
//! test; neither uses the index).

use crate::orbit::{Center, Elements};

/// Block length in days: short enough that a 30 AU object moves < 0.15° from its node,
/// long enough that node positions cost little next to the in-field work.
pub const BLOCK_DAYS: f64 = 8.0;

/// Largest distance of the observer from the Sun or the barycentre, AU: the Earth's aphelion
/// 1.0167 AU, the Sun's offset from the barycentre ≤ 0.0102 AU (both from memory), a site's
/// 4·10⁻⁵ AU; rounded up.
pub(crate) const OBSERVER_REACH_AU: f64 = 1.03;

/// Observer speed bound, AU/day: Earth at perihelion (0.0175) + site rotation + Sun (≤ 2e-5).
pub(crate) const OBSERVER_SPEED: f64 = 0.0175 + 2.8e-4 + 2.0e-5;

/// The largest speed an object can have about the barycentre, AU/day: its speed at
/// perihelion, √(GM (1 + e) / q) (vis-viva, the largest on the orbit), plus the Sun's
/// barycentric speed for heliocentric elements.
pub(crate) fn speed_bound(el: &Elements) -> f64 {
    let v_q = (el.center.gm() * (1.0 + el.e) / el.q_au()).sqrt();
    match el.center {
        Center::Heliocentric => v_q + 2.0e-5,
        Center::Barycentric => v_q,
    }
}
