//! Drawing a population: each object from its own stream `object_stream(seed, id, Draw)`,
//! so the object with id k is the same whatever the chunking, thread count or shard.
//! Objects are made in chunks (in parallel within a chunk) and streamed to the output, so
//! memory does not grow with the count. Constraints are applied by rejection, redrawing
//! only (a, e, q, i) from the same stream; a pilot run first measures the acceptance.

use std::ops::Range;

use polars::prelude::{Column, DataFrame};
use rand::Rng;
use rayon::prelude::*;

use super::distribution::Distribution;
use super::prepared::PreparedDistribution;
use super::spec::{Anomaly, Constraint, OrbitOrientation, OrbitShape, Phase, Population, Quantity};
use crate::error::{Error, Result};
use crate::io::sink::TableSink;
use crate::rng::{Purpose, object_stream, run_stream};

/// Objects per chunk written to the output (bounds the memory of a run).
pub const CHUNK: usize = 1 << 18;
/// Objects per parallel task inside a chunk.
const TASK: usize = 1 << 13;
/// Acceptance below this is an error: the constraints reject nearly everything.
pub const MIN_ACCEPTANCE: f64 = 1e-6;
/// Pilot: stop after this many accepted draws, or this many attempts.
const PILOT_ACCEPTED: u64 = 2000;
const PILOT_ATTEMPTS: u64 = 20_000_000;
/// An object that needs more attempts than this is an error (pilot acceptance ≥ 1e-6 makes
/// it practically impossible).
const MAX_ATTEMPTS: u64 = 1_000_000_000;

/// The constraints every object obeys, before the spec's own: names used in messages.
const BOUND_KEY: &str = "orbit";
const INC_KEY: &str = "orbit.inc_deg";

/// One attempt at the size, shape and inclination.
#[derive(Debug, Clone, Copy)]
struct OrbitDraw {
    a: f64,
    e: f64,
    q: f64,
    inc: f64,
}

impl OrbitDraw {
    fn value(&self, q: Quantity) -> f64 {
        match q {
            Quantity::A => self.a,
            Quantity::E => self.e,
            Quantity::Q => self.q,
            Quantity::Aphelion => self.a * (1.0 + self.e),
            Quantity::Inc => self.inc,
        }
    }
    fn bound(&self) -> bool {
        self.e >= 0.0 && self.e < 1.0 && self.q > 0.0 && self.a.is_finite()
    }
    fn inc_ok(&self) -> bool {
        (0.0..=180.0).contains(&self.inc)
    }
    fn meets(&self, c: &Constraint) -> bool {
        let v = self.value(c.quantity);
        v >= c.lo && v <= c.hi
    }
}

/// Column buffers of drawn objects.
#[derive(Debug, Default)]
pub struct Drawn {
    pub id: Vec<i64>,
    pub a: Vec<f64>,
    pub e: Vec<f64>,
    pub q: Vec<f64>,
    pub inc: Vec<f64>,
    pub node: Vec<f64>,
    pub argperi: Vec<f64>,
    pub m: Vec<f64>,
    pub h: Vec<f64>,
    pub phase: Vec<f64>,
    pub colors: Vec<Vec<f64>>,
    pub weight: Vec<f64>,
    pub lc_amp: Vec<f64>,
    pub lc_period: Vec<f64>,
    /// Orbit attempts made (accepted objects / attempts = acceptance).
    pub attempts: u64,
}

impl Drawn {
    fn with_capacity(n: usize, bands: usize) -> Self {
        let v = || Vec::with_capacity(n);
        Drawn {
            id: Vec::with_capacity(n),
            a: v(),
            e: v(),
            q: v(),
            inc: v(),
            node: v(),
            argperi: v(),
            m: v(),
            h: v(),
            phase: v(),
            colors: (0..bands).map(|_| v()).collect(),
            weight: v(),
            lc_amp: v(),
            lc_period: v(),
            attempts: 0,
        }
    }

    fn append(&mut self, mut o: Drawn) {
        self.id.append(&mut o.id);
        for (dst, src) in self.float_columns_mut().into_iter().zip(o.float_columns_mut()) {
            dst.append(src);
        }
        for (dst, src) in self.colors.iter_mut().zip(o.colors.iter_mut()) {
            dst.append(src);
        }
        self.attempts += o.attempts;
    }

    fn float_columns_mut(&mut self) -> [&mut Vec<f64>; 12] {
        [
            &mut self.a,
            &mut self.e,
            &mut self.q,
            &mut self.inc,
            &mut self.node,
            &mut self.argperi,
            &mut self.m,
            &mut self.h,
            &mut self.phase,
            &mut self.weight,
            &mut self.lc_amp,
            &mut self.lc_period,
        ]
    }
}

