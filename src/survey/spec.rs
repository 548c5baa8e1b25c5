//! The survey spec file (TOML), as written by people: parsing with `deny_unknown_fields`
//! everywhere, errors with the TOML line and column, and the checks of every value.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::crowding::{Crowding, DeadFraction};
use super::efficiency::{Efficiency, EfficiencyShape, Scope, Trailing};
use super::footprint::Footprint;
use super::linking::LinkingRules;
use super::live_area::{Axis, DeadRegion, LiveArea};
use super::measure::MeasurementModel;
use crate::error::{Error, Result};
use crate::sky::observer::Site;
use crate::time::TimeScale;

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SurveySpecFile {
    pub survey: SurveySection,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub site: Option<Site>,
    pub field: FieldSpec,
    #[serde(default)]
    pub efficiency: EfficiencySpec,
    #[serde(default)]
    pub motion: RateWindow,
    #[serde(default)]
    pub linking: LinkingRules,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub measurement: Option<MeasurementSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub crowding: Option<CrowdingSpec>,
}

/// `[crowding]`: sources lost behind stars, fixed on the sky (`survey::crowding`).
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CrowdingSpec {
    /// cosecant | healpix
    pub model: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pole_dead_fraction: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_dead_fraction: Option<f64>,
    /// healpix: the table (path relative to the spec) with columns `healpix` and `live_fraction`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub table: Option<String>,
    /// healpix: the table's HEALPix order (nested).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub order: Option<u8>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cell_order: Option<u8>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub seed: Option<u64>,
}

impl CrowdingSpec {
    /// The crowding model, reading a HEALPix table relative to `dir` (the spec's directory).
    pub fn build(&self, dir: &std::path::Path) -> Result<Crowding> {
        let fraction = |v: Option<f64>, key: &str, default: f64| -> Result<f64> {
            match v.unwrap_or(default) {
                f if (0.0..=1.0).contains(&f) => Ok(f),
                f => Err(Error::input(format!(
                    "crowding.{key}: expected a fraction in [0, 1], found {f}"
                ))),
            }
        };
        let order_in = |v: Option<u8>, key: &str, default: Option<u8>| -> Result<u8> {
            match v.or(default) {
                Some(o) if o <= 24 => Ok(o),
                Some(o) => Err(Error::input(format!(
                    "crowding.{key}: expected a HEALPix order in 0..=24, found {o}"
                ))),
                None => Err(Error::input(format!(
                    "crowding.{key}: required for model = \"{}\"",
                    self.model
                ))),
            }
        };
        let only = |given: bool, key: &str, model: &str| {
            if given {
                Err(Error::input(format!(
                    "crowding.{key}: only used with model = \"{model}\""
                )))
            } else {
                Ok(())
            }
        };
        let dead = match self.model.as_str() {
            "cosecant" => {
                only(self.table.is_some(), "table", "healpix")?;
                only(self.order.is_some(), "order", "healpix")?;
                DeadFraction::Cosecant {
                    pole: fraction(self.pole_dead_fraction, "pole_dead_fraction", 0.01)?,
                    max: fraction(self.max_dead_fraction, "max_dead_fraction", 0.6)?,
                }
            }
            "healpix" => {
                only(self.pole_dead_fraction.is_some(), "pole_dead_fraction", "cosecant")?;
                only(self.max_dead_fraction.is_some(), "max_dead_fraction", "cosecant")?;
                let order = order_in(self.order, "order", None)?;
                let name = self
                    .table
                    .as_ref()
                    .ok_or_else(|| Error::input("crowding.table: required for model = \"healpix\""))?;
                DeadFraction::Table {
                    order,
                    cells: crowding_table(&dir.join(name), order)?,
                }
            }
            other => {
                return Err(Error::input(format!(
                    "crowding.model: expected cosecant or healpix, found `{other}`"
                )));
            }
        };
        Ok(Crowding {
            dead,
            cell_order: order_in(self.cell_order, "cell_order", Some(16))?,
            seed: self.seed.unwrap_or(0),
        })
    }
}

