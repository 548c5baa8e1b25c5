//! Cloning simulation particles: each row of an objects table becomes K clones with a
//! fresh uniform mean anomaly, optionally a fresh H from a luminosity function and
//! optionally a uniformly rotated node (which rotates ϖ too: off by default). With a
//! `resonance` p:q, the mean anomaly is not uniform but one of the p values that keep the
//! particle's resonant angle with Neptune (its column `resonant_angle_deg` when the table has
//! one, else computed with Neptune's mean longitude at the particle's epoch); see
//! `resonance.rs`. Clone ids are `parent_row * K + k` (k from 0), so
//! clone `id` is the same whatever the chunking or shard; its stream is
//! `object_stream(seed, id, Clone)`. Every other column is carried through unchanged and
//! `parent_id` holds the particle's id.

use std::ops::Range;

use polars::prelude::{Column, DataFrame, IdxCa, IdxSize};
use rand::RngExt;
use rayon::prelude::*;

use super::prepared::PreparedDistribution;
use super::resonance::{Resonance, neptune_mean_longitude};
use super::spec::CloneSpec;
use crate::error::{Result, io_at};
use crate::io::table::Columns;
use crate::population::objects::ObjectTable;
use crate::rng::{Purpose, object_stream};

/// The particles to clone and how.
pub struct Cloner {
    pub table: ObjectTable,
    pub spec: CloneSpec,
    /// The fresh-H distribution, prepared once for many draws.
    h: Option<PreparedDistribution>,
    /// Per particle: its resonant angle and Neptune's mean longitude at its epoch (rad).
    resonant: Vec<(f64, f64)>,
}

impl Cloner {
    /// Read and validate the particles' table named by the spec.
    pub fn read(spec: CloneSpec) -> Result<Self> {
        let table = ObjectTable::read(&spec.objects)?;
        let h = spec.h.clone().map(PreparedDistribution::new);
        let resonant = match spec.resonance {
            Some(r) => resonant_angles(&table, r, &spec.objects)?,
            None => Vec::new(),
        };
        Ok(Cloner {
            table,
            spec,
            h,
            resonant,
        })
    }

    /// Number of clones in all (particles × K).
    pub fn count(&self) -> u64 {
        self.table.len() as u64 * self.spec.clones
    }

    /// The clones with ids in `ids` (a part of 0..count), in id order.
    pub fn clone_ids(&self, seed: u64, ids: Range<i64>) -> Result<DataFrame> {
        let k = self.spec.clones as i64;
        let rows: Vec<IdxSize> = ids.clone().map(|id| (id / k) as IdxSize).collect();
        let fresh: Vec<(f64, f64, f64, f64)> = ids.clone().into_par_iter().map(|id| self.redraw(seed, id)).collect();
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
        if self.spec.resonance.is_some() {
            set(
                "argperi_deg",
                Column::new("w".into(), fresh.iter().map(|f| f.3).collect::<Vec<f64>>()),
            )?;
        }
        if self.spec.rotate_node || self.spec.resonance.is_some() {
            set(
                "node_deg",
                Column::new("n".into(), fresh.iter().map(|f| f.2).collect::<Vec<f64>>()),
            )?;
        }
        Ok(df)
    }

    /// (M, H, Ω, ω) of clone `id`, in degrees and magnitudes, from uniforms drawn in a fixed
    /// order (M, H, Ω).
    fn redraw(&self, seed: u64, id: i64) -> (f64, f64, f64, f64) {
        let row = (id / self.spec.clones as i64) as usize;
        let mut rng = object_stream(seed, id, Purpose::Clone);
        let u_m = rng.random::<f64>();
        let h = self.h.as_ref().map_or(self.table.h_mag[row], |d| d.sample(&mut rng));
        let el = &self.table.elements[row];
        let u_node = if self.spec.rotate_node {
            rng.random::<f64>()
        } else {
            0.0
        };
        if let Some(r) = self.spec.resonance {
            let (phi, lambda_n) = self.resonant[row];
            let c = r.clone_at(el, phi, lambda_n, u_node * std::f64::consts::TAU, u_m);
            let deg = |x: f64| x.to_degrees().rem_euclid(360.0);
            return (deg(c.mean_anomaly_rad), h, deg(c.node_rad), deg(c.argperi_rad));
        }
        let node = (el.node_rad.to_degrees() + u_node * 360.0).rem_euclid(360.0);
        (u_m * 360.0, h, node, el.argperi_rad.to_degrees())
    }
}

/// Each particle's resonant angle (from `resonant_angle_deg` when present) and Neptune's mean
/// longitude at its epoch, computed once per distinct epoch.
fn resonant_angles(t: &ObjectTable, r: Resonance, path: &std::path::Path) -> Result<Vec<(f64, f64)>> {
    let c = Columns::new(&t.frame, path);
    let given = c.f64_opt("resonant_angle_deg")?;
    let mut lambda: std::collections::HashMap<u64, f64> = Default::default();
    Ok((0..t.len())
        .map(|i| {
            let el = &t.elements[i];
            let ln = *lambda
                .entry(el.epoch_mjd_tdb.to_bits())
                .or_insert_with(|| neptune_mean_longitude(el.epoch_mjd_tdb));
            let phi = given.as_ref().map_or_else(|| r.angle(el, ln), |g| g[i].to_radians());
            (phi, ln)
        })
        .collect())
}
