//! Credible regions of the posterior map, as IVOA MOCs (`crate::sky::healpix::Moc`: the
//! canonical form and the ASCII and JSON serializations of MOC 2.0).

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

/// The MOC type and its serializations live with the other HEALPix helpers.
pub use crate::sky::healpix::Moc;
