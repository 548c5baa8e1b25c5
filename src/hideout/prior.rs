//! The prior of hypothetical planets: a population spec, optionally with a `[size]` table of
//! diameter and geometric-albedo distributions that replace the spec's H.
//!
//! H from size: D √p = K 10^(−H/5), K = 2 au 10^(V_sun/5) ≈ 1329 km with V_sun = −26.762
//! (derivation in Pravec & Harris 2007, Icarus 190, 250, appendix A; volume and page from
//! memory). Checked in tests/hideout.rs against the standard tabulation of absolute magnitude
//! against diameter (values from memory) and the worked example D = 1329 km, p = 1 → H = 0.

use std::ops::Range;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::error::{Error, Result};
use crate::io::spec_text::{parse_toml, read_spec_text};
use crate::population::objects::ObjectTable;
use crate::population::prepared::PreparedDistribution;
use crate::population::{Distribution, Population, Spec};
use crate::rng::{Purpose, object_stream};

/// K of D √p = K 10^(−H/5), in km.
pub const H_DIAMETER_KM: f64 = 1329.0;

/// Absolute magnitude of a sphere of diameter `d_km` and geometric albedo `albedo`.
pub fn h_from_diameter(d_km: f64, albedo: f64) -> f64 {
    5.0 * (H_DIAMETER_KM / (d_km * albedo.sqrt())).log10()
}

/// Diameter (km) of a sphere of absolute magnitude `h` and geometric albedo `albedo`.
pub fn diameter_from_h(h: f64, albedo: f64) -> f64 {
    H_DIAMETER_KM / albedo.sqrt() * 10f64.powf(-h / 5.0)
}

/// `[size]`: diameter and albedo distributions; H = 5 log10(1329 km / (D √p)).
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SizeSection {
    pub diameter_km: Option<Distribution>,
    pub albedo: Option<Distribution>,
}

/// The `[size]` table of a prior spec alone (the other tables are the population spec's).
#[derive(Debug, Deserialize)]
struct SizeOnly {
    size: Option<SizeSection>,
}

/// Diameter and albedo, drawn from each draw's own `Analysis` stream (the spec's own
/// streams stay untouched, so the orbits are those `seine draw` gives for the same seed).
#[derive(Debug, Clone)]
pub struct SizePrior {
    pub diameter_km: PreparedDistribution,
    pub albedo: PreparedDistribution,
}

/// The prior: the population and, optionally, the size distributions that set H.
#[derive(Debug, Clone)]
pub struct HideoutPrior {
    pub population: Box<Population>,
    pub size: Option<SizePrior>,
    pub path: PathBuf,
}

/// Parse a distribution written as an inline TOML table, e.g. `{ dist = "uniform", lo = 1, hi = 2 }`.
pub fn parse_distribution(text: &str, what: &str) -> Result<Distribution> {
    #[derive(Deserialize)]
    struct One {
        d: Distribution,
    }
    let one: One = toml::from_str(&format!("d = {text}"))
        .map_err(|e| Error::input(format!("{what} `{text}`: {}", e.message())))?;
    if let Some(p) = one.d.problem() {
        return Err(Error::input(format!("{what} `{text}`: {p}")));
    }
    Ok(one.d)
}

impl HideoutPrior {
    /// Read a prior spec; `diameter` and `albedo` (command-line distributions) override `[size]`.
    pub fn read(path: &Path, diameter: Option<Distribution>, albedo: Option<Distribution>) -> Result<HideoutPrior> {
        let text = read_spec_text(path, "prior spec")?;
        Self::parse(&text, path, diameter, albedo)
    }

    pub fn parse(
        text: &str,
        path: &Path,
        diameter: Option<Distribution>,
        albedo: Option<Distribution>,
    ) -> Result<HideoutPrior> {
        // Through the one spec parser: errors name the line, column and key, with a hint.
        let mut table: toml::Table = parse_toml(text, path)?;
        let size: SizeOnly = parse_toml(text, path)?;
        table.remove("size");
        let (file_d, file_p) = size.size.map_or((None, None), |s| (s.diameter_km, s.albedo));
        let (d, p) = (diameter.or(file_d), albedo.or(file_p));
        let size = size_prior(path, d, p)?;
        let population = match size {
            // The spec's own text, so its errors point at its own lines.
            None => spec_population(Spec::parse(text, path)?, path)?,
            Some(_) => spec_population(Spec::parse(&with_placeholder_h(path, table)?, path)?, path)?,
        };
        Ok(HideoutPrior {
            population,
            size,
            path: path.to_path_buf(),
        })
    }

