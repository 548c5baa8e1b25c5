//! The objects table (DESIGN contract): `id` (optional, default row number), `a_au`, `e`
//! (or `q_au`), `inc_deg`, `node_deg`, `argperi_deg`, `mean_anomaly_deg`, `epoch_mjd` (TDB),
//! `h_mag`; optional `beta_mag_per_deg` (default 0.14) or `hg_g` (IAU H,G slope),
//! `color_<band>` (band minus reference band, default 0), `weight` (default 1),
//! `lc_amp_mag` and `lc_period_hr` (a sinusoidal light curve), and `frame`
//! (`heliocentric` or `barycentric`). Every other column is carried through untouched.

use crate::shard::shard_rows;
use std::borrow::Cow;
use std::collections::HashSet;
use std::path::{Path, PathBuf};

use polars::prelude::DataFrame;

use crate::error::{Error, Result};
use crate::io::table::{Columns, Format, read_parquet_rows, read_table};
use crate::orbit::{Center, Elements};
use crate::ranges::check_column;
use crate::sky::photometry::{DEFAULT_BETA_MAG_PER_DEG, PhaseLaw};

/// Objects with their elements and photometric properties, columns as vectors.
#[derive(Debug, Clone)]
pub struct ObjectTable {
    pub ids: Vec<i64>,
    pub elements: Vec<Elements>,
    pub h_mag: Vec<f64>,
    pub phase_law: Vec<PhaseLaw>,
    /// (band, colour = band − reference band) per object.
    pub colors: Vec<(String, Vec<f64>)>,
    pub weight: Vec<f64>,
    pub lc_amp_mag: Vec<f64>,
    pub lc_period_days: Vec<f64>,
    /// The table as read (every column, carried through to outputs).
    pub frame: DataFrame,
    /// Row of the input file where this table starts, and the input's row count: a shard of
    /// a Parquet table is read alone (see `read_shard`), so that memory follows the shard.
    pub first_row: usize,
    pub input_rows: usize,
}

impl ObjectTable {
    pub fn len(&self) -> usize {
        self.ids.len()
    }
    pub fn is_empty(&self) -> bool {
        self.ids.is_empty()
    }

    /// Colour of object `i` in `band` relative to the reference band (0 if not given).
    pub fn color(&self, band: &str, i: usize) -> f64 {
        self.colors.iter().find(|(b, _)| b == band).map_or(0.0, |(_, v)| v[i])
    }

    pub fn read(path: &Path) -> Result<Self> {
        let df = read_table(path)?;
        Self::from_frame(df, path)
    }

    /// The same columns with no rows.
    fn emptied(mut self) -> Self {
        self.frame = self.frame.slice(0, 0);
        self.ids.clear();
        self.elements.clear();
        self.h_mag.clear();
        self.phase_law.clear();
        self.colors.iter_mut().for_each(|(_, v)| v.clear());
        self.weight.clear();
        self.lc_amp_mag.clear();
        self.lc_period_days.clear();
        self
    }

    /// The one frame of every row's elements, or None when the rows mix frames (or there are none).
    pub fn center(&self) -> Option<Center> {
        let first = self.elements.first()?.center;
        self.elements.iter().all(|e| e.center == first).then_some(first)
    }

    /// True when this is a slice of a larger input table (a shard read alone).
    pub fn is_slice(&self) -> bool {
        self.len() != self.input_rows
    }

    pub fn from_frame(df: DataFrame, path: &Path) -> Result<Self> {
        Self::from_frame_at(df, path, 0)
    }

