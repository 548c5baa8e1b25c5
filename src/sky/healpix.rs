//! HEALPix cells of the sky (Górski et al. 2005, ApJ 622, 759; nested scheme, ICRS, through
//! the cdshealpix crate): the cells whose centres lie inside a region (a footprint, a cap),
//! sky areas counted on cells, and the covered sky as an IVOA MOC.
//!
//! * Cells in a region: the cells of a cone around the region (cdshealpix's approximate cone
//!   coverage, a superset) widened by two cell sides, kept when their centre is inside. A
//!   cell counts wholly or not at all, so areas carry an edge error of about one cell width
//!   times the perimeter.
//! * MOC: the MOC 2.0 Recommendation of the IVOA, sections "ASCII serialization" and
//!   "Canonical form", appendix "JSON encoding" (the text of the ivoa-std/MOC repository),
//!   written here because cdshealpix 0.10 builds coverages but does not serialize them. A MOC
//!   is kept in canonical form: sorted, no redundant cells, four complete siblings always
//!   written as their parent.

use std::collections::{BTreeMap, BTreeSet};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

use nalgebra::Vector3;

use crate::foundation::units::DEG;
use crate::sky::frames::{separation, unit_vector};

/// The whole sky in square degrees, 4π (180/π)².
pub const SKY_SQ_DEG: f64 = 41252.96124941928;

/// Number of cells of `order` on the sky, 12 · 4^order.
pub fn n_cells(order: u8) -> u64 {
    cdshealpix::nested::n_hash(order)
}

/// Area of one cell of `order`, square degrees (4π / n sr; every cell has the same area).
pub fn cell_area_sq_deg(order: u8) -> f64 {
    4.0 * PI / n_cells(order) as f64 / (DEG * DEG)
}

/// Area of `n` cells of `order`, square degrees.
pub fn area_sq_deg(n: usize, order: u8) -> f64 {
    n as f64 * cell_area_sq_deg(order)
}

/// The side of a cell of `order` (square root of its area), radians.
pub fn cell_size_rad(order: u8) -> f64 {
    (4.0 * PI / n_cells(order) as f64).sqrt()
}

/// Centre (ra, dec) of a cell, radians.
pub fn center(order: u8, cell: u64) -> (f64, f64) {
    cdshealpix::nested::center(order, cell)
}

/// The cell of `order` holding (ra, dec), radians; any ra, dec clamped to the poles.
pub fn cell_at(order: u8, ra: f64, dec: f64) -> u64 {
    cdshealpix::nested::hash(order, ra.rem_euclid(TAU), dec.clamp(-FRAC_PI_2, FRAC_PI_2))
}

/// Cells of `order`, ascending, whose centres satisfy `inside`, for a region that lies within
/// `radius` (radians) of (ra, dec).
pub fn cells_where(order: u8, ra: f64, dec: f64, radius: f64, inside: impl Fn(&Vector3<f64>) -> bool) -> Vec<u64> {
    // Widen the cone by two cell sides (more than a cell's half-diagonal) so that no cell
    // whose centre is inside is missed.
    let r = (radius + 2.0 * cell_size_rad(order)).min(PI);
    cdshealpix::nested::cone_coverage_approx_flat(order, ra, dec, r)
        .iter()
        .copied()
        .filter(|&h| {
            let (lon, lat) = center(order, h);
            inside(&unit_vector(lon, lat))
        })
        .collect()
}