/// A live-fraction table: columns `healpix` (nested cell index at `order`) and
/// `live_fraction` in [0, 1], each cell once; sorted by cell.
fn crowding_table(path: &std::path::Path, order: u8) -> Result<Vec<(u64, f64)>> {
    let df = crate::io::table::read_table(path)?;
    let cols = crate::io::table::Columns::new(&df, path);
    let cells = cols.i64("healpix")?;
    let live = cols.f64("live_fraction")?;
    let n = cdshealpix::nested::n_hash(order) as i64;
    let mut out = Vec::with_capacity(cells.len());
    for (i, (&c, &f)) in cells.iter().zip(&live).enumerate() {
        if !(0..n).contains(&c) {
            return Err(cols.bad_value(
                i,
                "healpix",
                &format!("a nested cell index of order {order}, in [0, {n}), found {c}"),
            ));
        }
        if !(0.0..=1.0).contains(&f) {
            return Err(cols.bad_value(i, "live_fraction", &format!("a fraction in [0, 1], found {f}")));
        }
        out.push((c as u64, f));
    }
    out.sort_by_key(|c| c.0);
    if let Some(w) = out.windows(2).find(|w| w[0].0 == w[1].0) {
        return Err(Error::input(format!(
            "{}: column `healpix`: cell {} is listed twice",
            path.display(),
            w[0].0
        )));
    }
    Ok(out)
}

/// `[measurement]`: what a detection measures beyond the decision (`survey::measure`).
#[derive(Debug, Clone, Copy, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MeasurementSpec {
    /// Systematic floor of the astrometric 1σ per coordinate, arcsec (default 0.05).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub astrometric_floor_arcsec: Option<f64>,
}

impl MeasurementSpec {
    pub fn build(&self) -> Result<MeasurementModel> {
        let floor = self
            .astrometric_floor_arcsec
            .unwrap_or(MeasurementModel::default().astrometric_floor_arcsec);
        if !(0.0..=10.0).contains(&floor) {
            return Err(Error::input(format!(
                "measurement.astrometric_floor_arcsec: expected a floor in [0, 10] arcsec, found {floor}"
            )));
        }
        Ok(MeasurementModel {
            astrometric_floor_arcsec: floor,
        })
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SurveySection {
    pub name: String,
    pub visits: String,
    #[serde(default)]
    pub time_scale: TimeScale,
    #[serde(default = "default_band")]
    pub reference_band: String,
}

fn default_band() -> String {
    "r".into()
}

#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FieldSpec {
    /// circle | rectangle | mosaic
    pub shape: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub radius_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub width_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub height_deg: Option<f64>,
    /// Mosaic: detector polygons, each a list of [x_deg, y_deg] corners.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub chips: Option<Vec<Vec<[f64; 2]>>>,
    /// Probability that an in-field event is kept, drawn independently per event (a plain
    /// random loss, for users who know only a fraction).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub random_live_fraction: Option<f64>,
    /// `[[field.dead]]`: dead regions fixed in the focal plane (chip gaps, dead cells).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub dead: Vec<DeadSpec>,
}

/// One `[[field.dead]]` entry: `kind = "stripes"` (with `along`, `spacing_deg`, `width_deg`,
/// optional `offset_deg`) or `kind = "cells"` (with `size_deg`, `fraction`, optional `seed`).
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DeadSpec {
    pub kind: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub along: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spacing_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub width_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub offset_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub size_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fraction: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub seed: Option<u64>,
}

impl DeadSpec {
    /// The dead region of entry `k`; errors name `field.dead[k].KEY`.
    fn build(&self, k: usize) -> Result<DeadRegion> {
        let need = |v: Option<f64>, key: &str| {
            v.ok_or_else(|| Error::input(format!("field.dead[{k}].{key}: required for kind = \"{}\"", self.kind)))
        };
        let region = match self.kind.as_str() {
            "stripes" => DeadRegion::Stripes {
                along: match self.along.as_deref() {
                    Some("x") => Axis::X,
                    Some("y") => Axis::Y,
                    other => {
                        return Err(Error::input(format!(
                            "field.dead[{k}].along: expected \"x\" or \"y\" (the focal-plane axis the stripes repeat along), found {}",
                            other.map_or("nothing".to_string(), |o| format!("`{o}`"))
                        )));
                    }
                },
                spacing_deg: need(self.spacing_deg, "spacing_deg")?,
                width_deg: need(self.width_deg, "width_deg")?,
                offset_deg: self.offset_deg.unwrap_or(0.0),
            },
            "cells" => DeadRegion::Cells {
                size_deg: need(self.size_deg, "size_deg")?,
                fraction: need(self.fraction, "fraction")?,
                seed: self.seed.unwrap_or(0),
            },
            other => {
                return Err(Error::input(format!(
                    "field.dead[{k}].kind: expected stripes or cells, found `{other}`"
                )));
            }
        };
        let unused = match region {
            DeadRegion::Stripes { .. } => [
                ("size_deg", self.size_deg.is_some()),
                ("fraction", self.fraction.is_some()),
                ("seed", self.seed.is_some()),
            ],
            DeadRegion::Cells { .. } => [
                ("along", self.along.is_some()),
                ("spacing_deg", self.spacing_deg.is_some()),
                ("width_deg", self.width_deg.is_some()),
            ],
        };
        if let Some((key, _)) = unused.iter().find(|(_, given)| *given) {
            return Err(Error::input(format!(
                "field.dead[{k}].{key}: not a key of kind = \"{}\"",
                self.kind
            )));
        }
        match region.problem(k) {
            Some(p) => Err(Error::input(p)),
            None => Ok(region),
        }
    }
}

/// Rates (arcsec per hour) the search can find.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct RateWindow {
    pub min_rate_arcsec_per_hr: f64,
    pub max_rate_arcsec_per_hr: f64,
}

