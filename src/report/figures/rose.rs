//! Rose diagrams of an angle (ϖ, Ω or ω): the observed count per angular bin as wedges, and the
//! null band — the central interval of counts that an isotropic population seen through the
//! same surveys gives — as a grey ring segment per bin, with its median as a line.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::error::Result;
use crate::report::figure::{DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{label, symbol};
use crate::report::style;
use crate::report::tables::{NullBand, RoseBin};

pub(crate) type Polar<'a, 'b> = ChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// Wedge radii are proportional to the square root of the count, so that wedge *areas* are
/// proportional to counts (a rose with linear radii exaggerates the largest bins).
pub(crate) fn radius(count: f64) -> f64 {
    count.max(0.0).sqrt()
}

/// What the grey band of a rose is: the bias-aware null of the cluster test, or the naive
/// one of uniform angles (no survey bias), which is all an observe run alone can give.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Band {
    BiasAware,
    Naive,
}

impl Band {
    fn describe(self) -> &'static str {
        match self {
            Band::BiasAware => {
                "Grey: the null band, the central 90% of counts per bin that isotropic angles seen \
                 through the same surveys give (the bias-aware null); dark line: its median. Wedges \
                 outside the band are what the surveys' bias does not explain."
            }
            Band::Naive => {
                "Grey: the naive band, the central 90% of counts per bin for the same number of \
                 uniformly distributed angles, with no survey bias; dark line: its median. The \
                 bias-aware band comes from the cluster test."
            }
        }
    }
}

/// Where an observed count sits against its bin's null band.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Against {
    Inside,
    Below,
    Above,
    /// No band for this bin.
    Unbanded,
}

impl Against {
    pub fn of(b: &RoseBin) -> Against {
        match b.null {
            None => Against::Unbanded,
            Some(n) if b.observed < n.lo => Against::Below,
            Some(n) if b.observed > n.hi => Against::Above,
            Some(_) => Against::Inside,
        }
    }

    /// The wedge's fill: orange inside the band (or without one), dark orange above it,
    /// blue below it (blue and orange stay apart for the common colour-vision deficiencies,
    /// and the two oranges differ in lightness).
    fn fill(self) -> RGBAColor {
        match self {
            Against::Inside | Against::Unbanded => style::series(1).mix(0.45),
            Against::Above => RGBColor(0x9a, 0x3a, 0x0e).mix(0.9),
            Against::Below => style::series(0).mix(0.8),
        }
    }

    fn edge(self) -> RGBColor {
        match self {
            Against::Inside | Against::Unbanded => style::series(1),
            Against::Above => RGBColor(0x6a, 0x24, 0x06),
            Against::Below => style::series(0),
        }
    }
}

/// The caption's warning when the catalogue is small against the number of bins, and the
/// reminder that some bins leave a 90% band by chance.
fn reading_note(total: f64, bins: &[RoseBin]) -> String {
    let n = bins.len();
    let banded = bins.iter().filter(|b| b.null.is_some()).count();
    let (below, above) = (
        bins.iter().filter(|b| Against::of(b) == Against::Below).count(),
        bins.iter().filter(|b| Against::of(b) == Against::Above).count(),
    );
    let mut s = String::new();
    if banded > 0 {
        s += &format!(
            " Dark orange: wedges above the band ({above} of {banded} bins); blue: below it ({below}; an empty bin below the band is a blue arc at the band's lower edge). Each bin's band holds 90% of the null's counts, so about one bin in ten lies outside it by chance alone (here {:.1} of {banded} expected).",
            0.1 * banded as f64
        );
    }
    if total < n as f64 {
        s += &format!(
            " Caution: {total:.0} objects in {n} bins, fewer objects than bins: most bins hold 0 or 1 object, so a single wedge, in or out of the band, says nothing; judge the clustering by the cluster test's statistics, not by wedges."
        );
    }
    s
}