impl Population {
    /// The distributions prepared for many draws.
    fn compiled(&self) -> Compiled<'_> {
        let p = |d: &Distribution| PreparedDistribution::new(d.clone());
        let shape = match &self.shape {
            OrbitShape::AE(x, y) | OrbitShape::AQ(x, y) | OrbitShape::QE(x, y) => [p(x), p(y)],
        };
        let angles = match &self.angles {
            OrbitOrientation::NodeArgperi(x, y) | OrbitOrientation::VarpiNode(x, y) => [p(x), p(y)],
        };
        let anomaly = match &self.anomaly {
            Anomaly::Mean(d) | Anomaly::PerihelionTime(d) => p(d),
        };
        let phase = match &self.phase {
            Phase::Beta(d) | Phase::G(d) => p(d),
        };
        Compiled {
            pop: self,
            shape,
            inc: p(&self.inc),
            angles,
            anomaly,
            proposal_m: self.proposal_m.as_ref().map(p),
            h: p(&self.h),
            proposal_h: self.proposal_h.as_ref().map(p),
            phase,
            colors: self.colors.iter().map(|(_, d)| p(d)).collect(),
            lc_amp: p(&self.lc_amp),
            lc_period: p(&self.lc_period_hr),
        }
    }
}

/// The spec's distributions prepared once, in the slots of the spec's parametrization.
struct Compiled<'a> {
    pop: &'a Population,
    shape: [PreparedDistribution; 2],
    inc: PreparedDistribution,
    angles: [PreparedDistribution; 2],
    anomaly: PreparedDistribution,
    proposal_m: Option<PreparedDistribution>,
    h: PreparedDistribution,
    proposal_h: Option<PreparedDistribution>,
    phase: PreparedDistribution,
    colors: Vec<PreparedDistribution>,
    lc_amp: PreparedDistribution,
    lc_period: PreparedDistribution,
}

impl Compiled<'_> {
    /// One attempt at (a, e, q, i) from the stream.
    fn draw_orbit<R: Rng + ?Sized>(&self, rng: &mut R) -> OrbitDraw {
        let (x, y) = (self.shape[0].sample(rng), self.shape[1].sample(rng));
        let (a, e, q) = match &self.pop.shape {
            OrbitShape::AE(..) => (x, y, x * (1.0 - y)),
            OrbitShape::AQ(..) => (x, 1.0 - y / x, y),
            OrbitShape::QE(..) => (x / (1.0 - y), y, x),
        };
        OrbitDraw {
            a,
            e,
            q,
            inc: self.inc.sample(rng),
        }
    }

    fn accepted(&self, d: &OrbitDraw) -> bool {
        d.bound() && d.inc_ok() && self.pop.constraints.iter().all(|c| d.meets(c))
    }

    /// Draw object `id` into `out`.
    fn draw_one(&self, seed: u64, id: i64, out: &mut Drawn) -> Result<()> {
        let mut rng = object_stream(seed, id, Purpose::Draw);
        let mut attempts = 0u64;
        let d = loop {
            attempts += 1;
            let d = self.draw_orbit(&mut rng);
            if self.accepted(&d) {
                break d;
            }
            if attempts >= MAX_ATTEMPTS {
                return Err(Error::input(format!(
                    "object {id}: no orbit passed the constraints in {MAX_ATTEMPTS} draws"
                )));
            }
        };
        out.attempts += attempts;
        let (x, y) = (self.angles[0].sample(&mut rng), self.angles[1].sample(&mut rng));
        let (node, argperi) = match &self.pop.angles {
            OrbitOrientation::NodeArgperi(..) => (x, y),
            // (ϖ, Ω): ω = ϖ − Ω.
            OrbitOrientation::VarpiNode(..) => (y, x - y),
        };
        let mut weight = 1.0;
        let m = match &self.pop.anomaly {
            Anomaly::Mean(_) => importance(&mut rng, &self.anomaly, self.proposal_m.as_ref(), &mut weight),
            Anomaly::PerihelionTime(_) => {
                let n = (self.pop.center.gm() / (d.a * d.a * d.a)).sqrt();
                (n * (self.pop.epoch_mjd - self.anomaly.sample(&mut rng))).to_degrees()
            }
        };
        let h = importance(&mut rng, &self.h, self.proposal_h.as_ref(), &mut weight);
        out.id.push(id);
        out.a.push(d.a);
        out.e.push(d.e);
        out.q.push(d.q);
        out.inc.push(d.inc);
        out.node.push(node.rem_euclid(360.0));
        out.argperi.push(argperi.rem_euclid(360.0));
        out.m.push(m.rem_euclid(360.0));
        out.h.push(h);
        out.phase.push(self.phase.sample(&mut rng));
        for (col, dist) in out.colors.iter_mut().zip(&self.colors) {
            col.push(dist.sample(&mut rng));
        }
        out.weight.push(weight);
        out.lc_amp.push(self.lc_amp.sample(&mut rng));
        out.lc_period.push(self.lc_period.sample(&mut rng));
        Ok(())
    }
}

