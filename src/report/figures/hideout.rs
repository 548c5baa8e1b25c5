//! The figures of a hideout run (`seine hideout`): where a planet the surveys did not find
//! could still be on the sky (the posterior map, with each survey's coverage and the credible
//! regions outlined), how much of the prior the surveys excluded against H and a, and how
//! bright and how fast the survivors are. The map is drawn as the coverage maps are
//! (`sky.rs`: Hammer–Aitoff, ecliptic coordinates); every quantity is weighted by the prior's
//! weights, as the tables are.

use std::collections::BTreeSet;

use plotters::coord::combinators::BindKeyPoints;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::prelude::*;

use super::axes;
use super::distributions::{is_log, nice_top};
use super::sky::{HammerFrame, MAP_W, cell_pieces, map_paper, rel_lon};
use super::svg::{Anchor, Svg, path_data, rgb};
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{Margin, finite_range, label, symbol};
use crate::report::style;
use crate::report::tables::{ExcludedRow, SkyCell};
use crate::sky::frames::radec_to_ecliptic;
use crate::sky::healpix::{Moc, cell_area_sq_deg};
use crate::statistics::{QuantileRule, histogram_quantile, weighted_histogram};

const MAP_H: u32 = 520;
const TITLE_H: f64 = 40.0;
const KEY_H: f64 = 118.0;
/// The surveys' coverage is outlined on cells of this order (0.84 deg², the coverage maps'
/// cells): a cell counts as covered when at least half of it is.
pub const COVERAGE_ORDER: u8 = 6;
/// Decades of posterior density the colour scale spans below its top.
const DECADES: f64 = 4.0;
/// Cells where prior draws fell and none survives.
const EXCLUDED_GREY: RGBColor = RGBColor(0xc4, 0xc4, 0xc4);
/// The credible regions' outline; the surveys' outlines take the other series colours.
const REGION_COLOUR: usize = 1;

/// The colour of survey `k`'s coverage outline (never the regions' colour).
fn coverage_colour(k: usize) -> RGBColor {
    style::series([3, 4, 0, 2][k % 4])
}

/// A logarithmic colour scale of posterior density: from the largest density down to the
/// decade of the smallest, at most `DECADES` below the largest, and at least one decade.
struct DensityScale {
    lo_log: f64,
    hi_log: f64,
}

impl DensityScale {
    fn of(cells: &[SkyCell]) -> Option<DensityScale> {
        let p: Vec<f64> = cells
            .iter()
            .map(|c| c.p_posterior_per_sq_deg)
            .filter(|p| *p > 0.0)
            .collect();
        let (lo, hi) = finite_range(&p)?;
        let hi_log = hi.log10();
        let lo_log = lo.log10().floor().max(hi_log - DECADES).min(hi_log - 1.0);
        Some(DensityScale { lo_log, hi_log })
    }

    fn t(&self, p: f64) -> f64 {
        ((p.log10() - self.lo_log) / (self.hi_log - self.lo_log)).clamp(0.0, 1.0)
    }

    /// Kept off the palest end of the scale, so that the lowest densities stay apart from
    /// the white of the sky without draws.
    fn colour(&self, p: f64) -> String {
        rgb(style::sequential(0.08 + 0.92 * self.t(p)))
    }
}

/// Ten to the power `k`, written with superscript digits ("10⁻³").
fn power_of_ten(k: i32) -> String {
    const SUP: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let digits: String = k
        .unsigned_abs()
        .to_string()
        .chars()
        .map(|c| SUP[c as usize - '0' as usize])
        .collect();
    format!("10{}{digits}", if k < 0 { "⁻" } else { "" })
}

