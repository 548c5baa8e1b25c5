//! The coverage report of a visit history: sky area covered against ecliptic latitude,
//! visits per field, nights used and time used per night, the depth distribution, and the
//! covered sky as an IVOA MOC.
//!
//! Area is counted on HEALPix cells of order 9 (0.0131 deg² each; `sky/healpix.rs`): a cell
//! is covered when its centre lies inside a footprint (exact containment), so areas carry an
//! edge error of about one cell width (0.11°) times the perimeter. The MOC is written in the
//! JSON encoding of IVOA MOC 2.0 (canonical form, MOC order 9), by `sky/healpix.rs`.

use std::collections::{BTreeMap, HashMap};

use serde::Serialize;

use super::footprint::Footprint;
use crate::foundation::units::DEG;
use crate::sky::frames::radec_to_ecliptic;
use crate::sky::healpix::{self, Moc};
use crate::statistics::{QuantileRule, quantile_sorted};

pub const HEALPIX_ORDER: u8 = 9;
const LAT_BIN_DEG: f64 = 5.0;

/// One pointing: where and how deep.
pub struct Pointing {
    pub ra_deg: f64,
    pub dec_deg: f64,
    pub rotation_deg: f64,
    pub depth_mag: f64,
    pub night: i64,
    /// The field a pointing belongs to (pointings at the same place share one).
    pub field: i64,
}

