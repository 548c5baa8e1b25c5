//! The visits of one time block in a tree of nested caps (a ball tree on the sphere): the
//! index's cone query. Each node is the cap about the mean of its field centres that holds
//! them all; a node splits its visits at the median along the axis (x, y or z) on
//! which their centres spread most, down to leaves of a few visits. A query descends only into
//! nodes whose cap the cone can reach, tested without a cosine, so a cone far from every field
//! costs a few dot products and no trigonometry at all. The cosine of the cone's radius, which
//! the per-visit test needs only at its very edge, is worked out only when a visit comes that
//! close (`Edge`).
//!
//! The root is the cap of the whole block; `surely_misses` is its test without a cosine, for
//! the walk's test of a later block from an earlier node (`index::Walk`).

use std::f64::consts::{FRAC_PI_2, PI};

use nalgebra::Vector3;

/// Visits per leaf: a leaf's scan costs about as much as one more level of caps.
const LEAF: usize = 8;
/// Rounding margin on a cap's radius, radians (ten nanoradians).
const RADIUS_MARGIN: f64 = 1e-8;
/// Rounding margin on the cosines compared with a node's, well above a dot product's error.
const COS_MARGIN: f64 = 1e-12;

/// One visit as the query reads it: kept together so that a scan touches one array.
#[derive(Debug, Clone, Copy)]
struct Entry {
    center: Vector3<f64>,
    /// Visit time minus the block's node time, days.
    dt: f64,
    visit: u32,
}

/// A cap holding the centres of `entries[start..end]`; its children follow it (the first at
/// the next index, the second at `second`), none for a leaf (`second == 0`).
#[derive(Debug, Clone, Copy)]
struct Node {
    center: Vector3<f64>,
    radius: f64,
    cos_radius: f64,
    sin_radius: f64,
    start: u32,
    end: u32,
    second: u32,
}

/// A block's visits as a tree of caps.
#[derive(Debug, Clone)]
pub struct CapTree {
    nodes: Vec<Node>,
    entries: Vec<Entry>,
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

impl CapTree {
    /// The tree of the visits `visits` (indices) of a block whose node is at `node_tdb`.
    pub fn new(visits: impl Iterator<Item = usize>, node_tdb: f64, tdb: &[f64], center: &[Vector3<f64>]) -> CapTree {
        let mut entries: Vec<Entry> = visits
            .map(|i| Entry {
                center: center[i],
                dt: tdb[i] - node_tdb,
                visit: i as u32,
            })
            .collect();
        let mut nodes = Vec::with_capacity(2 * entries.len() / LEAF + 1);
        let n = entries.len();
        build(&mut nodes, &mut entries, 0, n);
        CapTree { nodes, entries }
    }

    /// True only when no field centre of the block lies within `r` of the unit vector `dir`,
    /// decided without a cosine (false may still miss; `Node::surely_missed`).
    #[inline]
    pub fn surely_misses(&self, dir: &Vector3<f64>, r: f64) -> bool {
        self.nodes.first().is_none_or(|root| root.surely_missed(dir, r))
    }

    /// Append to `out` the visits inside the cone (in no particular order): those whose centre
    /// c has c · dir ≥ cos r_max and c · dir ≥ 1 − r²/2 with r = slack + ω |dt|, a lower bound
    /// of cos r (so no visit within r is lost; the few extra ones, within r⁴/24 in cosine, are
    /// tested exactly downstream) that costs no cosine per visit. A node is passed over when
    /// the cone of radius r_max surely misses its cap (`Edge::misses`).
    pub fn select(&self, cone: &Cone, out: &mut Vec<usize>) {
        if self.surely_misses(cone.dir, cone.r_max) {
            return;
        }
        if cone.r_max >= PI {
            out.extend(self.entries.iter().map(|e| e.visit as usize));
            return;
        }
        let mut edge = Edge::new(cone.r_max);
        let mut stack = [0u32; 64];
        let mut top = 1;
        while top > 0 {
            top -= 1;
            let k = stack[top] as usize;
            let node = &self.nodes[k];
            if edge.misses(node, cone.dir) {
                continue;
            }
            if node.second == 0 {
                scan(
                    &self.entries[node.start as usize..node.end as usize],
                    cone,
                    &mut edge,
                    out,
                );
            } else {
                stack[top] = node.second;
                stack[top + 1] = k as u32 + 1;
                top += 2;
            }
        }
    }
}

impl Node {
    /// True only when no point within `r` of the unit vector `dir` lies in the cap, decided
    /// without a cosine (false may still miss): for a cap radius R ≤ π/2,
    /// cos(R + r) ≥ cos R (1 − r²/2) − sin R · r (cos r ≥ 1 − r²/2, sin r ≤ r), so a cosine to
    /// the cap's centre below that bound (less a rounding margin) misses it.
    #[inline]
    fn surely_missed(&self, dir: &Vector3<f64>, r: f64) -> bool {
        self.radius + r < PI && self.radius <= FRAC_PI_2 && dir.dot(&self.center) < self.bound(1.0 - 0.5 * r * r, r)
    }

