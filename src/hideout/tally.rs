//! Additive accumulators of a hideout run: counts and sums of weights only (never fractions),
//! so the tallies of shards add up to the tally of the whole run. Draws are added one at a
//! time in id order, which makes a run's sums independent of the thread count. A bin's sums
//! are a `statistics::Tally` (a success = the draw excluded, i.e. discovered), so its excluded
//! fraction and error are the weighted proportion every analysis reports.

use std::collections::HashMap;

use super::evaluate::DrawOutcome;
use crate::statistics::Tally;

/// Magnitude histogram of the survivors per cell: bins of `MAG_STEP` from `MAG_LO` to `MAG_HI`;
/// values outside fall into the end bins.
pub const MAG_LO: f64 = -5.0;
pub const MAG_HI: f64 = 40.0;
pub const MAG_STEP: f64 = 0.1;
pub const MAG_BINS: usize = 450;

/// A one-dimensional binning of a quantity; the end bins are open (they take the values beyond).
#[derive(Debug, Clone, PartialEq)]
pub struct ExclusionBins {
    pub quantity: String,
    pub edges: Vec<f64>,
    pub bins: Vec<Tally>,
}

impl ExclusionBins {
    pub fn new(quantity: &str, edges: Vec<f64>) -> Self {
        let n = edges.len().saturating_sub(1).max(1);
        ExclusionBins {
            quantity: quantity.to_string(),
            edges,
            bins: vec![Tally::default(); n],
        }
    }

    /// Equal bins on [lo, hi].
    pub fn linear(quantity: &str, lo: f64, hi: f64, n: usize) -> Self {
        let edges = (0..=n).map(|k| lo + (hi - lo) * k as f64 / n as f64).collect();
        Self::new(quantity, edges)
    }

    fn index(&self, x: f64) -> usize {
        let inner = &self.edges[1..self.edges.len() - 1];
        inner.partition_point(|&e| e <= x)
    }

    fn add_draw(&mut self, x: f64, w: f64, excluded: bool) {
        let k = self.index(x);
        self.bins[k].add(w, excluded);
    }
}

/// Sums per HEALPix cell (nested, order `order`) at the map epoch.
#[derive(Debug, Clone, PartialEq)]
pub struct SkyTally {
    pub order: u8,
    pub n_prior: Vec<u64>,
    pub w_prior: Vec<f64>,
    pub n_surviving: Vec<u64>,
    pub w_surviving: Vec<f64>,
    /// Σ w mag and Σ w rate over the survivors: weighted means once divided by w_surviving.
    pub w_mag: Vec<f64>,
    pub w_rate: Vec<f64>,
    /// (cell × MAG_BINS + bin) → Σ w of the survivors in that magnitude bin.
    pub mag_hist: HashMap<u64, f64>,
}

impl SkyTally {
    pub fn new(order: u8) -> Self {
        let n = cdshealpix::nested::n_hash(order) as usize;
        SkyTally {
            order,
            n_prior: vec![0; n],
            w_prior: vec![0.0; n],
            n_surviving: vec![0; n],
            w_surviving: vec![0.0; n],
            w_mag: vec![0.0; n],
            w_rate: vec![0.0; n],
            mag_hist: HashMap::new(),
        }
    }

    pub fn cell_of(&self, ra_rad: f64, dec_rad: f64) -> usize {
        cdshealpix::nested::hash(self.order, ra_rad, dec_rad) as usize
    }

    fn add_draw(&mut self, d: &DrawOutcome) {
        let c = self.cell_of(d.ra_rad, d.dec_rad);
        self.n_prior[c] += 1;
        self.w_prior[c] += d.weight;
        if d.discovered {
            return;
        }
        self.n_surviving[c] += 1;
        self.w_surviving[c] += d.weight;
        self.w_mag[c] += d.weight * d.mag;
        self.w_rate[c] += d.weight * d.rate_arcsec_per_hr;
        *self.mag_hist.entry(hist_key(c, mag_bin(d.mag))).or_insert(0.0) += d.weight;
    }