#[derive(Debug, Clone, Serialize)]
pub struct LatBin {
    pub ecl_lat_min_deg: f64,
    pub ecl_lat_max_deg: f64,
    pub sky_area_sq_deg: f64,
    pub covered_sq_deg: f64,
    pub covered_fraction: f64,
    /// Covered area seen on at least 2 and at least 5 distinct nights.
    pub covered_2_nights_sq_deg: f64,
    pub covered_5_nights_sq_deg: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Coverage {
    pub n_visits: usize,
    pub n_fields: usize,
    pub n_nights_used: usize,
    pub covered_sq_deg: f64,
    pub healpix_order: u8,
    pub by_ecliptic_latitude: Vec<LatBin>,
    /// visits per field → number of fields
    pub visits_per_field: BTreeMap<usize, usize>,
    /// nights per field → number of fields
    pub nights_per_field: BTreeMap<usize, usize>,
    pub depth_quantiles: BTreeMap<String, f64>,
    /// depth bin lower edge (0.25 mag bins) → number of visits
    pub depth_histogram: BTreeMap<String, usize>,
    #[serde(skip)]
    pub cells: Vec<u64>,
}

/// Distinct nights over several footprints' night lists, counted up to `cap`.
fn distinct_nights_capped(fields: &[usize], nights_of: &[Vec<i64>], cap: usize) -> usize {
    if let [one] = fields {
        return nights_of[*one].len().min(cap);
    }
    let mut seen: Vec<i64> = Vec::with_capacity(cap);
    for &f in fields {
        for &n in &nights_of[f] {
            if !seen.contains(&n) {
                seen.push(n);
                if seen.len() >= cap {
                    return cap;
                }
            }
        }
    }
    seen.len()
}

pub fn coverage(fp: &Footprint, pointings: &[Pointing]) -> Coverage {
    let cell_sq_deg = healpix::cell_area_sq_deg(HEALPIX_ORDER);
    // Distinct nights per distinct footprint first (a field is visited many times), then
    // nights per cell as the union over the few footprints that cover it, counted up to 5.
    let mut footprints: HashMap<(i64, u64, u64), (usize, Vec<i64>)> = HashMap::new();
    let mut first_pointing: Vec<&Pointing> = Vec::new();
    for p in pointings {
        let key = (p.field, p.ra_deg.to_bits(), p.rotation_deg.to_bits());
        let n = footprints.len();
        let e = footprints.entry(key).or_insert_with(|| (n, Vec::new()));
        if e.0 == first_pointing.len() {
            first_pointing.push(p);
        }
        e.1.push(p.night);
    }
    let mut nights_of: Vec<Vec<i64>> = vec![Vec::new(); first_pointing.len()];
    for (_, (i, mut nights)) in footprints {
        nights.sort_unstable();
        nights.dedup();
        nights_of[i] = nights;
    }
    let mut cell_fields: HashMap<u64, Vec<usize>> = HashMap::new();
    for (i, p) in first_pointing.iter().enumerate() {
        for c in fp.healpix_cells(HEALPIX_ORDER, p.ra_deg * DEG, p.dec_deg * DEG, p.rotation_deg) {
            cell_fields.entry(c).or_default().push(i);
        }
    }
    let cell_nights: HashMap<u64, usize> = cell_fields
        .into_iter()
        .map(|(c, fields)| (c, distinct_nights_capped(&fields, &nights_of, 5)))
        .collect();
    let mut bins: Vec<LatBin> = (0..(180.0 / LAT_BIN_DEG) as usize)
        .map(|i| {
            let (lo, hi) = (-90.0 + i as f64 * LAT_BIN_DEG, -90.0 + (i + 1) as f64 * LAT_BIN_DEG);
            let sky = std::f64::consts::TAU * ((hi * DEG).sin() - (lo * DEG).sin()) / (DEG * DEG);
            LatBin {
                ecl_lat_min_deg: lo,
                ecl_lat_max_deg: hi,
                sky_area_sq_deg: sky,
                covered_sq_deg: 0.0,
                covered_fraction: 0.0,
                covered_2_nights_sq_deg: 0.0,
                covered_5_nights_sq_deg: 0.0,
            }
        })
        .collect();
    for (&c, &n_nights) in &cell_nights {
        let (lon, lat) = healpix::center(HEALPIX_ORDER, c);
        let beta = radec_to_ecliptic(lon, lat).1 / DEG;
        let last = bins.len() - 1;
        let b = &mut bins[(((beta + 90.0) / LAT_BIN_DEG) as usize).min(last)];
        b.covered_sq_deg += cell_sq_deg;
        b.covered_2_nights_sq_deg += if n_nights >= 2 { cell_sq_deg } else { 0.0 };
        b.covered_5_nights_sq_deg += if n_nights >= 5 { cell_sq_deg } else { 0.0 };
    }
    for b in &mut bins {
        b.covered_fraction = b.covered_sq_deg / b.sky_area_sq_deg;
    }
    let mut per_field: HashMap<i64, (usize, Vec<i64>)> = HashMap::new();
    for p in pointings {
        let e = per_field.entry(p.field).or_default();
        e.0 += 1;
        e.1.push(p.night);
    }
    let mut visits_per_field = BTreeMap::new();
    let mut nights_per_field = BTreeMap::new();
    for (n, nights) in per_field.values_mut() {
        nights.sort_unstable();
        nights.dedup();
        *visits_per_field.entry(*n).or_insert(0) += 1;
        *nights_per_field.entry(nights.len()).or_insert(0) += 1;
    }
    let mut depth: Vec<f64> = pointings.iter().map(|p| p.depth_mag).collect();
    depth.sort_by(f64::total_cmp);
    let mut depth_quantiles = BTreeMap::new();
    let mut depth_histogram = BTreeMap::new();
    if !depth.is_empty() {
        for (name, q) in [("min", 0.0), ("p10", 0.1), ("p50", 0.5), ("p90", 0.9), ("max", 1.0)] {
            depth_quantiles.insert(name.to_string(), quantile_sorted(&depth, q, QuantileRule::Linear));
        }
        for d in &depth {
            *depth_histogram
                .entry(format!("{:.2}", (d * 4.0).floor() / 4.0))
                .or_insert(0) += 1;
        }
    }
    let mut nights: Vec<i64> = pointings.iter().map(|p| p.night).collect();
    nights.sort_unstable();
    nights.dedup();
    let mut cells: Vec<u64> = cell_nights.keys().copied().collect();
    cells.sort_unstable();
    Coverage {
        n_visits: pointings.len(),
        n_fields: per_field.len(),
        n_nights_used: nights.len(),
        covered_sq_deg: cells.len() as f64 * cell_sq_deg,
        healpix_order: HEALPIX_ORDER,
        by_ecliptic_latitude: bins,
        visits_per_field,
        nights_per_field,
        depth_quantiles,
        depth_histogram,
        cells,
    }
}

impl Coverage {
    /// The covered sky in the JSON encoding of IVOA MOC 2.0, `{"ORDER": [cells], ...}`, in
    /// canonical form (four complete siblings are written as their parent).
    pub fn moc_json(&self) -> String {
        Moc::from_cells(HEALPIX_ORDER, &self.cells).to_json()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_field_covers_its_own_area() {
        // The cell count of one 2° circle matches its cap area 2π(1 − cos r) = 12.56 deg² to the
        // cell-edge error (perimeter 12.6° × ~0.1° cell width / 2 ≈ 0.6 deg² at most).
        let fp = Footprint::Circle { radius_deg: 2.0 };
        let p = |night| Pointing {
            ra_deg: 359.5,
            dec_deg: 10.0,
            rotation_deg: 0.0,
            depth_mag: 23.0,
            night,
            field: 7,
        };
        let c = coverage(&fp, &[p(1), p(1), p(2)]);
        assert!(
            (c.covered_sq_deg - fp.area_sq_deg()).abs() < 0.6,
            "{}",
            c.covered_sq_deg
        );
        assert_eq!((c.n_visits, c.n_fields, c.n_nights_used), (3, 1, 2));
        assert_eq!(c.visits_per_field.get(&3), Some(&1));
        let two: f64 = c.by_ecliptic_latitude.iter().map(|b| b.covered_2_nights_sq_deg).sum();
        assert!(
            (two - c.covered_sq_deg).abs() < 1e-9,
            "every cell was seen on both nights"
        );
        let five: f64 = c.by_ecliptic_latitude.iter().map(|b| b.covered_5_nights_sq_deg).sum();
        assert_eq!(five, 0.0);
    }
}
