//! What a model comparison keeps of a model population (`seine compare-models`). The model's
//! objects run through the surveys (and the catalogue's fit and cut) a chunk at a time, and of
//! them only what the method uses is kept (methods.md, "Model comparison"): the entering
//! objects' ids, points and weights (the density, its Poisson bootstrap, the synthetic
//! catalogues and the marginal tests), the weighted fraction that entered and, for the
//! extended likelihood only, every object's id and weight (the bootstrap of ν gives every
//! object a multiplicity from its id's stream). Memory then follows one chunk and the entering
//! objects, not the model's size (performance.md, "Streaming the analyses' tables").

use std::borrow::Cow;

use super::space::Space;
use super::trial_selection::TrialSelection;
use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::orbit::Center;
use crate::population::objects::{ObjectSource, ObjectTable};
use crate::population::recenter::recenter_table;
use crate::statistics::Tally;

/// Rows of a model read and run at once: enough to keep every core busy in the engine, few
/// enough that a chunk as read (about 0.3 kB a row) stays near 20 MB.
pub const MODEL_CHUNK_ROWS: usize = 1 << 16;

/// One model population: its name, objects and, for the extended likelihood, the number of real
/// objects it stands for.
#[derive(Debug, Clone)]
pub struct Model {
    pub name: String,
    pub objects: ObjectSource<'static>,
    pub population_size: Option<f64>,
}

/// A model's detected sample: the objects that entered the catalogue (rows counted from the
/// model's first, ids, points in the space, weights, in row order), the weighted fraction that
/// entered, and the model's size.
#[derive(Debug, Clone, PartialEq)]
pub struct Detected {
    pub rows: Vec<usize>,
    pub ids: Vec<i64>,
    pub points: Vec<Vec<f64>>,
    pub weights: Vec<f64>,
    pub fraction: Tally,
    pub n_objects: usize,
    /// Every object's (id, weight), kept only when the model has a population size: the
    /// extended likelihood's bootstrap of ν sums every object's multiplicity × weight.
    pub population: Option<Vec<(i64, f64)>>,
}

impl Detected {
    /// The model's discovered objects at their true elements.
    pub fn of(model: &Model, space: &Space, surveys: &[PreparedSurvey], seed: u64) -> Result<Self> {
        Self::selected(model, space, surveys, seed, &TrialSelection::Discovered)
    }

    /// The model's objects that enter a catalogue taken under `selection` (discovered, and for
    /// a fitted or cut catalogue their orbit fitted and passing the cut), at the elements they
    /// enter with (methods.md, "A catalogue of fitted orbits with an orbit-quality cut").
    pub fn selected(
        model: &Model,
        space: &Space,
        surveys: &[PreparedSurvey],
        seed: u64,
        selection: &TrialSelection,
    ) -> Result<Self> {
        Self::selected_in(model, space, surveys, seed, selection, None)
    }

    /// `selected`, with every object's elements first converted to the frame `to` when one is
    /// given (`--frame`), a chunk at a time as it is read.
    pub fn selected_in(
        model: &Model,
        space: &Space,
        surveys: &[PreparedSurvey],
        seed: u64,
        selection: &TrialSelection,
        to: Option<Center>,
    ) -> Result<Self> {
        let mut d = Detected {
            rows: Vec::new(),
            ids: Vec::new(),
            points: Vec::new(),
            weights: Vec::new(),
            fraction: Tally::default(),
            n_objects: 0,
            population: model.population_size.map(|_| Vec::new()),
        };
        model.objects.for_each_chunk(MODEL_CHUNK_ROWS, |chunk| {
            let chunk = converted(chunk, to, &model.name)?;
            d.add_chunk(&chunk, space, surveys, (seed, selection));
            Ok(())
        })?;
        d.check(&model.name, selection)?;
        Ok(d)
    }

    /// Run the next rows of the model and keep what the comparison needs of them. Every row
    /// is judged on its own id's streams, so chunking changes nothing.
    fn add_chunk(
        &mut self,
        t: &ObjectTable,
        space: &Space,
        surveys: &[PreparedSurvey],
        (seed, selection): (u64, &TrialSelection),
    ) {
        let entering = selection.entering(t, surveys, seed);
        let mut is_det = vec![false; t.len()];
        for (i, kept) in entering {
            is_det[i] = true;
            self.rows.push(self.n_objects + i);
            self.ids.push(t.ids[i]);
            self.points.push(space.point(&kept.elements(t.elements[i]), t.h_mag[i]));
            self.weights.push(t.weight[i]);
        }
        for (w, det) in t.weight.iter().zip(is_det) {
            self.fraction.add(*w, det);
        }
        if let Some(p) = &mut self.population {
            p.extend(t.ids.iter().copied().zip(t.weight.iter().copied()));
        }
        self.n_objects += t.len();
    }

    /// A detected distribution needs at least two objects, and weight.
    fn check(&self, model: &str, selection: &TrialSelection) -> Result<()> {
        if self.rows.len() < 2 {
            let what = match selection {
                TrialSelection::Discovered => "detected".to_string(),
                TrialSelection::Fitted { .. } => format!("detected with a fit passing the cut ({})", selection.key()),
            };
            return Err(Error::input(format!(
                "model `{model}`: only {} of {} objects {what}; a detected distribution needs at least two \
                 (simulate more objects)",
                self.rows.len(),
                self.n_objects
            )));
        }
        if !(self.weights.iter().sum::<f64>() > 0.0) {
            return Err(Error::input(format!(
                "model `{model}`: its detected objects all have weight 0"
            )));
        }
        Ok(())
    }
}

/// A chunk of model `name` in the frame `to` (when given): copied and converted only if some
/// row is in the other frame.
fn converted<'a>(chunk: Cow<'a, ObjectTable>, to: Option<Center>, name: &str) -> Result<Cow<'a, ObjectTable>> {
    match to {
        Some(to) if chunk.center() != Some(to) => {
            let mut t = chunk.into_owned();
            recenter_table(&mut t, to, &format!("model `{name}`"))?;
            Ok(Cow::Owned(t))
        }
        _ => Ok(chunk),
    }
}