impl Default for RateWindow {
    fn default() -> Self {
        RateWindow {
            min_rate_arcsec_per_hr: 0.0,
            max_rate_arcsec_per_hr: 1000.0,
        }
    }
}

impl RateWindow {
    pub fn contains(&self, rate: f64) -> bool {
        rate >= self.min_rate_arcsec_per_hr && rate <= self.max_rate_arcsec_per_hr
    }
}

/// `[efficiency]` and each `[efficiency.classes.NAME]`: a class's absent keys take the default's values.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EfficiencySpec {
    /// step | logistic | tanh-product | table
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub width_mag: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fall_width_mag: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tail_width_mag: Option<f64>,
    /// visit | tracklet: what one efficiency draw decides (default visit).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub per: Option<String>,
    /// Saturation: nothing brighter is detected.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bright_limit_mag: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dm: Option<Vec<f64>>,
    /// A table's magnitude axis in magnitudes (instead of `dm`, magnitudes minus depth_mag).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub magnitudes: Option<Vec<f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rates: Option<Vec<f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub eta: Option<Vec<Vec<f64>>>,
    /// detection | snr | none | custom (with trailing_a, trailing_b)
    #[serde(skip_serializing_if = "Option::is_none")]
    pub trailing: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub trailing_a: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub trailing_b: Option<f64>,
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub classes: BTreeMap<String, EfficiencySpec>,
}

/// Parse TOML text into `T`: the one spec parser of the project (file, line, column, key, hint).
pub use crate::io::spec_text::parse_toml;

impl FieldSpec {
    /// The footprint and its live area (dead regions and random loss).
    pub fn footprint(&self) -> Result<(Footprint, LiveArea)> {
        let need = |v: Option<f64>, key: &str| {
            v.ok_or_else(|| Error::input(format!("field.{key}: required for shape = \"{}\"", self.shape)))
        };
        let fp = match self.shape.as_str() {
            "circle" => Footprint::Circle {
                radius_deg: need(self.radius_deg, "radius_deg")?,
            },
            "rectangle" => Footprint::Rectangle {
                width_deg: need(self.width_deg, "width_deg")?,
                height_deg: need(self.height_deg, "height_deg")?,
            },
            "mosaic" => {
                let chips = self
                    .chips
                    .as_ref()
                    .ok_or_else(|| Error::input("field.chips: required for shape = \"mosaic\""))?;
                if self.random_live_fraction.is_some_and(|f| f != 1.0) {
                    return Err(Error::input(
                        "field.random_live_fraction: a mosaic's chip gaps already set its fill; leave random_live_fraction out",
                    ));
                }
                Footprint::Mosaic {
                    chips: chips.iter().map(|p| p.iter().map(|c| (c[0], c[1])).collect()).collect(),
                }
            }
            other => {
                return Err(Error::input(format!(
                    "field.shape: expected circle, rectangle or mosaic, found `{other}`"
                )));
            }
        };
        if let Some(p) = fp.problem() {
            return Err(Error::input(p));
        }
        let fill = self.random_live_fraction.unwrap_or(1.0);
        if !(fill > 0.0 && fill <= 1.0) {
            return Err(Error::input(format!(
                "field.random_live_fraction: expected a fraction in (0, 1], found {fill}"
            )));
        }
        let dead = self
            .dead
            .iter()
            .enumerate()
            .map(|(k, d)| d.build(k))
            .collect::<Result<Vec<_>>>()?;
        Ok((
            fp,
            LiveArea {
                dead,
                random_live_fraction: fill,
            },
        ))
    }
}

