//! Simulated astrometry and orbit fits (`seine observe --fit-orbits`): for each discovered
//! object, measured positions of its detections and a least-squares orbit fitted to them with
//! the project's own ephemeris, so that a catalogue carries the orbits a survey would publish.
//!
//! `astrometry` (measured positions, residuals), `chart` (the fit's parameters and their map to
//! elements), `start` (the linearized start), `prior` (the bound-orbit prior), `least_squares`
//! (Levenberg–Marquardt), `quality` (classes), `orbit_fit` (one object), `span` (which detections),
//! `columns` (the objects table's fit columns). Method and sources: methods.md.

pub mod astrometry;
pub mod catalogue;
pub mod chart;
pub mod columns;
pub mod error_law;
pub mod least_squares;
pub mod orbit_fit;
pub mod prior;
pub mod quality;
pub mod span;
pub mod start;

pub use astrometry::Observation;
pub use orbit_fit::{OrbitFit, fit_orbit};
pub use quality::Quality;
pub use span::{AstrometricErrors, FitSpan};

use rayon::prelude::*;

use crate::engine::index::PreparedSurvey;
use crate::engine::outcome::ObjectOutcome;
use crate::engine::run::ChunkColumns;
use crate::error::Result;
use crate::population::objects::ObjectTable;
use crate::rng::{Purpose, object_stream};
use polars::prelude::DataFrame;

/// What `--fit-orbits` does.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitOptions {
    pub span: FitSpan,
    pub errors: AstrometricErrors,
}

/// `observe --fit-orbits`'s defaults: every detection, 0.1″ per coordinate, no floor.
impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            span: FitSpan::All,
            errors: AstrometricErrors {
                sigma_arcsec: span::DEFAULT_SIGMA_ARCSEC,
                floor_arcsec: 0.0,
            },
        }
    }
}

/// `observe --fit-orbits` adds the fit's columns to every chunk of the objects table.
impl ChunkColumns for FitOptions {
    fn append(
        &self,
        frame: &mut DataFrame,
        objects: &ObjectTable,
        start: usize,
        outcomes: &[ObjectOutcome],
        surveys: &[PreparedSurvey],
        seed: u64,
    ) -> Result<()> {
        let fits = fit_chunk(objects, start, outcomes, surveys, self, seed);
        columns::append(frame, &fits)
    }

    /// The options as the manifests of earlier versions recorded them.
    fn key(&self) -> String {
        format!("{self:?}")
    }
}

/// Fit every discovered object of a chunk (rows `start..` of `objects`, one outcome each);
/// `None` for the others. Each object measures with its own stream, so the result does not
/// depend on threads or chunks.
pub fn fit_chunk(
    objects: &ObjectTable,
    start: usize,
    outcomes: &[ObjectOutcome],
    surveys: &[PreparedSurvey],
    opts: &FitOptions,
    seed: u64,
) -> Vec<Option<OrbitFit>> {
    outcomes
        .par_iter()
        .enumerate()
        .map(|(k, outcome)| {
            if !outcome.discovered() {
                return None;
            }
            let i = start + k;
            let rng = object_stream(seed, objects.ids[i], Purpose::Astrometry);
            Some(opts.fit(outcome, surveys, objects.elements[i].center, rng))
        })
        .collect()
}

impl FitOptions {
    /// The orbit of a discovered object's outcome (worked out with `StopRule::Everything`, so
    /// that every detection carries its measurement): its detections measured with `rng` (the
    /// object's or trial's `Astrometry` stream), fitted over the span, about `center`.
    pub fn fit(
        &self,
        outcome: &ObjectOutcome,
        surveys: &[PreparedSurvey],
        center: crate::orbit::Center,
        mut rng: rand_pcg::Pcg64,
    ) -> OrbitFit {
        let obs = span::observations(outcome, surveys, self.span, &self.errors, &mut rng);
        fit_orbit(&obs, center)
    }
}
