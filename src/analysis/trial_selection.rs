//! What a bias-map trial (or a model object of `compare-models`) must pass to count as
//! discovered, and which of its elements are kept: discovered by any survey in its true angles (a catalogue of true elements), or, for a
//! catalogue taken on fitted elements or cut on its fits, discovered *and* its orbit fitted to
//! its simulated astrometry passing the same cut, in its fitted angles. Why this makes the map
//! the selection function of the fitted, cut catalogue: methods.md, "Bias maps of a catalogue
//! of fitted orbits".

use rayon::prelude::*;

use super::trial_elements::TrialElements;
use super::trials::TrialObject;
use crate::engine::outcome::ObjectOutcome;
use crate::engine::{Batch, PreparedSurvey, StopRule};
use crate::fit::FitOptions;
use crate::fit::catalogue::Selection;
use crate::orbit::{Center, Elements};
use crate::population::objects::ObjectTable;
use crate::rng::{Purpose, object_stream};

/// The selection a map's trials go through.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum TrialSelection {
    /// Discovered by any survey; the trial's true angles.
    #[default]
    Discovered,
    /// Discovered, and its orbit (measured and fitted as `fit` says) passes `selection`'s cut;
    /// its fitted angles when `selection` takes fitted elements, its true ones otherwise. A
    /// map's or detectability trial's a, e, i are chosen as `elements` says.
    Fitted {
        fit: FitOptions,
        selection: Selection,
        elements: TrialElements,
    },
}

impl TrialSelection {
    /// The trials' selection for a catalogue read under `selection`, fitted as `fit` says
    /// (the options the catalogue's `observe --fit-orbits` used).
    pub fn new(selection: &Selection, fit: FitOptions) -> Self {
        if selection.is_plain() {
            TrialSelection::Discovered
        } else {
            TrialSelection::Fitted {
                fit,
                selection: selection.clone(),
                elements: TrialElements::Catalogued,
            }
        }
    }

    /// The same selection with the trials' a, e, i chosen as `elements` says (a plain
    /// catalogue's trials keep theirs: it has no fit to draw from).
    pub fn with_elements(self, elements: TrialElements) -> Self {
        match self {
            TrialSelection::Fitted { fit, selection, .. } => TrialSelection::Fitted {
                fit,
                selection,
                elements,
            },
            plain => plain,
        }
    }

    /// The elements of trial `trial` of catalogue row `row` at `base` (`TrialElements::of_trial`).
    pub fn trial_elements(&self, row: usize, base: Elements, stream: (u64, i64)) -> Elements {
        match self {
            TrialSelection::Fitted { elements, .. } => elements.of_trial(row, base, stream),
            TrialSelection::Discovered => base,
        }
    }

    /// The selection in words, as the map tables record it (`selection`) and compare it: two
    /// maps are interchangeable only when these are equal.
    pub fn key(&self) -> String {
        match self {
            TrialSelection::Discovered => DISCOVERED_KEY.to_string(),
            TrialSelection::Fitted {
                fit,
                selection,
                elements,
            } => format!(
                "{}; fit span {}, astrometric σ {}″, floor {}″{}",
                selection.describe(),
                fit.span.name(),
                fit.errors.sigma_arcsec,
                fit.errors.floor_arcsec,
                elements.key_suffix()
            ),
        }
    }

    /// Whether trial `trial` at elements `el` counts as discovered, and with which elements
    /// its angles are kept. A fit's trial is first run to its discovery (cheap); only a
    /// discovered one is run again with every event worked out and measured — the same
    /// `Observe` stream, so the same verdict — and fitted with its `Astrometry` stream.
    pub fn judge(
        &self,
        obj: &mut TrialObject,
        el: Elements,
        surveys: &[PreparedSurvey],
        (seed, trial): (u64, i64),
        scratch: &mut Vec<usize>,
    ) -> Option<Kept> {
        let discovered = obj
            .observe(el, surveys, (seed, trial), StopRule::UntilDiscovery, scratch)
            .discovered();
        let TrialSelection::Fitted { fit, selection, .. } = self else {
            return discovered.then_some(Kept::True);
        };
        if !discovered {
            return None;
        }
        let outcome = obj.observe(el, surveys, (seed, trial), StopRule::Everything, scratch);
        judge_fit(fit, selection, &outcome, surveys, el.center, (seed, trial))
    }

