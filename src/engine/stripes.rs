//! The visits of one time block in declination stripes, each sorted by right ascension:
//! the index's cone query. A cap of radius r about (α₀, δ₀) lies inside the stripes that
//! meet [δ₀ − r, δ₀ + r] and, unless it holds a pole, inside |α − α₀| ≤ asin(sin r / cos δ₀)
//! (the cap's widest extent in right ascension), so only the visits in that box are tested.

use std::f64::consts::{FRAC_PI_2, PI, TAU};

use nalgebra::Vector3;

/// One visit as the query reads it: kept together so that a scan touches one array.
#[derive(Debug, Clone, Copy)]
struct Entry {
    center: Vector3<f64>,
    /// Visit time minus the block's node time, days.
    dt: f64,
    visit: u32,
}

#[derive(Debug, Clone, Default)]
struct Stripe {
    /// Right ascensions in [0, 2π), ascending, beside `entries`.
    ra: Vec<f64>,
    entries: Vec<Entry>,
}

/// A block's visits by declination stripe and right ascension.
#[derive(Debug, Clone)]
pub struct Stripes {
    height: f64,
    /// Stripe k holds declinations in [−π/2 + k h, −π/2 + (k + 1) h).
    stripes: Vec<Stripe>,
}

/// How a visit is accepted: within `slack + omega |dt|` radians of the direction.
#[derive(Debug, Clone, Copy)]
pub struct Cone<'a> {
    pub dir: &'a Vector3<f64>,
    pub slack: f64,
    pub omega: f64,
    /// The largest radius over the block (at its largest |dt|).
    pub r_max: f64,
}

impl Stripes {
    /// Stripes of `height` radians over the visits `visits` (indices) of a block.
    pub fn new(
        height: f64,
        visits: impl Iterator<Item = usize>,
        node_tdb: f64,
        tdb: &[f64],
        ra: &[f64],
        dec: &[f64],
        center: &[Vector3<f64>],
    ) -> Stripes {
        let n = (PI / height).ceil() as usize;
        let mut stripes = vec![Stripe::default(); n];
        let mut all: Vec<(usize, f64, usize)> = visits
            .map(|i| (stripe_of(dec[i], height, n), ra[i].rem_euclid(TAU), i))
            .collect();
        all.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.total_cmp(&b.1)));
        for (k, a, i) in all {
            stripes[k].ra.push(a);
            stripes[k].entries.push(Entry {
                center: center[i],
                dt: tdb[i] - node_tdb,
                visit: i as u32,
            });
        }
        Stripes { height, stripes }
    }

    /// Append to `out` the visits inside the cone (in no particular order).
    pub fn select(&self, cone: &Cone, out: &mut Vec<usize>) {
        let n = self.stripes.len();
        let dec0 = cone.dir.z.clamp(-1.0, 1.0).asin();
        let r = cone.r_max;
        if r >= PI {
            self.stripes.iter().for_each(|s| accept_all(s, out));
            return;
        }
        let k_lo = stripe_of((dec0 - r).max(-FRAC_PI_2), self.height, n);
        let k_hi = stripe_of((dec0 + r).min(FRAC_PI_2), self.height, n);
        // A cap over a pole spans every right ascension.
        let half_width = if dec0.abs() + r >= FRAC_PI_2 {
            PI
        } else {
            (r.sin() / dec0.cos()).min(1.0).asin()
        };
        let ra0 = cone.dir.y.atan2(cone.dir.x).rem_euclid(TAU);
        let cos_r_max = r.cos();
        for s in &self.stripes[k_lo..=k_hi] {
            if half_width >= PI {
                scan(s, 0, s.ra.len(), cone, cos_r_max, out);
                continue;
            }
            let (lo, hi) = (ra0 - half_width, ra0 + half_width);
            // The interval may wrap through 0: scan it as one or two runs of the sorted RAs.
            let runs = if lo < 0.0 {
                [(lo + TAU, TAU), (0.0, hi)]
            } else if hi >= TAU {
                [(lo, TAU), (0.0, hi - TAU)]
            } else {
                [(lo, hi), (0.0, -1.0)]
            };
            for (a, b) in runs {
                if a > b {
                    continue;
                }
                let i = s.ra.partition_point(|&x| x < a);
                let j = s.ra.partition_point(|&x| x <= b);
                scan(s, i, j, cone, cos_r_max, out);
            }
        }
    }
}

fn stripe_of(dec: f64, height: f64, n: usize) -> usize {
    (((dec + FRAC_PI_2) / height).floor().max(0.0) as usize).min(n - 1)
}

