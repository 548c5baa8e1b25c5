//! Which of a discovered object's detections a fit uses (`--fit-span`), and the measured
//! positions of its detections.

use rand_pcg::Pcg64;

use super::astrometry::Observation;
use crate::engine::index::PreparedSurvey;
use crate::engine::outcome::{Event, ObjectOutcome};
use crate::error::{Error, Result};
use crate::foundation::units::ARCSEC;
use crate::ranges::check_option;
use crate::sky::frames::unit_vector;

/// The detections an orbit is fitted to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FitSpan {
    /// Every detection by every survey.
    #[default]
    All,
    /// The detections up to and including the discovering one.
    Discovery,
    /// The discovering survey's detections on the night of the discovery.
    DiscoveryNight,
    /// Up to and including the first detection at least the discovering survey's
    /// `secure_after_days` after the discovery (every detection when there is none).
    Recovery,
}

impl FitSpan {
    pub const NAMES: [&'static str; 4] = ["all", "discovery", "discovery-night", "recovery"];

    pub fn parse(s: &str) -> Result<FitSpan> {
        match s {
            "all" => Ok(FitSpan::All),
            "discovery" => Ok(FitSpan::Discovery),
            "discovery-night" => Ok(FitSpan::DiscoveryNight),
            "recovery" => Ok(FitSpan::Recovery),
            _ => Err(Error::input(format!(
                "--fit-span: expected one of {}, found `{s}`",
                Self::NAMES.join(", ")
            ))),
        }
    }

    pub fn name(self) -> &'static str {
        Self::NAMES[self as usize]
    }
}

/// The astrometric 1σ per coordinate (arcsec) of a detection whose measurement model gives
/// none, unless told otherwise (common practice for a ground-based survey, no source).
pub const DEFAULT_SIGMA_ARCSEC: f64 = 0.1;

/// Astrometric errors of the detections (arcsec).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AstrometricErrors {
    /// 1σ per coordinate of a detection whose measurement model gives none (arcsec).
    pub sigma_arcsec: f64,
    /// Systematic floor added in quadrature.
    pub floor_arcsec: f64,
}

impl AstrometricErrors {
    /// Checked against their plausible ranges (`src/ranges.rs`).
    pub fn new(sigma_arcsec: f64, floor_arcsec: f64) -> Result<Self> {
        check_option("--astrometric-sigma-arcsec", sigma_arcsec)?;
        check_option("--astrometric-floor-arcsec", floor_arcsec)?;
        Ok(AstrometricErrors {
            sigma_arcsec,
            floor_arcsec,
        })
    }

    /// 1σ per coordinate of one detection, radians: the detection's own astrometric 1σ (the
    /// survey's measurement model), or `sigma_arcsec` where that is not a positive number, with
    /// the systematic floor added in quadrature.
    pub fn sigma_rad(&self, event: &Event) -> f64 {
        let own = event.measured.sigma_astrometry_arcsec;
        let sigma = if own.is_finite() && own > 0.0 {
            own
        } else {
            self.sigma_arcsec
        };
        sigma.hypot(self.floor_arcsec) * ARCSEC
    }
}

/// The measured positions of a discovered object's fitted detections, in time order. Every
/// detection is measured (two normal draws each, in event order) whatever the span, so one
/// detection's measured position does not depend on the span.
pub fn observations(
    outcome: &ObjectOutcome,
    surveys: &[PreparedSurvey],
    span: FitSpan,
    errors: &AstrometricErrors,
    rng: &mut Pcg64,
) -> Vec<Observation> {
    let tdb = |e: &Event| surveys[e.survey as usize].observers[e.visit as usize].tdb_mjd;
    let mut measured: Vec<(f64, &Event, Observation)> = outcome
        .events
        .iter()
        .filter(|e| e.detected)
        .map(|e| {
            let ps = &surveys[e.survey as usize];
            let v = e.visit as usize;
            let truth = unit_vector(e.ra_rad, e.dec_rad);
            let o = Observation::measured(
                ps.observers[v],
                ps.survey.visits.night[v],
                &truth,
                errors.sigma_rad(e),
                rng,
            );
            (tdb(e), e, o)
        })
        .collect();
    measured.sort_by(|a, b| a.0.total_cmp(&b.0));
    // The discovery as the objects table reports it (earliest by the visits' own MJD).
    let mjd = |e: &Event| surveys[e.survey as usize].survey.visits.mjd[e.visit as usize];
    let Some((s, k)) = outcome.first_discovery(mjd) else {
        return Vec::new();
    };
    let found = &outcome.events[k];
    let t_found = tdb(found);
    let night = |e: &Event| surveys[e.survey as usize].survey.visits.night[e.visit as usize];
    let keep: Box<dyn Fn(f64, &Event) -> bool + '_> = match span {
        FitSpan::All => Box::new(|_, _| true),
        FitSpan::Discovery => Box::new(move |t, _| t <= t_found),
        FitSpan::DiscoveryNight => {
            let n = night(found);
            Box::new(move |_, e| e.survey as usize == s && night(e) == n)
        }
        FitSpan::Recovery => {
            let after = surveys[s].survey.linking.secure_after_days;
            let cutoff = measured
                .iter()
                .map(|m| m.0)
                .find(|&t| t - t_found >= after)
                .unwrap_or(f64::INFINITY);
            Box::new(move |t, _| t <= cutoff)
        }
    };
    measured
        .into_iter()
        .filter(|(t, e, _)| keep(*t, e))
        .map(|(_, _, o)| o)
        .collect()
}
