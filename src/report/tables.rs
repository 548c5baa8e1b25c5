//! The tidy tables the figures take. Each is a plain list of rows with the units in the field
//! names; `inputs.rs` fills them from files with documented names (see `mod.rs`), and tests fill
//! them with synthetic values.

use crate::statistics::{Proportion, Tally};

/// Objects and discoveries in one bin [lo, hi) of a quantity, with their weights.
#[derive(Debug, Clone, PartialEq)]
pub struct FractionBin {
    pub lo: f64,
    pub hi: f64,
    pub tally: Tally,
}

impl FractionBin {
    /// A bin of k successes in n unweighted trials.
    pub fn counts(lo: f64, hi: f64, n: u64, k: u64) -> Self {
        FractionBin {
            lo,
            hi,
            tally: Tally::counts(k, n),
        }
    }
    pub fn n(&self) -> u64 {
        self.tally.n
    }
    /// The weighted fraction with its 95% interval at the effective n.
    pub fn proportion(&self) -> Proportion {
        self.tally.proportion()
    }
}

/// One cell of a two-dimensional map: its rectangle in (x, y) and its value.
#[derive(Debug, Clone, PartialEq)]
pub struct HeatCell {
    pub x_min: f64,
    pub x_max: f64,
    pub y_min: f64,
    pub y_max: f64,
    pub value: f64,
    /// The trials behind the value, when it is a fraction of trials (a bias map's cell).
    pub trials: Option<u64>,
}

/// A map over two named quantities (names with units, e.g. `varpi_deg`, `node_deg`).
#[derive(Debug, Clone, PartialEq)]
pub struct HeatMap {
    pub x: String,
    pub y: String,
    /// What the value is, for the colour bar (e.g. "discovery probability").
    pub value_label: String,
    /// Object the map belongs to, when maps are per object.
    pub id: Option<i64>,
    pub cells: Vec<HeatCell>,
}

impl HeatMap {
    /// The weighted sum of `maps` on the grid of the first: each cell of the sum holds
    /// Σ_j w_j v_j, with v_j map j's value at the cell's centre and w_j = `weight(id_j)`.
    /// None when there is no map or the first has no cells.
    pub fn weighted_sum(maps: &[HeatMap], weight: impl Fn(Option<i64>) -> f64, value_label: &str) -> Option<HeatMap> {
        let first = maps.first().filter(|m| !m.cells.is_empty())?;
        let mut cells: Vec<HeatCell> = first
            .cells
            .iter()
            .map(|c| HeatCell {
                value: 0.0,
                trials: None,
                ..c.clone()
            })
            .collect();
        for m in maps {
            let w = weight(m.id);
            for (k, c) in cells.iter_mut().enumerate() {
                let centre = (0.5 * (c.x_min + c.x_max), 0.5 * (c.y_min + c.y_max));
                if let Some(v) = m.value_at(k, centre).filter(|v| v.is_finite()) {
                    c.value += w * v;
                }
            }
        }
        Some(HeatMap {
            x: first.x.clone(),
            y: first.y.clone(),
            value_label: value_label.into(),
            id: None,
            cells,
        })
    }

    /// The value of the cell holding `point`; cell `hint` is tried first (maps of one grid
    /// share their cells' order).
    fn value_at(&self, hint: usize, (x, y): (f64, f64)) -> Option<f64> {
        let holds = |c: &&HeatCell| c.x_min <= x && x < c.x_max && c.y_min <= y && y < c.y_max;
        self.cells
            .get(hint)
            .filter(holds)
            .or_else(|| self.cells.iter().find(holds))
            .map(|c| c.value)
    }
}

/// One angular bin of a rose diagram: the observed count and the null band (the central
/// interval of counts a survey-biased isotropic population gives), when known.
#[derive(Debug, Clone, PartialEq)]
pub struct RoseBin {
    pub min_deg: f64,
    pub max_deg: f64,
    pub observed: f64,
    pub null: Option<NullBand>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NullBand {
    pub lo: f64,
    pub median: f64,
    pub hi: f64,
}

/// A Monte Carlo test: the statistic's null samples and the observed value.
#[derive(Debug, Clone, PartialEq)]
pub struct NullTest {
    pub statistic: String,
    pub observed: f64,
    pub p_value: Option<f64>,
    pub p_value_naive: Option<f64>,
    /// The statistic over the bias-aware null catalogues.
    pub samples: Vec<f64>,
    /// The statistic over catalogues of uniform angles (no survey bias); may be empty.
    pub naive_samples: Vec<f64>,
}

/// What one plan found of one population (`yield_cadence.*`).
pub use crate::analysis::yield_tables::CadenceRow;

/// A plan's yield with what it cost: the unit of the equal-effort comparison.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanYield {
    pub row: CadenceRow,
    /// What the plan cost, when its survey is known.
    pub effort: Option<Effort>,
}

/// A survey's effort: what an equal-effort comparison divides by.
#[derive(Debug, Clone, PartialEq)]
pub struct Effort {
    pub visits: u64,
    /// Hours of telescope time (exposures and overheads) when `telescope_time`, else of open
    /// shutter (the sum of exposure times: overheads unknown).
    pub hours: f64,
    pub telescope_time: bool,
    /// Area covered at least once, deg².
    pub area_sq_deg: f64,
}

/// An efficiency curve: detection probability against magnitude minus depth.
#[derive(Debug, Clone, PartialEq)]
pub struct EfficiencyCurve {
    pub survey: String,
    /// (m − depth_mag, probability) pairs of the efficiency model, ascending in the first.
    pub model: Vec<(f64, f64)>,
    /// The fraction of the footprint that is live detector: a source in the field lands on
    /// it with this probability, so the model of an in-field event is `live_fraction` × η.
    pub live_fraction: f64,
    /// The fraction of in-field events detected in bins of m − depth_mag (from detections),
    /// counting only events inside the survey's rate window.
    pub measured: Vec<FractionBin>,
    /// In-field events moving slower or faster than the search finds (never detected).
    pub outside_rates: u64,
    /// The rates the search finds, arcsec per hour.
    pub rate_window: (f64, f64),
}

/// A mapped object's own angles and weight (`map_objects.*` beside a bias map table).
pub use crate::analysis::bias_map_tables::MappedObject;

/// A catalogue object's chance of discovery with its interval (`detectability.*`).
pub use crate::analysis::detectability::Row as ObjectChance;

/// One cell of a population's selection function, with its tally (`selection_function.*`).
pub use crate::analysis::selection::Cell as SelectionCell;

/// A hideout run's rows as the report reads them (`hideout::tables`): the excluded fraction
/// per bin, the posterior map's cells, the ranked fields.
pub use crate::hideout::tables::{ExcludedRow, FieldRow, SkyCell};

/// Values of one quantity with their weights: the catalogue, or a model's detected objects.
#[derive(Debug, Clone, PartialEq)]
pub struct WeightedSample {
    pub name: String,
    pub values: Vec<f64>,
    pub weights: Vec<f64>,
}

/// A model's goodness of fit: the catalogue's ln L and that of each synthetic catalogue.
#[derive(Debug, Clone, PartialEq)]
pub struct FitNull {
    pub model: String,
    pub observed: f64,
    pub observed_error: f64,
    pub p: f64,
    pub p_error: f64,
    pub samples: Vec<f64>,
}
