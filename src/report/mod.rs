//! The report: SVG figures (plotters) and one `index.html` for any directory of outputs.
//!
//! `report(DIR)` reads what DIR and its immediate subdirectories hold, by these names, and
//! shows whatever it finds; an input that cannot be read leaves its section out with a note
//! (in the page and in `Written::skipped`):
//!
//! | file | read as | figures |
//! |---|---|---|
//! | `summary.json` beside `objects.parquet` (or `.csv`), optional `detections.*`, `discoveries.*` | an observe run (`seine observe --out`), named by its directory | injected vs discovered in a, q, i, H, r; discovered fraction vs a and H; where the discoveries were made; their magnitude and rate at discovery; the first discoveries (linked); ϖ and Ω roses of the discoveries (no null band) |
//! | `*.survey.toml` (and the survey specs named in an observe run's provenance) | a survey and its visits | visits, hours and area; sky coverage (and a zoom of a small one), depth distribution, efficiency curve |
//! | `STEM.coverage.json`, `STEM.coverage_ecliptic.csv` | a plan's coverage (`seine plan`) | table of coverage by ecliptic latitude, revisits kept |
//! | `bias_map*.*` (through `analysis::bias_map_tables`: as `seine bias-map` writes it, or `X_min, X_max, Y_min, Y_max, fraction`), optional `id`, `map_objects.*` beside it | bias maps, one per `id`; one section per directory | the whole catalogue's map (maps added with the objects' weights, their angles marked); the first 6 objects' maps, a discrete key when a map has few values |
//! | `rose.parquet` (or `.csv`, as `seine cluster-test` writes it): `quantity, bin_lo_deg, bin_hi_deg, observed`, optional `null_lo, null_median, null_hi` | rose diagrams with the bias-aware null band, in their directory's section | one rose per `quantity` (`varpi_deg`, `node_deg`, `argperi_deg`); wedges inside, above and below the band told apart |
//! | `cluster_null.parquet` (or `.csv`, from `seine cluster-test`): `statistic, value` (one row per statistic and null catalog), optional `value_naive`, with `cluster_test.*` beside it: `statistic, observed, p_bias_aware`, optional `p_naive` | the cluster test | the null distribution of each statistic (and the naive one), the observed value marked |
//! | `detectability.*` (`seine detectability --objects`, via `analysis::detectability`) | each object's chance of discovery | chance with its interval against q and H; the lowest chances as a table |
//! | `selection_function.*` (`seine detectability --population`, via `analysis::selection`) | a population's selection function | heat maps over a–q, a–i, a–H |
//! | `models.*`, `marginals.*`, `detected.*`, `catalogue.*`, `goodness_of_fit.*` (`seine compare-models`, via `analysis::comparison`) | a model comparison | ln L and marginal-test tables; the catalogue over each model's detected distribution per observable (angles on a circle); each model's goodness-of-fit null |
//! | `yield_cadence.parquet` (or `.csv`, as `seine yield` writes it): `plan, cadence_days, n_objects, n_discovered`, optional `population`; the specs in `summary.json`'s provenance | yields of several plans with their effort | yield against cadence and per 100 hours (also built from observe runs of one objects table through one survey each) |
//! | `excluded.*` with `summary.json`, `sky_map.*`, `sky_mag_hist.*`, `fields.*`, `coverage_<survey>.moc.json` (through `hideout::{tables, summary, moc}`) | a hideout run, shard or merge; one section per directory | the conclusion; the posterior sky map with the surveys' coverage and the 68 %/95 % regions; the excluded fraction against H and a; the survivors' magnitude and rate; the ranked fields; each survey's share |
//!
//! The figures are written to `DIR/figures/STEM.svg` and the page to `DIR/index.html`.

pub mod build;
pub mod figure;
pub mod figures;
pub mod hideout;
pub mod html;
pub mod inputs;
pub mod section;
pub mod stats;
pub mod style;
pub mod tables;

use std::path::{Path, PathBuf};

use crate::error::{Error, Result, io_at};
use crate::io::table::write_atomic;

/// What `report` wrote, and the inputs it left out (each also noted in the page).
#[derive(Debug, Clone)]
pub struct Written {
    pub index: PathBuf,
    pub figures: Vec<PathBuf>,
    pub skipped: Vec<inputs::Skipped>,
}

/// Build `DIR/index.html` and `DIR/figures/*.svg` from the outputs in DIR. An input that
/// cannot be read, or does not agree with the others, leaves its section out with a note;
/// the rest is built.
pub fn report(dir: &Path) -> Result<Written> {
    let inputs = inputs::scan(dir)?;
    let (mut sections, skipped) = build::sections(dir, &inputs)?;
    if sections.iter().all(|s| s.figures.is_empty() && s.tables.is_empty()) {
        let why: Vec<String> = skipped.iter().map(|s| s.reason.clone()).collect();
        return Err(Error::input(format!(
            "{}: nothing to report{}",
            dir.display(),
            if why.is_empty() {
                String::new()
            } else {
                format!(": {}", why.join("; "))
            }
        )));
    }
    distinct_stems(&mut sections);
    let fig_dir = dir.join("figures");
    std::fs::create_dir_all(&fig_dir).map_err(|e| io_at(&fig_dir, e))?;
    let mut figures = Vec::new();
    for f in sections.iter().flat_map(|s| &s.figures) {
        figures.push(f.write(&fig_dir)?);
    }
    let lede = "What the surveys could have found, and what they did find, in the forward model \
                of seine. Every figure is an SVG file in figures/; every number comes from the \
                tables beside this page.";
    let footer = format!(
        "Written by seine {} (seine report of {}).",
        crate::version(),
        section::label(dir, dir)
    );
    let index = dir.join("index.html");
    write_atomic(&index, html::page("seine report", lede, &sections, &footer).as_bytes())?;
    Ok(Written {
        index,
        figures,
        skipped,
    })
}

/// Two figures never share a file: a stem seen before gets `_2`, `_3`, … (each section
/// already names its figures by run; this is the guarantee).
fn distinct_stems(sections: &mut [section::Section]) {
    let mut seen = std::collections::HashSet::new();
    for f in sections.iter_mut().flat_map(|s| s.figures.iter_mut()) {
        let base = f.stem.clone();
        let mut k = 1;
        while !seen.insert(f.stem.clone()) {
            k += 1;
            f.stem = format!("{base}_{k}");
        }
    }
}
