//! Detection efficiency of a visit as a function of magnitude and rate of motion.
//!
//! By contract `depth_mag` is the magnitude at which the efficiency is half its peak.
//! * step: η = peak for m < depth, 0 otherwise.
//! * logistic: η = peak / (1 + exp((m − depth)/width_mag)).
//! * tanh-product (a published form for efficiencies measured with implanted moving sources;
//!   the source is in methods.md): η = peak/4 · (1 − tanh((m − m_c)/w_f)) · (1 − tanh((m − m_c)/w_t))
//!   with w_f = `fall_width_mag`, w_t = `tail_width_mag`. At its centre m_c the efficiency is
//!   peak/4, not peak/2, so m_c is not the depth: m_c = depth + Δ, with Δ > 0 solved once per
//!   model from (1 + tanh(Δ/w_f))(1 + tanh(Δ/w_t)) = 2, so that η(depth) = peak/2.
//! * table: η at (m − depth, rate), or at (m, rate) for a table in magnitudes (a published
//!   characterization entered as it is), bilinear, clamped at the edges of the grid.
//! * A bright limit (saturation): η = 0 for a magnitude brighter than `bright_limit_mag`
//!   (the magnitude before any trailing loss).
//! * Scope: an efficiency applies per visit (the probability of a detection in one visit) or
//!   per tracklet (the probability that an object in the field on a night is found as a
//!   tracklet of that night's visits: one draw per night, `survey::decision`).
//! * A probability below 2⁻⁵³ is taken as zero. The engine's uniform draws are multiples of
//!   2⁻⁵³, so such a probability would succeed only on a draw of exactly 0; taking it as zero
//!   lets the engine skip, exactly, objects too faint for every visit (`engine::reach`).
//! * Trailing loss (Vereš & Chesley 2017, AJ 154, 12, arXiv:1706.09398; the coefficients as
//!   tabulated in R. L. Jones 2017, technical note SMTN-003, "Trailing losses for moving
//!   objects"): Δm = 1.25 log10(1 + a x² / (1 + b x)), x = trail length / seeing FWHM, added
//!   to the magnitude before the efficiency is read. Detection loss (a source found by a
//!   filter matched to a point source) (a, b) = (0.420, 0.003); signal-to-noise loss (the
//!   light spread over more background) (0.761, 1.162). An earlier version had (0.67, 1.16)
//!   for the latter, recalled wrongly. `custom` takes any pair.

/// Detection probabilities below this (2⁻⁵³) are zero.
pub const P_NEGLIGIBLE: f64 = 1.0 / 9_007_199_254_740_992.0;

/// Trailing-loss coefficients (a, b).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Trailing {
    pub a: f64,
    pub b: f64,
}

impl Trailing {
    /// Vereš & Chesley (2017): the detection loss of a trailed source (PSF-filter detection).
    pub const DETECTION: Trailing = Trailing { a: 0.42, b: 0.003 };
    /// Vereš & Chesley (2017): the signal-to-noise loss of a trailed source (trail fitting).
    pub const SNR: Trailing = Trailing { a: 0.761, b: 1.162 };
    pub const NONE: Trailing = Trailing { a: 0.0, b: 0.0 };

    /// Magnitude loss for a trail of `x` seeing FWHMs.
    pub fn loss_mag(&self, x: f64) -> f64 {
        1.25 * (1.0 + self.a * x * x / (1.0 + self.b * x)).log10()
    }
}

/// The one enum of efficiency shapes.
#[derive(Debug, Clone, PartialEq)]
pub enum EfficiencyShape {
    Step,
    Logistic {
        width_mag: f64,
    },
    /// `centre_offset_mag` = m_c − depth (> 0), solved once so that η(depth) = peak/2.
    TanhProduct {
        fall_width_mag: f64,
        tail_width_mag: f64,
        centre_offset_mag: f64,
    },
    /// `eta[i][j]` at (`mags[i]`, `rates[j]`), both axes ascending; `mags` are m − depth
    /// (`relative_to_depth`) or magnitudes.
    Table {
        mags: Vec<f64>,
        relative_to_depth: bool,
        rates: Vec<f64>,
        eta: Vec<Vec<f64>>,
    },
}

/// What one efficiency draw decides.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Scope {
    /// A detection in one visit.
    #[default]
    Visit,
    /// A tracklet of one night's visits: one draw per object and night.
    Tracklet,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Efficiency {
    pub shape: EfficiencyShape,
    pub peak: f64,
    pub trailing: Trailing,
    /// Nothing brighter than this is detected (saturation); −∞: no limit.
    pub bright_limit_mag: f64,
    pub scope: Scope,
}

