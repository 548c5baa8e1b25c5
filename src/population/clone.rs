//! Cloning simulation particles: each row of an objects table becomes K clones with a
//! fresh uniform mean anomaly, optionally a fresh H from a luminosity function and
//! optionally a uniformly rotated node. Clone ids are `parent_row * K + k` (k from 0), so
//! clone `id` is the same whatever the chunking or shard; its stream is
//! `object_stream(seed, id, Clone)`. Every other column is carried through unchanged and
//! `parent_id` holds the particle's id.

use std::ops::Range;

use polars::prelude::{Column, DataFrame, IdxCa, IdxSize};
use rand::RngExt;
use rayon::prelude::*;

use super::prepared::Prepared;
use super::spec::CloneSpec;
use crate::error::{Result, io_at};
use crate::io::objects::ObjectTable;
use crate::rng::{Purpose, object_stream};

/// The particles to clone and how.
pub struct Cloner {
    pub table: ObjectTable,
    pub spec: CloneSpec,
    /// The fresh-H distribution, prepared once for many draws.
    h: Option<Prepared>,
}

impl Cloner {
    /// Read and validate the particles' table named by the spec.
    pub fn read(spec: CloneSpec) -> Result<Self> {
        let table = ObjectTable::read(&spec.objects)?;
        let h = spec.h.clone().map(Prepared::new);
        Ok(Cloner { table, spec, h })
    }

    /// Number of clones in all (particles × K).
    pub fn count(&self) -> u64 {
        self.table.len() as u64 * self.spec.clones
    }

    /// The clones with ids in `ids` (a part of 0..count), in id order.
    pub fn clone_ids(&self, seed: u64, ids: Range<i64>) -> Result<DataFrame> {
        let k = self.spec.clones as i64;
        let rows: Vec<IdxSize> = ids.clone().map(|id| (id / k) as IdxSize).collect();
        let fresh: Vec<(f64, f64, f64)> = ids.clone().into_par_iter().map(|id| self.redraw(seed, id)).collect();
        let mut df = self
            .table
            .frame
            .take(&IdxCa::from_vec("row".into(), rows.clone()))
            .map_err(|e| io_at(&self.spec.objects, e))?;
        let parent: Vec<i64> = rows.iter().map(|r| self.table.ids[*r as usize]).collect();
        let m: Vec<f64> = fresh.iter().map(|f| f.0).collect();
        let mut set = |name: &str, col: Column| {
            df.with_column(col.with_name(name.into()))
                .map(|_| ())
                .map_err(|e| io_at(&self.spec.objects, e))
        };
        set("id", Column::new("id".into(), ids.collect::<Vec<i64>>()))?;
        set("parent_id", Column::new("parent_id".into(), parent))?;
        set("mean_anomaly_deg", Column::new("m".into(), m))?;
        if self.spec.h.is_some() {
            set(
                "h_mag",
                Column::new("h".into(), fresh.iter().map(|f| f.1).collect::<Vec<f64>>()),
            )?;
        }
        if self.spec.rotate_node {
            set(
                "node_deg",
                Column::new("n".into(), fresh.iter().map(|f| f.2).collect::<Vec<f64>>()),
            )?;
        }
        Ok(df)
    }

    /// (M, H, Ω) of clone `id`, in degrees and magnitudes, drawn in that fixed order.
    fn redraw(&self, seed: u64, id: i64) -> (f64, f64, f64) {
        let row = (id / self.spec.clones as i64) as usize;
        let mut rng = object_stream(seed, id, Purpose::Clone);
        let m = rng.random::<f64>() * 360.0;
        let h = self.h.as_ref().map_or(self.table.h_mag[row], |d| d.sample(&mut rng));
        let node = self.table.elements[row].node.to_degrees();
        let node = if self.spec.rotate_node {
            (node + rng.random::<f64>() * 360.0).rem_euclid(360.0)
        } else {
            node
        };
        (m, h, node)
    }
}