/// Cells of `order`, ascending, whose centres lie within `radius` (radians) of (ra, dec).
pub fn cells_in_cap(order: u8, ra: f64, dec: f64, radius: f64) -> Vec<u64> {
    let centre = unit_vector(ra, dec);
    cells_where(order, ra, dec, radius, |u| separation(&centre, u) <= radius)
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
        self.cells
            .iter()
            .enumerate()
            .map(|(o, c)| c.len() as f64 * SKY_SQ_DEG / (12.0 * 4f64.powi(o as i32)))
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

    /// Parse the JSON encoding (`{"order":[idx,...], ...}`); the MOC order is the deepest key.
    /// The error says what is wrong, for the caller to name the file.
    pub fn from_json(text: &str) -> std::result::Result<Moc, String> {
        let v: serde_json::Value = serde_json::from_str(text).map_err(|e| format!("not valid JSON: {e}"))?;
        let map = v.as_object().ok_or("expected a MOC JSON object {\"order\": [cells]}")?;
        let mut levels: Vec<Vec<u64>> = Vec::new();
        for (key, cells) in map {
            let o: u8 = key
                .parse()
                .ok()
                .filter(|&o| o <= 29)
                .ok_or_else(|| format!("key `{key}`: expected a HEALPix order 0 to 29"))?;
            let cells: Vec<u64> = cells
                .as_array()
                .and_then(|a| a.iter().map(|c| c.as_u64().filter(|&c| c < n_cells(o))).collect())
                .ok_or_else(|| format!("order {o}: expected a list of cells of that order"))?;
            if levels.len() <= o as usize {
                levels.resize(o as usize + 1, Vec::new());
            }
            levels[o as usize].extend(cells);
        }
        levels.iter_mut().for_each(|l| l.sort_unstable());
        Ok(Moc {
            max_order: levels.len().saturating_sub(1) as u8,
            cells: levels,
        })
    }

    /// The covered fraction of each cell of `order` that the MOC touches (1 for a cell inside
    /// a shallower cell, the share of its deeper cells otherwise), by cell.
    pub fn fraction_at(&self, order: u8) -> BTreeMap<u64, f64> {
        let mut out: BTreeMap<u64, f64> = BTreeMap::new();
        for (o, cells) in self.cells.iter().enumerate() {
            let o = o as u8;
            for &c in cells {
                if o <= order {
                    let shift = 2 * (order - o) as u32;
                    for child in (c << shift)..((c + 1) << shift) {
                        *out.entry(child).or_default() += 1.0;
                    }
                } else {
                    let shift = 2 * (o - order) as u32;
                    *out.entry(c >> shift).or_default() += 1.0 / (1u64 << shift) as f64;
                }
            }
        }
        out
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn complete_quads_become_their_parent() {
        // Canonical form (MOC 2.0 §"Canonical form"): cells 4–7 of order 1 are cell 1 of order 0.
        let m = Moc::from_cells(1, &[4, 5, 6, 7, 9, 12, 13, 14]);
        assert_eq!(m.cells, vec![vec![1], vec![9, 12, 13, 14]]);
        assert_eq!(m.to_ascii(), "0/1 1/9 12-14");
        assert_eq!(m.to_json(), r#"{"0":[1],"1":[9,12,13,14]}"#);
        // The MOC order is named when no cell is that deep.
        assert_eq!(Moc::from_cells(1, &[4, 5, 6, 7]).to_json(), r#"{"0":[1],"1":[]}"#);
    }

    #[test]
    fn json_reads_back_and_fractions_count_deeper_cells() {
        let m = Moc::from_cells(1, &[4, 5, 6, 7, 9, 12, 13, 14]);
        assert_eq!(Moc::from_json(&m.to_json()).unwrap(), m);
        // Worked by hand (nested scheme: a cell's parent is its index >> 2): at order 0, cell 1
        // is whole, cell 2 holds 9 (a quarter), cell 3 holds 12–14 (three quarters).
        let f = m.fraction_at(0);
        assert_eq!(f.get(&1), Some(&1.0));
        assert_eq!(f.get(&2), Some(&0.25));
        assert_eq!(f.get(&3), Some(&0.75));
        // At order 1, a cell of order 0 is its four children.
        assert_eq!(m.fraction_at(1).len(), 8);
        assert!(Moc::from_json("{\"1\":[48]}").is_err(), "cell 48 is not of order 1");
        assert!(Moc::from_json("[1]").is_err());
    }

    #[test]
    fn areas_add_up_to_the_sky() {
        // 4π sr = 41252.96 deg² (from the definition of the square degree).
        assert!((SKY_SQ_DEG - 4.0 * PI / (DEG * DEG)).abs() < 1e-9);
        for order in [0, 3, 9] {
            let total = cell_area_sq_deg(order) * n_cells(order) as f64;
            assert!((total / SKY_SQ_DEG - 1.0).abs() < 1e-12, "order {order}");
        }
        let all: Vec<u64> = (0..n_cells(2)).collect();
        assert!((Moc::from_cells(2, &all).area_sq_deg() / SKY_SQ_DEG - 1.0).abs() < 1e-12);
    }

    #[test]
    fn a_cap_holds_its_area_in_cells() {
        // A 5° cap, 2π(1 − cos 5°) = 78.49 deg², counted on order-9 cells to the edge error
        // (perimeter 31.4° × cell width 0.11° / 2 ≈ 1.8 deg² at most).
        let r = 5.0 * DEG;
        let cells = cells_in_cap(9, 1.0, -0.3, r);
        let cap = TAU * (1.0 - r.cos()) / (DEG * DEG);
        let counted = cells.len() as f64 * cell_area_sq_deg(9);
        assert!((counted - cap).abs() < 1.8, "{counted} vs {cap}");
        assert!(cells.windows(2).all(|w| w[0] < w[1]));
        // Against brute force over every cell of order 5: none is missed, none is extra.
        let brute: Vec<u64> = (0..n_cells(5))
            .filter(|&h| {
                let (lon, lat) = center(5, h);
                separation(&unit_vector(1.0, -0.3), &unit_vector(lon, lat)) <= r
            })
            .collect();
        assert_eq!(cells_in_cap(5, 1.0, -0.3, r), brute);
    }
}
