//! The per-object pipeline: candidates → exact positions → footprint → magnitude and
//! detection probability → draws from the object's own stream → linking, per survey.
//!
//! Random draws: from the object's stream, one uniform for the light-curve phase, then one
//! 64-bit key per survey (in the order given); survey s draws from `rng::substream(key_s)`,
//! two uniforms per in-field event in visit order, the first against the random live fraction and
//! the second against p_detect (`survey::decision`: with the dead regions, the one detection rule). A survey's draws depend only on its own in-field set, so any
//! candidate strategy gives identical draws, and a survey that stops early (`StopRule`) moves
//! no other survey's draws.

use rand::{Rng, RngExt};
use rand_pcg::Pcg64;

use super::index::{Candidates, PreparedSurvey};
use super::outcome::{Event, ObjectOutcome, SurveyOutcome};
use crate::orbit::Orbit;
use crate::population::objects::ObjectTable;
use crate::rng::substream;
use crate::sky::apparent::{direction_from, observe_from};
use crate::sky::photometry::{apparent_mag, light_curve_offset};
use crate::survey::Detection;

/// The stop rule: how much of an object's history the engine works out, survey by survey.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum StopRule {
    /// Every in-field event and each survey's whole verdict (`seine observe`).
    #[default]
    Everything,
    /// Each survey only until its verdict is settled: up to the detection that makes the
    /// object secured (or to the end, if it never is), and not at all where `reach` proves
    /// the survey cannot detect the object or where no candidate's efficiency draw is below
    /// its bound on the detection probability (`Lookahead`). `discovered`, `secured` and
    /// the discovery are exact; the counts cover only the events worked out, and the events
    /// carry no measurement (`Event::measured` is the default).
    UntilSecured,
    /// As `UntilSecured`, but each survey stops at the discovery: `secured` is not worked
    /// out (false). For analyses that need only who discovered what, and when.
    UntilDiscovery,
}

/// Run one object (row `i` of `objects`) through every survey, with `rng` its own stream.
pub fn observe_object(
    objects: &ObjectTable,
    i: usize,
    surveys: &[PreparedSurvey],
    (mode, stop): (Candidates, StopRule),
    mut rng: Pcg64,
    scratch: &mut Vec<usize>,
) -> ObjectOutcome {
    let orbit = Orbit::new(objects.elements[i]);
    let lc_phase = rng.random::<f64>() * std::f64::consts::TAU;
    let mut out = ObjectOutcome {
        surveys: Vec::with_capacity(surveys.len()),
        ..Default::default()
    };
    for (s, ps) in surveys.iter().enumerate() {
        // Every survey takes its key, skipped or not, so that the keys stay in survey order.
        let key = rng.next_u64();
        let mut walk = ps.walk(&orbit, mode);
        // The bound starts from the walk's first anchor: one Kepler solve serves both.
        let p_max = match stop {
            StopRule::Everything => None,
            _ => Some(ps.reach.p_bound_at(objects, i, &orbit, walk.first_anchor())),
        };
        if p_max == Some(0.0) {
            out.surveys.push(SurveyOutcome::default());
            continue;
        }
        let mut draws = substream(key);
        // Under a stop rule the candidates are first only counted, and the efficiency draws
        // they would take read ahead (`Lookahead`); their exact positions are worked out only
        // once a draw falls below the bound on p_detect, and never if none does.
        let mut lookahead = p_max.map(|p| Lookahead::new(&draws, p));
        let first = out.events.len();
        let mut dets: Vec<Detection> = Vec::new();
        let mut discovered_mjd: Option<f64> = None;
        // The light time of the previous in-field event is the next position's first guess. Only
        // in-field events update it, so every candidate strategy computes bit-identical positions.
        let mut tau = f64::NAN;
        let mut decide = ps.survey.decisions();
        scratch.clear();
        'blocks: loop {
            if lookahead.is_none() {
                scratch.clear();
            }
            let before = scratch.len();
            if !walk.next_block_onto(scratch) {
                break;
            }
            if let Some(ahead) = &mut lookahead {
                if ahead.all_above(scratch.len() - before) {
                    continue; // no detection possible yet: keep the candidates for later
                }
                lookahead = None;
            }
            out.candidates += scratch.len() as u64;
            for &v in scratch.iter() {
                let Some(mut ev) = in_field_event(objects, i, &orbit, ps, s, v, lc_phase, &mut tau) else {
                    continue;
                };
                let u = (draws.random::<f64>(), draws.random::<f64>());
                ev.detected = decide.detects(v, (ev.ra_rad, ev.dec_rad), ev.p_detect, u);
                if stop == StopRule::Everything {
                    // What a detection measures is for the output tables only.
                    ev.measured = ps
                        .survey
                        .measure(v, ev.mag, ev.rate_arcsec_per_hr, ev.detected.then_some(u.1));
                }
                out.events.push(ev);
                if ev.detected {
                    dets.push(detection(ps, &ev));
                    if settled(ps, stop, &dets, &mut discovered_mjd) {
                        break 'blocks;
                    }
                }
            }
        }
        out.surveys.push(link_survey(ps, &dets, &out.events[first..], first));
    }
    out
}

/// The efficiency draws of a survey's stream read ahead of the exact positions: the second
/// of each pair (one pair per in-field event, `survey::decision`) against `p_max`, the bound on
/// the object's detection probability in any visit (`reach::p_bound`). The candidates hold
/// every in-field event and the k-th in-field event takes the k-th pair, so while every
/// draw for the candidates so far is at least `p_max`, none of them can be detected and the
/// survey's verdict needs none of their positions.
struct Lookahead {
    draws: Pcg64,
    p_max: f64,
}

impl Lookahead {
    fn new(draws: &Pcg64, p_max: f64) -> Self {
        Lookahead {
            draws: draws.clone(),
            p_max,
        }
    }

    /// Whether the next `n` pairs' efficiency draws are all at least `p_max`.
    fn all_above(&mut self, n: usize) -> bool {
        (0..n).all(|_| {
            let _live: f64 = self.draws.random();
            self.draws.random::<f64>() >= self.p_max
        })
    }
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
        measured: Default::default(),
    })
}

/// Whether, with `dets` the survey's detections so far, the survey's verdict is settled for
/// `stop`; `discovered_mjd` keeps the discovery's epoch between calls.
fn settled(ps: &PreparedSurvey, stop: StopRule, dets: &[Detection], discovered_mjd: &mut Option<f64>) -> bool {
    let rules = &ps.survey.linking;
    let last = dets.last().expect("called after a detection").mjd;
    match (stop, *discovered_mjd) {
        (StopRule::Everything, _) => false,
        (StopRule::UntilDiscovery, _) => rules.discovers_at_last(dets),
        (StopRule::UntilSecured, Some(t)) => last - t >= rules.secure_after_days,
        (StopRule::UntilSecured, None) => {
            if rules.discovers_at_last(dets) {
                *discovered_mjd = Some(last);
            }
            false
        }
    }
}

fn detection(ps: &PreparedSurvey, e: &Event) -> Detection {
    let v = e.visit as usize;
    Detection {
        visit: v,
        night: ps.survey.visits.night[v],
        mjd: ps.survey.visits.mjd[v],
        ra_rad: e.ra_rad,
        dec_rad: e.dec_rad,
    }
}

/// Apply a survey's linking rules to its detections `dets` (of `events`, in visit order).
fn link_survey(ps: &PreparedSurvey, dets: &[Detection], events: &[Event], offset: usize) -> SurveyOutcome {
    let link = ps.survey.linking.link(dets);
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
        secured: link.secured,
        discovery_event,
    }
}
