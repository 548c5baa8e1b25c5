//! The tidy tables of a hideout run: their file names, writing them, reading their additive
//! columns back (to merge shards), and reading the columns the report draws.
//! Column meanings: notebooks-free-docs/configuration.md ("seine hideout").

use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::fields::RankedField;
use super::tally::{ExclusionBins, MAG_BINS, MAG_LO, MAG_STEP, RunTally, SkyTally};
use crate::error::{Error, Result};
use crate::foundation::units::DEG;
use crate::io::out_dir::find_table;
use crate::io::provenance::Provenance;
use crate::io::table::{Columns, Format, read_table, write_table};
use crate::sky::frames::radec_to_ecliptic;
use crate::statistics::Tally;

/// The tables' file stems, `DIR/<stem>.parquet` (or `.csv`): `write` writes all four,
/// `read_tally` reads the additive three back.
pub const EXCLUDED: &str = "excluded";
pub const SKY_MAP: &str = "sky_map";
pub const SKY_MAG_HIST: &str = "sky_mag_hist";
pub const FIELDS: &str = "fields";

/// Write the four tables under `dir` in `format`: the exclusion by a and H, the posterior
/// map and its magnitude histogram, and the ranked `fields` (of radius `radius_deg`).
/// Returns the files written.
pub fn write(
    dir: &Path,
    (format, prov): (Format, &Provenance),
    tally: &RunTally,
    view: &CellView,
    (fields, radius_deg): (&[RankedField], f64),
) -> Result<Vec<PathBuf>> {
    let mut frames = vec![
        (EXCLUDED, excluded_frame(tally)?),
        (SKY_MAP, sky_map_frame(view)?),
        (SKY_MAG_HIST, mag_hist_frame(view.sky)?),
        (
            FIELDS,
            fields_frame(fields, radius_deg, view.sky.order, view.w_surviving_total)?,
        ),
    ];
    let mut files = Vec::new();
    for (stem, df) in frames.iter_mut() {
        files.push(dir.join(format!("{stem}.{}", format.extension())));
        write_table(df, files.last().expect("just pushed"), prov)?;
    }
    Ok(files)
}

/// The format a hideout run's tables under `dir` were written in (by its `excluded` table),
/// if it wrote them.
pub fn format_in(dir: &Path) -> Option<Format> {
    find_table(dir, EXCLUDED).and_then(|p| Format::of(&p).ok())
}

fn frame(cols: Vec<Column>) -> Result<DataFrame> {
    let h = cols.first().map_or(0, |c| c.len());
    DataFrame::new(h, cols).map_err(|e| Error::io(e.to_string()))
}

fn f(name: &str, v: Vec<f64>) -> Column {
    Column::new(name.into(), v)
}

fn i(name: &str, v: Vec<i64>) -> Column {
    Column::new(name.into(), v)
}

/// `excluded`: one row per bin of a, of H, and one row `all`; lo/hi empty for `all`.
fn excluded_frame(t: &RunTally) -> Result<DataFrame> {
    let mut rows: Vec<(String, i64, Option<f64>, Option<f64>, Tally)> = vec![("all".into(), 0, None, None, t.total)];
    for b in [&t.a, &t.h] {
        for (k, s) in b.bins.iter().enumerate() {
            rows.push((b.quantity.clone(), k as i64, Some(b.edges[k]), Some(b.edges[k + 1]), *s));
        }
    }
    let col = |g: &dyn Fn(&Tally) -> f64| rows.iter().map(|r| g(&r.4)).collect::<Vec<f64>>();
    let int = |g: &dyn Fn(&Tally) -> u64| rows.iter().map(|r| g(&r.4) as i64).collect::<Vec<i64>>();
    frame(vec![
        Column::new(
            "quantity".into(),
            rows.iter().map(|r| r.0.clone()).collect::<Vec<String>>(),
        ),
        i("bin", rows.iter().map(|r| r.1).collect()),
        Column::new("lo".into(), rows.iter().map(|r| r.2).collect::<Vec<Option<f64>>>()),
        Column::new("hi".into(), rows.iter().map(|r| r.3).collect::<Vec<Option<f64>>>()),
        i("n_prior", int(&|s| s.n)),
        f("w_prior", col(&|s| s.w)),
        f("w2_prior", col(&|s| s.w2)),
        i("n_excluded", int(&|s| s.k)),
        f("w_excluded", col(&|s| s.w_hit)),
        f("w2_excluded", col(&|s| s.w2_hit)),
        f("excluded_fraction", col(&|s| s.proportion().fraction)),
        f("excluded_fraction_err", col(&|s| s.proportion().std_error)),
    ])
}

