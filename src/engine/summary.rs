//! The run summary (`summary.json`): counts, detected fractions in bins of a, q, i, H and
//! distance at discovery, per survey, and the engine's own figures (candidates evaluated
//! per in-field event, objects per second). Also the progress bar.

use serde::{Deserialize, Serialize};

use super::index::PreparedSurvey;
use super::outcome::ObjectOutcome;
use crate::population::objects::ObjectTable;
use crate::statistics::{bin_index, edges_per_decade, lin_edges};

/// Counts in bins of one quantity; `detected_fraction` is weighted by the objects' weights.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BinCounts {
    pub quantity: String,
    pub edges: Vec<f64>,
    pub n: Vec<u64>,
    pub detected: Vec<u64>,
    pub weighted_n: Vec<f64>,
    pub weighted_detected: Vec<f64>,
}

impl BinCounts {
    fn new(quantity: &str, edges: Vec<f64>) -> Self {
        let k = edges.len() - 1;
        BinCounts {
            quantity: quantity.into(),
            edges,
            n: vec![0; k],
            detected: vec![0; k],
            weighted_n: vec![0.0; k],
            weighted_detected: vec![0.0; k],
        }
    }
    /// Add another summary's counts of the same bins (shards or chunks of one run).
    fn absorb(&mut self, o: &BinCounts) {
        debug_assert_eq!(self.edges, o.edges);
        let add_u = |a: &mut Vec<u64>, b: &[u64]| a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
        let add_f = |a: &mut Vec<f64>, b: &[f64]| a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
        add_u(&mut self.n, &o.n);
        add_u(&mut self.detected, &o.detected);
        add_f(&mut self.weighted_n, &o.weighted_n);
        add_f(&mut self.weighted_detected, &o.weighted_detected);
    }

