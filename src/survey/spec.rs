//! The survey spec file (TOML), as written by people: parsing with `deny_unknown_fields`
//! everywhere, errors with the TOML line and column, and the checks of every value.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::efficiency::{Efficiency, Shape, Trailing};
use super::footprint::Footprint;
use super::linking::LinkingRules;
use crate::error::{Error, Result};
use crate::sky::observer::Site;
use crate::time::TimeScale;

#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpecFile {
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
    #[serde(skip_serializing_if = "Option::is_none")]
    pub live_fraction: Option<f64>,
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
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dm: Option<Vec<f64>>,
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
    pub fn footprint(&self) -> Result<(Footprint, f64)> {
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
                if self.live_fraction.is_some_and(|f| f != 1.0) {
                    return Err(Error::input(
                        "field.live_fraction: a mosaic's chip gaps already set its fill; leave live_fraction out",
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
        let fill = self.live_fraction.unwrap_or(1.0);
        if !(fill > 0.0 && fill <= 1.0) {
            return Err(Error::input(format!(
                "field.live_fraction: expected a fraction in (0, 1], found {fill}"
            )));
        }
        Ok((fp, fill))
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
            dm: self.dm.clone().or(base.dm.clone()),
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
            "step" => Shape::Step,
            "logistic" => Shape::Logistic {
                width_mag: positive(self.width_mag, "width_mag")?,
            },
            "tanh-product" => Shape::tanh_product(
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
        Ok(Efficiency {
            shape,
            peak,
            trailing: self.trailing(key, model == "table")?,
        })
    }

    fn table_shape(&self, key: &str) -> Result<Shape> {
        let missing = |k: &str| Error::input(format!("{key}.{k}: required for model = \"table\""));
        let dm = self.dm.clone().ok_or_else(|| missing("dm"))?;
        let rates = self.rates.clone().unwrap_or_else(|| vec![0.0]);
        let eta = self.eta.clone().ok_or_else(|| missing("eta"))?;
        let ascending =
            |v: &[f64]| !v.is_empty() && v.iter().all(|x| x.is_finite()) && v.windows(2).all(|w| w[0] < w[1]);
        if !ascending(&dm) || !ascending(&rates) {
            return Err(Error::input(format!(
                "{key}.dm / {key}.rates: expected non-empty, strictly ascending lists of numbers"
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
        Ok(Shape::Table { dm, rates, eta })
    }

    /// Trailing loss: default the detection loss, or none for a table (implanted sources already trail).
    fn trailing(&self, key: &str, is_table: bool) -> Result<Trailing> {
        let name = self
            .trailing
            .as_deref()
            .unwrap_or(if is_table { "none" } else { "detection" });
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