/// The rose of `quantity` (an angle in degrees, 0° to the right, increasing counter-clockwise).
pub fn rose(quantity: &str, bins: &[RoseBin], band: Band, note: &str) -> Result<Figure> {
    let sym = symbol(quantity);
    let title = format!("Rose diagram of {sym}");
    let total: f64 = bins.iter().map(|b| b.observed).sum();
    let has_null = bins.iter().any(|b| b.null.is_some());
    let caption = format!(
        "Number of objects per bin of {} ({total:.0} objects), as wedges from the centre; 0° to \
         the right, angles increasing counter-clockwise as seen from the north ecliptic pole; \
         radius ∝ √count so that wedge areas are proportional to counts; rings at the counts \
         marked. {}{} {note}",
        label(quantity),
        if has_null {
            band.describe()
        } else {
            "No null band given."
        },
        reading_note(total, bins)
    );
    let key_rows = if has_null { 3 } else { 0 };
    render(
        &format!("rose_{quantity}"),
        &title,
        &caption,
        (style::SQUARE + 80, style::SQUARE + 22 * key_rows),
        |root| {
            let area = titled(root, &title)?;
            if bins.is_empty() || total == 0.0 {
                return empty_note(&area, "no objects to show");
            }
            let (_, h) = area.dim_in_pixel();
            let (plot, key) = area.split_vertically(h - 22 * key_rows as u32);
            let top = bins
                .iter()
                .map(|b| b.observed.max(b.null.map_or(0.0, |n| n.hi)))
                .fold(1.0, f64::max);
            let r = radius(top) * 1.2;
            let (w, h) = plot.dim_in_pixel();
            let aspect = w as f64 / h as f64;
            let mut chart = ChartBuilder::on(&plot)
                .margin(10)
                .build_cartesian_2d(-r * aspect..r * aspect, -r..r)?;
            // Band, wedges, the grid, then the band's edges and median and the labels on top so
            // that they stay legible.
            draw_band(&mut chart, bins)?;
            draw_wedges(&mut chart, bins)?;
            draw_grid(&mut chart, top, r)?;
            draw_band_lines(&mut chart, bins)?;
            draw_labels(&mut chart, top, r)?;
            if has_null {
                draw_key(&key, band)?;
            }
            Ok(())
        },
    )
}

/// Screen point of an angle (deg) at radius `r`: 0° to the right, counter-clockwise, as the
/// ecliptic plane is seen from its north pole with the equinox direction to the right.
pub(crate) fn at(angle_deg: f64, r: f64) -> (f64, f64) {
    let t = angle_deg.to_radians();
    (r * t.cos(), r * t.sin())
}

pub(crate) fn arc(a0: f64, a1: f64, r: f64) -> impl Iterator<Item = (f64, f64)> {
    let n = ((a1 - a0).abs() / 2.0).ceil().max(2.0) as usize;
    (0..=n).map(move |k| at(a0 + (a1 - a0) * k as f64 / n as f64, r))
}

fn sector(a0: f64, a1: f64, r0: f64, r1: f64) -> Vec<(f64, f64)> {
    arc(a0, a1, r1).chain(arc(a1, a0, r0)).collect()
}

/// Rings at round counts and spokes every 45°.
pub(crate) fn draw_grid(chart: &mut Polar, top: f64, r: f64) -> DrawResult {
    let grid = style::GRID.stroke_width(1);
    for &n in &ring_counts(top) {
        let pts: Vec<_> = arc(0.0, 360.0, radius(n as f64)).collect();
        chart.draw_series(std::iter::once(PathElement::new(pts, grid)))?;
    }
    for a in (0..360).step_by(45) {
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(0.0, 0.0), at(a as f64, r / 1.2)],
            grid,
        )))?;
    }
    Ok(())
}

/// The count of each ring and the angles at the quarters.
pub(crate) fn draw_labels(chart: &mut Polar, top: f64, r: f64) -> DrawResult {
    let ticks = ring_counts(top);
    let lab = style::muted_text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Bottom));
    for &n in &ticks {
        chart.draw_series(std::iter::once(Text::new(
            format!("{n}"),
            at(22.5, radius(n as f64)),
            lab.clone(),
        )))?;
    }
    let ang = style::text(style::LABEL_PX).pos(Pos::new(HPos::Center, VPos::Center));
    for a in (0..360).step_by(90) {
        chart.draw_series(std::iter::once(Text::new(
            format!("{a}°"),
            at(a as f64, r * 0.95),
            ang.clone(),
        )))?;
    }
    Ok(())
}

