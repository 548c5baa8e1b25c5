//! `observe` as a library call: load, prepare, run objects in parallel chunk by chunk,
//! stream the tables out, and summarise.

use std::path::{Path, PathBuf};
use std::time::Instant;

use polars::prelude::*;
use rayon::prelude::*;

use super::index::{Candidates, PreparedSurvey};
use super::outcome::ObjectOutcome;
use super::pipeline::observe_object;
use super::summary::Summary;
use crate::error::{Error, Result};
use crate::io::objects::ObjectTable;
use crate::io::provenance::Provenance;
use crate::io::sink::TableSink;
use crate::io::table::{Format, write_atomic};
use crate::rng::{Purpose, object_stream};

/// Options of one observe run.
#[derive(Debug, Clone)]
pub struct ObserveOptions {
    pub seed: u64,
    /// (k, n): take the k-th of n contiguous, disjoint slices of the objects (k from 0).
    pub shard: Option<(usize, usize)>,
    pub format: Format,
    pub candidates: Candidates,
    pub chunk_size: usize,
    pub progress: bool,
}

impl Default for ObserveOptions {
    fn default() -> Self {
        ObserveOptions {
            seed: 0,
            shard: None,
            format: Format::Parquet,
            candidates: Candidates::Indexed,
            chunk_size: 20_000,
            progress: false,
        }
    }
}

/// What a run did, for the caller to print.
#[derive(Debug, Clone)]
pub struct ObserveReport {
    pub summary: Summary,
    pub objects_path: PathBuf,
    pub detections_path: PathBuf,
    pub summary_path: PathBuf,
}

/// The rows [lo, hi) of shard k of n over `len` rows.
pub fn shard_range(len: usize, shard: Option<(usize, usize)>) -> (usize, usize) {
    match shard {
        None => (0, len),
        Some((k, n)) => (len * k / n, len * (k + 1) / n),
    }
}

/// Run the objects through the surveys and write `DIR/objects.*`, `DIR/detections.*` and
/// `DIR/summary.json`.
pub fn observe(
    surveys: &[PreparedSurvey],
    objects: &ObjectTable,
    out_dir: &Path,
    opts: &ObserveOptions,
    provenance: &Provenance,
) -> Result<ObserveReport> {
    let start = Instant::now();
    let ext = opts.format.extension();
    let objects_path = out_dir.join(format!("objects.{ext}"));
    let detections_path = out_dir.join(format!("detections.{ext}"));
    let summary_path = out_dir.join("summary.json");
    std::fs::create_dir_all(out_dir).map_err(|e| {
        Error::input(format!(
            "{}: cannot create the output directory: {e}",
            out_dir.display()
        ))
    })?;
    let mut obj_w = TableSink::create(&objects_path, provenance.clone())?;
    let mut det_w = TableSink::create(&detections_path, provenance.clone())?;
    let (lo, hi) = shard_range(objects.len(), opts.shard);
    let mut summary = Summary::new(surveys);
    let bar = super::summary::progress_bar(hi - lo, opts.progress);
    let mut chunk_start = lo;
    while chunk_start < hi {
        let chunk_end = (chunk_start + opts.chunk_size).min(hi);
        let outcomes: Vec<ObjectOutcome> = (chunk_start..chunk_end)
            .into_par_iter()
            .map_init(Vec::new, |scratch, i| {
                let mut rng = object_stream(opts.seed, objects.ids[i], Purpose::Observe);
                observe_object(objects, i, surveys, opts.candidates, &mut rng, scratch)
            })
            .collect();
        summary.add(objects, chunk_start, &outcomes, surveys);
        obj_w.write(&objects_frame(objects, chunk_start, &outcomes, surveys)?)?;
        det_w.write(&detections_frame(objects, chunk_start, &outcomes, surveys)?)?;
        if let Some(b) = &bar {
            b.inc((chunk_end - chunk_start) as u64);
        }
        chunk_start = chunk_end;
    }
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    if lo == hi {
        // An empty shard still writes tables with the full schema.
        obj_w.write(&objects_frame(objects, lo, &[], surveys)?)?;
        det_w.write(&detections_frame(objects, lo, &[], surveys)?)?;
    }
    obj_w.finish()?;
    det_w.finish()?;
    summary.finish(start.elapsed().as_secs_f64());
    write_atomic(&summary_path, summary.to_json().as_bytes())?;
    Ok(ObserveReport {
        summary,
        objects_path,
        detections_path,
        summary_path,
    })
}

/// Column-name-safe form of a survey name.
pub fn survey_key(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '_'
            }
        })
        .collect()
}