    /// A table whose first row is row `offset` of the file `path` (for messages).
    pub fn from_frame_at(df: DataFrame, path: &Path, offset: usize) -> Result<Self> {
        let c = Columns::at_offset(&df, path, offset);
        if c.is_empty() {
            return Err(Error::input(format!(
                "{}: the objects table has no rows",
                path.display()
            )));
        }
        let n = c.len();
        let ids = if c.has("id") {
            c.i64("id")?
        } else {
            (0..n as i64).collect()
        };
        let mut seen = HashSet::with_capacity(n);
        for (i, id) in ids.iter().enumerate() {
            // Ids name random streams and shard ranges, which count from 0.
            if *id < 0 {
                return Err(c.bad_value(i, "id", &format!("a non-negative integer, found {id}")));
            }
            if !seen.insert(*id) {
                return Err(c.bad_value(i, "id", &format!("a unique id, found {id} again")));
            }
        }
        let a = c.f64("a_au")?;
        check_column(&c, "a_au", &a)?;
        let e = match (c.has("e"), c.has("q_au")) {
            (true, true) => {
                let e = c.f64("e")?;
                check_consistent_q(&c, &a, &e)?;
                e
            }
            (true, false) => c.f64("e")?,
            (false, true) => {
                let q = c.f64("q_au")?;
                for i in 0..n {
                    if !(q[i] > 0.0 && q[i] <= a[i]) {
                        return Err(c.bad_value(i, "q_au", &format!("0 < q_au ≤ a_au = {}, found {}", a[i], q[i])));
                    }
                }
                q.iter().zip(&a).map(|(q, a)| 1.0 - q / a).collect()
            }
            (false, false) => {
                return Err(Error::input(format!(
                    "{}: missing required column `e` (or `q_au`)",
                    path.display()
                )));
            }
        };
        let inc = c.f64("inc_deg")?;
        let node = c.f64("node_deg")?;
        let argperi = c.f64("argperi_deg")?;
        let mean_anomaly = c.f64("mean_anomaly_deg")?;
        let epoch = c.f64("epoch_mjd")?;
        check_column(&c, "epoch_mjd", &epoch)?;
        let h_mag = c.f64("h_mag")?;
        check_column(&c, "h_mag", &h_mag)?;
        let centers = if c.has("frame") {
            let s = c.str("frame")?;
            s.iter()
                .enumerate()
                .map(|(i, v)| {
                    Center::parse(v)
                        .ok_or_else(|| c.bad_value(i, "frame", &format!("heliocentric or barycentric, found `{v}`")))
                })
                .collect::<Result<Vec<_>>>()?
        } else {
            vec![Center::Heliocentric; n]
        };
        for (name, v) in [
            ("node_deg", &node),
            ("argperi_deg", &argperi),
            ("mean_anomaly_deg", &mean_anomaly),
        ] {
            if let Some(i) = v.iter().position(|x| !(-360.0..=360.0).contains(x)) {
                return Err(c.bad_value(i, name, &format!("an angle in -360..360 deg, found {}", v[i])));
            }
        }
        let mut elements = Vec::with_capacity(n);
        for i in 0..n {
            let el = Elements {
                a_au: a[i],
                e: e[i],
                inc_rad: inc[i].to_radians(),
                node_rad: node[i].to_radians().rem_euclid(std::f64::consts::TAU),
                argperi_rad: argperi[i].to_radians().rem_euclid(std::f64::consts::TAU),
                mean_anomaly_rad: mean_anomaly[i].to_radians().rem_euclid(std::f64::consts::TAU),
                epoch_mjd_tdb: epoch[i],
                center: centers[i],
            };
            if let Some((col, expected)) = el.problem() {
                let col = if col == "e" && !c.has("e") { "q_au" } else { col };
                return Err(c.bad_value(i, col, &expected));
            }
            elements.push(el);
        }
        let phase_law = if c.has("hg_g") {
            let g = c.f64("hg_g")?;
            if let Some(i) = g.iter().position(|g| !(-0.5..=1.5).contains(g)) {
                return Err(c.bad_value(i, "hg_g", &format!("a slope parameter G in -0.5..1.5, found {}", g[i])));
            }
            g.into_iter().map(|g| PhaseLaw::HG { g }).collect()
        } else {
            let beta = c.f64_or("beta_mag_per_deg", DEFAULT_BETA_MAG_PER_DEG)?;
            if let Some(i) = beta.iter().position(|b| !(0.0..=2.0).contains(b)) {
                return Err(c.bad_value(i, "beta_mag_per_deg", &format!("0..2 mag/deg, found {}", beta[i])));
            }
            beta.into_iter()
                .map(|b| PhaseLaw::Linear { beta_mag_per_deg: b })
                .collect()
        };
        let mut colors = Vec::new();
        for band in c.with_prefix("color_") {
            let name = format!("color_{band}");
            let v = c.f64(&name)?;
            check_column(&c, &name, &v)?;
            colors.push((band.clone(), v));
        }
        let weight = c.f64_or("weight", 1.0)?;
        if let Some(i) = weight.iter().position(|w| !(*w >= 0.0)) {
            return Err(c.bad_value(i, "weight", &format!("a weight ≥ 0, found {}", weight[i])));
        }
        let lc_amp_mag = c.f64_or("lc_amp_mag", 0.0)?;
        check_column(&c, "lc_amp_mag", &lc_amp_mag)?;
        let lc_period_hr = c.f64_or("lc_period_hr", 0.0)?;
        check_column(&c, "lc_period_hr", &lc_period_hr)?;
        let lc_period_days: Vec<f64> = lc_period_hr.iter().map(|h| h / 24.0).collect();
        Ok(ObjectTable {
            ids,
            elements,
            h_mag,
            phase_law,
            colors,
            weight,
            lc_amp_mag,
            lc_period_days,
            frame: df,
            first_row: 0,
            input_rows: n,
        })
    }
}

