//! The bias maps' output product: file names, columns, writing and reading of `bias_map.*`
//! (one row per object and cell), `map_discoveries.*` (the angles of every discovered
//! trial) and `map_objects.*` (each mapped object's own angles and weight). `seine bias-map` and `seine cluster-test` write through it; `cluster-test --bias-map`
//! reads maps back through `read`, and `seine report` reads any map table through `read_cells`
//! (which also takes the documented hand-made layout `X_min, X_max, Y_min, Y_max, fraction`).

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use polars::prelude::Column;

use super::bias_map::{BiasMap, MapAxes, MapGrid};
use super::trial_selection::{DISCOVERED_KEY, TrialSelection};
use crate::error::{Error, Result};
use crate::io::out_dir::{OutDir, col, frame};
use crate::io::sink::TableSink;
use crate::io::table::{Columns, read_table, read_table_parts};
use crate::population::objects::ObjectTable;

/// File stem of the map table: `DIR/bias_map.parquet` (or `.csv`).
pub const MAPS: &str = "bias_map";
/// File stem of the discovered trials' angles beside a map table.
pub const FOUND: &str = "map_discoveries";
/// File stem of the mapped objects' own angles and weights beside a map table.
pub const OBJECTS: &str = "map_objects";

const ID: &str = "id";
const CELL: &str = "cell";
const GRID_N_X: &str = "grid_n_x";
const GRID_N_NODE: &str = "grid_n_node";
const TRIALS: &str = "trials";
const DISCOVERED: &str = "discovered";
const P_DISCOVER: &str = "p_discover";
const NODE: &str = "node";
const WEIGHT: &str = "weight";
/// The selection the maps' trials went through (`TrialSelection::key`), on every row.
const SELECTION: &str = "selection";
/// The object each map was made for, beside its id: the quantities a map depends on that the
/// trials keep (the angles and the mean anomaly are drawn). A map read back for a catalogue is
/// checked against them, so that a map of another catalogue's object of the same id is refused.
const OBJECT_COLUMNS: [&str; 4] = ["a_au", "e", "inc_deg", "h_mag"];
/// Relative agreement asked of those quantities: a CSV round trip keeps them to the last digit,
/// so only a different object differs by more (common practice, no source).
const SAME_OBJECT_RTOL: f64 = 1e-9;
/// The value columns a map table may carry, in order of preference: the hand-made layout's
/// `fraction` or `probability`, or `p_discover` as `seine bias-map` writes it.
const VALUE_COLUMNS: [&str; 3] = ["fraction", "probability", P_DISCOVER];

/// Whether a file name is a map table the report shows (`bias_map*.csv` or `.parquet`).
pub fn is_map_table(name: &str) -> bool {
    name.starts_with(MAPS) && (name.ends_with(".csv") || name.ends_with(".parquet"))
}

/// A mapped object's own place on its map: its angles (deg) on the map's axes, and its
/// weight in the catalogue (a map of the whole catalogue adds the objects' maps with it).
#[derive(Debug, Clone, PartialEq)]
pub struct MappedObject {
    pub id: i64,
    pub x_deg: f64,
    pub node_deg: f64,
    pub weight: f64,
}

/// Write `bias_map.*`, `map_discoveries.*` and `map_objects.*` of maps made for objects of
/// `objects`; returns the three paths. The tables are built and written a batch of maps at a
/// time (`MapSink`), so their rows are never held whole.
pub fn write(
    out: &OutDir,
    maps: &[BiasMap],
    objects: &ObjectTable,
    selection: &TrialSelection,
) -> Result<[PathBuf; 3]> {
    let mut sink = MapSink::create(out, objects, selection)?;
    for batch in maps.chunks(maps_per_batch(maps.first().map_or(1, |m| m.trials.len()))) {
        sink.add(batch)?;
    }
    sink.finish()
}

/// Rows of `bias_map.*` built and written at once (one Parquet row group): about 8 MB of
/// columns, whatever the number of objects (common practice, no source).
const ROWS_PER_BATCH: usize = 65_536;