impl EfficiencyShape {
    /// A tanh-product shape with its centre placed so that η(depth) = peak/2.
    pub fn tanh_product(fall_width_mag: f64, tail_width_mag: f64) -> EfficiencyShape {
        // g(u) = (1 − tanh(−u/w_f))(1 − tanh(−u/w_t)) with u = m_c − depth rises from 1 (u = 0)
        // toward 4; bisect g(u) = 2 on u in [0, 50 max(w)].
        let (wf, wt) = (fall_width_mag, tail_width_mag);
        let g = |u: f64| (1.0 + (u / wf).tanh()) * (1.0 + (u / wt).tanh());
        let (mut lo, mut hi) = (0.0, 50.0 * wf.max(wt));
        for _ in 0..200 {
            let m = 0.5 * (lo + hi);
            if g(m) < 2.0 { lo = m } else { hi = m }
        }
        EfficiencyShape::TanhProduct {
            fall_width_mag,
            tail_width_mag,
            centre_offset_mag: 0.5 * (lo + hi),
        }
    }
}

impl Efficiency {
    /// η at magnitude `mag` (already including any trailing loss) for a visit of depth `depth`.
    pub fn eta(&self, mag: f64, depth: f64, rate: f64) -> f64 {
        let dm = mag - depth;
        match &self.shape {
            EfficiencyShape::Step => {
                if dm < 0.0 {
                    self.peak
                } else {
                    0.0
                }
            }
            EfficiencyShape::Logistic { width_mag } => self.peak / (1.0 + (dm / width_mag).exp()),
            EfficiencyShape::TanhProduct {
                fall_width_mag: wf,
                tail_width_mag: wt,
                centre_offset_mag,
            } => {
                let u = dm - centre_offset_mag;
                0.25 * self.peak * (1.0 - (u / wf).tanh()) * (1.0 - (u / wt).tanh())
            }
            EfficiencyShape::Table {
                mags,
                relative_to_depth,
                rates,
                eta,
            } => bilinear(mags, rates, eta, if *relative_to_depth { dm } else { mag }, rate),
        }
    }

    /// η including the trailing loss of a source moving at `rate` (″/h) in an exposure of
    /// `exposure_s` seconds with seeing `seeing_arcsec`.
    pub fn p(&self, mag: f64, depth: f64, rate: f64, exposure_s: f64, seeing_arcsec: f64) -> f64 {
        if mag < self.bright_limit_mag {
            return 0.0;
        }
        let x = rate * exposure_s / 3600.0 / seeing_arcsec;
        let eta = self.eta(mag + self.trailing.loss_mag(x), depth, rate);
        if eta < P_NEGLIGIBLE { 0.0 } else { eta }
    }

    /// An upper bound on `p` for a source no brighter than `mag` (before any trailing loss) in
    /// a visit no deeper than `depth`, at any rate. Step, logistic and tanh-product fall with
    /// m − depth and a trailing loss only adds to m, so η(mag, depth) bounds them; a table
    /// mixes only neighbouring rows, so its largest entry from the row at or before `mag` on
    /// bounds it. Zero where `p` is zero (below 2⁻⁵³).
    pub fn largest_p(&self, mag: f64, depth: f64) -> f64 {
        let bound = match &self.shape {
            EfficiencyShape::Table {
                mags,
                relative_to_depth,
                eta,
                ..
            } => {
                let x = if *relative_to_depth { mag - depth } else { mag };
                let first = mags.partition_point(|&m| m <= x).saturating_sub(1);
                eta[first..].iter().flatten().copied().fold(0.0, f64::max)
            }
            _ => self.eta(mag, depth, 0.0),
        };
        match bound {
            b if b.is_nan() => 1.0, // no bound known: nothing can be ruled out
            b if b < P_NEGLIGIBLE => 0.0,
            b => b,
        }
    }

    /// The magnitude (before any trailing loss) at and beyond which `p` is zero at every rate
    /// in a visit of depth `depth`: +∞ when there is none, −∞ when `p` is zero everywhere.
    /// It is 10⁻⁶ mag past the exact crossing, so that rounding in m − depth cannot undo it.
    pub fn zero_beyond_mag(&self, depth: f64) -> f64 {
        match &self.shape {
            EfficiencyShape::Table {
                relative_to_depth: false,
                ..
            } => self.exact_zero_beyond_dm() + 1e-6,
            _ => depth + self.exact_zero_beyond_dm() + 1e-6,
        }
    }

