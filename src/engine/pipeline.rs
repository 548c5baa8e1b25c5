//! The per-object pipeline: candidates → exact positions → footprint → magnitude and
//! detection probability → draws from the object's own stream → linking, per survey.
//!
//! Random draws, in this order and only these: one uniform for the light-curve phase; then
//! for each survey (in the order given) and each in-field event (in visit order) two
//! uniforms, the first against the fill factor and the second against p_detect. The count
//! of draws depends only on the in-field set, so any candidate strategy gives identical draws.

use rand::RngExt;
use rand_pcg::Pcg64;

use super::index::{Candidates, PreparedSurvey};
use super::outcome::{Event, ObjectOutcome, SurveyOutcome};
use crate::io::objects::ObjectTable;
use crate::orbit::Orbit;
use crate::sky::apparent::{direction_from, observe_from};
use crate::sky::photometry::{apparent_mag, light_curve_offset};
use crate::survey::Detection;

/// Run one object (row `i` of `objects`) through every survey.
pub fn observe_object(
    objects: &ObjectTable,
    i: usize,
    surveys: &[PreparedSurvey],
    mode: Candidates,
    rng: &mut Pcg64,
    scratch: &mut Vec<usize>,
) -> ObjectOutcome {
    let orbit = Orbit::new(objects.elements[i]);
    let lc_phase = rng.random::<f64>() * std::f64::consts::TAU;
    let mut out = ObjectOutcome {
        surveys: Vec::with_capacity(surveys.len()),
        ..Default::default()
    };
    for (s, ps) in surveys.iter().enumerate() {
        ps.candidates(&orbit, mode, scratch);
        out.candidates += scratch.len() as u64;
        let first = out.events.len();
        // The light time of the previous in-field event is the next position's first guess. Only
        // in-field events update it, so every candidate strategy computes bit-identical positions.
        let mut tau = f64::NAN;
        for &v in scratch.iter() {
            if let Some(ev) = in_field_event(objects, i, &orbit, ps, s, v, lc_phase, &mut tau) {
                out.events.push(ev);
            }
        }
        for ev in &mut out.events[first..] {
            let fill_ok = rng.random::<f64>() < ps.survey.fill_factor;
            let det_ok = rng.random::<f64>() < ev.p_detect;
            ev.detected = fill_ok && det_ok;
        }
        out.surveys.push(link_survey(ps, &out.events[first..], first));
    }
    out
}

/// The exact test of one candidate visit; an event when the object is in the footprint.
fn in_field_event(
    objects: &ObjectTable,
    i: usize,
    orbit: &Orbit,
    ps: &PreparedSurvey,
    s: usize,
    v: usize,
    lc_phase: f64,
    tau: &mut f64,
) -> Option<Event> {
    let obs = &ps.observers[v];
    let (dir, t) = direction_from(orbit, obs, *tau);
    let visits = &ps.survey.visits;
    if !ps
        .survey
        .footprint
        .contains(ps.ra_rad[v], ps.dec_rad[v], visits.rotation_deg[v], &dir)
    {
        return None;
    }
    *tau = t;
    let a = observe_from(orbit, obs, t);
    let band = &visits.band_names[visits.band[v] as usize];
    let color = if *band == ps.survey.reference_band {
        0.0
    } else {
        objects.color(band, i)
    };
    let lc = light_curve_offset(objects.lc_amp_mag[i], objects.lc_period_days[i], lc_phase, obs.tdb_mjd);
    let mag = apparent_mag(objects.h_mag[i], a.r_au, a.delta_au, a.phase, &objects.phase_law[i]) + color + lc;
    let rate = a.rate_arcsec_per_hr();
    Some(Event {
        survey: s as u16,
        visit: v as u32,
        ra_rad: a.ra,
        dec_rad: a.dec,
        mag,
        rate_arcsec_per_hr: rate,
        r_au: a.r_au,
        delta_au: a.delta_au,
        p_detect: ps.survey.p_detect(v, mag, rate),
        detected: false,
    })
}

/// Apply a survey's linking rules to its events (in visit order).
fn link_survey(ps: &PreparedSurvey, events: &[Event], offset: usize) -> SurveyOutcome {
    let visits = &ps.survey.visits;
    let dets: Vec<Detection> = events
        .iter()
        .filter(|e| e.detected)
        .map(|e| {
            let v = e.visit as usize;
            Detection {
                visit: v,
                night: visits.night[v],
                mjd: visits.mjd[v],
                ra_rad: e.ra_rad,
                dec_rad: e.dec_rad,
            }
        })
        .collect();
    let link = ps.survey.linking.link(&dets);
    // Map the discovering detection back to its event.
    let discovery_event = link.discovery.map(|k| {
        let visit = dets[k].visit as u32;
        offset
            + events
                .iter()
                .position(|e| e.visit == visit)
                .expect("detection comes from an event")
    });
    SurveyOutcome {
        n_in_field: events.len() as u32,
        n_detected: dets.len() as u32,
        n_nights: link.n_nights as u32,
        discovered: link.discovered,
        tracked: link.tracked,
        discovery_event,
    }
}