/// The sky map of the posterior density, `p_posterior_per_sq_deg` of `sky_map`, in ecliptic
/// coordinates, with each survey's coverage (name, MOC) and the 68 % and 95 % credible regions
/// (`in_region_68/95`) outlined. `note` ends the caption (the epoch, the regions' areas).
pub fn posterior_map(
    stem: &str,
    label: &str,
    cells: &[SkyCell],
    coverage: &[(String, Moc)],
    note: &str,
) -> Result<Figure> {
    let title = format!("Where it could still be: {label}");
    let order = cells.first().map_or(5, |c| c.order);
    let surveys: Vec<String> = coverage
        .iter()
        .enumerate()
        .map(|(k, (name, _))| format!("{name} ({})", colour_name(coverage_colour(k))))
        .collect();
    let caption = format!(
        "Posterior probability per square degree that the planet is in each cell: the weight of \
         the prior draws that no survey found, in the cell, over the weight of all survivors and \
         the cell's area (HEALPix order {order}, {:.2} deg² per cell). Ecliptic coordinates \
         (J2000), Hammer–Aitoff equal-area projection centred on λ = 180°, λ increasing to the \
         left; meridians every 60° in λ (deg), parallels every 30° in β (deg). Colours on a \
         logarithmic scale (key), densities below its bottom in its palest colour; grey: cells \
         where prior draws fell and none survives; white: no prior draw. Orange outlines: the \
         smallest sets of cells holding 68 % (solid) and 95 % (dashed) of the surviving \
         probability. {}{}{note}",
        cell_area_sq_deg(order),
        noise_sentence(cells),
        if surveys.is_empty() {
            "No survey coverage file beside the tables: coverage not drawn. ".to_string()
        } else {
            format!(
                "Thin outlines: the sky each survey covered at least once ({}), from its coverage \
                 MOC on order-{COVERAGE_ORDER} cells (0.84 deg²), a cell counted when at least \
                 half of it is covered. ",
                surveys.join("; ")
            )
        }
    );
    let mut svg = map_paper(&title, MAP_H);
    let frame = HammerFrame::fitting(MAP_W as f64, MAP_H as f64 - KEY_H - TITLE_H, TITLE_H);
    let scale = DensityScale::of(cells);
    for c in cells {
        let colour = match &scale {
            Some(s) if c.p_posterior_per_sq_deg > 0.0 => s.colour(c.p_posterior_per_sq_deg),
            _ if c.w_prior > 0.0 => rgb(EXCLUDED_GREY),
            _ => continue,
        };
        for pts in cell_pieces(order, c.cell) {
            let px: Vec<(f64, f64)> = pts.iter().map(|&(l, b)| frame.px(l, b)).collect();
            svg.polygon(&px, &colour, true);
        }
    }
    frame.draw_graticule(&mut svg);
    // The regions under the coverage: a noisy posterior makes ragged regions, and the
    // coverage's edge must stay legible over them.
    let region =
        |pick: fn(&SkyCell) -> bool| -> BTreeSet<u64> { cells.iter().filter(|c| pick(c)).map(|c| c.cell).collect() };
    let orange = rgb(style::series(REGION_COLOUR));
    outline(
        &mut svg,
        &frame,
        (order, &region(|c| c.in_region_95)),
        &orange,
        (1.0, Some("4 3")),
    );
    outline(
        &mut svg,
        &frame,
        (order, &region(|c| c.in_region_68)),
        &orange,
        (1.4, None),
    );
    for (k, (_, moc)) in coverage.iter().enumerate() {
        let covered: BTreeSet<u64> = moc
            .fraction_at(COVERAGE_ORDER)
            .into_iter()
            .filter(|(_, f)| *f >= 0.5)
            .map(|(c, _)| c)
            .collect();
        outline(
            &mut svg,
            &frame,
            (COVERAGE_ORDER, &covered),
            &rgb(coverage_colour(k)),
            (2.2, None),
        );
    }
    let top = MAP_H as f64 - KEY_H;
    match &scale {
        Some(s) => colour_bar(&mut svg, s, top),
        None => svg.text(
            (MAP_W as f64 / 2.0, top + 18.0),
            "no draw survives: the posterior is empty",
            style::LABEL_PX,
            Anchor::Middle,
            style::MUTED,
            false,
        ),
    }
    let names: Vec<&str> = coverage.iter().map(|(n, _)| n.as_str()).collect();
    let emptied = cells
        .iter()
        .any(|c| c.w_prior > 0.0 && !(c.p_posterior_per_sq_deg > 0.0));
    legend_rows(&mut svg, (emptied, &names), top + 66.0);
    Ok(Figure::from_svg(stem, &title, &caption, svg.finish()))
}

