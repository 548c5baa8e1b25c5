//! Which surveys could possibly detect an object: bounds on its rate of motion and its
//! brightness over a survey's span, from its orbit alone (no per-visit positions).
//!
//! Over the survey's time span T (widened by the largest light time), the object's distance
//! r from the centre of its elements changes by at most v T, with v the bound on its speed
//! of `motion::speed_bound` (the perihelion speed √(GM (1 + e) / q), the largest on the orbit
//! by vis-viva, plus the Sun's motion for heliocentric elements); and r ≥ q always. The
//! observer is within R_obs = 1.03 AU of that centre (the Earth's aphelion 1.0167 AU, the
//! Sun's offset from the barycentre ≤ 0.0102 AU, both from memory; a site's 4·10⁻⁵ AU;
//! rounded up). So in
//! every visit Δ ≥ r_min − R_obs, the angular rate is at most (v + v_obs) / Δ_min, and
//! the magnitude is at least H + 5 log10(r_min Δ_min) plus the smallest phase term, colour
//! and light-curve offset it can have. A survey whose rate window starts above that rate,
//! or whose efficiency is zero (see `survey::efficiency`) at that magnitude in every visit,
//! cannot detect the object: skipping it changes no outcome.
//!
//! The same magnitude bound gives an upper bound on the detection probability in any visit
//! (`p_bound`: the deepest visit of each efficiency class at that magnitude). A survey
//! detects an object only if some in-field event's efficiency draw falls below its
//! probability (`survey::decision`), so when none of the first n draws of the survey's
//! stream falls below the bound, n or fewer in-field events detect nothing
//! (`pipeline::Lookahead`).

use nalgebra::Vector3;

use super::motion::{OBSERVER_REACH_AU, OBSERVER_SPEED, speed_bound};
use crate::foundation::constants::C_AU_PER_DAY;
use crate::orbit::Orbit;
use crate::population::objects::ObjectTable;
use crate::sky::apparent::RAD_PER_DAY_TO_ARCSEC_PER_HR;
use crate::sky::photometry::PhaseLaw;

/// Below this bound on Δ (AU) nothing is skipped: the bounds would be loose anyway.
const NEAREST_BOUNDED_AU: f64 = 0.5;
/// Margin on the rate bound for light-time terms (relative, ~v/c ≈ 10⁻⁴ is needed).
const RATE_MARGIN: f64 = 1.01;
/// Margin on the magnitude bound, mag: for rounding only.
const MAG_MARGIN: f64 = 0.05;

/// What one survey needs to rule an object out: its span, rate window and faint limit.
#[derive(Debug, Clone, PartialEq)]
pub struct Reach {
    mid_tdb: f64,
    half_span_days: f64,
    min_rate_arcsec_per_hr: f64,
    /// Magnitude at and beyond which every visit's detection probability is zero (+∞: none).
    zero_beyond_mag: f64,
    /// Each efficiency class with visits: its model and its deepest visit's depth.
    deepest: Vec<(crate::survey::efficiency::Efficiency, f64)>,
    /// Bands of the visits other than the reference band.
    other_bands: Vec<String>,
}

impl Reach {
    pub fn new(survey: &crate::survey::Survey) -> Reach {
        let v = &survey.visits;
        // Visits are sorted by time (`survey::visits`); none: an empty (NaN) span.
        let (t0, t1) = match (v.tdb_mjd.first(), v.tdb_mjd.last()) {
            (Some(&t0), Some(&t1)) => (t0, t1),
            _ => (f64::NAN, f64::NAN),
        };
        // The deepest visit of each efficiency class, then that class's model once.
        let mut deepest = vec![f64::NEG_INFINITY; v.class_names.len().max(1)];
        for (&b, &d) in v.efficiency_class.iter().zip(&v.depth_mag) {
            deepest[b as usize] = deepest[b as usize].max(d);
        }
        let deepest: Vec<_> = deepest
            .iter()
            .enumerate()
            .filter(|(_, d)| d.is_finite())
            .map(|(b, d)| (survey.efficiency.for_class(b as u16).clone(), *d))
            .collect();
        let zero_beyond_mag = deepest
            .iter()
            .map(|(eff, d)| eff.zero_beyond_mag(*d))
            .fold(f64::NEG_INFINITY, f64::max);
        let mut used = vec![false; v.band_names.len()];
        v.band.iter().for_each(|&b| used[b as usize] = true);
        let other_bands = v
            .band_names
            .iter()
            .zip(used)
            .filter(|(name, used)| *used && **name != survey.reference_band)
            .map(|(name, _)| name.clone())
            .collect();
        Reach {
            mid_tdb: 0.5 * (t0 + t1),
            half_span_days: 0.5 * (t1 - t0),
            min_rate_arcsec_per_hr: survey.motion.min_rate_arcsec_per_hr,
            zero_beyond_mag,
            deepest,
            other_bands,
        }
    }