impl Population {
    /// Draw the objects with ids in `ids`, in parallel tasks; the result is in id order.
    pub fn draw_ids(&self, seed: u64, ids: Range<i64>) -> Result<Drawn> {
        let bands = self.colors.len();
        let starts: Vec<i64> = ids.clone().step_by(TASK).collect();
        let c = self.compiled();
        let parts: Vec<Result<Drawn>> = starts
            .par_iter()
            .map(|&s| {
                let end = (s + TASK as i64).min(ids.end);
                let mut out = Drawn::with_capacity((end - s) as usize, bands);
                (s..end).try_for_each(|id| c.draw_one(seed, id, &mut out)).map(|_| out)
            })
            .collect();
        let mut all = Drawn::with_capacity((ids.end - ids.start).max(0) as usize, bands);
        for p in parts {
            all.append(p?);
        }
        Ok(all)
    }

    /// The objects as a DataFrame with the DESIGN objects columns.
    pub fn frame(&self, d: Drawn) -> DataFrame {
        let n = d.id.len();
        let f = |name: &str, v: Vec<f64>| Column::new(name.into(), v);
        let phase_name = match self.phase {
            Phase::Beta(_) => "beta_mag_per_deg",
            Phase::G(_) => "hg_g",
        };
        let mut cols = vec![
            Column::new("id".into(), d.id),
            f("a_au", d.a),
            f("e", d.e),
            f("q_au", d.q),
            f("inc_deg", d.inc),
            f("node_deg", d.node),
            f("argperi_deg", d.argperi),
            f("mean_anomaly_deg", d.m),
            f("epoch_mjd", vec![self.epoch_mjd; n]),
            f("h_mag", d.h),
            f(phase_name, d.phase),
        ];
        for ((band, _), v) in self.colors.iter().zip(d.colors) {
            cols.push(f(&format!("color_{band}"), v));
        }
        cols.push(f("weight", d.weight));
        cols.push(f("lc_amp_mag", d.lc_amp));
        cols.push(f("lc_period_hr", d.lc_period));
        cols.push(Column::new("frame".into(), vec![self.center.name(); n]));
        DataFrame::new(n, cols).expect("columns of one length")
    }

    /// Measure the acceptance of the constraints on a pilot stream (independent of every
    /// object's stream). Below 1e-6 it is an error naming the constraint that rejects most.
    pub fn pilot(&self, seed: u64) -> Result<f64> {
        let mut rng = run_stream(seed, Purpose::Draw, 0);
        let c = self.compiled();
        let checks = self.constraints.len() + 2;
        let mut fails = vec![0u64; checks];
        let (mut attempts, mut accepted) = (0u64, 0u64);
        while accepted < PILOT_ACCEPTED && attempts < PILOT_ATTEMPTS {
            let d = c.draw_orbit(&mut rng);
            attempts += 1;
            let results = [d.bound(), d.inc_ok()]
                .into_iter()
                .chain(self.constraints.iter().map(|c| d.meets(c)));
            let mut all = true;
            for (f, ok) in fails.iter_mut().zip(results) {
                *f += !ok as u64;
                all &= ok;
            }
            accepted += all as u64;
        }
        let acceptance = accepted as f64 / attempts as f64;
        if acceptance < MIN_ACCEPTANCE {
            let worst = (0..checks).max_by_key(|&i| fails[i]).unwrap_or(0);
            let (key, rule) = match worst {
                0 => (BOUND_KEY, "a bound orbit: 0 ≤ e < 1, q > 0".to_string()),
                1 => (INC_KEY, "0 ≤ inc_deg ≤ 180".to_string()),
                i => {
                    let c = &self.constraints[i - 2];
                    (c.key, format!("[{}, {}]", c.lo, c.hi))
                }
            };
            return Err(Error::input(format!(
                "key `{key}` ({rule}): acceptance {accepted}/{attempts} is below {MIN_ACCEPTANCE:e}; it rejected {:.4}% of the draws; \
                 widen it or change the orbit distributions",
                100.0 * fails[worst] as f64 / attempts as f64
            )));
        }
        Ok(acceptance)
    }

    /// Draw the ids in `ids` chunk by chunk into `sink`; returns (objects, attempts).
    pub fn draw_into(&self, seed: u64, ids: Range<i64>, sink: &mut TableSink) -> Result<(u64, u64)> {
        let (mut objects, mut attempts) = (0u64, 0u64);
        let mut start = ids.start;
        loop {
            let end = (start + CHUNK as i64).min(ids.end);
            let d = self.draw_ids(seed, start..end)?;
            attempts += d.attempts;
            objects += d.id.len() as u64;
            sink.write(&self.frame(d))?;
            start = end;
            if start >= ids.end {
                return Ok((objects, attempts));
            }
        }
    }
}

/// A draw from `target`, or from `proposal` with the weight multiplied by target/proposal.
fn importance<R: Rng + ?Sized>(
    rng: &mut R,
    target: &PreparedDistribution,
    proposal: Option<&PreparedDistribution>,
    weight: &mut f64,
) -> f64 {
    let Some(p) = proposal else { return target.sample(rng) };
    let x = p.sample(rng);
    // Both densities exist: checked when the spec was resolved.
    let (t, q) = (target.pdf(x).unwrap_or(0.0), p.pdf(x).unwrap_or(f64::INFINITY));
    *weight *= if q > 0.0 { t / q } else { 0.0 };
    x
}