/// Derived per-cell quantities of the posterior map.
pub struct CellView<'a> {
    pub sky: &'a SkyTally,
    /// Σ w of the whole prior and of its survivors.
    pub w_prior_total: f64,
    pub w_surviving_total: f64,
    pub in_68: &'a [bool],
    pub in_95: &'a [bool],
}

/// `sky_map`: one row per cell holding any prior draw at the map epoch.
fn sky_map_frame(v: &CellView) -> Result<DataFrame> {
    let s = v.sky;
    let cells: Vec<usize> = (0..s.n_prior.len()).filter(|&c| s.n_prior[c] > 0).collect();
    let area = super::SKY_SQ_DEG / s.n_prior.len() as f64;
    let centre: Vec<(f64, f64)> = cells
        .iter()
        .map(|&c| cdshealpix::nested::center(s.order, c as u64))
        .collect();
    let ecl: Vec<(f64, f64)> = centre.iter().map(|&(ra, dec)| radec_to_ecliptic(ra, dec)).collect();
    let per = |g: &dyn Fn(usize) -> f64| cells.iter().map(|&c| g(c)).collect::<Vec<f64>>();
    let n = |x: &[u64]| cells.iter().map(|&c| x[c] as i64).collect::<Vec<i64>>();
    let flag = |x: &[bool]| cells.iter().map(|&c| x[c]).collect::<Vec<bool>>();
    frame(vec![
        i("healpix_order", vec![s.order as i64; cells.len()]),
        i("cell", cells.iter().map(|&c| c as i64).collect()),
        f("ra_deg", centre.iter().map(|c| c.0 / DEG).collect()),
        f("dec_deg", centre.iter().map(|c| c.1 / DEG).collect()),
        f(
            "ecl_lon_deg",
            ecl.iter()
                .map(|c| c.0.rem_euclid(std::f64::consts::TAU) / DEG)
                .collect(),
        ),
        f("ecl_lat_deg", ecl.iter().map(|c| c.1 / DEG).collect()),
        f("area_sq_deg", vec![area; cells.len()]),
        i("n_prior", n(&s.n_prior)),
        f("w_prior", per(&|c| s.w_prior[c])),
        i("n_surviving", n(&s.n_surviving)),
        f("w_surviving", per(&|c| s.w_surviving[c])),
        f("w_mag_sum", per(&|c| s.w_mag[c])),
        f("w_rate_sum", per(&|c| s.w_rate[c])),
        f("p_surviving", per(&|c| s.w_surviving[c] / v.w_prior_total)),
        f("p_posterior", per(&|c| s.w_surviving[c] / v.w_surviving_total)),
        f(
            "p_posterior_per_sq_deg",
            per(&|c| s.w_surviving[c] / v.w_surviving_total / area),
        ),
        f("excluded_fraction", per(&|c| 1.0 - s.w_surviving[c] / s.w_prior[c])),
        f("mean_mag", per(&|c| s.w_mag[c] / s.w_surviving[c])),
        f("mean_rate_arcsec_per_hr", per(&|c| s.w_rate[c] / s.w_surviving[c])),
        Column::new("in_region_68".into(), flag(v.in_68)),
        Column::new("in_region_95".into(), flag(v.in_95)),
    ])
}

/// `sky_mag_hist`: the survivors' weight per cell and magnitude bin (non-empty bins only).
fn mag_hist_frame(s: &SkyTally) -> Result<DataFrame> {
    let mut keys: Vec<(u64, f64)> = s.mag_hist.iter().map(|(k, w)| (*k, *w)).collect();
    keys.sort_by_key(|k| k.0);
    let bin = |k: u64| (k % MAG_BINS as u64) as f64;
    frame(vec![
        i("cell", keys.iter().map(|k| (k.0 / MAG_BINS as u64) as i64).collect()),
        i("mag_bin", keys.iter().map(|k| (k.0 % MAG_BINS as u64) as i64).collect()),
        f("mag_lo", keys.iter().map(|k| MAG_LO + MAG_STEP * bin(k.0)).collect()),
        f(
            "mag_hi",
            keys.iter().map(|k| MAG_LO + MAG_STEP * (bin(k.0) + 1.0)).collect(),
        ),
        f("w_surviving", keys.iter().map(|k| k.1).collect()),
    ])
}

