//! Credible regions of the posterior map as IVOA MOCs (MOC 2.0 Recommendation, sections
//! "ASCII serialization" and "Canonical form", appendix "JSON encoding"; the text of the
//! ivoa-std/MOC repository), written here because cdshealpix 0.10 builds coverages but does
//! not serialize them.
//!
//! A MOC is kept in canonical form: sorted, no redundant cells, and four complete siblings
//! are always written as their parent.

use std::collections::BTreeSet;

/// The smallest set of cells holding at least `level` of the total weight: cells taken by
/// decreasing weight (ties by cell index, so the set is reproducible). Empty when no weight.
pub fn credible_cells(weights: &[f64], level: f64) -> Vec<u64> {
    let total: f64 = weights.iter().sum();
    if !(total > 0.0) {
        return Vec::new();
    }
    let mut order: Vec<usize> = (0..weights.len()).filter(|&c| weights[c] > 0.0).collect();
    order.sort_by(|&a, &b| weights[b].total_cmp(&weights[a]).then(a.cmp(&b)));
    let mut out = Vec::new();
    let mut acc = 0.0;
    for c in order {
        if acc >= level * total {
            break;
        }
        acc += weights[c];
        out.push(c as u64);
    }
    out.sort_unstable();
    out
}

/// A space MOC: for each order from 0 to `max_order`, its sorted cells.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Moc {
    pub max_order: u8,
    pub cells: Vec<Vec<u64>>,
}

impl Moc {
    /// The canonical MOC of a set of cells of one order.
    pub fn from_cells(order: u8, cells: &[u64]) -> Moc {
        let mut levels = vec![Vec::new(); order as usize + 1];
        let mut current: BTreeSet<u64> = cells.iter().copied().collect();
        for o in (1..=order).rev() {
            let mut parents = BTreeSet::new();
            for &c in &current {
                let p = c >> 2;
                if (0..4).all(|k| current.contains(&(p * 4 + k))) {
                    parents.insert(p);
                } else {
                    levels[o as usize].push(c);
                }
            }
            current = parents;
        }
        levels[0] = current.into_iter().collect();
        Moc {
            max_order: order,
            cells: levels,
        }
    }

    /// Sky area in square degrees.
    pub fn area_sq_deg(&self) -> f64 {
        let sky = super::SKY_SQ_DEG;
        self.cells
            .iter()
            .enumerate()
            .map(|(o, c)| c.len() as f64 * sky / (12.0 * 4f64.powi(o as i32)))
            .sum()
    }

    /// The deepest order that holds a cell.
    fn deepest(&self) -> Option<usize> {
        self.cells.iter().rposition(|c| !c.is_empty())
    }

    /// ASCII serialization: `order/idx idx lo-hi ...` per order; the MOC order follows as a
    /// bare `order/` when no cell is that deep (e.g. `1/1 2 4 2/12-14 21 23 25 8/`).
    pub fn to_ascii(&self) -> String {
        let mut parts = Vec::new();
        for (o, cells) in self.cells.iter().enumerate().filter(|(_, c)| !c.is_empty()) {
            parts.push(format!("{o}/{}", runs(cells).join(" ")));
        }
        if self.deepest() != Some(self.max_order as usize) {
            parts.push(format!("{}/", self.max_order));
        }
        parts.join(" ")
    }

    /// JSON encoding: `{"order":[idx,...], ...}`, the MOC order with an empty list when no
    /// cell is that deep.
    pub fn to_json(&self) -> String {
        let mut map = serde_json::Map::new();
        for (o, cells) in self.cells.iter().enumerate().filter(|(_, c)| !c.is_empty()) {
            map.insert(o.to_string(), serde_json::json!(cells));
        }
        if self.deepest() != Some(self.max_order as usize) {
            map.insert(self.max_order.to_string(), serde_json::json!([]));
        }
        serde_json::Value::Object(map).to_string()
    }
}

/// Sorted indices as runs: `5 6`, `7-9`.
fn runs(cells: &[u64]) -> Vec<String> {
    let mut out = Vec::new();
    let mut k = 0;
    while k < cells.len() {
        let mut j = k;
        while j + 1 < cells.len() && cells[j + 1] == cells[j] + 1 {
            j += 1;
        }
        // As in the standard's example: a range for three or more, single values otherwise.
        if j >= k + 2 {
            out.push(format!("{}-{}", cells[k], cells[j]));
        } else {
            out.extend(cells[k..=j].iter().map(u64::to_string));
        }
        k = j + 1;
    }
    out
}
