//! Per-object detectability: how likely the surveys were to discover an object with this
//! object's a, e, i and H when the angles that were not observed are redrawn (M always, Ω and
//! ω as chosen): the weight of a catalogue object in a fit that conditions on its orbit. The
//! selection function of a population over (a, q, i, H) cells is `selection.rs` (a cell grid
//! built from catalogue objects would be biased high: the found objects are the findable ones).
//! This module also owns `detectability.*` (write and read).

use std::f64::consts::TAU;

use rand::RngExt;
use rayon::prelude::*;

use super::trial_selection::TrialSelection;
use super::trials::{TrialObject, angle_stream, trial_id};
use crate::engine::{PreparedSurvey, StopRule};
use crate::error::{Error, Result};
use crate::io::out_dir::{OutDir, col};
use crate::orbit::Elements;
use crate::population::objects::ObjectTable;
use crate::statistics::Proportion;

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

    /// The option value that names it (`parse` takes it back), as `summary.json` records it.
    pub fn name(self) -> &'static str {
        match self {
            Redraw::MeanAnomaly => "m",
            Redraw::Node => "node",
            Redraw::Argperi => "argperi",
            Redraw::All => "all",
        }
    }

    /// The trial's elements, drawn in a fixed order: M, then Ω, then ω.
    pub fn apply(self, el: &Elements, rng: &mut rand_pcg::Pcg64) -> Elements {
        let mut out = *el;
        out.mean_anomaly_rad = rng.random::<f64>() * TAU;
        let (u_node, u_peri) = (rng.random::<f64>(), rng.random::<f64>());
        if matches!(self, Redraw::Node | Redraw::All) {
            out.node_rad = u_node * TAU;
        }
        if matches!(self, Redraw::Argperi | Redraw::All) {
            out.argperi_rad = u_peri * TAU;
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
    /// Under a catalogue's fit selection: the trials discovered *and* whose orbit, measured and
    /// fitted as the catalogue's were, passes its cut (`TrialSelection::judge`); None otherwise.
    pub entered: Option<Proportion>,
}

/// Detectability of catalogue rows `rows` with `trials` trials each.
pub fn detectability(
    objects: &ObjectTable,
    rows: std::ops::Range<usize>,
    surveys: &[PreparedSurvey],
    trials: u64,
    (redraw, selection): (Redraw, &TrialSelection),
    seed: u64,
) -> Vec<ObjectDetectability> {
    rows.into_par_iter()
        .map_init(Vec::new, |scratch, i| {
            one_object(objects, i, surveys, (trials, redraw, selection), seed, scratch)
        })
        .collect()
}

fn one_object(
    objects: &ObjectTable,
    i: usize,
    surveys: &[PreparedSurvey],
    (trials, redraw, selection): (u64, Redraw, &TrialSelection),
    seed: u64,
    scratch: &mut Vec<usize>,
) -> ObjectDetectability {
    let mut obj = TrialObject::new(objects, i);
    let base = obj.elements();
    let (mut found, mut secured, mut by_survey) = (0u64, 0u64, vec![0u64; surveys.len()]);
    let fitting = matches!(selection, TrialSelection::Fitted { .. });
    let mut entered = 0u64;
    for k in 0..trials {
        let tid = trial_id(objects.ids[i], k, trials);
        let trial_base = selection.trial_elements(i, base, (seed, tid));
        let el = redraw.apply(&trial_base, &mut angle_stream(seed, tid));
        let out = obj.observe(el, surveys, (seed, tid), StopRule::UntilSecured, scratch);
        found += out.discovered() as u64;
        secured += out.surveys.iter().any(|s| s.secured) as u64;
        for (n, s) in by_survey.iter_mut().zip(&out.surveys) {
            *n += s.discovered as u64;
        }
        // Only a discovered trial can enter; the same streams give it the same verdict again.
        if fitting && out.discovered() {
            entered += selection.judge(&mut obj, el, surveys, (seed, tid), scratch).is_some() as u64;
        }
    }
    ObjectDetectability {
        row: i,
        discovered: Proportion::new(found, trials),
        secured,
        by_survey,
        entered: fitting.then(|| Proportion::new(entered, trials)),
    }
}

/// Refuse a run of more trials than the budget (`budget::TRIALS`) unless the user said it is meant.
pub fn check_budget(objects: usize, clones: u64, over_budget: bool) -> Result<()> {
    if clones == 0 {
        return Err(Error::input("--clones: expected at least 1"));
    }
    let trials = objects as f64 * clones as f64;
    crate::budget::check(
        crate::budget::TRIALS,
        trials,
        &format!("--clones {clones} for {objects} objects"),
        over_budget,
    )
}

pub const TABLE: &str = "detectability";

/// Write `detectability.*`: one row per object with its trials, discoveries, chance and interval.
pub fn write(
    out: &OutDir,
    objects: &ObjectTable,
    res: &[ObjectDetectability],
    survey_keys: &[String],
) -> Result<std::path::PathBuf> {
    let el = |f: fn(&Elements) -> f64| res.iter().map(|d| f(&objects.elements[d.row])).collect::<Vec<f64>>();
    let p = |f: fn(&Proportion) -> f64| res.iter().map(|d| f(&d.discovered)).collect::<Vec<f64>>();
    let mut cols = vec![
        col("id", res.iter().map(|d| objects.ids[d.row]).collect::<Vec<i64>>()),
        col("a_au", el(|e| e.a_au)),
        col("e", el(|e| e.e)),
        col("q_au", el(|e| e.q_au())),
        col("inc_deg", el(|e| e.inc_rad.to_degrees())),
        col("h_mag", res.iter().map(|d| objects.h_mag[d.row]).collect::<Vec<f64>>()),
        col("trials", res.iter().map(|d| d.discovered.n).collect::<Vec<u64>>()),
        col("discovered", res.iter().map(|d| d.discovered.k).collect::<Vec<u64>>()),
        col("secured", res.iter().map(|d| d.secured).collect::<Vec<u64>>()),
        col("p_discover", p(|x| x.fraction)),
        col("p_std_error", p(|x| x.std_error)),
        col("p_wilson_lo", p(|x| x.lower)),
        col("p_wilson_hi", p(|x| x.upper)),
    ];
    for (s, key) in survey_keys.iter().enumerate() {
        let name = format!("discovered_{key}");
        cols.push(col(&name, res.iter().map(|d| d.by_survey[s]).collect::<Vec<u64>>()));
    }
    // Under a fit selection: the chance of entering the cut catalogue, with its interval.
    if res.first().is_some_and(|d| d.entered.is_some()) {
        let q = |f: fn(&Proportion) -> f64| {
            res.iter()
                .map(|d| d.entered.as_ref().map_or(f64::NAN, f))
                .collect::<Vec<f64>>()
        };
        cols.push(col(
            "entered",
            res.iter().map(|d| d.entered.map_or(0, |p| p.k)).collect::<Vec<u64>>(),
        ));
        cols.push(col("p_enter", q(|x| x.fraction)));
        cols.push(col("p_enter_std_error", q(|x| x.std_error)));
        cols.push(col("p_enter_wilson_lo", q(|x| x.lower)));
        cols.push(col("p_enter_wilson_hi", q(|x| x.upper)));
    }
    out.write(TABLE, cols)
}

/// One plain sentence with the numbers.
pub fn conclusion(res: &[ObjectDetectability], objects: &ObjectTable, k: u64) -> String {
    let Some(best) = res
        .iter()
        .max_by(|x, y| x.discovered.fraction.total_cmp(&y.discovered.fraction))
    else {
        return "seine detectability: no objects in this shard".into();
    };
    let mut p: Vec<f64> = res.iter().map(|d| d.discovered.fraction).collect();
    p.sort_by(f64::total_cmp);
    let low = p.iter().filter(|x| **x < 0.01).count();
    let mut entered: Vec<f64> = res.iter().filter_map(|d| d.entered.map(|e| e.fraction)).collect();
    entered.sort_by(f64::total_cmp);
    let cut = if entered.is_empty() {
        String::new()
    } else {
        format!(
            " Median chance of discovery with a fit that passes the cut {:.2}%.",
            100.0 * crate::statistics::quantile_sorted(&entered, 0.5, crate::statistics::QuantileRule::InverseEcdf)
        )
    };
    format!(
        "seine detectability: {} objects × {k} trials. Median chance of discovery {:.2}%; {low} objects below 1%; \
         highest: id {} at {:.2}% (95% Wilson {:.2}%–{:.2}%).",
        res.len(),
        100.0 * crate::statistics::quantile_sorted(&p, 0.5, crate::statistics::QuantileRule::InverseEcdf),
        objects.ids[best.row],
        100.0 * best.discovered.fraction,
        100.0 * best.discovered.lower,
        100.0 * best.discovered.upper
    ) + &cut
}

/// A row of `detectability.*` as written above: an object's elements and its chance of
/// discovery with the interval (the trials are unweighted: every trial is one redraw).
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    pub id: i64,
    pub a_au: f64,
    pub q_au: f64,
    pub inc_deg: f64,
    pub h_mag: f64,
    pub discovered: Proportion,
}