/// How many maps of `cells` cells make one batch of rows: at least one.
pub fn maps_per_batch(cells: usize) -> usize {
    (ROWS_PER_BATCH / cells.max(1)).max(1)
}

/// The three map tables written as the maps are made, a batch of maps at a time: memory holds
/// one batch's rows, not the whole table (`bias_map.*` has a row per object and cell, about
/// 120 bytes each). Nothing appears under its final name before `finish`.
pub struct MapSink<'a> {
    /// The catalogue the maps were made for, and the row of each of its ids.
    objects: &'a ObjectTable,
    row_of: HashMap<i64, usize>,
    selection: String,
    /// The first axis's name of the maps added so far (`varpi` until a map says otherwise).
    x: &'static str,
    sinks: [TableSink; 3],
    paths: [PathBuf; 3],
    /// Whether a batch was added to each table: a table without one gets its columns, empty.
    written: [bool; 3],
}

impl<'a> MapSink<'a> {
    /// Prepare the three tables of maps made for objects of `objects`.
    pub fn create(out: &OutDir, objects: &'a ObjectTable, selection: &TrialSelection) -> Result<Self> {
        Ok(MapSink {
            objects,
            row_of: objects.ids.iter().enumerate().map(|(r, id)| (*id, r)).collect(),
            selection: selection.key(),
            x: x_name(&[]),
            sinks: [out.sink(MAPS)?, out.sink(FOUND)?, out.sink(OBJECTS)?],
            paths: [out.table(MAPS), out.table(FOUND), out.table(OBJECTS)],
            written: [false; 3],
        })
    }

    /// Append the rows of `maps`, in the order they are to be written, to the three tables.
    pub fn add(&mut self, maps: &[BiasMap]) -> Result<()> {
        if !maps.is_empty() {
            self.x = x_name(maps);
        }
        let tables = self.columns(maps);
        for (k, columns) in tables.into_iter().enumerate() {
            let df = frame(columns)?;
            if df.height() > 0 {
                self.sinks[k].write(&df)?;
                self.written[k] = true;
            }
        }
        Ok(())
    }

    /// The columns of the three tables for `maps`.
    fn columns(&self, maps: &[BiasMap]) -> [Vec<Column>; 3] {
        let mut columns = map_columns(maps);
        columns.extend(object_columns(maps, self.objects, &self.row_of));
        let rows: usize = maps.iter().map(|m| m.trials.len()).sum();
        columns.push(col(SELECTION, vec![self.selection.clone(); rows]));
        [
            columns,
            found_columns(self.x, maps),
            mapped_columns(self.x, &mapped_objects(maps, self.objects, &self.row_of)),
        ]
    }

    /// Close the three tables (a table that received no row is written with its columns and
    /// no row, as for an empty shard) and rename them into place; returns their paths.
    pub fn finish(mut self) -> Result<[PathBuf; 3]> {
        let blank = self.columns(&[]);
        for ((sink, columns), written) in self.sinks.iter_mut().zip(blank).zip(self.written) {
            if !written {
                sink.write(&frame(columns)?)?;
            }
        }
        let [maps, found, own] = self.sinks;
        maps.finish()?;
        found.finish()?;
        own.finish()?;
        Ok(self.paths)
    }
}

/// Each map's object: its own angles on the map's axes and its weight.
fn mapped_objects(maps: &[BiasMap], objects: &ObjectTable, row_of: &HashMap<i64, usize>) -> Vec<MappedObject> {
    maps.iter()
        .filter_map(|m| {
            let r = *row_of.get(&m.id)?;
            let el = &objects.elements[r];
            Some(MappedObject {
                id: m.id,
                x_deg: m.grid.axes.x_of(el).to_degrees(),
                node_deg: el.node_rad.rem_euclid(std::f64::consts::TAU).to_degrees(),
                weight: objects.weight[r],
            })
        })
        .collect()
}

/// The values of `OBJECT_COLUMNS` of one catalogue row.
fn object_key(objects: &ObjectTable, row: usize) -> [f64; 4] {
    let el = &objects.elements[row];
    [el.a_au, el.e, el.inc_rad.to_degrees(), objects.h_mag[row]]
}