/// `fields`: the ranked fields for the next search.
fn fields_frame(fields: &[RankedField], radius_deg: f64, order: u8, w_surviving_total: f64) -> Result<DataFrame> {
    let cell_area = super::SKY_SQ_DEG / cdshealpix::nested::n_hash(order) as f64;
    let per = |g: &dyn Fn(&RankedField) -> f64| fields.iter().map(g).collect::<Vec<f64>>();
    let ecl: Vec<(f64, f64)> = fields.iter().map(|x| radec_to_ecliptic(x.ra_rad, x.dec_rad)).collect();
    let mut cum = 0.0;
    let cumulative: Vec<f64> = fields
        .iter()
        .map(|x| {
            cum += x.w_surviving / w_surviving_total;
            cum
        })
        .collect();
    frame(vec![
        i("rank", fields.iter().map(|x| x.rank as i64).collect()),
        f("ra_deg", per(&|x| x.ra_rad / DEG)),
        f("dec_deg", per(&|x| x.dec_rad / DEG)),
        f(
            "ecl_lon_deg",
            ecl.iter()
                .map(|c| c.0.rem_euclid(std::f64::consts::TAU) / DEG)
                .collect(),
        ),
        f("ecl_lat_deg", ecl.iter().map(|c| c.1 / DEG).collect()),
        f("radius_deg", vec![radius_deg; fields.len()]),
        i("n_cells", fields.iter().map(|x| x.n_cells as i64).collect()),
        f("area_sq_deg", per(&|x| x.n_cells as f64 * cell_area)),
        i("n_surviving", fields.iter().map(|x| x.n_surviving as i64).collect()),
        f("w_surviving", per(&|x| x.w_surviving)),
        f("p_field", per(&|x| x.w_surviving / w_surviving_total)),
        f("p_cumulative", cumulative),
        f(
            "p_per_sq_deg",
            per(&|x| x.w_surviving / w_surviving_total / (x.n_cells as f64 * cell_area)),
        ),
        f("mean_mag", per(&|x| x.mean_mag)),
        f("depth_90_mag", per(&|x| x.depth_90_mag)),
        f("mean_rate_arcsec_per_hr", per(&|x| x.mean_rate_arcsec_per_hr)),
    ])
}

/// A column that may hold empty values.
fn opt_f64(df: &DataFrame, path: &Path, name: &str) -> Result<Vec<Option<f64>>> {
    let col = df
        .column(name)
        .map_err(|_| Error::input(format!("{}: missing column `{name}`", path.display())))?;
    let s = col
        .as_materialized_series()
        .cast(&DataType::Float64)
        .map_err(|e| Error::io(e.to_string()))?;
    Ok(s.f64().map_err(|e| Error::io(e.to_string()))?.iter().collect())
}

/// Read the additive columns of `excluded`, `sky_map` and `sky_mag_hist` under `dir`, in the
/// format they were written in.
pub fn read_tally(dir: &Path, order: u8, n_surveys: usize) -> Result<RunTally> {
    let format = format_in(dir).ok_or_else(|| {
        Error::input(format!(
            "{}: not a hideout output directory (no {EXCLUDED}.parquet or {EXCLUDED}.csv)",
            dir.display()
        ))
    })?;
    let path = |stem: &str| dir.join(format!("{stem}.{}", format.extension()));
    let (a, h, total) = read_excluded(&path(EXCLUDED))?;
    let mut t = RunTally::new(a, h, order, n_surveys);
    t.total = total;
    read_sky(&path(SKY_MAP), &mut t.sky)?;
    read_hist(&path(SKY_MAG_HIST), &mut t.sky)?;
    Ok(t)
}

fn read_excluded(path: &Path) -> Result<(ExclusionBins, ExclusionBins, Tally)> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let q = c.str("quantity")?;
    let (lo, hi) = (opt_f64(&df, path, "lo")?, opt_f64(&df, path, "hi")?);
    let nums = |n: &str| c.f64(n);
    let (np, wp, w2p) = (nums("n_prior")?, nums("w_prior")?, nums("w2_prior")?);
    let (ne, we, w2e) = (nums("n_excluded")?, nums("w_excluded")?, nums("w2_excluded")?);
    let sums = |k: usize| Tally {
        n: np[k] as u64,
        w: wp[k],
        w2: w2p[k],
        k: ne[k] as u64,
        w_hit: we[k],
        w2_hit: w2e[k],
    };
    let binned = |name: &str| -> Result<ExclusionBins> {
        let rows: Vec<usize> = (0..q.len()).filter(|&k| q[k] == name).collect();
        let mut edges: Vec<f64> = rows.iter().filter_map(|&k| lo[k]).collect();
        edges.push(
            rows.last()
                .and_then(|&k| hi[k])
                .ok_or_else(|| Error::input(format!("{}: no `{name}` rows with lo and hi", path.display())))?,
        );
        let mut b = ExclusionBins::new(name, edges);
        b.bins = rows.iter().map(|&k| sums(k)).collect();
        Ok(b)
    };
    let all = (0..q.len())
        .find(|&k| q[k] == "all")
        .ok_or_else(|| Error::input(format!("{}: no row `all`", path.display())))?;
    Ok((binned("a_au")?, binned("h_mag")?, sums(all)))
}