    /// False only when the survey provably cannot detect object `i` (its orbit `orbit`).
    pub fn could_detect(&self, objects: &ObjectTable, i: usize, orbit: &Orbit) -> bool {
        self.p_bound(objects, i, orbit) > 0.0
    }

    /// An upper bound on object `i`'s detection probability in any visit of the survey: 0
    /// when the survey provably cannot detect it, 1 when nothing is known.
    pub fn p_bound(&self, objects: &ObjectTable, i: usize, orbit: &Orbit) -> f64 {
        if !self.mid_tdb.is_finite() {
            return 0.0; // no visits
        }
        self.p_bound_at(objects, i, orbit, (self.mid_tdb, orbit.position(self.mid_tdb)))
    }

    /// `p_bound`, from the object's position (about the centre of its elements) at an epoch `t`
    /// of the caller's (the walk's first anchor): the bound on its distance then reaches from
    /// `t` to the farther end of the span, so it is tightest at the middle (`p_bound`'s epoch).
    pub fn p_bound_at(
        &self,
        objects: &ObjectTable,
        i: usize,
        orbit: &Orbit,
        (t, position): (f64, Vector3<f64>),
    ) -> f64 {
        if !self.mid_tdb.is_finite() {
            return 0.0; // no visits
        }
        let v_obj = speed_bound(&orbit.elements);
        let reach_days = self.half_span_days + (t - self.mid_tdb).abs();
        let Some(delta_min) = self.nearest_au(orbit, v_obj, position.norm(), reach_days) else {
            return 1.0;
        };
        let max_reachable_rate = RATE_MARGIN * (v_obj + OBSERVER_SPEED) / delta_min * RAD_PER_DAY_TO_ARCSEC_PER_HR;
        if max_reachable_rate < self.min_rate_arcsec_per_hr {
            return 0.0;
        }
        let mag = self.brightest_mag(objects, i, delta_min);
        if !(mag < self.zero_beyond_mag) {
            return 0.0;
        }
        self.deepest
            .iter()
            .map(|(eff, depth)| eff.largest_p(mag, *depth))
            .fold(0.0, f64::max)
    }

    /// A lower bound on the observer–object distance over the span, AU; `None` if too close.
    /// `v_obj` bounds the object's speed (`motion::speed_bound`), so also the rate of change
    /// of its distance from the centre, which is `r` at an epoch `reach_days` or less from every
    /// visit.
    fn nearest_au(&self, orbit: &Orbit, v_obj: f64, r: f64, reach_days: f64) -> Option<f64> {
        let el = &orbit.elements;
        let q = el.q_au();
        if !(q.is_finite() && q > 0.0 && el.e >= 0.0) {
            return None;
        }
        // Emission times reach back by the light time as well.
        let light_time = (r + v_obj * reach_days + OBSERVER_REACH_AU) / C_AU_PER_DAY;
        let r_min = q.max(r - v_obj * (reach_days + light_time));
        let delta_min = r_min - OBSERVER_REACH_AU;
        (delta_min > NEAREST_BOUNDED_AU).then_some(delta_min)
    }

    /// A lower bound on the object's magnitude in any visit, given Δ ≥ `delta_min`.
    fn brightest_mag(&self, objects: &ObjectTable, i: usize, delta_min: f64) -> f64 {
        let r_min = delta_min + OBSERVER_REACH_AU;
        let alpha_max = (OBSERVER_REACH_AU / r_min).min(1.0).asin();
        // The smallest phase term on [0, α_max]: both laws are monotone where they are bounded.
        let phase = match objects.phase_law[i] {
            PhaseLaw::Linear { beta_mag_per_deg } => (beta_mag_per_deg * alpha_max.to_degrees()).min(0.0),
            PhaseLaw::HG { g } if (0.0..=1.0).contains(&g) => 0.0, // Φ1, Φ2 ≤ 1 fall with α
            PhaseLaw::HG { .. } => f64::NEG_INFINITY,
        };
        let color = self
            .other_bands
            .iter()
            .map(|b| objects.color(b, i))
            .fold(0.0f64, f64::min);
        let light_curve = -0.5 * objects.lc_amp_mag[i].abs();
        objects.h_mag[i] + 5.0 * (r_min * delta_min).log10() + phase + color + light_curve - MAG_MARGIN
    }
}
