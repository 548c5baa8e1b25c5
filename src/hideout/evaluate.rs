//! One prior draw through every survey, and where it would be on the sky at the map epoch.

use crate::engine::{Batch, ObjectOutcome, PreparedSurvey, StopRule};
use crate::orbit::Orbit;
use crate::population::objects::ObjectTable;
use crate::sky::apparent::observe;
use crate::sky::observer::ObserverState;
use crate::sky::photometry::apparent_mag;

/// Surveys a run can take: discoveries per survey are a bit mask.
pub const MAX_SURVEYS: usize = 64;

/// What happened to one draw, and where it is at the map epoch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DrawOutcome {
    pub id: i64,
    pub a_au: f64,
    pub h_mag: f64,
    pub weight: f64,
    pub discovered: bool,
    /// Bit s set when survey s discovered the draw.
    pub discovered_by: u64,
    /// Astrometric ICRS position at the map epoch, radians.
    pub ra_rad: f64,
    pub dec_rad: f64,
    /// Magnitude in the reference band at the map epoch (mean light curve, no colour).
    pub mag: f64,
    pub rate_arcsec_per_hr: f64,
}

/// Run every object of `objects` through `surveys` (in parallel) and place it at `epoch`.
/// The result is in row order and does not depend on the thread count.
pub fn evaluate(
    objects: &ObjectTable,
    surveys: &[PreparedSurvey],
    epoch: &ObserverState,
    seed: u64,
) -> Vec<DrawOutcome> {
    // The same streams `seine observe` uses, so a draw's fate matches observe on the same table.
    // Only who discovered the draw matters here: each survey stops at its discovery.
    let batch = Batch::new(surveys, seed, StopRule::UntilDiscovery);
    batch.map(objects, 0..objects.len(), |i, out| place(objects, i, &out, epoch))
}

/// Who discovered row `i` (`out`), and where it is at `epoch`.
fn place(objects: &ObjectTable, i: usize, out: &ObjectOutcome, epoch: &ObserverState) -> DrawOutcome {
    let discovered_by = out
        .surveys
        .iter()
        .enumerate()
        .fold(0u64, |m, (s, o)| m | ((o.discovered as u64) << s));
    let el = objects.elements[i];
    let a = observe(&Orbit::new(el), epoch);
    DrawOutcome {
        id: objects.ids[i],
        a_au: el.a_au,
        h_mag: objects.h_mag[i],
        weight: objects.weight[i],
        discovered: discovered_by != 0,
        discovered_by,
        ra_rad: a.ra.rem_euclid(std::f64::consts::TAU),
        dec_rad: a.dec,
        mag: apparent_mag(objects.h_mag[i], a.r_au, a.delta_au, a.phase, &objects.phase_law[i]),
        rate_arcsec_per_hr: a.rate_arcsec_per_hr(),
    }
}