/// A table giving both `e` and `q_au` must have them agree with `a_au`: q = a (1 − e) to
/// 1e-6 of q (rounding of a written table; plus the rounding of 1 − e, 1e-15 of a, for e
/// near 1), else which one to believe is unknown.
fn check_consistent_q(c: &Columns, a: &[f64], e: &[f64]) -> Result<()> {
    let q = c.f64("q_au")?;
    for i in 0..q.len() {
        let implied = a[i] * (1.0 - e[i]);
        if !((q[i] - implied).abs() <= 1e-6 * implied.abs() + 1e-15 * a[i].abs()) {
            return Err(c.bad_value(
                i,
                "q_au",
                &format!(
                    "q_au = a_au (1 - e) = {implied} (a_au = {}, e = {}) to 1e-6 of it, found {}; give e or q_au, or make them agree",
                    a[i], e[i], q[i]
                ),
            ));
        }
    }
    Ok(())
}

/// Rows per read when a Parquet objects table is checked before a run: the block is what the
/// check holds beside the ids (about 0.3 kB a row as read, so 2^16 rows ≈ 20 MB), and a block
/// read costs little (LZ4 pages of doubles hardly compress: reading is copying).
const CHECK_ROWS: usize = 1 << 16;

/// Where `observe` (and `compare-models`, for its models) takes its objects from, chunk by chunk.
#[derive(Debug, Clone)]
pub enum ObjectSource<'a> {
    /// A table in memory (a CSV file, or built by the caller).
    Table(Cow<'a, ObjectTable>),
    /// A Parquet file read one chunk at a time, so that memory follows the chunk and not the
    /// table: `rows` (of the file) are this run's share, `head` its first row (or an empty
    /// table with the columns), for the schema and bands; `center` the one frame of the
    /// share's rows (None when they mix frames), found by the checking pass.
    Parquet {
        path: PathBuf,
        head: ObjectTable,
        rows: (usize, usize),
        center: Option<Center>,
    },
}

impl From<ObjectTable> for ObjectSource<'static> {
    fn from(t: ObjectTable) -> Self {
        ObjectSource::Table(Cow::Owned(t))
    }
}