fn read_sky(path: &Path, sky: &mut SkyTally) -> Result<()> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let cells = c.i64("cell")?;
    let cols = [
        "n_prior",
        "w_prior",
        "n_surviving",
        "w_surviving",
        "w_mag_sum",
        "w_rate_sum",
    ];
    let v: Vec<Vec<f64>> = cols.iter().map(|n| c.f64(n)).collect::<Result<_>>()?;
    for (k, &cell) in cells.iter().enumerate() {
        let cell = usize::try_from(cell)
            .ok()
            .filter(|&x| x < sky.n_prior.len())
            .ok_or_else(|| c.bad_value(k, "cell", &format!("a cell of order {}", sky.order)))?;
        sky.n_prior[cell] += v[0][k] as u64;
        sky.w_prior[cell] += v[1][k];
        sky.n_surviving[cell] += v[2][k] as u64;
        sky.w_surviving[cell] += v[3][k];
        sky.w_mag[cell] += v[4][k];
        sky.w_rate[cell] += v[5][k];
    }
    Ok(())
}

fn read_hist(path: &Path, sky: &mut SkyTally) -> Result<()> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (cells, bins, w) = (c.i64("cell")?, c.i64("mag_bin")?, c.f64("w_surviving")?);
    for k in 0..cells.len() {
        let key = super::tally::hist_key(cells[k] as usize, bins[k] as usize);
        *sky.mag_hist.entry(key).or_insert(0.0) += w[k];
    }
    Ok(())
}

/// One row of `excluded` as written: the bin `bin` of `quantity` (`a_au`, `h_mag`; `all` for
/// the whole prior, without `lo`, `hi`), its prior draws and their weight, and the weighted
/// excluded fraction with its standard error (NaN for a bin without draws). The end bins of
/// a quantity are open: they also hold the draws beyond `lo` (first) and `hi` (last).
#[derive(Debug, Clone, PartialEq)]
pub struct ExcludedRow {
    pub quantity: String,
    pub bin: i64,
    pub lo: Option<f64>,
    pub hi: Option<f64>,
    pub n_prior: u64,
    pub w_prior: f64,
    pub excluded_fraction: f64,
    pub excluded_fraction_err: f64,
}

/// Read `excluded.*` as written (the derived fractions too; `read_tally` reads the sums).
pub fn read_excluded_rows(path: &Path) -> Result<Vec<ExcludedRow>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (q, bin, n) = (c.str("quantity")?, c.i64("bin")?, c.i64("n_prior")?);
    let (lo, hi) = (opt_f64(&df, path, "lo")?, opt_f64(&df, path, "hi")?);
    let w = c.f64("w_prior")?;
    let (f, e) = (
        nan_if_empty(&c, "excluded_fraction")?,
        nan_if_empty(&c, "excluded_fraction_err")?,
    );
    Ok((0..q.len())
        .map(|k| ExcludedRow {
            quantity: q[k].clone(),
            bin: bin[k],
            lo: lo[k],
            hi: hi[k],
            n_prior: n[k].max(0) as u64,
            w_prior: w[k],
            excluded_fraction: f[k],
            excluded_fraction_err: e[k],
        })
        .collect())
}

/// One cell of `sky_map` as a figure draws it: where (nested cell of `order`), the prior's
/// weight, the surviving draws and their weight, the posterior density, the survivors' mean rate (NaN without
/// survivors) and whether it lies in the 68 % and 95 % credible regions.
#[derive(Debug, Clone, PartialEq)]
pub struct SkyCell {
    pub order: u8,
    pub cell: u64,
    pub w_prior: f64,
    pub n_surviving: u64,
    pub w_surviving: f64,
    pub p_posterior_per_sq_deg: f64,
    pub mean_rate_arcsec_per_hr: f64,
    pub in_region_68: bool,
    pub in_region_95: bool,
}

