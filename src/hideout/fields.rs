//! A ranked list of fields for the next search, chosen greedily: the field (a cap of the
//! given radius centred on a HEALPix cell centre) holding the most surviving probability,
//! then the best field among the cells not yet taken, and so on. A field holds the cells
//! whose centres lie within the radius, so the radius should span several cells.

use super::tally::{MAG_BINS, MAG_LO, MAG_STEP, SkyTally};
use crate::sky::frames::{separation, unit_vector};
use crate::statistics::{QuantileRule, histogram_quantile};

/// One field of the ranked list.
#[derive(Debug, Clone, PartialEq)]
pub struct RankedField {
    pub rank: usize,
    /// Centre (a cell centre), ICRS radians.
    pub ra_rad: f64,
    pub dec_rad: f64,
    pub n_cells: usize,
    /// Σ w of the survivors in the field's cells not taken by a better field.
    pub w_surviving: f64,
    pub n_surviving: u64,
    /// Weighted means over those survivors.
    pub mean_mag: f64,
    pub mean_rate_arcsec_per_hr: f64,
    /// Magnitude above which 10% of those survivors lie: the depth that reaches 90% of them.
    pub depth_90_mag: f64,
}

/// Cells of `order` whose centres lie within `radius` of (ra, dec).
pub fn cells_within(order: u8, ra: f64, dec: f64, radius: f64) -> Vec<usize> {
    crate::sky::healpix::cells_in_cap(order, ra, dec, radius)
        .into_iter()
        .map(|h| h as usize)
        .collect()
}

/// The `n_fields` best fields of radius `radius` (radians), best first.
pub fn rank_fields(sky: &SkyTally, radius: f64, n_fields: usize) -> Vec<RankedField> {
    let order = sky.order;
    let mut taken = vec![false; sky.w_surviving.len()];
    let candidates: Vec<usize> = (0..sky.w_surviving.len())
        .filter(|&c| sky.w_surviving[c] > 0.0)
        .collect();
    let score = |c: usize, taken: &[bool]| -> f64 {
        let (ra, dec) = cdshealpix::nested::center(order, c as u64);
        cells_within(order, ra, dec, radius)
            .iter()
            .filter(|&&h| !taken[h])
            .map(|&h| sky.w_surviving[h])
            .sum()
    };
    let mut scores: Vec<f64> = candidates.iter().map(|&c| score(c, &taken)).collect();
    let mut out = Vec::new();
    while out.len() < n_fields {
        // Highest score; ties to the lowest cell index (candidates are sorted).
        let Some(best) = (0..candidates.len())
            .filter(|&k| scores[k] > 0.0)
            .max_by(|&a, &b| scores[a].total_cmp(&scores[b]).then(b.cmp(&a)))
        else {
            break;
        };
        let (ra, dec) = cdshealpix::nested::center(order, candidates[best] as u64);
        let cells: Vec<usize> = cells_within(order, ra, dec, radius)
            .into_iter()
            .filter(|&h| !taken[h])
            .collect();
        out.push(describe(sky, out.len() + 1, ra, dec, &cells));
        cells.iter().for_each(|&h| taken[h] = true);
        // Only fields within two radii of this one shared a cell with it.
        for k in 0..candidates.len() {
            let (r2, d2) = cdshealpix::nested::center(order, candidates[k] as u64);
            if separation(&unit_vector(ra, dec), &unit_vector(r2, d2)) <= 2.0 * radius + 1e-9 {
                scores[k] = score(candidates[k], &taken);
            }
        }
    }
    out
}

fn describe(sky: &SkyTally, rank: usize, ra: f64, dec: f64, cells: &[usize]) -> RankedField {
    let sum = |v: &[f64]| cells.iter().map(|&h| v[h]).sum::<f64>();
    let w = sum(&sky.w_surviving);
    let mut hist = vec![0.0; MAG_BINS];
    for &h in cells {
        hist.iter_mut().zip(sky.histogram(h)).for_each(|(a, b)| *a += b);
    }
    RankedField {
        rank,
        ra_rad: ra,
        dec_rad: dec,
        n_cells: cells.len(),
        w_surviving: w,
        n_surviving: cells.iter().map(|&h| sky.n_surviving[h]).sum(),
        mean_mag: sum(&sky.w_mag) / w,
        mean_rate_arcsec_per_hr: sum(&sky.w_rate) / w,
        depth_90_mag: quantile(&hist, 0.9),
    }
}

/// The q-quantile of a magnitude histogram (bins of MAG_STEP from MAG_LO), linear inside a bin.
pub fn quantile(hist: &[f64], q: f64) -> f64 {
    MAG_LO + MAG_STEP * histogram_quantile(hist, q, QuantileRule::Linear)
}