impl<'a> ObjectSource<'a> {
    /// Shard k of n of the objects table at `path`: a Parquet table checked and then read a
    /// chunk at a time (`parquet`), a CSV table read whole.
    pub fn open(path: &Path, shard: Option<(usize, usize)>) -> Result<ObjectSource<'static>> {
        match Format::of(path)? {
            Format::Parquet => ObjectSource::parquet(path, shard),
            Format::Csv => Ok(ObjectTable::read(path)?.into()),
        }
    }

    /// Open shard k of n of a Parquet objects table and check every row of it first (values,
    /// unique ids), so that a bad row fails the run before anything is written.
    pub fn parquet(path: &Path, shard: Option<(usize, usize)>) -> Result<ObjectSource<'static>> {
        let (first, lo, total) = read_parquet_rows(path, |n| {
            let rows = shard_rows(n, shard);
            (rows.start, rows.end.min(rows.start + 1))
        })?;
        let hi = shard_rows(total, shard).end;
        let center = check_rows(path, lo, hi)?;
        let mut head = if first.height() > 0 {
            Self::table_at(first, path, lo, total)?
        } else {
            // An empty share (more shards than objects): the columns of the file's first row.
            let (one, _, _) = read_parquet_rows(path, |_| (0, 1))?;
            ObjectTable::from_frame(one, path)?.emptied()
        };
        (head.first_row, head.input_rows) = (lo, total);
        Ok(ObjectSource::Parquet {
            path: path.to_path_buf(),
            head,
            rows: (lo, hi),
            center,
        })
    }

    fn table_at(df: DataFrame, path: &Path, lo: usize, total: usize) -> Result<ObjectTable> {
        let mut t = ObjectTable::from_frame_at(df, path, lo)?;
        (t.first_row, t.input_rows) = (lo, total);
        Ok(t)
    }

    /// The first rows (or all of an in-memory table): columns, colours, row count of the input.
    pub fn head(&self) -> &ObjectTable {
        match self {
            ObjectSource::Table(t) => t,
            ObjectSource::Parquet { head, .. } => head,
        }
    }

    /// Rows of the input file this run takes: a Parquet share, or shard k of n of a table.
    pub fn rows(&self, shard: Option<(usize, usize)>) -> (usize, usize) {
        match self {
            ObjectSource::Table(t) if t.is_slice() => (t.first_row, t.first_row + t.len()),
            ObjectSource::Table(t) => {
                let rows = shard_rows(t.len(), shard);
                (rows.start, rows.end)
            }
            ObjectSource::Parquet { rows, .. } => *rows,
        }
    }

    /// A table holding at least the input rows [lo, hi) (its `first_row` says where it starts).
    pub fn chunk(&self, lo: usize, hi: usize) -> Result<Cow<'_, ObjectTable>> {
        match self {
            ObjectSource::Table(t) => Ok(Cow::Borrowed(t)),
            ObjectSource::Parquet { head, .. } if hi == lo => Ok(Cow::Borrowed(head)),
            ObjectSource::Parquet { path, head, .. } => {
                let (df, _, total) = read_parquet_rows(path, |_| (lo, hi))?;
                debug_assert_eq!(total, head.input_rows);
                Ok(Cow::Owned(Self::table_at(df, path, lo, total)?))
            }
        }
    }

    /// How many rows this source gives (a Parquet share, or every row of a table).
    pub fn len(&self) -> usize {
        match self {
            ObjectSource::Table(t) => t.len(),
            ObjectSource::Parquet { rows, .. } => rows.1 - rows.0,
        }
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The one frame of every row's elements, or None when the rows mix frames.
    pub fn center(&self) -> Option<Center> {
        match self {
            ObjectSource::Table(t) => t.center(),
            ObjectSource::Parquet { center, .. } => *center,
        }
    }

    /// Every row once, in order, as consecutive tables: a table in memory whole, a Parquet
    /// share `rows` rows at a time (each read only when its turn comes, so that a caller
    /// that keeps only a summary of each holds one chunk at a time).
    pub fn for_each_chunk(&self, rows: usize, mut f: impl FnMut(Cow<'_, ObjectTable>) -> Result<()>) -> Result<()> {
        let ObjectSource::Parquet { rows: (lo, hi), .. } = self else {
            return f(self.chunk(0, 0)?);
        };
        let mut start = *lo;
        while start < *hi {
            let end = (start + rows.max(1)).min(*hi);
            f(self.chunk(start, end)?)?;
            start = end;
        }
        Ok(())
    }
}

/// Check rows [lo, hi) of a Parquet objects table block by block (every value, and ids
/// unique across the whole range), holding only a block and the ids; the one frame of the
/// rows' elements (None when they mix frames or there are none).
fn check_rows(path: &Path, lo: usize, hi: usize) -> Result<Option<Center>> {
    let mut ids: Vec<(i64, usize)> = Vec::with_capacity(hi - lo);
    let mut centers: Vec<Option<Center>> = Vec::new();
    let mut start = lo;
    while start < hi {
        let end = (start + CHECK_ROWS).min(hi);
        let (df, _, _) = read_parquet_rows(path, |_| (start, end))?;
        let t = ObjectTable::from_frame_at(df, path, start)?;
        ids.extend(t.ids.iter().enumerate().map(|(k, id)| (*id, start + k)));
        centers.push(t.center());
        start = end;
    }
    ids.sort_unstable();
    if let Some(w) = ids.windows(2).find(|w| w[0].0 == w[1].0) {
        return Err(Error::input(format!(
            "{} row {}, column `id`: expected a unique id, found {} again (first at row {})",
            path.display(),
            w[0].1.max(w[1].1) + 1,
            w[0].0,
            w[0].1.min(w[1].1) + 1
        )));
    }
    let first = centers.first().copied().flatten();
    Ok(centers.iter().all(|c| *c == first).then_some(first).flatten())
}