    /// The rows of a population (a model of `compare-models`) that enter the catalogue, each
    /// with the elements it enters with, in row order: each row on its own id's streams, as
    /// `observe --fit-orbits` measures and fits it (methods.md, "A catalogue of fitted orbits
    /// with an orbit-quality cut"). A row is first run to its discovery; only a discovered one
    /// is run again with every event worked out (the same verdict) and fitted.
    pub fn entering(&self, t: &ObjectTable, surveys: &[PreparedSurvey], seed: u64) -> Vec<(usize, Kept)> {
        let found = Batch::new(surveys, seed, StopRule::UntilDiscovery).discovered(t);
        let discovered = (0..t.len()).filter(|i| found[*i]);
        let TrialSelection::Fitted { fit, selection, .. } = self else {
            return discovered.map(|i| (i, Kept::True)).collect();
        };
        let rows: Vec<usize> = discovered.collect();
        let everything = Batch::new(surveys, seed, StopRule::Everything);
        rows.par_iter()
            .map_init(Vec::new, |scratch, &i| {
                let outcome = everything.one(t, i, t.ids[i], scratch);
                let center = t.elements[i].center;
                judge_fit(fit, selection, &outcome, surveys, center, (seed, t.ids[i])).map(|k| (i, k))
            })
            .collect::<Vec<_>>()
            .into_iter()
            .flatten()
            .collect()
    }
}

/// Whether a discovered outcome (worked out with every event) passes the cut once its
/// detections are measured and fitted with the `Astrometry` stream of `stream_id` (an object's
/// id or a trial's), and with which elements it is kept.
fn judge_fit(
    fit: &FitOptions,
    selection: &Selection,
    outcome: &ObjectOutcome,
    surveys: &[PreparedSurvey],
    center: Center,
    (seed, stream_id): (u64, i64),
) -> Option<Kept> {
    let rng = object_stream(seed, stream_id, Purpose::Astrometry);
    let orbit = fit.fit(outcome, surveys, center, rng);
    if !(outcome.discovered() && selection.passes(&orbit)) {
        return None;
    }
    if !selection.fitted {
        return Some(Kept::True);
    }
    orbit.elements.map(Kept::Fitted)
}

/// Which elements are kept for a trial (or model object) that counts as discovered.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kept {
    /// The trial's own (true) elements.
    True,
    /// Those of its fitted orbit.
    Fitted(Elements),
}

impl Kept {
    /// The elements kept, given the true ones.
    pub fn elements(self, true_elements: Elements) -> Elements {
        match self {
            Kept::True => true_elements,
            Kept::Fitted(el) => el,
        }
    }
}

/// The key of maps whose trials count every discovery in its true angles (and of map tables
/// without a `selection` column, written before maps could apply a fit).
pub const DISCOVERED_KEY: &str = "discovered, true angles";

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::FitSpan;

    fn cut() -> Selection {
        Selection {
            fitted: true,
            max_sigma_a_frac: Some(0.25),
            ..Selection::default()
        }
    }

    #[test]
    fn a_plain_catalogue_maps_discoveries_and_any_fit_selection_is_named_in_full() {
        assert_eq!(
            TrialSelection::new(&Selection::default(), FitOptions::default()),
            TrialSelection::Discovered
        );
        let key = TrialSelection::new(&cut(), FitOptions::default()).key();
        assert_eq!(
            key,
            "fitted elements, σa/a ≤ 0.25; fit span all, astrometric σ 0.1″, floor 0″"
        );
        // Another span or error is another selection: maps of one are refused for the other.
        let other = FitOptions {
            span: FitSpan::Discovery,
            ..FitOptions::default()
        };
        assert_ne!(TrialSelection::new(&cut(), other).key(), key);
        assert_ne!(key, DISCOVERED_KEY);
        // Maps whose trials draw a, e, i from the fit's errors are another kind of map.
        let law = TrialElements::FitErrorLaw(vec![None]);
        let drawn = TrialSelection::new(&cut(), FitOptions::default()).with_elements(law.clone());
        assert_eq!(drawn.key(), format!("{key}; a, e, i drawn from the fit's errors"));
        assert_eq!(
            TrialSelection::Discovered.with_elements(law),
            TrialSelection::Discovered
        );
    }
}
