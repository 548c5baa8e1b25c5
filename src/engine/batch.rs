//! The one engine entry of the library: these objects through these surveys with this stop
//! rule. `observe`'s chunks, the hideout's draws, yields, the selection function, the
//! models' detected objects and the analyses' trials (`analysis/trials.rs`) all call it; only
//! tests and the engine benchmark call the per-object pipeline (`pipeline::observe_object`)
//! directly.
//!
//! Streams: object row `i` takes its detection draws from `object_stream(seed, id, Observe)`
//! with `id` its own id (`Batch::map`), or the id a caller gives (`Batch::one`: a trial's id),
//! so a result never depends on the thread count, the chunking or the shard. Objects run in
//! parallel; results come back in row order.

use std::ops::Range;

use rayon::prelude::*;

use super::index::{Candidates, PreparedSurvey};
use super::outcome::ObjectOutcome;
use super::pipeline::{StopRule, observe_object};
use crate::population::objects::ObjectTable;
use crate::rng::{Purpose, object_stream};

/// Objects through `surveys`, each survey worked out as far as `stop` asks, detection draws
/// from the run seed `seed`.
#[derive(Debug, Clone, Copy)]
pub struct Batch<'a> {
    pub surveys: &'a [PreparedSurvey],
    pub seed: u64,
    pub stop: StopRule,
    /// How candidate visits are found: the index, or brute force (to verify the index).
    pub candidates: Candidates,
}

impl<'a> Batch<'a> {
    /// Through the visit index.
    pub fn new(surveys: &'a [PreparedSurvey], seed: u64, stop: StopRule) -> Self {
        Batch {
            surveys,
            seed,
            stop,
            candidates: Candidates::Indexed,
        }
    }

    /// The same, with candidates found by `candidates`.
    pub fn with_candidates(self, candidates: Candidates) -> Self {
        Batch { candidates, ..self }
    }

    /// Row `i` of `objects`, with the detection draws of `stream_id` (its id, or a trial's
    /// id); `scratch` is reused between calls on one thread.
    pub fn one(&self, objects: &ObjectTable, i: usize, stream_id: i64, scratch: &mut Vec<usize>) -> ObjectOutcome {
        let rng = object_stream(self.seed, stream_id, Purpose::Observe);
        observe_object(objects, i, self.surveys, (self.candidates, self.stop), rng, scratch)
    }

    /// Rows `rows` of `objects` in parallel, each on its own id's stream and turned into what
    /// the caller keeps by `keep(row, outcome)`; in row order.
    pub fn map<T: Send>(
        &self,
        objects: &ObjectTable,
        rows: Range<usize>,
        keep: impl Fn(usize, ObjectOutcome) -> T + Sync + Send,
    ) -> Vec<T> {
        rows.into_par_iter()
            .map_init(Vec::new, |scratch, i| {
                keep(i, self.one(objects, i, objects.ids[i], scratch))
            })
            .collect()
    }

    /// Whether each object of `objects` is discovered by any survey, in row order.
    pub fn discovered(&self, objects: &ObjectTable) -> Vec<bool> {
        self.map(objects, 0..objects.len(), |_, out| out.discovered())
    }
}