/// Read `sky_map.*` (each row checked: a cell of its order, one order for the whole map).
pub fn read_sky_map(path: &Path) -> Result<Vec<SkyCell>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (order, cell) = (c.i64("healpix_order")?, c.i64("cell")?);
    let (wp, ns, ws) = (c.f64("w_prior")?, c.i64("n_surviving")?, c.f64("w_surviving")?);
    let p = nan_if_empty(&c, "p_posterior_per_sq_deg")?;
    let rate = nan_if_empty(&c, "mean_rate_arcsec_per_hr")?;
    let flag = |n: &str| -> Result<Vec<bool>> { Ok(c.f64(n)?.into_iter().map(|x| x != 0.0).collect()) };
    let (r68, r95) = (flag("in_region_68")?, flag("in_region_95")?);
    (0..cell.len())
        .map(|k| {
            let o = u8::try_from(order[k])
                .ok()
                .filter(|&o| o <= 29 && order[k] == order[0])
                .ok_or_else(|| c.bad_value(k, "healpix_order", &format!("the map's one order, {}", order[0])))?;
            let h = u64::try_from(cell[k])
                .ok()
                .filter(|&h| h < cdshealpix::nested::n_hash(o))
                .ok_or_else(|| c.bad_value(k, "cell", &format!("a cell of order {o}")))?;
            Ok(SkyCell {
                order: o,
                cell: h,
                w_prior: wp[k],
                n_surviving: ns[k].max(0) as u64,
                w_surviving: ws[k],
                p_posterior_per_sq_deg: p[k],
                mean_rate_arcsec_per_hr: rate[k],
                in_region_68: r68[k],
                in_region_95: r95[k],
            })
        })
        .collect()
}

/// The survivors' weight in each magnitude bin [mag_lo, mag_hi), summed over the cells of
/// `sky_mag_hist.*`, in order of magnitude (bins without survivors left out).
pub fn read_mag_hist_summed(path: &Path) -> Result<Vec<(f64, f64, f64)>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (bins, lo, hi, w) = (
        c.i64("mag_bin")?,
        c.f64("mag_lo")?,
        c.f64("mag_hi")?,
        c.f64("w_surviving")?,
    );
    let mut summed: std::collections::BTreeMap<i64, (f64, f64, f64)> = Default::default();
    for k in 0..bins.len() {
        summed.entry(bins[k]).or_insert((lo[k], hi[k], 0.0)).2 += w[k];
    }
    Ok(summed.into_values().collect())
}

/// One row of `fields.*`: a field of the next search, best first.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldRow {
    pub rank: i64,
    pub ra_deg: f64,
    pub dec_deg: f64,
    pub ecl_lon_deg: f64,
    pub ecl_lat_deg: f64,
    pub radius_deg: f64,
    pub area_sq_deg: f64,
    pub p_field: f64,
    pub p_cumulative: f64,
    pub mean_mag: f64,
    pub depth_90_mag: f64,
    pub mean_rate_arcsec_per_hr: f64,
}

/// Read `fields.*` (magnitudes and rates NaN where a field keeps no survivor).
pub fn read_fields(path: &Path) -> Result<Vec<FieldRow>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let nan = |n: &str| nan_if_empty(&c, n);
    let rank = c.i64("rank")?;
    let [ra, dec, lon, lat, radius, area, p, cum] = [
        "ra_deg",
        "dec_deg",
        "ecl_lon_deg",
        "ecl_lat_deg",
        "radius_deg",
        "area_sq_deg",
        "p_field",
        "p_cumulative",
    ]
    .map(|n| c.f64(n));
    let (ra, dec, lon, lat, radius, area, p, cum) = (ra?, dec?, lon?, lat?, radius?, area?, p?, cum?);
    let (mag, depth, rate) = (nan("mean_mag")?, nan("depth_90_mag")?, nan("mean_rate_arcsec_per_hr")?);
    Ok((0..rank.len())
        .map(|k| FieldRow {
            rank: rank[k],
            ra_deg: ra[k],
            dec_deg: dec[k],
            ecl_lon_deg: lon[k],
            ecl_lat_deg: lat[k],
            radius_deg: radius[k],
            area_sq_deg: area[k],
            p_field: p[k],
            p_cumulative: cum[k],
            mean_mag: mag[k],
            depth_90_mag: depth[k],
            mean_rate_arcsec_per_hr: rate[k],
        })
        .collect())
}

/// A derived column that is NaN where its ratio has no denominator (written as NaN, or as an
/// empty cell by a CSV writer).
fn nan_if_empty(c: &Columns, name: &str) -> Result<Vec<f64>> {
    Ok(c.f64_nullable(name)?
        .into_iter()
        .map(|x| x.unwrap_or(f64::NAN))
        .collect())
}