/// A warning when the map holds few surviving draws per cell: its colours and regions are then
/// ragged at the scale of a cell by counting noise alone.
fn noise_sentence(cells: &[SkyCell]) -> String {
    let occupied = cells.iter().filter(|c| c.n_surviving > 0).count();
    let survivors: u64 = cells.iter().map(|c| c.n_surviving).sum();
    let per_cell = survivors as f64 / occupied.max(1) as f64;
    if occupied == 0 || per_cell >= 10.0 {
        return String::new();
    }
    format!(
        "The map holds {per_cell:.1} surviving draws per cell on average: its colours and regions \
         are ragged at the scale of a cell by counting noise alone (more draws, --count, or \
         larger cells, --order, smooth them). "
    )
}

/// A colour's name for captions (the series colours of `style.rs`).
fn colour_name(c: RGBColor) -> &'static str {
    match style::SERIES.iter().position(|s| *s == c) {
        Some(0) => "blue",
        Some(1) => "orange",
        Some(2) => "green",
        Some(3) => "purple",
        Some(4) => "brown",
        _ => "grey",
    }
}

/// The edges of the cells of `set` (of `order`) that border a cell outside it, as one path:
/// the outline of the set, each side following the cell's true boundary on the sky.
fn outline(
    svg: &mut Svg,
    frame: &HammerFrame,
    (order, set): (u8, &BTreeSet<u64>),
    colour: &str,
    (width, dash): (f64, Option<&str>),
) {
    use cdshealpix::compass_point::{Cardinal, MainWind};
    // Each side of a nested cell, from vertex to vertex, and the neighbour across it.
    let sides = [
        (Cardinal::S, Cardinal::E, MainWind::SE),
        (Cardinal::E, Cardinal::N, MainWind::NE),
        (Cardinal::N, Cardinal::W, MainWind::NW),
        (Cardinal::W, Cardinal::S, MainWind::SW),
    ];
    let per_side = 1u32 << 7u8.saturating_sub(order).min(5);
    let mut d = String::new();
    for &h in set {
        let around = cdshealpix::nested::neighbours(order, h, false);
        for (from, to, across) in &sides {
            if around.get(*across).is_some_and(|n| set.contains(n)) {
                continue;
            }
            let side = cdshealpix::nested::path_along_cell_side(order, h, from, to, true, per_side);
            let rel: Vec<(f64, f64)> = side
                .iter()
                .map(|&(ra, dec)| radec_to_ecliptic(ra, dec))
                .map(|(l, b)| (rel_lon(l), b))
                .collect();
            for piece in split_at_seam(&rel) {
                let px: Vec<(f64, f64)> = piece.iter().map(|&(l, b)| frame.px(l, b)).collect();
                d.push_str(&path_data(&px, false));
            }
        }
    }
    if d.is_empty() {
        return;
    }
    let dash = dash.map_or(String::new(), |x| format!(" stroke-dasharray=\"{x}\""));
    svg.raw(&format!(
        "<path d=\"{d}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"{width}\"{dash} stroke-linecap=\"round\" stroke-linejoin=\"round\"/>"
    ));
}