    fn exact_zero_beyond_dm(&self) -> f64 {
        let negligible = |dm: f64| self.eta(dm, 0.0, 0.0) < P_NEGLIGIBLE;
        match &self.shape {
            EfficiencyShape::Step => {
                if self.peak < P_NEGLIGIBLE {
                    f64::NEG_INFINITY
                } else {
                    0.0
                }
            }
            EfficiencyShape::Logistic { .. } | EfficiencyShape::TanhProduct { .. } => {
                // Both fall monotonically with dm: bracket the crossing, then bisect.
                if negligible(-1.0e4) {
                    return f64::NEG_INFINITY;
                }
                let mut hi = 1.0;
                while !negligible(hi) {
                    hi *= 2.0;
                    if hi > 1.0e4 {
                        return f64::INFINITY;
                    }
                }
                let mut lo = -1.0e4;
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if negligible(mid) { hi = mid } else { lo = mid }
                }
                hi
            }
            EfficiencyShape::Table { mags, eta, .. } => {
                // Interpolation and clamping mix only neighbouring rows: zero from the first
                // row after which every row is negligible (in the table's own magnitude axis).
                let live = |row: &Vec<f64>| row.iter().any(|&e| e >= P_NEGLIGIBLE);
                match eta.iter().rposition(live) {
                    None => f64::NEG_INFINITY,
                    Some(k) if k + 1 < mags.len() => mags[k + 1],
                    Some(_) => f64::INFINITY,
                }
            }
        }
    }
}

/// Index i and weight t with xs[i] ≤ x ≤ xs[i+1], clamped at both ends.
fn bracket(xs: &[f64], x: f64) -> (usize, f64) {
    if xs.len() == 1 || x <= xs[0] {
        return (0, 0.0);
    }
    let last = xs.len() - 1;
    if x >= xs[last] {
        return (last - 1, 1.0);
    }
    let i = xs.partition_point(|&v| v <= x) - 1;
    (i, (x - xs[i]) / (xs[i + 1] - xs[i]))
}

fn bilinear(xs: &[f64], ys: &[f64], v: &[Vec<f64>], x: f64, y: f64) -> f64 {
    let (i, tx) = bracket(xs, x);
    let (j, ty) = bracket(ys, y);
    let at = |a: usize, b: usize| v[a.min(xs.len() - 1)][b.min(ys.len() - 1)];
    let lo = at(i, j) * (1.0 - ty) + at(i, j + 1) * ty;
    let hi = at(i + 1, j) * (1.0 - ty) + at(i + 1, j + 1) * ty;
    lo * (1.0 - tx) + hi * tx
}

/// The default efficiency plus per-class overrides, indexed by `Visits::efficiency_class`.
#[derive(Debug, Clone, PartialEq)]
pub struct EfficiencyModel {
    pub default: Efficiency,
    /// One entry per `Visits::class_names` entry: `None` uses the default.
    pub classes: Vec<Option<Efficiency>>,
}

