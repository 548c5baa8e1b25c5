//! Which a, e, i a bias-map (or detectability) trial of a catalogue object takes: the
//! catalogue's own, or, for a catalogue of fitted orbits, a draw from the fit's error law about
//! the fitted values. Why the draw: methods.md, "What the maps' xⱼ are".
//!
//! Stream: trial `trial`'s draw comes from `object_stream(seed, trial, FitErrors)`, a stream no
//! other draw uses, so the trial's angles (`Clone`), detections (`Observe`) and astrometry
//! (`Astrometry`) are those of the same trial at the catalogue's elements.

use crate::fit::error_law::ElementErrorLaw;
use crate::orbit::Elements;
use crate::rng::{Purpose, object_stream};

/// How a trial's a, e, i are chosen.
#[derive(Debug, Clone, Default, PartialEq)]
pub enum TrialElements {
    /// The catalogue's a, e, i as they stand: the true ones of a catalogue on true elements;
    /// on fitted elements the fitted ones taken as if true (the plug-in the command no longer
    /// uses: its map can sit where the object never enters; kept for its calibration run,
    /// validation.md).
    #[default]
    Catalogued,
    /// Drawn for every trial from the fit's error law about the fitted values, one law per
    /// catalogue row (None: a fit without covariance, whose trials keep the fitted values).
    FitErrorLaw(Vec<Option<ElementErrorLaw>>),
}

impl TrialElements {
    /// The elements of trial `trial` of catalogue row `row`, whose catalogued elements are
    /// `base`: `base` with a, e, i drawn (or kept), angles untouched.
    pub fn of_trial(&self, row: usize, base: Elements, (seed, trial): (u64, i64)) -> Elements {
        let TrialElements::FitErrorLaw(laws) = self else {
            return base;
        };
        let Some(law) = laws.get(row).and_then(Option::as_ref) else {
            return base;
        };
        let [a_au, e, inc_rad] = law.draw(&mut object_stream(seed, trial, Purpose::FitErrors));
        Elements {
            a_au,
            e,
            inc_rad,
            ..base
        }
    }

    /// What the map tables add to their `selection` key: maps made one way are refused for
    /// another.
    pub fn key_suffix(&self) -> &'static str {
        match self {
            TrialElements::Catalogued => "",
            TrialElements::FitErrorLaw(_) => "; a, e, i drawn from the fit's errors",
        }
    }

    /// The catalogue rows whose fit has no covariance (their trials keep the fitted a, e, i).
    pub fn rows_without_law(&self) -> Vec<usize> {
        match self {
            TrialElements::Catalogued => Vec::new(),
            TrialElements::FitErrorLaw(laws) => (0..laws.len()).filter(|r| laws[*r].is_none()).collect(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::orbit::Center;

    fn base() -> Elements {
        Elements {
            a_au: 60.0,
            e: 0.4,
            inc_rad: 0.2,
            node_rad: 1.0,
            argperi_rad: 2.0,
            mean_anomaly_rad: 3.0,
            epoch_mjd_tdb: 60400.0,
            center: Center::Heliocentric,
        }
    }

    #[test]
    fn a_trial_draws_a_e_i_on_its_own_stream_and_keeps_its_angles() {
        let law = ElementErrorLaw::from_sigmas([60.0, 0.4, 0.2], [2.0, 0.02, 0.01], (0.5, 0.0, 0.0));
        let laws = TrialElements::FitErrorLaw(vec![law, None]);
        let one = laws.of_trial(0, base(), (7, 11));
        assert_eq!(one, laws.of_trial(0, base(), (7, 11)), "same seed and trial: same draw");
        assert_ne!(one, laws.of_trial(0, base(), (7, 12)));
        assert_ne!(one, laws.of_trial(0, base(), (8, 11)));
        assert!(one.a_au != 60.0 && one.e != 0.4 && one.inc_rad != 0.2);
        let angles = |el: Elements| (el.node_rad, el.argperi_rad, el.mean_anomaly_rad, el.epoch_mjd_tdb);
        assert_eq!(angles(one), angles(base()));
        // A row without a law, and the plug-in, keep the catalogued elements.
        assert_eq!(laws.of_trial(1, base(), (7, 11)), base());
        assert_eq!(TrialElements::Catalogued.of_trial(0, base(), (7, 11)), base());
        assert_eq!(laws.rows_without_law(), vec![1]);
    }
}