/// A line in (longitude relative to the centre, latitude) cut where it crosses the map's edge
/// (λ = 0°), so that no piece is drawn across the whole map.
fn split_at_seam(points: &[(f64, f64)]) -> Vec<Vec<(f64, f64)>> {
    let mut pieces: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    for (k, &p) in points.iter().enumerate() {
        if k > 0 && (p.0 - points[k - 1].0).abs() > std::f64::consts::PI {
            pieces.push(Vec::new());
        }
        pieces.last_mut().expect("one piece").push(p);
    }
    pieces.retain(|p| p.len() > 1);
    pieces
}

/// The colour bar of the density scale, a tick and label at each decade.
fn colour_bar(svg: &mut Svg, s: &DensityScale, top: f64) {
    let (x0, w, y) = (250.0, 360.0, top + 14.0);
    svg.text(
        (x0 - 12.0, y + 6.0),
        "probability per deg²:",
        style::LABEL_PX,
        Anchor::End,
        style::INK,
        false,
    );
    let steps = 60;
    for k in 0..steps {
        let t = (k as f64 + 0.5) / steps as f64;
        let p = 10f64.powf(s.lo_log + t * (s.hi_log - s.lo_log));
        svg.rect(
            (x0 + w * k as f64 / steps as f64, y - 4.0),
            (w / steps as f64 + 0.4, 18.0),
            &s.colour(p),
            None,
        );
    }
    // A tick at each whole decade inside the scale (one at least: it spans a decade or more).
    for k in (s.lo_log.ceil() as i32)..=(s.hi_log.floor() as i32) {
        let x = x0 + w * (k as f64 - s.lo_log) / (s.hi_log - s.lo_log);
        svg.line(&[(x, y + 14.0), (x, y + 19.0)], &rgb(style::MUTED), 1.0, None);
        svg.text(
            (x, y + 28.0),
            &power_of_ten(k),
            style::LABEL_PX - 3.0,
            Anchor::Middle,
            style::INK,
            false,
        );
    }
}