    /// cos R · `cos_lower` − sin R · `sin_upper`, less the rounding margin: a lower bound of
    /// cos(R + r) given a lower bound of cos r and an upper bound of sin r (R ≤ π/2, R + r ≤ π).
    #[inline]
    fn bound(&self, cos_lower: f64, sin_upper: f64) -> f64 {
        self.cos_radius * cos_lower - self.sin_radius * sin_upper - COS_MARGIN
    }
}

/// A query's cone radius r_max as the node and visit tests use it, without a cosine unless a
/// visit comes to the very edge: 1 − r_max²/2 ≤ cos r_max ≤ 1 − r_max²/2 + r_max⁴/24 and
/// sin r_max ≤ r_max give the caps' test (`Node::bound`) and decide every visit whose cosine
/// lies outside that narrow band; cos r_max itself is worked out for one that lies inside.
struct Edge {
    r_max: f64,
    cos_lower: f64,
    cos_upper: f64,
    cos_r_max: Option<f64>,
}

impl Edge {
    fn new(r_max: f64) -> Edge {
        let r2 = r_max * r_max;
        Edge {
            r_max,
            cos_lower: 1.0 - 0.5 * r2,
            cos_upper: 1.0 - 0.5 * r2 + r2 * r2 / 24.0 + COS_MARGIN,
            cos_r_max: None,
        }
    }

    /// Whether no point within r_max of `dir` surely lies in the node's cap.
    #[inline]
    fn misses(&self, node: &Node, dir: &Vector3<f64>) -> bool {
        node.radius + self.r_max < PI
            && node.radius <= FRAC_PI_2
            && dir.dot(&node.center) < node.bound(self.cos_lower, self.r_max)
    }