fn accept_all(s: &Stripe, out: &mut Vec<usize>) {
    out.extend(s.entries.iter().map(|e| e.visit as usize));
}

/// Test entries i..j: outside r_max is decided without the per-visit radius r; the rest are
/// kept when cos ≥ 1 − r²/2, a lower bound of cos r (so no visit within r is lost; the few
/// extra ones, within r⁴/24 in cosine, are tested exactly downstream) that costs no cosine.
/// (Every entry within the slack passes that test too: r ≥ slack, and cos slack exceeds
/// 1 − slack²/2 by about slack⁴/24, far above rounding for any footprint wider than an arcminute.)
fn scan(s: &Stripe, i: usize, j: usize, cone: &Cone, cos_r_max: f64, out: &mut Vec<usize>) {
    for e in &s.entries[i..j] {
        let c = e.center.dot(cone.dir);
        if c < cos_r_max {
            continue;
        }
        let r = cone.slack + cone.omega * e.dt.abs();
        if c >= 1.0 - 0.5 * r * r {
            out.push(e.visit as usize);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sky::frames::unit_vector;
    use rand::{RngExt, SeedableRng};
    use rand_pcg::Pcg64;

    /// The box query finds every visit within the cone and only visits that pass the
    /// scan's cosine bound, for cones anywhere (through RA 0, over the poles) and of any size.
    #[test]
    fn box_query_equals_the_full_scan() {
        let mut rng = Pcg64::seed_from_u64(3);
        let n = 4000;
        let ra: Vec<f64> = (0..n).map(|_| rng.random::<f64>() * TAU).collect();
        let dec: Vec<f64> = (0..n).map(|_| (2.0 * rng.random::<f64>() - 1.0).asin()).collect();
        // Crowd the seam and the poles.
        let ra: Vec<f64> = ra
            .iter()
            .enumerate()
            .map(|(i, &a)| if i % 5 == 0 { a * 1e-3 } else { a })
            .collect();
        let dec: Vec<f64> = dec
            .iter()
            .enumerate()
            .map(|(i, &d)| {
                if i % 7 == 0 {
                    d.signum() * (FRAC_PI_2 - 0.01 * d.abs())
                } else {
                    d
                }
            })
            .collect();
        let tdb: Vec<f64> = (0..n).map(|_| 60000.0 + 8.0 * rng.random::<f64>()).collect();
        let center: Vec<Vector3<f64>> = (0..n).map(|i| unit_vector(ra[i], dec[i])).collect();
        for height_deg in [0.5f64, 2.0, 10.0] {
            let s = Stripes::new(height_deg.to_radians(), 0..n, 60004.0, &tdb, &ra, &dec, &center);
            for k in 0..300 {
                let (a, d) = match k % 3 {
                    0 => (rng.random::<f64>() * 0.02, (2.0 * rng.random::<f64>() - 1.0).asin()),
                    1 => (rng.random::<f64>() * TAU, 1.5 * (2.0 * rng.random::<f64>() - 1.0)),
                    _ => (rng.random::<f64>() * TAU, (2.0 * rng.random::<f64>() - 1.0).asin()),
                };
                let dir = unit_vector(a, d);
                let slack = [0.002, 0.03, 0.3, 2.0][k % 4];
                let omega = [0.0, 1e-3, 0.05][k % 3];
                let cone = Cone {
                    dir: &dir,
                    slack,
                    omega,
                    r_max: slack + omega * 4.0,
                };
                let mut got = Vec::new();
                s.select(&cone, &mut got);
                got.sort_unstable();
                let radius = |i: usize| slack + omega * (tdb[i] - 60004.0).abs();
                let inside = |i: usize| radius(i) >= PI || center[i].dot(&dir) >= radius(i).cos();
                let bounded = |i: usize| inside(i) || center[i].dot(&dir) >= 1.0 - 0.5 * radius(i).powi(2);
                let want: Vec<usize> = (0..n).filter(|&i| inside(i)).collect();
                let missed: Vec<&usize> = want.iter().filter(|i| got.binary_search(i).is_err()).collect();
                assert!(
                    missed.is_empty(),
                    "cone {k} at ({a}, {d}), slack {slack}, ω {omega}, h {height_deg}°: missed {missed:?}"
                );
                let extra: Vec<&usize> = got.iter().filter(|&&i| !bounded(i)).collect();
                assert!(extra.is_empty(), "cone {k}: kept beyond the bound {extra:?}");
            }
        }
    }
}