    /// Draw the prior's ids `ids` as an objects table (H from the size prior when given).
    pub fn draw(&self, seed: u64, ids: Range<i64>) -> Result<ObjectTable> {
        let drawn = self.population.draw_ids(seed, ids)?;
        let ids = drawn.id.clone();
        let mut df = self.population.frame(drawn);
        if let Some(size) = &self.size {
            let h: Vec<f64> = ids.iter().map(|&id| size.h_of(seed, id)).collect();
            df.with_column(polars::prelude::Column::new("h_mag".into(), h))
                .map_err(|e| Error::io(e.to_string()))?;
        }
        ObjectTable::from_frame(df, &self.path)
    }
}

impl SizePrior {
    /// H of draw `id`: diameter, then albedo, from the draw's `Analysis` stream.
    pub fn h_of(&self, seed: u64, id: i64) -> f64 {
        let mut rng = object_stream(seed, id, Purpose::Analysis);
        let d = self.diameter_km.sample(&mut rng);
        let p = self.albedo.sample(&mut rng);
        h_from_diameter(d, p)
    }
}

fn size_prior(path: &Path, d: Option<Distribution>, p: Option<Distribution>) -> Result<Option<SizePrior>> {
    match (d, p) {
        (None, None) => Ok(None),
        (Some(d), Some(p)) => {
            check_positive(path, "size.diameter_km", &d)?;
            check_positive(path, "size.albedo", &p)?;
            Ok(Some(SizePrior {
                diameter_km: PreparedDistribution::new(d),
                albedo: PreparedDistribution::new(p),
            }))
        }
        _ => Err(Error::input(format!(
            "{}: key `size`: give both diameter_km and albedo (or --diameter-km and --albedo), or neither",
            path.display()
        ))),
    }
}

/// A diameter or albedo must be positive wherever it can be drawn (H is a log of it).
fn check_positive(path: &Path, key: &str, d: &Distribution) -> Result<()> {
    if let Some(p) = d.problem() {
        return Err(Error::input(format!("{}: key `{key}`: {p}", path.display())));
    }
    let lo = match d {
        Distribution::Values { values } => values.iter().copied().fold(f64::INFINITY, f64::min),
        _ => d.support().0.unwrap_or(f64::NEG_INFINITY),
    };
    if !(lo > 0.0) {
        return Err(Error::input(format!(
            "{}: key `{key}`: expected a distribution on positive values only (lowest possible value {lo})",
            path.display()
        )));
    }
    Ok(())
}

/// The spec text with `photometry.h_mag` set to a placeholder that the size prior overwrites.
fn with_placeholder_h(path: &Path, mut table: toml::Table) -> Result<String> {
    let phot = table
        .entry("photometry")
        .or_insert_with(|| toml::Value::Table(toml::Table::new()));
    let Some(phot) = phot.as_table_mut() else {
        return Err(Error::input(format!(
            "{}: key `photometry`: expected a table",
            path.display()
        )));
    };
    if phot.contains_key("h_mag") {
        return Err(Error::input(format!(
            "{}: key `photometry.h_mag`: H comes from the size prior here; give h_mag or [size], not both",
            path.display()
        )));
    }
    let mut fixed = toml::Table::new();
    fixed.insert("dist".into(), "fixed".into());
    fixed.insert("value".into(), 0.0.into());
    phot.insert("h_mag".into(), toml::Value::Table(fixed));
    toml::to_string(&table).map_err(|e| Error::io(e.to_string()))
}

fn spec_population(spec: Spec, path: &Path) -> Result<Box<Population>> {
    match spec {
        Spec::Draw(p) => Ok(p),
        Spec::Clone(_) => Err(Error::input(format!(
            "{}: a hideout prior draws planets: expected [population], [orbit] and [photometry], not [import]",
            path.display()
        ))),
    }
}