    /// Whether a cosine `c` to the cone's direction is at least cos r_max.
    #[inline]
    fn holds(&mut self, c: f64) -> bool {
        c >= self.cos_upper
            || (c >= self.cos_lower && c >= *self.cos_r_max.get_or_insert_with(|| cos_at_edge(self.r_max)))
    }
}

/// cos r (as `sin_cos` gives it), out of line: inlined, the compiler would work it out for every
/// query ahead of the test that almost never needs it.
#[cold]
#[inline(never)]
fn cos_at_edge(r: f64) -> f64 {
    r.sin_cos().1
}

/// Test entries: kept when cos ≥ 1 − r²/2 (see `select`) and within r_max (`Edge`). (Every
/// entry within the slack passes the first test too: r ≥ slack, and cos slack exceeds
/// 1 − slack²/2 by about slack⁴/24, far above rounding for any footprint wider than an
/// arcminute.)
#[inline]
fn scan(entries: &[Entry], cone: &Cone, edge: &mut Edge, out: &mut Vec<usize>) {
    for e in entries {
        let c = e.center.dot(cone.dir);
        if c < edge.cos_lower {
            continue; // beyond r_max
        }
        let r = cone.slack + cone.omega * e.dt.abs();
        if c >= 1.0 - 0.5 * r * r && edge.holds(c) {
            out.push(e.visit as usize);
        }
    }
}

/// Append the node of `entries[start..end]` and, past a leaf's size, its two halves.
fn build(nodes: &mut Vec<Node>, entries: &mut [Entry], start: usize, end: usize) {
    let here = nodes.len();
    nodes.push(cap_of(&entries[start..end], start, end));
    if end - start <= LEAF {
        return;
    }
    let part = &mut entries[start..end];
    let axis = widest_axis(part);
    let mid = part.len() / 2;
    part.select_nth_unstable_by(mid, |a, b| a.center[axis].total_cmp(&b.center[axis]));
    build(nodes, entries, start, start + mid);
    nodes[here].second = nodes.len() as u32;
    build(nodes, entries, start + mid, end);
}

/// The cap about the normalized mean of the entries' centres that holds them all (a pole
/// when the mean vanishes), with a margin for rounding.
fn cap_of(entries: &[Entry], start: usize, end: usize) -> Node {
    let sum: Vector3<f64> = entries.iter().map(|e| e.center).sum();
    let center = if sum.norm() > 1e-9 {
        sum.normalize()
    } else {
        Vector3::z()
    };
    let radius = entries
        .iter()
        .map(|e| e.center.dot(&center).clamp(-1.0, 1.0).acos())
        .fold(0.0, f64::max)
        + RADIUS_MARGIN;
    Node {
        center,
        radius,
        cos_radius: radius.cos(),
        sin_radius: radius.sin(),
        start: start as u32,
        end: end as u32,
        second: 0,
    }
}

/// The axis (0, 1, 2) on which the entries' centres spread most.
fn widest_axis(entries: &[Entry]) -> usize {
    let spread = |k: usize| {
        let (lo, hi) = entries.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), e| {
            (lo.min(e.center[k]), hi.max(e.center[k]))
        });
        hi - lo
    };
    let s = [spread(0), spread(1), spread(2)];
    (0..3).fold(0, |best, k| if s[k] > s[best] { k } else { best })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sky::frames::unit_vector;
    use rand::{RngExt, SeedableRng};
    use rand_pcg::Pcg64;
    use std::f64::consts::TAU;

    /// The tree query finds every visit within the cone and only visits that pass the scan's
    /// cosine bound, exactly those of the scan's rule over the whole block, for cones anywhere (through RA 0, over the poles) and of any size, on
    /// visits crowded at the seam and the poles and on a handful (a lone leaf).
    #[test]
    fn query_equals_the_full_scan() {
        let mut rng = Pcg64::seed_from_u64(3);
        for n in [4000usize, 5] {
            let ra: Vec<f64> = (0..n)
                .map(|i| rng.random::<f64>() * if i % 5 == 0 { 1e-3 * TAU } else { TAU })
                .collect();
            let dec: Vec<f64> = (0..n)
                .map(|i| {
                    let d = (2.0 * rng.random::<f64>() - 1.0).asin();
                    if i % 7 == 0 {
                        d.signum() * (FRAC_PI_2 - 0.01 * d.abs())
                    } else {
                        d
                    }
                })
                .collect();
            let tdb: Vec<f64> = (0..n).map(|_| 60000.0 + 8.0 * rng.random::<f64>()).collect();
            let center: Vec<Vector3<f64>> = (0..n).map(|i| unit_vector(ra[i], dec[i])).collect();
            let tree = CapTree::new(0..n, 60004.0, &tdb, &center);
            for k in 0..900 {
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
                tree.select(&cone, &mut got);
                got.sort_unstable();
                let radius = |i: usize| slack + omega * (tdb[i] - 60004.0).abs();
                let inside = |i: usize| radius(i) >= PI || center[i].dot(&dir) >= radius(i).cos();
                let bounded = |i: usize| inside(i) || center[i].dot(&dir) >= 1.0 - 0.5 * radius(i).powi(2);
                let want: Vec<usize> = (0..n).filter(|&i| inside(i)).collect();
                let missed: Vec<&usize> = want.iter().filter(|i| got.binary_search(i).is_err()).collect();
                assert!(
                    missed.is_empty(),
                    "n {n}, cone {k} at ({a}, {d}), slack {slack}, ω {omega}: missed {missed:?}"
                );
                let extra: Vec<&usize> = got.iter().filter(|&&i| !bounded(i)).collect();
                assert!(extra.is_empty(), "n {n}, cone {k}: kept beyond the bound {extra:?}");
                // Exactly the visits the scan's rule keeps over the whole block, so that the
                // tree's pruning decides no candidate.
                let rule: Vec<usize> = (0..n)
                    .filter(|&i| {
                        let (c, r) = (center[i].dot(&dir), radius(i));
                        cone.r_max >= PI || (c >= cone.r_max.sin_cos().1 && c >= 1.0 - 0.5 * r * r)
                    })
                    .collect();
                assert_eq!(got, rule, "n {n}, cone {k}: not the scan's rule");
                if tree.surely_misses(&dir, cone.r_max) {
                    assert!(want.is_empty(), "n {n}, cone {k}: the root's test missed {want:?}");
                }
            }
        }
    }
}