/// The map's legend: the cells where no draw survives (when there are any), the two regions,
/// each survey's coverage; items placed left to right, wrapped to a new row when the paper's
/// width is reached.
fn legend_rows(svg: &mut Svg, (emptied, surveys): (bool, &[&str]), top: f64) {
    enum Swatch {
        Fill(String),
        Line(String, Option<&'static str>),
    }
    let orange = rgb(style::series(REGION_COLOUR));
    let mut items = Vec::new();
    if emptied {
        let text = "draws fell here, none survives".to_string();
        items.push((Swatch::Fill(rgb(EXCLUDED_GREY)), text));
    }
    items.push((Swatch::Line(orange.clone(), None), "68 % region".to_string()));
    items.push((Swatch::Line(orange, Some("4 3")), "95 % region".to_string()));
    for (k, s) in surveys.iter().enumerate() {
        items.push((Swatch::Line(rgb(coverage_colour(k)), None), format!("covered by {s}")));
    }
    let px = style::LABEL_PX - 2.0;
    let (left, right, row_h) = (30.0, MAP_W as f64 - 20.0, 22.0);
    let (mut x, mut y) = (left, top);
    for (swatch, text) in items {
        // Width of the text at about 0.55 em per character (sans-serif; common practice, no source).
        let width = 30.0 + 0.55 * px * text.chars().count() as f64 + 18.0;
        if x + width > right && x > left {
            x = left;
            y += row_h;
        }
        match swatch {
            Swatch::Fill(c) => svg.rect((x, y - 7.0), (22.0, 14.0), &c, None),
            Swatch::Line(c, dash) => svg.line(&[(x, y), (x + 22.0, y)], &c, 2.0, dash),
        }
        svg.text((x + 30.0, y), &text, px, Anchor::Start, style::INK, false);
        x += width;
    }
}

/// The excluded fraction of the prior in the bins of `quantity` (`a_au` or `h_mag`; the rows
/// of `excluded` of that quantity) with ± one standard error, and the whole prior's as a
/// dashed line (row `all`). Bins without draws are gaps; the open end bins are marked.
pub fn excluded_fraction(quantity: &str, rows: &[ExcludedRow], note: &str) -> Result<Figure> {
    let sym = symbol(quantity);
    let title = format!("Excluded fraction of the prior against {sym}");
    let mine: Vec<&ExcludedRow> = rows.iter().filter(|r| r.quantity == quantity).collect();
    let last_bin = mine.iter().map(|r| r.bin).max();
    let used: Vec<&ExcludedRow> = mine
        .iter()
        .copied()
        .filter(|r| r.n_prior > 0 && r.excluded_fraction.is_finite() && r.lo.is_some() && r.hi.is_some())
        .collect();
    let all = rows.iter().find(|r| r.quantity == "all");
    let caption = format!(
        "Fraction of the prior's weight in each bin of {} that the surveys would have found \
         (Σ w of the draws discovered by any survey over Σ w of the bin's draws), with ± one \
         standard error of a weighted proportion (methods.md) as bars; horizontal bars show the \
         bin widths. {}The first and last bins are open: they also hold the draws below and \
         above the binned range (arrows). Bins without draws are left out.{} {note}",
        label(quantity),
        all.filter(|a| a.excluded_fraction.is_finite())
            .map_or(String::new(), |a| format!(
                "Dashed line: the whole prior, {:.2}% ± {:.2}%. ",
                100.0 * a.excluded_fraction,
                100.0 * a.excluded_fraction_err
            )),
        if used.len() < mine.len() {
            format!(" {} of {} bins hold no draw.", mine.len() - used.len(), mine.len())
        } else {
            String::new()
        }
    );
    let stem = format!("excluded_{quantity}");
    let whole = all.map(|a| a.excluded_fraction).filter(|f| f.is_finite());
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let (Some(first), Some(last)) = (used.first(), used.last()) else {
            return empty_note(&area, "no prior draws in any bin");
        };
        let reach = used
            .iter()
            .map(|r| r.excluded_fraction + r.excluded_fraction_err)
            .chain(whole)
            .fold(0.0, f64::max);
        let top = nice_top(reach.min(1.0));
        let (lo, hi) = (first.lo.unwrap_or(0.0), last.hi.unwrap_or(1.0));
        let plot = ExcludedPlot {
            bins: &used,
            last_bin: last_bin.unwrap_or(0),
            whole,
            top,
            quantity,
            log: is_log(quantity, lo, hi),
        };
        // Room beyond the open ends for their arrows.
        let (x0, x1) = plot.x_range(lo, hi);
        if plot.log {
            plot.draw(&area, (x0..x1).log_scale().with_key_points(axes::log_ticks(x0, x1)))
        } else {
            plot.draw(&area, x0..x1)
        }
    })
}

struct ExcludedPlot<'a> {
    bins: &'a [&'a ExcludedRow],
    last_bin: i64,
    whole: Option<f64>,
    top: f64,
    quantity: &'a str,
    log: bool,
}