/// The objects table rows of a chunk: the input columns plus the outcome columns.
fn objects_frame(
    objects: &ObjectTable,
    start: usize,
    outs: &[ObjectOutcome],
    surveys: &[PreparedSurvey],
) -> Result<DataFrame> {
    let mut df = objects.frame.slice(start as i64, outs.len());
    let n = outs.len();
    let first: Vec<Option<(usize, usize)>> = outs
        .iter()
        .map(|o| o.first_discovery(|e| surveys[e.survey as usize].survey.visits.mjd[e.visit as usize]))
        .collect();
    let disc = |f: &dyn Fn(&ObjectOutcome, usize, usize) -> f64| -> Vec<Option<f64>> {
        outs.iter()
            .zip(&first)
            .map(|(o, d)| d.map(|(s, e)| f(o, s, e)))
            .collect()
    };
    let sum = |f: &dyn Fn(&super::outcome::SurveyOutcome) -> u32| -> Vec<i64> {
        outs.iter()
            .map(|o| o.surveys.iter().map(|s| f(s) as i64).sum())
            .collect()
    };
    let mut cols: Vec<Column> = vec![
        Column::new(
            "detected".into(),
            outs.iter().map(|o| o.discovered()).collect::<Vec<bool>>(),
        ),
        Column::new(
            "tracked".into(),
            outs.iter()
                .map(|o| o.surveys.iter().any(|s| s.tracked))
                .collect::<Vec<bool>>(),
        ),
        Column::new("n_in_field".into(), sum(&|s| s.n_in_field)),
        Column::new("n_detected".into(), sum(&|s| s.n_detected)),
        Column::new("n_nights".into(), sum(&|s| s.n_nights)),
        Column::new(
            "discovery_mjd".into(),
            disc(&|o, s, e| surveys[s].survey.visits.mjd[o.events[e].visit as usize]),
        ),
        Column::new(
            "discovery_survey".into(),
            first
                .iter()
                .map(|d| d.map(|(s, _)| surveys[s].survey.name.clone()))
                .collect::<Vec<Option<String>>>(),
        ),
        Column::new("discovery_mag".into(), disc(&|o, _, e| o.events[e].mag)),
        Column::new(
            "discovery_ra_deg".into(),
            disc(&|o, _, e| o.events[e].ra_rad.to_degrees()),
        ),
        Column::new(
            "discovery_dec_deg".into(),
            disc(&|o, _, e| o.events[e].dec_rad.to_degrees()),
        ),
        Column::new("discovery_r_au".into(), disc(&|o, _, e| o.events[e].r_au)),
        Column::new("discovery_delta_au".into(), disc(&|o, _, e| o.events[e].delta_au)),
        Column::new(
            "discovery_rate_arcsec_per_hr".into(),
            disc(&|o, _, e| o.events[e].rate_arcsec_per_hr),
        ),
    ];
    for (s, ps) in surveys.iter().enumerate() {
        let key = survey_key(&ps.survey.name);
        cols.push(Column::new(
            format!("discovered_{key}").into(),
            outs.iter().map(|o| o.surveys[s].discovered).collect::<Vec<bool>>(),
        ));
        cols.push(Column::new(
            format!("tracked_{key}").into(),
            outs.iter().map(|o| o.surveys[s].tracked).collect::<Vec<bool>>(),
        ));
    }
    for c in cols {
        if df.column(c.name()).is_ok() {
            return Err(Error::input(format!(
                "objects table already has a column `{}`, which observe writes; rename or drop it",
                c.name()
            )));
        }
        df.with_column(c).map_err(|e| Error::io(e.to_string()))?;
    }
    debug_assert_eq!(df.height(), n);
    Ok(df)
}

/// One row per object and in-field visit.
fn detections_frame(
    objects: &ObjectTable,
    start: usize,
    outs: &[ObjectOutcome],
    surveys: &[PreparedSurvey],
) -> Result<DataFrame> {
    let rows: Vec<(usize, &super::outcome::Event)> = outs
        .iter()
        .enumerate()
        .flat_map(|(k, o)| o.events.iter().map(move |e| (start + k, e)))
        .collect();
    let visit = |e: &super::outcome::Event| (&surveys[e.survey as usize].survey, e.visit as usize);
    let f = |g: &dyn Fn(&super::outcome::Event) -> f64| rows.iter().map(|(_, e)| g(e)).collect::<Vec<f64>>();
    let cols = vec![
        Column::new(
            "id".into(),
            rows.iter().map(|(i, _)| objects.ids[*i]).collect::<Vec<i64>>(),
        ),
        Column::new(
            "visit_id".into(),
            rows.iter()
                .map(|(_, e)| {
                    let (s, v) = visit(e);
                    s.visits.visit_id[v]
                })
                .collect::<Vec<i64>>(),
        ),
        Column::new(
            "survey".into(),
            rows.iter()
                .map(|(_, e)| visit(e).0.name.clone())
                .collect::<Vec<String>>(),
        ),
        Column::new(
            "mjd".into(),
            f(&|e| {
                let (s, v) = visit(e);
                s.visits.mjd[v]
            }),
        ),
        Column::new("ra_deg".into(), f(&|e| e.ra_rad.to_degrees())),
        Column::new("dec_deg".into(), f(&|e| e.dec_rad.to_degrees())),
        Column::new("mag".into(), f(&|e| e.mag)),
        Column::new("rate_arcsec_per_hr".into(), f(&|e| e.rate_arcsec_per_hr)),
        Column::new("p_detect".into(), f(&|e| e.p_detect)),
        Column::new(
            "detected".into(),
            rows.iter().map(|(_, e)| e.detected).collect::<Vec<bool>>(),
        ),
        Column::new("r_au".into(), f(&|e| e.r_au)),
        Column::new("delta_au".into(), f(&|e| e.delta_au)),
    ];
    DataFrame::new(rows.len(), cols).map_err(|e| Error::io(e.to_string()))
}