    fn add(&mut self, o: &SkyTally) {
        let add_f = |a: &mut Vec<f64>, b: &Vec<f64>| a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
        let add_n = |a: &mut Vec<u64>, b: &Vec<u64>| a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
        add_n(&mut self.n_prior, &o.n_prior);
        add_f(&mut self.w_prior, &o.w_prior);
        add_n(&mut self.n_surviving, &o.n_surviving);
        add_f(&mut self.w_surviving, &o.w_surviving);
        add_f(&mut self.w_mag, &o.w_mag);
        add_f(&mut self.w_rate, &o.w_rate);
        for (k, w) in &o.mag_hist {
            *self.mag_hist.entry(*k).or_insert(0.0) += w;
        }
    }

    /// The survivors' magnitude histogram of one cell.
    pub fn histogram(&self, cell: usize) -> Vec<f64> {
        (0..MAG_BINS)
            .map(|b| self.mag_hist.get(&hist_key(cell, b)).copied().unwrap_or(0.0))
            .collect()
    }
}

pub fn hist_key(cell: usize, bin: usize) -> u64 {
    (cell * MAG_BINS + bin) as u64
}

pub fn mag_bin(mag: f64) -> usize {
    (((mag - MAG_LO) / MAG_STEP).floor().max(0.0) as usize).min(MAG_BINS - 1)
}

/// Everything a run accumulates.
#[derive(Debug, Clone, PartialEq)]
pub struct RunTally {
    pub total: Tally,
    pub a: ExclusionBins,
    pub h: ExclusionBins,
    pub sky: SkyTally,
    /// Σ w of the draws each survey discovered (a draw found by two counts in both).
    pub w_discovered_by: Vec<f64>,
    /// Draws taken (the prior's ids of this run or shard).
    pub n_draws: u64,
}

impl RunTally {
    pub fn new(a: ExclusionBins, h: ExclusionBins, order: u8, n_surveys: usize) -> Self {
        RunTally {
            total: Tally::default(),
            a,
            h,
            sky: SkyTally::new(order),
            w_discovered_by: vec![0.0; n_surveys],
            n_draws: 0,
        }
    }

    /// Add draws in the order given (id order keeps the sums thread-count invariant).
    pub fn add_draws(&mut self, draws: &[DrawOutcome]) {
        for d in draws {
            self.n_draws += 1;
            self.total.add(d.weight, d.discovered);
            self.a.add_draw(d.a_au, d.weight, d.discovered);
            self.h.add_draw(d.h_mag, d.weight, d.discovered);
            self.sky.add_draw(d);
            for (s, w) in self.w_discovered_by.iter_mut().enumerate() {
                if d.discovered_by >> s & 1 == 1 {
                    *w += d.weight;
                }
            }
        }
    }

    /// Add another tally of the same binning (a shard of the same run).
    pub fn add(&mut self, o: &RunTally) -> Result<(), String> {
        if self.a.edges != o.a.edges || self.h.edges != o.h.edges {
            return Err(
                "the a or H bin edges differ: the runs used different priors, seeds or --a-bins/--h-bins".into(),
            );
        }
        if self.sky.order != o.sky.order {
            return Err(format!(
                "HEALPix orders differ ({} and {})",
                self.sky.order, o.sky.order
            ));
        }
        if self.w_discovered_by.len() != o.w_discovered_by.len() {
            return Err("the runs used different numbers of surveys".into());
        }
        self.total.absorb(&o.total);
        for (x, y) in [(&mut self.a, &o.a), (&mut self.h, &o.h)] {
            x.bins.iter_mut().zip(&y.bins).for_each(|(p, q)| p.absorb(q));
        }
        self.sky.add(&o.sky);
        self.w_discovered_by
            .iter_mut()
            .zip(&o.w_discovered_by)
            .for_each(|(x, y)| *x += y);
        self.n_draws += o.n_draws;
        Ok(())
    }

    /// Surviving (undiscovered) fraction of the prior's weight.
    pub fn surviving_fraction(&self) -> f64 {
        1.0 - self.total.proportion().fraction
    }
}