/// `a_au, e, inc_deg, h_mag` of each map's object, repeated on each of its cells.
fn object_columns(maps: &[BiasMap], objects: &ObjectTable, row_of: &HashMap<i64, usize>) -> Vec<Column> {
    let keys: Vec<[f64; 4]> = maps
        .iter()
        .flat_map(|m| {
            let key = row_of.get(&m.id).map_or([f64::NAN; 4], |r| object_key(objects, *r));
            std::iter::repeat_n(key, m.trials.len())
        })
        .collect();
    (0..OBJECT_COLUMNS.len())
        .map(|k| col(OBJECT_COLUMNS[k], keys.iter().map(|v| v[k]).collect::<Vec<f64>>()))
        .collect()
}

/// `map_objects`: one row per mapped object, `id, varpi_deg` (or `argperi_deg`), `node_deg`,
/// `weight`.
fn mapped_columns(x: &str, mapped: &[MappedObject]) -> Vec<Column> {
    let each = |f: fn(&MappedObject) -> f64| mapped.iter().map(f).collect::<Vec<f64>>();
    vec![
        col(ID, mapped.iter().map(|m| m.id).collect::<Vec<i64>>()),
        col(&format!("{x}_deg"), each(|m| m.x_deg)),
        col(&format!("{NODE}_deg"), each(|m| m.node_deg)),
        col(WEIGHT, each(|m| m.weight)),
    ]
}

/// The mapped objects of `map_objects.*` beside a map table (same format), when there is
/// that file: `id`, the first axis's angle (`varpi_deg`, `argperi_deg`, or any `X_deg` but
/// `node_deg`), `node_deg`, optional `weight` (default 1).
pub fn read_objects(map_table: &Path) -> Result<Option<Vec<MappedObject>>> {
    let ext = map_table.extension().and_then(|e| e.to_str()).unwrap_or("parquet");
    let path = map_table.with_file_name(format!("{OBJECTS}.{ext}"));
    if !path.exists() {
        return Ok(None);
    }
    let df = read_table(&path)?;
    let c = Columns::new(&df, &path);
    let node_col = format!("{NODE}_deg");
    let x_col = ["varpi_deg", "argperi_deg"]
        .into_iter()
        .find(|n| c.has(n))
        .ok_or_else(|| {
            Error::input(format!(
                "{}: expected a column varpi_deg or argperi_deg",
                path.display()
            ))
        })?;
    let (ids, x, node) = (c.i64(ID)?, c.f64(x_col)?, c.f64(&node_col)?);
    let weight = if c.has(WEIGHT) {
        c.f64(WEIGHT)?
    } else {
        vec![1.0; ids.len()]
    };
    if let Some(r) = weight.iter().position(|w| !(w.is_finite() && *w >= 0.0)) {
        return Err(c.bad_value(r, WEIGHT, "a finite weight ≥ 0"));
    }
    Ok(Some(
        (0..ids.len())
            .map(|r| MappedObject {
                id: ids[r],
                x_deg: x[r],
                node_deg: node[r],
                weight: weight[r],
            })
            .collect(),
    ))
}

/// The first axis's name (`varpi` or `argperi`) of a list of maps.
fn x_name(maps: &[BiasMap]) -> &'static str {
    maps.first()
        .map_or(MapAxes::VarpiNode.x_name(), |m| m.grid.axes.x_name())
}