impl ExcludedPlot<'_> {
    /// The open ends' arrows reach a quarter of their bin's width beyond it.
    fn arrow_len(r: &ExcludedRow) -> f64 {
        0.25 * (r.hi.unwrap_or(0.0) - r.lo.unwrap_or(0.0))
    }

    fn open_low(&self, r: &ExcludedRow) -> bool {
        r.bin == 0
    }

    fn open_high(&self, r: &ExcludedRow) -> bool {
        r.bin == self.last_bin
    }

    fn x_range(&self, lo: f64, hi: f64) -> (f64, f64) {
        let (first, last) = (self.bins[0], self.bins[self.bins.len() - 1]);
        let lo = if self.open_low(first) {
            lo - 1.3 * Self::arrow_len(first)
        } else {
            lo
        };
        let hi = if self.open_high(last) {
            hi + 1.3 * Self::arrow_len(last)
        } else {
            hi
        };
        // A logarithmic axis cannot reach zero.
        (if self.log { lo.max(hi * 1e-6) } else { lo }, hi)
    }

    fn centre(&self, r: &ExcludedRow) -> f64 {
        let (lo, hi) = (r.lo.unwrap_or(0.0), r.hi.unwrap_or(0.0));
        if self.log { (lo * hi).sqrt() } else { 0.5 * (lo + hi) }
    }

    fn draw<X>(&self, area: &Area, x: X) -> DrawResult
    where
        X: AsRangedCoord<Value = f64>,
        X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        let mut chart = axes::chart(area, x, 0.0..self.top)?;
        axes::mesh(&mut chart, &label(self.quantity), "excluded fraction (dimensionless)")?;
        let c = style::series(0);
        let (x0, x1) = (chart.x_range().start, chart.x_range().end);
        if let Some(f) = self.whole.filter(|f| *f <= self.top) {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(x0, f), (x1, f)],
                    6,
                    4,
                    style::MUTED.stroke_width(1),
                ))?
                .label("whole prior")
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], style::MUTED.stroke_width(1)));
        }
        let ends = |r: &ExcludedRow| (r.lo.unwrap_or(0.0), r.hi.unwrap_or(0.0));
        chart.draw_series(self.bins.iter().map(|r| {
            let (lo, hi) = ends(r);
            PathElement::new(
                vec![(lo, r.excluded_fraction), (hi, r.excluded_fraction)],
                c.mix(0.5).stroke_width(1),
            )
        }))?;
        for r in self.bins.iter().filter(|r| self.open_low(r) || self.open_high(r)) {
            let (lo, hi) = ends(r);
            let f = r.excluded_fraction;
            let len = Self::arrow_len(r);
            let (from, tip) = if self.open_low(r) {
                (lo, lo - len)
            } else {
                (hi, hi + len)
            };
            let (dx, dy) = ((from - tip) * 0.3, 0.025 * self.top);
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(from, f), (tip, f)],
                c.mix(0.5).stroke_width(1),
            )))?;
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(tip + dx, f + dy), (tip, f), (tip + dx, f - dy)],
                c.stroke_width(2),
            )))?;
        }
        chart
            .draw_series(self.bins.iter().map(|r| {
                let (f, e) = (r.excluded_fraction, r.excluded_fraction_err);
                let x = self.centre(r);
                ErrorBar::new_vertical(x, (f - e).max(0.0), f, (f + e).min(self.top), c.stroke_width(2), 8)
            }))?
            .label("excluded fraction ± 1 standard error")
            .legend(move |(x, y)| Circle::new((x + 11, y), 4, c.filled()));
        chart.draw_series(
            self.bins
                .iter()
                .map(|r| Circle::new((self.centre(r), r.excluded_fraction), 4, c.filled())),
        )?;
        axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
    }
}

