//! Per-object detectability: how likely the surveys were to discover an object with this
//! object's a, e, i and H when the angles that were not observed are redrawn (M always, Ω and
//! ω as chosen), and the selection function on a grid of (a, q, i, H) bins, marginalized over
//! the redrawn angles, for likelihood fits.

use std::f64::consts::TAU;

use rand::RngExt;
use rayon::prelude::*;

use super::binomial::Proportion;
use super::likelihood::bin_of;
use super::trials::{TrialObject, angle_stream, trial_id};
use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::io::objects::ObjectTable;
use crate::orbit::Elements;

/// Which angles besides the mean anomaly are redrawn uniformly in each trial.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Redraw {
    /// M only: the object's own Ω and ω are kept.
    MeanAnomaly,
    /// M and Ω.
    Node,
    /// M and ω.
    Argperi,
    /// M, Ω and ω (the angles of an isotropic population).
    All,
}

impl Redraw {
    pub fn parse(s: &str) -> Result<Self> {
        match s {
            "m" | "mean-anomaly" => Ok(Redraw::MeanAnomaly),
            "node" => Ok(Redraw::Node),
            "argperi" => Ok(Redraw::Argperi),
            "all" | "node,argperi" | "argperi,node" => Ok(Redraw::All),
            other => Err(Error::input(format!(
                "--redraw `{other}`: expected m, node, argperi or all (M is always redrawn)"
            ))),
        }
    }

    /// The trial's elements, drawn in a fixed order: M, then Ω, then ω.
    pub fn apply(self, el: &Elements, rng: &mut rand_pcg::Pcg64) -> Elements {
        let mut out = *el;
        out.mean_anomaly = rng.random::<f64>() * TAU;
        let (u_node, u_peri) = (rng.random::<f64>(), rng.random::<f64>());
        if matches!(self, Redraw::Node | Redraw::All) {
            out.node = u_node * TAU;
        }
        if matches!(self, Redraw::Argperi | Redraw::All) {
            out.argperi = u_peri * TAU;
        }
        out
    }
}

/// The verdict on one catalogue object.
#[derive(Debug, Clone, PartialEq)]
pub struct ObjectDetectability {
    pub row: usize,
    pub discovered: Proportion,
    pub secured: u64,
    /// Discoveries by each survey on its own.
    pub by_survey: Vec<u64>,
}

/// Detectability of catalogue rows `rows` with `trials` trials each.
pub fn detectability(
    objects: &ObjectTable,
    rows: std::ops::Range<usize>,
    surveys: &[PreparedSurvey],
    trials: u64,
    redraw: Redraw,
    seed: u64,
) -> Vec<ObjectDetectability> {
    rows.into_par_iter()
        .map_init(Vec::new, |scratch, i| {
            one_object(objects, i, surveys, trials, redraw, seed, scratch)
        })
        .collect()
}

fn one_object(
    objects: &ObjectTable,
    i: usize,
    surveys: &[PreparedSurvey],
    trials: u64,
    redraw: Redraw,
    seed: u64,
    scratch: &mut Vec<usize>,
) -> ObjectDetectability {
    let mut obj = TrialObject::new(objects, i);
    let base = obj.elements();
    let (mut found, mut secured, mut by_survey) = (0u64, 0u64, vec![0u64; surveys.len()]);
    for k in 0..trials {
        let tid = trial_id(objects.ids[i], k, trials);
        let el = redraw.apply(&base, &mut angle_stream(seed, tid));
        let out = obj.observe(el, surveys, seed, tid, scratch);
        found += out.discovered() as u64;
        secured += out.surveys.iter().any(|s| s.secured) as u64;
        for (n, s) in by_survey.iter_mut().zip(&out.surveys) {
            *n += s.discovered as u64;
        }
    }
    ObjectDetectability {
        row: i,
        discovered: Proportion::new(found, trials),
        secured,
        by_survey,
    }
}

/// Bin edges of the selection-function grid, per quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct GridEdges {
    pub a_au: Vec<f64>,
    pub q_au: Vec<f64>,
    pub inc_deg: Vec<f64>,
    pub h_mag: Vec<f64>,
}

impl Default for GridEdges {
    fn default() -> Self {
        GridEdges {
            a_au: vec![0.0, 30.0, 50.0, 100.0, 250.0, 1000.0, 1e5],
            q_au: vec![0.0, 30.0, 40.0, 50.0, 75.0, 100.0, 1e5],
            inc_deg: vec![0.0, 10.0, 20.0, 30.0, 45.0, 90.0, 180.0],
            h_mag: vec![-5.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 20.0],
        }
    }
}

/// One non-empty bin of the selection function.
#[derive(Debug, Clone, PartialEq)]
pub struct GridBin {
    /// (lo, hi) of a_au, q_au, inc_deg, h_mag.
    pub edges: [(f64, f64); 4],
    pub n_objects: u64,
    pub result: Proportion,
}

/// Sum the trials of each object into its (a, q, i, H) bin; objects outside the grid are
/// counted in the second value. Bins without objects are left out.
pub fn selection_grid(objects: &ObjectTable, per_object: &[ObjectDetectability], g: &GridEdges) -> (Vec<GridBin>, u64) {
    let dims = [&g.a_au, &g.q_au, &g.inc_deg, &g.h_mag];
    let edges: Vec<Vec<f64>> = dims.iter().map(|d| d.to_vec()).collect();
    let mut acc: std::collections::BTreeMap<usize, (u64, u64, u64)> = Default::default();
    let mut outside = 0;
    for d in per_object {
        let el = &objects.elements[d.row];
        let x = [el.a_au, el.q_au(), el.inc.to_degrees(), objects.h_mag[d.row]];
        match bin_of(&edges, &x) {
            Some(b) => {
                let e = acc.entry(b).or_default();
                e.0 += 1;
                e.1 += d.discovered.n;
                e.2 += d.discovered.k;
            }
            None => outside += 1,
        }
    }
    let bins = acc
        .into_iter()
        .map(|(b, (n_obj, n, k))| {
            let mut rest = b;
            let mut ranges = [(0.0, 0.0); 4];
            for (slot, e) in ranges.iter_mut().zip(&edges).rev() {
                let m = e.len() - 1;
                *slot = (e[rest % m], e[rest % m + 1]);
                rest /= m;
            }
            GridBin {
                edges: ranges,
                n_objects: n_obj,
                result: Proportion::new(k, n),
            }
        })
        .collect();
    (bins, outside)
}