/// `bias_map`: one row per object and cell: `id, cell, grid_n_x, grid_n_node`, the cell's
/// bounds `X_lo_deg, X_hi_deg, node_lo_deg, node_hi_deg` (X = varpi or argperi), `trials,
/// discovered, p_discover` (then `a_au, e, inc_deg, h_mag` and `selection`, added by `write`).
fn map_columns(maps: &[BiasMap]) -> Vec<Column> {
    let rows: Vec<(&BiasMap, usize)> = maps
        .iter()
        .flat_map(|b| (0..b.trials.len()).map(move |c| (b, c)))
        .collect();
    let x = x_name(maps);
    let bound = |k: usize| -> Vec<f64> {
        rows.iter()
            .map(|&(m, c)| {
                let b = m.cell_bounds(c);
                [b.0, b.1, b.2, b.3][k].to_degrees()
            })
            .collect()
    };
    let u = |f: &dyn Fn(&BiasMap, usize) -> u64| rows.iter().map(|&(m, c)| f(m, c)).collect::<Vec<u64>>();
    vec![
        col(ID, rows.iter().map(|&(m, _)| m.id).collect::<Vec<i64>>()),
        col(CELL, u(&|_, c| c as u64)),
        col(GRID_N_X, u(&|m, _| m.grid.n_x as u64)),
        col(GRID_N_NODE, u(&|m, _| m.grid.n_node as u64)),
        col(&lo_deg(x), bound(0)),
        col(&hi_deg(x), bound(1)),
        col(&lo_deg(NODE), bound(2)),
        col(&hi_deg(NODE), bound(3)),
        col(TRIALS, u(&|m, c| m.trials[c])),
        col(DISCOVERED, u(&|m, c| m.discoveries[c])),
        col(P_DISCOVER, rows.iter().map(|&(m, c)| m.p(c)).collect::<Vec<f64>>()),
    ]
}

fn lo_deg(axis: &str) -> String {
    format!("{axis}_lo_deg")
}

fn hi_deg(axis: &str) -> String {
    format!("{axis}_hi_deg")
}

/// `map_discoveries`: one row per discovered trial, `id, varpi_deg` (or `argperi_deg`),
/// `node_deg`, in trial order.
fn found_columns(x: &str, maps: &[BiasMap]) -> Vec<Column> {
    let each =
        |f: &dyn Fn(&(f64, f64)) -> f64| -> Vec<f64> { maps.iter().flat_map(|m| m.found.iter().map(f)).collect() };
    vec![
        col(
            ID,
            maps.iter()
                .flat_map(|m| std::iter::repeat_n(m.id, m.found.len()))
                .collect::<Vec<i64>>(),
        ),
        col(&format!("{x}_deg"), each(&|a| a.0.to_degrees())),
        col(&format!("{NODE}_deg"), each(&|a| a.1.to_degrees())),
    ]
}

/// Read a table written by `seine bias-map` back into maps, one per id, with the discovered
/// trials' angles of `map_discoveries.*` beside it when there is that file. Every map whose id
/// is in `catalog` must have been made for that very object (same a, e, i and H) and under
/// `selection` (a table without a `selection` column was made before maps could apply a fit:
/// every discovery, true angles); under a fit's selection the discovered angles must be there.
pub fn read(path: &Path, catalog: &ObjectTable, selection: &TrialSelection) -> Result<Vec<BiasMap>> {
    let row_of: HashMap<i64, usize> = catalog.ids.iter().enumerate().map(|(r, id)| (*id, r)).collect();
    let mut maps: Vec<BiasMap> = Vec::new();
    // A part (a row group) at a time: only the maps are kept, not the table's rows.
    read_table_parts(path, |df, offset| {
        let c = Columns::at_offset(df, path, offset);
        check_same_objects(path, &c, (catalog, &row_of))?;
        check_selection(path, &c, selection)?;
        add_rows(&c, &mut maps)
    })?;
    read_found(path, &mut maps)?;
    if *selection != TrialSelection::Discovered
        && let Some(m) = maps.iter().find(|m| m.found.is_empty() && m.total_discoveries() > 0)
    {
        return Err(Error::input(format!(
            "{}: id {}: no discovered angles ({FOUND} beside it); maps of fitted orbits are drawn from              their discovered trials' fitted angles, so keep that file with the map table",
            path.display(),
            m.id
        )));
    }
    Ok(maps)
}