/// The survivors' magnitude distribution at the map epoch: `sky_mag_hist` summed over the cells
/// (`bins`: mag_lo, mag_hi, Σ w, in order, of equal width), as posterior probability per bin,
/// with the magnitudes that half and 90 % of the survivors are brighter than.
pub fn survivors_magnitude(bins: &[(f64, f64, f64)], note: &str) -> Result<Figure> {
    let title = "Magnitude of the survivors".to_string();
    let fine = bins.first().map_or(0.1, |b| b.1 - b.0);
    let (lo, hi) = (bins.first().map_or(0.0, |b| b.0), bins.last().map_or(1.0, |b| b.1));
    // The histogram's own bins where they are few; merged into at most 60 where they are many.
    let n_fine = ((hi - lo) / fine).round().max(1.0) as usize;
    let merge = n_fine.div_ceil(60).max(1);
    let edges: Vec<f64> = (0..=n_fine.div_ceil(merge))
        .map(|k| lo + (k * merge) as f64 * fine)
        .collect();
    let (centres, w): (Vec<f64>, Vec<f64>) = bins.iter().map(|b| (0.5 * (b.0 + b.1), b.2)).unzip();
    let total: f64 = w.iter().sum();
    let probs: Vec<f64> = weighted_histogram(&centres, &w, &edges)
        .iter()
        .map(|x| x / total)
        .collect();
    let dense: Vec<f64> = {
        let mut d = vec![0.0; n_fine];
        for b in bins {
            let k = (((b.0 - lo) / fine).round() as usize).min(n_fine - 1);
            d[k] += b.2;
        }
        d
    };
    let at = |q: f64| lo + fine * histogram_quantile(&dense, q, QuantileRule::Linear);
    let marks = if total > 0.0 {
        vec![
            ("half of the survivors brighter".to_string(), at(0.5)),
            ("90 % of the survivors brighter".to_string(), at(0.9)),
        ]
    } else {
        Vec::new()
    };
    let caption = format!(
        "Apparent magnitude in the reference band of the draws no survey found, at the map's \
         epoch: their weight in bins of {:.1} mag (the run's histogram summed over the sky, \
         sky_mag_hist), as a share of all survivors' weight. Dashed lines: the magnitudes half \
         and 90 % of the survivors are brighter than ({:.2} and {:.2} mag), the depths a search \
         of the whole posterior would need. Bins without survivors are left empty.{} {note}",
        fine * merge as f64,
        marks.first().map_or(f64::NAN, |m| m.1),
        marks.get(1).map_or(f64::NAN, |m| m.1),
        log_sentence(&probs)
    );
    let steps = Steps {
        edges: &edges,
        probs: &probs,
        x_desc: "apparent magnitude (mag)",
        marks: &marks,
    };
    steps.figure("survivors_mag", &title, &caption, false)
}

/// The survivors' rate of motion at the map epoch: each cell's mean rate (`sky_map`,
/// `mean_rate_arcsec_per_hr`) weighted by its survivors' weight (`w_surviving`), as posterior
/// probability per bin; a logarithmic rate axis when the rates span more than a factor of 5.
pub fn survivors_rate(cells: &[SkyCell], note: &str) -> Result<Figure> {
    let title = "Rate of motion of the survivors".to_string();
    let (rates, w): (Vec<f64>, Vec<f64>) = cells
        .iter()
        .filter(|c| c.w_surviving > 0.0 && c.mean_rate_arcsec_per_hr.is_finite())
        .map(|c| (c.mean_rate_arcsec_per_hr, c.w_surviving))
        .unzip();
    let range = finite_range(&rates);
    let log = range.is_some_and(|(lo, hi)| lo > 0.0 && hi / lo > 5.0);
    let edges = range.map_or(Vec::new(), |(lo, hi)| {
        Margin::for_axis(log, 1.15, (0.04, 0.1)).edges(lo, hi, 30)
    });
    let total: f64 = w.iter().sum();
    let probs: Vec<f64> = if edges.is_empty() {
        Vec::new()
    } else {
        weighted_histogram(&rates, &w, &edges)
            .iter()
            .map(|x| x / total)
            .collect()
    };
    let caption = format!(
        "Rate of motion on the sky (arcsec per hour, geocentric, at the map's epoch) of the \
         draws no survey found: each sky cell's survivors at their mean rate (sky_map, \
         mean_rate_arcsec_per_hr), weighted by their weight in the cell (w_surviving), as a \
         share of all survivors' weight; the spread of rates inside a cell is not shown. Bins \
         without survivors are left empty.{}{} {note}",
        if log {
            " Rates on a logarithmic axis (they span more than a factor of 5)."
        } else {
            ""
        },
        log_sentence(&probs)
    );
    let steps = Steps {
        edges: &edges,
        probs: &probs,
        x_desc: "rate of motion (arcsec/h)",
        marks: &[],
    };
    steps.figure("survivors_rate", &title, &caption, log)
}