/// `detectability.parquet` (or `.csv`) in `dir`, when there is one.
pub fn find(dir: &std::path::Path) -> Option<std::path::PathBuf> {
    crate::io::out_dir::find_table(dir, TABLE)
}

/// Read `detectability.*` as written above.
pub fn read(path: &std::path::Path) -> Result<Vec<Row>> {
    let df = crate::io::table::read_table(path)?;
    let c = crate::io::table::Columns::new(&df, path);
    let (id, a, q, inc, h) = (
        c.i64("id")?,
        c.f64("a_au")?,
        c.f64("q_au")?,
        c.f64("inc_deg")?,
        c.f64("h_mag")?,
    );
    let (n, k) = (c.i64("trials")?, c.i64("discovered")?);
    let (p, se, lo, hi) = (
        c.f64("p_discover")?,
        c.f64("p_std_error")?,
        c.f64("p_wilson_lo")?,
        c.f64("p_wilson_hi")?,
    );
    let mut rows = Vec::with_capacity(id.len());
    for i in 0..id.len() {
        if !(n[i] > 0 && (0..=n[i]).contains(&k[i])) {
            return Err(Error::input(format!(
                "{}: row {}: expected 0 ≤ discovered ≤ trials and trials ≥ 1, found {} of {}",
                path.display(),
                i + 1,
                k[i],
                n[i]
            )));
        }
        rows.push(Row {
            id: id[i],
            a_au: a[i],
            q_au: q[i],
            inc_deg: inc[i],
            h_mag: h[i],
            discovered: Proportion {
                k: k[i] as u64,
                n: n[i] as u64,
                fraction: p[i],
                n_eff: n[i] as f64,
                std_error: se[i],
                lower: lo[i],
                upper: hi[i],
            },
        });
    }
    Ok(rows)
}