/// Add the rows of one part of a map table to `maps` (a map may go on from the last part).
fn add_rows(c: &Columns, maps: &mut Vec<BiasMap>) -> Result<()> {
    let axes = if c.has(&lo_deg(MapAxes::VarpiNode.x_name())) {
        MapAxes::VarpiNode
    } else {
        MapAxes::ArgperiNode
    };
    let (ids, cells, nx, nn) = (c.i64(ID)?, c.i64(CELL)?, c.i64(GRID_N_X)?, c.i64(GRID_N_NODE)?);
    let (trials, found) = (c.i64(TRIALS)?, c.i64(DISCOVERED)?);
    for r in 0..c.len() {
        if maps.last().is_none_or(|m| m.id != ids[r]) {
            let grid = MapGrid {
                axes,
                n_x: nx[r] as usize,
                n_node: nn[r] as usize,
            };
            maps.push(BiasMap::empty(ids[r], grid));
        }
        let m = maps.last_mut().expect("pushed above");
        let cell = usize::try_from(cells[r]).ok().filter(|x| *x < m.trials.len());
        let cell = cell.ok_or_else(|| c.bad_value(r, CELL, &format!("a cell below {}", m.trials.len())))?;
        if trials[r] < 0 || found[r] < 0 || found[r] > trials[r] {
            return Err(c.bad_value(r, DISCOVERED, "0 ≤ discovered ≤ trials"));
        }
        m.trials[cell] = trials[r] as u64;
        m.discoveries[cell] = found[r] as u64;
    }
    Ok(())
}

/// Refuse maps made under another selection than `want`.
fn check_selection(path: &Path, c: &Columns, want: &TrialSelection) -> Result<()> {
    let made = if c.has(SELECTION) {
        c.str(SELECTION)?
    } else {
        vec![DISCOVERED_KEY.to_string()]
    };
    let want = want.key();
    match made.iter().find(|k| **k != want) {
        Some(k) => Err(Error::input(format!(
            "{}: these maps were made for a catalogue taken with `{k}`, not `{want}`; make them again              with `seine bias-map` and the same selection and fit options",
            path.display()
        ))),
        None => Ok(()),
    }
}