fn log_sentence(probs: &[f64]) -> &'static str {
    if axes::values_need_log(probs) {
        " Shares on a logarithmic axis: they span more than a factor of 30 (an outline ends at \
         its last bin's height: the axis has no zero)."
    } else {
        ""
    }
}

/// A step histogram of shares of the posterior, with dashed reference lines.
struct Steps<'a> {
    edges: &'a [f64],
    probs: &'a [f64],
    x_desc: &'a str,
    marks: &'a [(String, f64)],
}

impl Steps<'_> {
    fn figure(&self, stem: &str, title: &str, caption: &str, log_x: bool) -> Result<Figure> {
        render(stem, title, caption, (style::WIDTH, style::HEIGHT), |root| {
            let area = titled(root, title)?;
            if !self.probs.iter().any(|p| *p > 0.0) {
                return empty_note(&area, "no survivors");
            }
            let (lo, hi) = (self.edges[0], self.edges[self.edges.len() - 1]);
            let max = self.probs.iter().copied().fold(0.0, f64::max);
            let min = self.probs.iter().copied().filter(|p| *p > 0.0).fold(max, f64::min);
            let lx = || (lo..hi).log_scale().with_key_points(axes::log_ticks(lo, hi));
            if axes::values_need_log(self.probs) {
                let (bottom, top) = (min / 2.0, max * if self.marks.is_empty() { 2.0 } else { 6.0 });
                let ly = || (bottom..top).log_scale().with_key_points(axes::log_ticks(bottom, top));
                match log_x {
                    true => self.draw(&area, lx(), ly(), (bottom, top)),
                    false => self.draw(&area, lo..hi, ly(), (bottom, top)),
                }
            } else {
                // Headroom for the legend of the reference lines, when there are any.
                let top = max * if self.marks.is_empty() { 1.15 } else { 1.35 };
                match log_x {
                    true => self.draw(&area, lx(), 0.0..top, (0.0, top)),
                    false => self.draw(&area, lo..hi, 0.0..top, (0.0, top)),
                }
            }
        })
    }

    fn draw<X, Y>(&self, area: &Area, x: X, y: Y, (bottom, top): (f64, f64)) -> DrawResult
    where
        X: AsRangedCoord<Value = f64>,
        X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
        Y: AsRangedCoord<Value = f64>,
        Y::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        let mut chart = axes::chart(area, x, y)?;
        axes::mesh(&mut chart, self.x_desc, "share of the survivors per bin")?;
        let c = style::series(0);
        let close = (bottom == 0.0).then_some(0.0);
        for run in axes::step_runs(self.edges, self.probs, close) {
            chart.draw_series(LineSeries::new(run, c.stroke_width(2)))?;
        }
        for (k, (name, v)) in self.marks.iter().enumerate() {
            let m = style::series(k + 1);
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(*v, bottom), (*v, top)],
                    6,
                    4,
                    m.stroke_width(2),
                ))?
                .label(format!("{name} ({v:.1} mag)"))
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], m.stroke_width(2)));
        }
        if !self.marks.is_empty() {
            axes::legend(&mut chart, SeriesLabelPosition::UpperLeft)?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn powers_of_ten_are_written_with_superscripts() {
        assert_eq!(power_of_ten(-3), "10⁻³");
        assert_eq!(power_of_ten(12), "10¹²");
        assert_eq!(power_of_ten(0), "10⁰");
    }

    #[test]
    fn lines_are_cut_at_the_maps_edge() {
        let pi = std::f64::consts::PI;
        let pieces = split_at_seam(&[
            (pi - 0.01, 0.0),
            (pi - 0.001, 0.0),
            (-pi + 0.001, 0.0),
            (-pi + 0.01, 0.0),
        ]);
        assert_eq!(pieces.len(), 2);
        assert!(pieces.iter().all(|p| p.len() == 2));
    }
}