impl EfficiencySpec {
    /// This table's values over `base`'s (a class over the default).
    fn over(&self, base: &EfficiencySpec) -> EfficiencySpec {
        EfficiencySpec {
            model: self.model.clone().or(base.model.clone()),
            peak: self.peak.or(base.peak),
            width_mag: self.width_mag.or(base.width_mag),
            fall_width_mag: self.fall_width_mag.or(base.fall_width_mag),
            tail_width_mag: self.tail_width_mag.or(base.tail_width_mag),
            per: self.per.clone().or(base.per.clone()),
            bright_limit_mag: self.bright_limit_mag.or(base.bright_limit_mag),
            dm: self.dm.clone().or(base.dm.clone()),
            magnitudes: self.magnitudes.clone().or(base.magnitudes.clone()),
            rates: self.rates.clone().or(base.rates.clone()),
            eta: self.eta.clone().or(base.eta.clone()),
            trailing: self.trailing.clone().or(base.trailing.clone()),
            trailing_a: self.trailing_a.or(base.trailing_a),
            trailing_b: self.trailing_b.or(base.trailing_b),
            classes: BTreeMap::new(),
        }
    }

    /// Build the model of `[key]`, where `key` is `efficiency` or `efficiency.classes.NAME`.
    pub fn build(&self, key: &str) -> Result<Efficiency> {
        let err = |sub: &str, what: String| Error::input(format!("{key}.{sub}: {what}"));
        let positive = |v: Option<f64>, sub: &str| -> Result<f64> {
            let x = v.ok_or_else(|| err(sub, "required for this model".into()))?;
            if x > 0.0 && x.is_finite() {
                Ok(x)
            } else {
                Err(err(sub, format!("expected a number > 0, found {x}")))
            }
        };
        let model = self.model.as_deref().unwrap_or("step");
        let shape = match model {
            "step" => EfficiencyShape::Step,
            "logistic" => EfficiencyShape::Logistic {
                width_mag: positive(self.width_mag, "width_mag")?,
            },
            "tanh-product" => EfficiencyShape::tanh_product(
                positive(self.fall_width_mag, "fall_width_mag")?,
                positive(self.tail_width_mag, "tail_width_mag")?,
            ),
            "table" => self.table_shape(key)?,
            other => {
                let hint = crate::io::spec_text::renamed_hint(other);
                return Err(err(
                    "model",
                    format!("expected step, logistic, tanh-product or table, found `{other}`{hint}"),
                ));
            }
        };
        let peak = self.peak.unwrap_or(1.0);
        if !(peak > 0.0 && peak <= 1.0) {
            return Err(err("peak", format!("expected a fraction in (0, 1], found {peak}")));
        }
        let scope = match self.per.as_deref().unwrap_or("visit") {
            "visit" => Scope::Visit,
            "tracklet" => Scope::Tracklet,
            other => return Err(err("per", format!("expected visit or tracklet, found `{other}`"))),
        };
        let bright_limit_mag = match self.bright_limit_mag {
            None => f64::NEG_INFINITY,
            Some(b) if (-30.0..=40.0).contains(&b) => b,
            Some(b) => {
                return Err(err(
                    "bright_limit_mag",
                    format!("expected a magnitude in [-30, 40], found {b}"),
                ));
            }
        };
        // Efficiencies measured with implanted moving sources (tables, tracklet efficiencies)
        // already contain the loss of their trails: no trailing loss unless asked for.
        let measured_on_trails = model == "table" || scope == Scope::Tracklet;
        Ok(Efficiency {
            shape,
            peak,
            trailing: self.trailing(key, measured_on_trails)?,
            bright_limit_mag,
            scope,
        })
    }