/// Round counts for the rings: about three, from a 1–2–5 ladder.
fn ring_counts(top: f64) -> Vec<u64> {
    let step = [
        1u64, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10000, 20000, 50000,
    ]
    .into_iter()
    .find(|&s| top / s as f64 <= 4.0)
    .unwrap_or(100000);
    (1..).map(|k| k * step).take_while(|&n| n as f64 <= top).collect()
}

fn draw_band(chart: &mut Polar, bins: &[RoseBin]) -> DrawResult {
    for b in bins {
        let Some(n) = b.null else { continue };
        let poly = sector(b.min_deg, b.max_deg, radius(n.lo), radius(n.hi));
        chart.draw_series(std::iter::once(Polygon::new(poly, style::BAND.mix(0.75).filled())))?;
    }
    Ok(())
}

/// Over the wedges: the band's edges as thin grey arcs (where a wedge covers the band, its
/// end is still seen against them), the band's lower edge in blue where an empty bin lies
/// below it, and its median count as one closed dark line around the circle.
fn draw_band_lines(chart: &mut Polar, bins: &[RoseBin]) -> DrawResult {
    for b in bins {
        let Some(n) = b.null else { continue };
        for edge in [n.lo, n.hi].into_iter().filter(|c| *c > 0.0) {
            let pts: Vec<_> = arc(b.min_deg, b.max_deg, radius(edge)).collect();
            chart.draw_series(std::iter::once(PathElement::new(pts, style::MUTED.stroke_width(1))))?;
        }
    }
    let banded: Vec<&RoseBin> = bins.iter().filter(|b| b.null.is_some()).collect();
    if !banded.is_empty() {
        let edges: Vec<(f64, f64)> = banded.iter().map(|b| (b.min_deg, b.max_deg)).collect();
        let medians: Vec<f64> = banded.iter().map(|b| b.null.map_or(0.0, |n| n.median)).collect();
        chart.draw_series(std::iter::once(PathElement::new(
            closed_steps(&edges, &medians),
            style::INK.stroke_width(2),
        )))?;
    }
    // Last, so that the median cannot hide it: an empty bin below its band has no wedge to
    // colour, so the band's lower edge is drawn in the below-band colour instead.
    for b in bins
        .iter()
        .filter(|b| b.observed <= 0.0 && Against::of(b) == Against::Below)
    {
        let lo = b.null.map_or(0.0, |n| n.lo);
        let pts: Vec<_> = arc(b.min_deg, b.max_deg, radius(lo)).collect();
        chart.draw_series(std::iter::once(PathElement::new(
            pts,
            Against::Below.edge().stroke_width(5),
        )))?;
    }
    Ok(())
}

/// A closed curve of per-bin counts on the circle: an arc at each bin's radius, joined
/// radially to the next bin's, as one line.
pub(crate) fn closed_steps(bins: &[(f64, f64)], counts: &[f64]) -> Vec<(f64, f64)> {
    let mut pts: Vec<(f64, f64)> = Vec::new();
    for ((lo, hi), c) in bins.iter().zip(counts) {
        pts.extend(arc(*lo, *hi, radius(*c)));
    }
    if let Some(first) = pts.first().copied() {
        pts.push(first);
    }
    pts
}