/// Refuse a map table whose rows describe another object than the catalogue's of the same id.
fn check_same_objects(path: &Path, c: &Columns, (catalog, row_of): (&ObjectTable, &HashMap<i64, usize>)) -> Result<()> {
    let ids = c.i64(ID)?;
    let values = OBJECT_COLUMNS
        .iter()
        .map(|name| {
            if c.has(name) {
                c.f64(name)
            } else {
                Err(Error::input(format!(
                    "{}: no column `{name}`: the maps must name the object each was made for \
                     (a_au, e, inc_deg, h_mag); make them again with `seine bias-map`",
                    path.display()
                )))
            }
        })
        .collect::<Result<Vec<_>>>()?;
    for (r, id) in ids.iter().enumerate() {
        let Some(row) = row_of.get(id) else { continue };
        let want = object_key(catalog, *row);
        for k in 0..OBJECT_COLUMNS.len() {
            let got = values[k][r];
            if (got - want[k]).abs() > SAME_OBJECT_RTOL * want[k].abs().max(1.0) || got.is_nan() {
                return Err(c.bad_value(
                    r,
                    OBJECT_COLUMNS[k],
                    &format!(
                        "{} = {} as in the catalogue for id {id} (these maps were made for another object of that id)",
                        OBJECT_COLUMNS[k], want[k]
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// The discovered trials' angles from `map_discoveries.*` beside a map table, when there is
/// one; each map's discoveries must match its count.
fn read_found(path: &Path, maps: &mut [BiasMap]) -> Result<()> {
    let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("parquet");
    let beside = path.with_file_name(format!("{FOUND}.{ext}"));
    if !beside.exists() {
        return Ok(());
    }
    let df = read_table(&beside)?;
    let c = Columns::new(&df, &beside);
    let x_col = format!("{}_deg", x_name(maps));
    let (ids, x, node) = (c.i64(ID)?, c.f64(&x_col)?, c.f64(&format!("{NODE}_deg"))?);
    let index: std::collections::HashMap<i64, usize> = maps.iter().enumerate().map(|(k, m)| (m.id, k)).collect();
    for r in 0..ids.len() {
        let k = *index
            .get(&ids[r])
            .ok_or_else(|| c.bad_value(r, ID, "an id of the map table beside it"))?;
        maps[k].found.push((x[r].to_radians(), node[r].to_radians()));
    }
    for m in maps.iter() {
        if !m.found.is_empty() && m.found.len() as u64 != m.total_discoveries() {
            return Err(Error::input(format!(
                "{}: id {}: {} discovered angles, but {} discoveries in {}",
                beside.display(),
                m.id,
                m.found.len(),
                m.total_discoveries(),
                path.display()
            )));
        }
    }
    Ok(())
}

/// One map as cells over two named quantities, for drawing.
#[derive(Debug, Clone, PartialEq)]
pub struct MapCells {
    /// The quantities with their units, e.g. `varpi_deg`, `node_deg`.
    pub x: String,
    pub y: String,
    /// The object the map belongs to, when the table has an `id` column.
    pub id: Option<i64>,
    /// (x_min, x_max, y_min, y_max, value) per cell.
    pub cells: Vec<[f64; 5]>,
    /// Trials per cell, when the table has them (`trials`, as `seine bias-map` writes it).
    pub trials: Option<Vec<u64>>,
}

/// Read any map table as cells: bin columns `X_lo_deg`/`X_hi_deg` (as `seine bias-map` writes
/// them) or `X_min`/`X_max` (X named with its unit) for two quantities, a value column
/// (`fraction`, `probability` or `p_discover`), and an optional `id` that splits it into one
/// map per object.
pub fn read_cells(path: &Path) -> Result<Vec<MapCells>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let names: Vec<String> = df.get_column_names().iter().map(|s| s.to_string()).collect();
    let axes = bin_axes(&names);
    let [(x, x_lo, x_hi), (y, y_lo, y_hi)] = axes.as_slice() else {
        return Err(Error::input(format!(
            "{}: expected bin columns for two quantities (X_min, X_max, Y_min, Y_max), found {}",
            path.display(),
            names.join(", ")
        )));
    };
    let value = VALUE_COLUMNS.into_iter().find(|v| c.has(v)).ok_or_else(|| {
        Error::input(format!(
            "{}: missing the value column `fraction` (or `probability`, `p_discover`)",
            path.display()
        ))
    })?;
    let (x0, x1, y0, y1) = (c.f64(x_lo)?, c.f64(x_hi)?, c.f64(y_lo)?, c.f64(y_hi)?);
    let v = c.f64(value)?;
    let ids = if c.has(ID) {
        c.i64(ID)?.into_iter().map(Some).collect()
    } else {
        vec![None; v.len()]
    };
    let trials = if c.has(TRIALS) { Some(c.i64(TRIALS)?) } else { None };
    let mut maps: Vec<MapCells> = Vec::new();
    for i in 0..v.len() {
        if maps.last().is_none_or(|m| m.id != ids[i]) {
            maps.push(MapCells {
                x: x.clone(),
                y: y.clone(),
                id: ids[i],
                cells: Vec::new(),
                trials: trials.as_ref().map(|_| Vec::new()),
            });
        }
        let m = maps.last_mut().expect("pushed above");
        m.cells.push([x0[i], x1[i], y0[i], y1[i], v[i]]);
        if let (Some(t), Some(all)) = (m.trials.as_mut(), trials.as_ref()) {
            t.push(u64::try_from(all[i]).map_err(|_| c.bad_value(i, TRIALS, "trials ≥ 0"))?);
        }
    }
    Ok(maps)
}

/// The bin-column pairs among `names`: (the quantity with its unit, low column, high column).
fn bin_axes(names: &[String]) -> Vec<(String, String, String)> {
    names
        .iter()
        .filter_map(|n| {
            if let Some(stem) = n.strip_suffix("_min") {
                let hi = format!("{stem}_max");
                names.contains(&hi).then(|| (stem.to_string(), n.clone(), hi))
            } else {
                let stem = n.strip_suffix("_lo_deg")?;
                let hi = hi_deg(stem);
                names.contains(&hi).then(|| (format!("{stem}_deg"), n.clone(), hi))
            }
        })
        .collect()
}