    fn table_shape(&self, key: &str) -> Result<EfficiencyShape> {
        let (mags, relative_to_depth) = match (&self.dm, &self.magnitudes) {
            (Some(dm), None) => (dm.clone(), true),
            (None, Some(m)) => (m.clone(), false),
            (Some(_), Some(_)) => {
                return Err(Error::input(format!(
                    "{key}.dm / {key}.magnitudes: give one magnitude axis, not both"
                )));
            }
            (None, None) => {
                return Err(Error::input(format!(
                    "{key}.dm or {key}.magnitudes: required for model = \"table\" (magnitudes minus depth_mag, or magnitudes)"
                )));
            }
        };
        let dm = &mags;
        let rates = self.rates.clone().unwrap_or_else(|| vec![0.0]);
        let eta = self
            .eta
            .clone()
            .ok_or_else(|| Error::input(format!("{key}.eta: required for model = \"table\"")))?;
        let ascending =
            |v: &[f64]| !v.is_empty() && v.iter().all(|x| x.is_finite()) && v.windows(2).all(|w| w[0] < w[1]);
        if !ascending(dm) || !ascending(&rates) {
            let axis = if relative_to_depth { "dm" } else { "magnitudes" };
            return Err(Error::input(format!(
                "{key}.{axis} / {key}.rates: expected non-empty, strictly ascending lists of numbers"
            )));
        }
        let fits = eta.len() == dm.len() && eta.iter().all(|r| r.len() == rates.len());
        if !fits {
            return Err(Error::input(format!(
                "{key}.eta: expected {} rows (one per dm) of {} values (one per rate)",
                dm.len(),
                rates.len()
            )));
        }
        if let Some(bad) = eta.iter().flatten().find(|v| !(0.0..=1.0).contains(*v)) {
            return Err(Error::input(format!(
                "{key}.eta: expected efficiencies in [0, 1], found {bad}"
            )));
        }
        Ok(EfficiencyShape::Table {
            mags,
            relative_to_depth,
            rates,
            eta,
        })
    }

    /// Trailing loss: default the detection loss, or none for an efficiency measured on
    /// trailed implanted sources (a table, a tracklet efficiency).
    fn trailing(&self, key: &str, measured_on_trails: bool) -> Result<Trailing> {
        let name = self
            .trailing
            .as_deref()
            .unwrap_or(if measured_on_trails { "none" } else { "detection" });
        let t = match name {
            "detection" => Trailing::DETECTION,
            "snr" => Trailing::SNR,
            "none" => Trailing::NONE,
            "custom" => Trailing {
                a: self.trailing_a.unwrap_or(0.0),
                b: self.trailing_b.unwrap_or(0.0),
            },
            other => {
                return Err(Error::input(format!(
                    "{key}.trailing: expected detection, snr, none or custom, found `{other}`"
                )));
            }
        };
        if name != "custom" && (self.trailing_a.is_some() || self.trailing_b.is_some()) {
            return Err(Error::input(format!(
                "{key}.trailing_a/trailing_b: only used with trailing = \"custom\""
            )));
        }
        if !(t.a >= 0.0 && t.b >= 0.0) {
            return Err(Error::input(format!(
                "{key}.trailing_a/trailing_b: expected numbers ≥ 0"
            )));
        }
        Ok(t)
    }

    /// The default model and one override per named class.
    pub fn build_all(&self) -> Result<(Efficiency, BTreeMap<String, Efficiency>)> {
        let default = self.build("efficiency")?;
        let mut classes = BTreeMap::new();
        for (name, b) in &self.classes {
            if !b.classes.is_empty() {
                return Err(Error::input(format!(
                    "efficiency.classes.{name}.classes: classes do not nest"
                )));
            }
            classes.insert(name.clone(), b.over(self).build(&format!("efficiency.classes.{name}"))?);
        }
        Ok((default, classes))
    }
}