/// The key under the rose, in two columns: the three kinds of wedge; the band and its median.
fn draw_key(area: &crate::report::figure::Area, band: Band) -> DrawResult {
    let (w, _) = area.dim_in_pixel();
    let (x0, x1, y0, dy) = (12, (w as i32 / 2).max(200), 10, 22);
    let text = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Center));
    let band_name = match band {
        Band::BiasAware => "bias-aware null band, 5–95%",
        Band::Naive => "naive null band, 5–95%",
    };
    let kinds = [
        (Against::Inside, "observed, inside the band"),
        (Against::Above, "observed, above the band"),
        (Against::Below, "observed, below the band"),
    ];
    for (k, (kind, name)) in kinds.into_iter().enumerate() {
        let y = y0 + dy * k as i32;
        area.draw(&Rectangle::new([(x0, y - 6), (x0 + 20, y + 6)], kind.fill().filled()))?;
        area.draw(&Rectangle::new(
            [(x0, y - 6), (x0 + 20, y + 6)],
            kind.edge().stroke_width(1),
        ))?;
        area.draw(&Text::new(name, (x0 + 28, y), text.clone()))?;
    }
    area.draw(&Rectangle::new(
        [(x1, y0 - 6), (x1 + 20, y0 + 6)],
        style::BAND.mix(0.75).filled(),
    ))?;
    area.draw(&Text::new(band_name, (x1 + 28, y0), text.clone()))?;
    area.draw(&PathElement::new(
        vec![(x1, y0 + dy), (x1 + 20, y0 + dy)],
        style::INK.stroke_width(2),
    ))?;
    area.draw(&Text::new("median of the band", (x1 + 28, y0 + dy), text))?;
    Ok(())
}

pub(crate) fn draw_wedges(chart: &mut Polar, bins: &[RoseBin]) -> DrawResult {
    for b in bins.iter().filter(|b| b.observed > 0.0) {
        let kind = Against::of(b);
        let poly = sector(b.min_deg, b.max_deg, 0.0, radius(b.observed));
        chart.draw_series(std::iter::once(Polygon::new(poly.clone(), kind.fill().filled())))?;
        let mut closed = poly;
        closed.push(closed[0]);
        chart.draw_series(std::iter::once(PathElement::new(closed, kind.edge().stroke_width(1))))?;
    }
    Ok(())
}

/// Weighted counts of angles (deg) in `n` equal bins from 0° to 360°, with the naive band:
/// the 5th, 50th and 95th percentiles of a Binomial(n_eff, 1/n) count at Kish's effective
/// number n_eff = (Σw)²/Σw², scaled by Σw/n_eff (with unit weights: Binomial(N, 1/n)).
pub fn bins_of(angles_deg: &[f64], weights: &[f64], n: usize) -> Vec<RoseBin> {
    let (sum, sum_sq) = weights.iter().fold((0.0, 0.0), |(s, q), w| (s + w, q + w * w));
    let n_eff = if sum_sq > 0.0 { sum * sum / sum_sq } else { 0.0 };
    let scale = if n_eff > 0.0 { sum / n_eff } else { 1.0 };
    let null = naive_band(n_eff.round() as u64, 1.0 / n as f64).map(|b| NullBand {
        lo: b.lo * scale,
        median: b.median * scale,
        hi: b.hi * scale,
    });
    let w = 360.0 / n as f64;
    let mut bins: Vec<RoseBin> = (0..n)
        .map(|k| RoseBin {
            min_deg: k as f64 * w,
            max_deg: (k + 1) as f64 * w,
            observed: 0.0,
            null,
        })
        .collect();
    for (a, wt) in angles_deg.iter().zip(weights) {
        let k = ((a.rem_euclid(360.0) / w) as usize).min(n - 1);
        bins[k].observed += wt;
    }
    bins
}

/// Percentiles of Binomial(n, p) by walking its CDF (n is a catalog size, small).
fn naive_band(n: u64, p: f64) -> Option<NullBand> {
    use statrs::distribution::{Binomial, DiscreteCDF};
    let b = Binomial::new(p, n).ok()?;
    let q = |x: f64| (0..=n).find(|&k| b.cdf(k) >= x).unwrap_or(n) as f64;
    (n > 0).then(|| NullBand {
        lo: q(0.05),
        median: q(0.5),
        hi: q(0.95),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn angles_go_counter_clockwise_from_the_right() {
        let (x, y) = at(90.0, 1.0);
        assert!(x.abs() < 1e-12 && (y - 1.0).abs() < 1e-12);
        assert!((at(0.0, 2.0).0 - 2.0).abs() < 1e-12);
    }

    #[test]
    fn bins_wrap_angles() {
        let b = bins_of(&[-10.0, 5.0, 359.0, 725.0], &[1.0; 4], 4);
        assert_eq!(
            b.iter().map(|b| b.observed).collect::<Vec<_>>(),
            vec![2.0, 0.0, 0.0, 2.0]
        );
    }
}
