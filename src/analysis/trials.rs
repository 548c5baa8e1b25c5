//! Repeated trials of one catalogue object with some angles redrawn: the machinery that
//! detectability, bias maps and the clustering test share.
//!
//! Streams. Trial k (of K per object) of the object with id `id` has trial id
//! `id·K + k` (wrapping), as clones do in `src/population/clone.rs`. Its redrawn angles come
//! from `object_stream(seed, trial id, Clone)` and its per-visit detection draws from
//! `object_stream(seed, trial id, Observe)`. Every trial owns its streams, so results do not
//! depend on the thread count, on the order of the work or on the shard.

use rand_pcg::Pcg64;

use crate::engine::{Batch, ObjectOutcome, PreparedSurvey, StopRule};
use crate::orbit::Elements;
use crate::population::objects::ObjectTable;
use crate::rng::{Purpose, object_stream};

/// The id that gives trial `k` of `per_object` trials of object `id` its streams.
pub fn trial_id(id: i64, k: u64, per_object: u64) -> i64 {
    id.wrapping_mul(per_object as i64).wrapping_add(k as i64)
}

/// The stream for the redrawn angles of one trial.
pub fn angle_stream(seed: u64, trial: i64) -> Pcg64 {
    object_stream(seed, trial, Purpose::Clone)
}

/// One object of a table, alone in a table of its own, so that its elements can be changed
/// trial by trial without copying the whole catalogue (the engine reads only these columns).
#[derive(Debug, Clone)]
pub struct TrialObject {
    table: ObjectTable,
}

impl TrialObject {
    pub fn new(objects: &ObjectTable, i: usize) -> Self {
        let table = ObjectTable {
            ids: vec![objects.ids[i]],
            elements: vec![objects.elements[i]],
            h_mag: vec![objects.h_mag[i]],
            phase_law: vec![objects.phase_law[i].clone()],
            colors: objects.colors.iter().map(|(b, v)| (b.clone(), vec![v[i]])).collect(),
            weight: vec![objects.weight[i]],
            lc_amp_mag: vec![objects.lc_amp_mag[i]],
            lc_period_days: vec![objects.lc_period_days[i]],
            frame: Default::default(),
            first_row: 0,
            input_rows: 1,
        };
        TrialObject { table }
    }

    pub fn elements(&self) -> Elements {
        self.table.elements[0]
    }

    /// Run the surveys on the object with elements `el`, detection draws from trial `trial`,
    /// each survey until the verdict `stop` asks for (a trial needs no more: detectability
    /// asks whether it was secured, a bias map only whether it was discovered).
    pub fn observe(
        &mut self,
        el: Elements,
        surveys: &[PreparedSurvey],
        (seed, trial): (u64, i64),
        stop: StopRule,
        scratch: &mut Vec<usize>,
    ) -> ObjectOutcome {
        self.table.elements[0] = el;
        Batch::new(surveys, seed, stop).one(&self.table, 0, trial, scratch)
    }
}