impl EfficiencyModel {
    pub fn for_class(&self, class: u16) -> &Efficiency {
        self.classes
            .get(class as usize)
            .and_then(|b| b.as_ref())
            .unwrap_or(&self.default)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_beyond_is_where_p_first_vanishes() {
        let shapes = [
            EfficiencyShape::Step,
            EfficiencyShape::Logistic { width_mag: 0.3 },
            EfficiencyShape::tanh_product(0.15, 0.45),
            EfficiencyShape::Table {
                mags: vec![-1.0, 0.0, 1.0, 2.0],
                relative_to_depth: true,
                rates: vec![0.0, 10.0],
                eta: vec![vec![0.9, 0.8], vec![0.5, 0.4], vec![0.1, 0.0], vec![0.0, 0.0]],
            },
        ];
        for shape in shapes {
            let eff = Efficiency {
                shape,
                peak: 0.9,
                trailing: Trailing::DETECTION,
                bright_limit_mag: f64::NEG_INFINITY,
                scope: Scope::Visit,
            };
            let dm = eff.zero_beyond_mag(24.0) - 24.0;
            assert!(dm.is_finite(), "{:?}", eff.shape);
            // Zero from there on, at any rate and trailing loss; not zero just before.
            for (k, rate) in [(0.0, 0.0), (0.0, 5.0), (3.0, 0.0), (40.0, 100.0)] {
                assert_eq!(
                    eff.p(24.0 + dm + k, 24.0, rate, 300.0, 1.0),
                    0.0,
                    "{:?} at {k}",
                    eff.shape
                );
            }
            assert!(eff.p(24.0 + dm - 2e-6, 24.0, 0.0, 300.0, 1.0) > 0.0, "{:?}", eff.shape);
        }
        // The logistic's crossing in closed form: peak / (1 + e^(dm/w)) = 2⁻⁵³.
        let lg = Efficiency {
            shape: EfficiencyShape::Logistic { width_mag: 0.2 },
            ..plain(0.95)
        };
        let expected = 0.2 * (0.95 / P_NEGLIGIBLE - 1.0).ln();
        assert!((lg.zero_beyond_mag(0.0) - 1e-6 - expected).abs() < 1e-9);
    }

    #[test]
    fn half_peak_at_depth() {
        let lg = Efficiency {
            shape: EfficiencyShape::Logistic { width_mag: 0.3 },
            ..plain(0.9)
        };
        assert!((lg.eta(24.0, 24.0, 0.0) - 0.45).abs() < 1e-12);
        let tp = Efficiency {
            shape: EfficiencyShape::tanh_product(0.2, 0.6),
            ..plain(0.8)
        };
        assert!((tp.eta(24.0, 24.0, 0.0) - 0.4).abs() < 1e-9);
        // At its centre m_c = depth + Δ the published form gives a quarter of the peak.
        let EfficiencyShape::TanhProduct { centre_offset_mag, .. } = tp.shape else {
            unreachable!()
        };
        assert!(centre_offset_mag > 0.0);
        assert!((tp.eta(24.0 + centre_offset_mag, 24.0, 0.0) - 0.2).abs() < 1e-9);
        // Equal widths have the closed form m_c − depth = w·atanh(√2 − 1).
        let EfficiencyShape::TanhProduct { centre_offset_mag, .. } = EfficiencyShape::tanh_product(0.3, 0.3) else {
            unreachable!()
        };
        assert!((centre_offset_mag - 0.3 * (2f64.sqrt() - 1.0).atanh()).abs() < 1e-9);
    }

    #[test]
    fn table_is_bilinear_and_clamped() {
        let t = Efficiency {
            shape: EfficiencyShape::Table {
                mags: vec![-1.0, 0.0, 1.0],
                relative_to_depth: true,
                rates: vec![0.0, 10.0],
                eta: vec![vec![1.0, 0.8], vec![0.5, 0.4], vec![0.0, 0.0]],
            },
            ..plain(1.0)
        };
        assert!((t.eta(20.0, 20.5, 5.0) - 0.5 * (0.9 + 0.45)).abs() < 1e-12);
        assert_eq!(t.eta(10.0, 20.0, 100.0), 0.8);
        assert_eq!(t.eta(30.0, 20.0, -5.0), 0.0);
        // The same grid in magnitudes 22, 23, 24: the depth no longer moves it, and the
        // magnitude beyond which it is zero is the table's own 24, whatever the depth.
        let a = Efficiency {
            shape: EfficiencyShape::Table {
                mags: vec![22.0, 23.0, 24.0],
                relative_to_depth: false,
                rates: vec![0.0, 10.0],
                eta: vec![vec![1.0, 0.8], vec![0.5, 0.4], vec![0.0, 0.0]],
            },
            ..plain(1.0)
        };
        for depth in [20.0, 23.0, 26.0] {
            assert!((a.eta(22.5, depth, 5.0) - 0.5 * (0.9 + 0.45)).abs() < 1e-12);
            assert!((a.zero_beyond_mag(depth) - 24.0).abs() < 2e-6);
        }
    }

    #[test]
    fn nothing_brighter_than_the_bright_limit() {
        let e = Efficiency {
            bright_limit_mag: 16.0,
            ..plain(1.0)
        };
        assert_eq!(e.p(15.99, 24.0, 0.0, 0.0, 1.0), 0.0);
        assert_eq!(e.p(16.0, 24.0, 0.0, 0.0, 1.0), 1.0);
    }

    /// A step at full peak with no trailing, no bright limit, per visit.
    fn plain(peak: f64) -> Efficiency {
        Efficiency {
            shape: EfficiencyShape::Step,
            peak,
            trailing: Trailing::NONE,
            bright_limit_mag: f64::NEG_INFINITY,
            scope: Scope::Visit,
        }
    }

    #[test]
    fn trailing_loss_points() {
        // Vereš & Chesley (2017): Δm = 0 for a point source (x = 0). The x = 1 and x = 4 values
        // are the published formula evaluated independently (Python `math`) with the
        // coefficients of the technical note (SMTN-003, see the module comment): detection
        // 0.18988 and 1.10389 mag; signal to noise 0.16372 and 0.62389 mag.
        assert_eq!(Trailing::DETECTION.loss_mag(0.0), 0.0);
        assert_eq!(Trailing::SNR.loss_mag(0.0), 0.0);
        assert!((Trailing::DETECTION.loss_mag(1.0) - 0.18988).abs() < 1e-5);
        assert!((Trailing::DETECTION.loss_mag(4.0) - 1.10389).abs() < 1e-5);
        assert!((Trailing::SNR.loss_mag(1.0) - 0.16372).abs() < 1e-5);
        assert!((Trailing::SNR.loss_mag(4.0) - 0.62389).abs() < 1e-5);
        // The detection loss exceeds the signal-to-noise loss for long trails (x = 4), the
        // order the technical note's figure shows.
        assert!(Trailing::DETECTION.loss_mag(4.0) > Trailing::SNR.loss_mag(4.0));
        // Monotone in the trail length.
        assert!(Trailing::DETECTION.loss_mag(2.0) > Trailing::DETECTION.loss_mag(1.0));
    }
}