    fn add(&mut self, x: f64, detected: bool, w: f64, count_total: bool) {
        let Some(k) = bin_index(&self.edges, x) else {
            return;
        };
        if count_total {
            self.n[k] += 1;
            self.weighted_n[k] += w;
        }
        if detected {
            self.detected[k] += 1;
            self.weighted_detected[k] += w;
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SurveySummary {
    pub name: String,
    pub n_visits: usize,
    pub discovered: u64,
    pub secured: u64,
    pub in_field_events: u64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Summary {
    pub n_objects: u64,
    pub n_detected: u64,
    pub n_secured: u64,
    pub detected_fraction: f64,
    pub weighted_detected_fraction: f64,
    pub surveys: Vec<SurveySummary>,
    pub bins: Vec<BinCounts>,
    /// Distance from the Sun at discovery, AU (discovered objects only).
    pub discovery_distance: BinCounts,
    pub candidates_evaluated: u64,
    pub in_field_events: u64,
    pub candidates_per_in_field_event: f64,
    pub elapsed_s: f64,
    pub objects_per_second: f64,
    /// Sums of the objects' weights (all, and discovered): what `merge` needs to recompute
    /// the weighted fraction.
    #[serde(default)]
    pub weight_total: f64,
    #[serde(default)]
    pub weight_detected: f64,
}

impl Summary {
    pub fn new(surveys: &[PreparedSurvey]) -> Self {
        Summary {
            n_objects: 0,
            n_detected: 0,
            n_secured: 0,
            detected_fraction: 0.0,
            weighted_detected_fraction: 0.0,
            surveys: surveys
                .iter()
                .map(|s| SurveySummary {
                    name: s.survey.name.clone(),
                    n_visits: s.len(),
                    discovered: 0,
                    secured: 0,
                    in_field_events: 0,
                })
                .collect(),
            bins: vec![
                BinCounts::new("a_au", edges_per_decade(10.0, 10000.0, 8)),
                BinCounts::new("q_au", edges_per_decade(10.0, 10000.0, 8)),
                BinCounts::new("inc_deg", lin_edges(0.0, 180.0, 18)),
                BinCounts::new("h_mag", lin_edges(-10.0, 16.0, 52)),
            ],
            discovery_distance: BinCounts::new("discovery_r_au", edges_per_decade(10.0, 10000.0, 8)),
            candidates_evaluated: 0,
            in_field_events: 0,
            candidates_per_in_field_event: 0.0,
            elapsed_s: 0.0,
            objects_per_second: 0.0,
            weight_total: 0.0,
            weight_detected: 0.0,
        }
    }

    pub fn add(&mut self, objects: &ObjectTable, start: usize, outs: &[ObjectOutcome], surveys: &[PreparedSurvey]) {
        for (k, o) in outs.iter().enumerate() {
            let i = start + k;
            let el = &objects.elements[i];
            let (det, w) = (o.discovered(), objects.weight[i]);
            self.n_objects += 1;
            self.n_detected += det as u64;
            self.n_secured += o.surveys.iter().any(|s| s.secured) as u64;
            self.weight_total += w;
            self.weight_detected += if det { w } else { 0.0 };
            self.candidates_evaluated += o.candidates;
            self.in_field_events += o.events.len() as u64;
            let values = [el.a_au, el.q_au(), el.inc_rad.to_degrees(), objects.h_mag[i]];
            for (b, x) in self.bins.iter_mut().zip(values) {
                b.add(x, det, w, true);
            }
            if let Some((_, e)) = o.first_discovery(|e| surveys[e.survey as usize].survey.visits.mjd[e.visit as usize])
            {
                self.discovery_distance.add(o.events[e].r_au, true, w, true);
            }
            for (s, so) in self.surveys.iter_mut().zip(&o.surveys) {
                s.discovered += so.discovered as u64;
                s.secured += so.secured as u64;
                s.in_field_events += so.n_in_field as u64;
            }
        }
    }

    /// Add the counts of another part of the same run (a chunk or a shard): counts, bins and
    /// engine figures are summed; call `finish` afterwards to recompute the fractions.
    /// Errors when the two were not made with the same surveys or bins.
    pub fn absorb(&mut self, o: &Summary) -> Result<(), String> {
        let names = |s: &Summary| s.surveys.iter().map(|x| x.name.clone()).collect::<Vec<_>>();
        let edges = |s: &Summary| s.bins.iter().map(|b| b.edges.clone()).collect::<Vec<_>>();
        if names(self) != names(o) || edges(self) != edges(o) {
            return Err(format!(
                "the summaries were made with different surveys ({:?} and {:?}) or bins",
                names(self),
                names(o)
            ));
        }
        self.n_objects += o.n_objects;
        self.n_detected += o.n_detected;
        self.n_secured += o.n_secured;
        self.weight_total += o.weight_total;
        self.weight_detected += o.weight_detected;
        self.candidates_evaluated += o.candidates_evaluated;
        self.in_field_events += o.in_field_events;
        self.elapsed_s += o.elapsed_s;
        for (a, b) in self.surveys.iter_mut().zip(&o.surveys) {
            a.discovered += b.discovered;
            a.secured += b.secured;
            a.in_field_events += b.in_field_events;
        }
        for (a, b) in self.bins.iter_mut().zip(&o.bins) {
            a.absorb(b);
        }
        self.discovery_distance.absorb(&o.discovery_distance);
        Ok(())
    }

    /// Recompute the fractions and rates from the counts; `elapsed_s` is the engine time
    /// (summed over chunks, and over shards after a merge).
    pub fn finish(&mut self, elapsed_s: f64) {
        self.elapsed_s = elapsed_s;
        self.detected_fraction = self.n_detected as f64 / (self.n_objects.max(1)) as f64;
        self.weighted_detected_fraction = if self.weight_total > 0.0 {
            self.weight_detected / self.weight_total
        } else {
            0.0
        };
        self.candidates_per_in_field_event = self.candidates_evaluated as f64 / (self.in_field_events.max(1)) as f64;
        self.objects_per_second = self.n_objects as f64 / elapsed_s.max(1e-9);
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("summary serializes")
    }
}

/// A progress bar over objects on standard error (see `crate::progress`).
pub fn progress_bar(len: usize, wanted: bool) -> Option<indicatif::ProgressBar> {
    crate::progress::bar(len as u64, "objects", wanted)
}
