//! The population spec (TOML): one distribution per element plus constraints, importance
//! proposals, or an `[import]` of simulation particles to clone. Parsing gives errors with
//! the file, line, column and key path; `resolve` checks the meaning (one parametrization,
//! valid parameters) and names the key path of anything wrong. Keys: configuration.md.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use super::distribution::Distribution;
use crate::error::{Error, Result};
use crate::orbit::Center;

/// The spec file as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PopulationSpecFile {
    pub population: Option<PopulationSection>,
    pub orbit: Option<OrbitSection>,
    pub photometry: Option<PhotometrySection>,
    #[serde(default)]
    pub constraints: ConstraintSection,
    #[serde(default)]
    pub importance: ImportanceSection,
    pub import: Option<ImportSection>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PopulationSection {
    pub name: Option<String>,
    /// Epoch of the elements, TDB MJD (required unless the spec imports a table).
    pub epoch_mjd: Option<f64>,
    #[serde(default)]
    pub frame: Center,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OrbitSection {
    pub a_au: Option<Distribution>,
    pub e: Option<Distribution>,
    pub q_au: Option<Distribution>,
    pub inc_deg: Option<Distribution>,
    pub node_deg: Option<Distribution>,
    pub argperi_deg: Option<Distribution>,
    pub varpi_deg: Option<Distribution>,
    pub mean_anomaly_deg: Option<Distribution>,
    pub perihelion_mjd: Option<Distribution>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PhotometrySection {
    pub h_mag: Option<Distribution>,
    pub beta_mag_per_deg: Option<Distribution>,
    pub hg_g: Option<Distribution>,
    pub lc_amp_mag: Option<Distribution>,
    pub lc_period_hr: Option<Distribution>,
    /// Colour (band minus reference band) per band name, written as `color_<band>`.
    #[serde(default)]
    pub color: BTreeMap<String, Distribution>,
}

/// Ranges [lo, hi] kept by rejection.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ConstraintSection {
    pub a_au: Option<[f64; 2]>,
    pub e: Option<[f64; 2]>,
    pub q_au: Option<[f64; 2]>,
    #[serde(alias = "Q_au")]
    pub aphelion_au: Option<[f64; 2]>,
    pub inc_deg: Option<[f64; 2]>,
}

/// Proposal distributions; the objects get `weight` = target pdf / proposal pdf.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ImportanceSection {
    pub mean_anomaly_deg: Option<Distribution>,
    pub h_mag: Option<Distribution>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ImportSection {
    /// Objects table to clone, relative to the spec's own file.
    pub objects: PathBuf,
    /// Clones per particle (K ≥ 1).
    pub clones: u64,
    /// A fresh H for each clone from this distribution (else the particle's own).
    pub h_mag: Option<Distribution>,
    /// Rotate the node of each clone by a uniform random angle.
    #[serde(default)]
    pub rotate_node: bool,
    /// Keep each particle's resonant angle with Neptune (p:q) when M is redrawn.
    pub resonance: Option<super::resonance::Resonance>,
}

/// How the orbit's size and shape are drawn.
#[derive(Debug, Clone)]
pub enum OrbitShape {
    AE(Distribution, Distribution),
    AQ(Distribution, Distribution),
    QE(Distribution, Distribution),
}

/// How the orientation angles are drawn (ω derived from ϖ − Ω in the second form).
#[derive(Debug, Clone)]
pub enum OrbitOrientation {
    NodeArgperi(Distribution, Distribution),
    VarpiNode(Distribution, Distribution),
}

/// Where on the orbit: mean anomaly, or the time of perihelion passage (TDB MJD).
#[derive(Debug, Clone)]
pub enum Anomaly {
    Mean(Distribution),
    PerihelionTime(Distribution),
}

#[derive(Debug, Clone)]
pub enum Phase {
    Beta(Distribution),
    G(Distribution),
}

/// A rejection range on one derived quantity, with the key path it came from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Constraint {
    pub key: &'static str,
    pub quantity: Quantity,
    pub lo: f64,
    pub hi: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    A,
    E,
    Q,
    Aphelion,
    Inc,
}

/// A drawn population, checked and ready for the sampler.
#[derive(Debug, Clone)]
pub struct Population {
    pub name: String,
    pub epoch_mjd: f64,
    pub center: Center,
    pub shape: OrbitShape,
    pub inc: Distribution,
    pub angles: OrbitOrientation,
    pub anomaly: Anomaly,
    pub h: Distribution,
    pub phase: Phase,
    pub colors: Vec<(String, Distribution)>,
    pub lc_amp: Distribution,
    pub lc_period_hr: Distribution,
    pub constraints: Vec<Constraint>,
    pub proposal_m: Option<Distribution>,
    pub proposal_h: Option<Distribution>,
}

/// A clone request: the particles' table (resolved against the spec's folder) and options.
#[derive(Debug, Clone)]
pub struct CloneSpec {
    pub objects: PathBuf,
    pub clones: u64,
    pub h: Option<Distribution>,
    pub rotate_node: bool,
    pub resonance: Option<super::resonance::Resonance>,
}

/// What a spec asks for.
#[derive(Debug, Clone)]
pub enum Spec {
    Draw(Box<Population>),
    Clone(CloneSpec),
}

/// Default linear phase slope, mag/deg (DESIGN contract).
const DEFAULT_BETA: f64 = 0.14;

impl Spec {
    /// Read and check a spec file.
    pub fn read(path: &Path) -> Result<Spec> {
        let text = crate::io::spec_text::read_spec_text(path, "population spec")?;
        Self::parse(&text, path)
    }

    /// Parse and check spec text; `path` names the file in messages and anchors `[import]`.
    pub fn parse(text: &str, path: &Path) -> Result<Spec> {
        let file: PopulationSpecFile = crate::io::spec_text::parse_toml(text, path)?;
        file.resolve(path)
    }
}

/// An error about the key `key` of the spec at `path`.
fn key_error(path: &Path, key: &str, what: impl std::fmt::Display) -> Error {
    Error::input(format!("{}: key `{key}`: {what}", path.display()))
}

/// A distribution checked for valid parameters, or the error naming its key path.
fn checked(path: &Path, key: &str, d: Option<Distribution>) -> Result<Option<Distribution>> {
    if let Some(p) = d.as_ref().and_then(Distribution::problem) {
        return Err(key_error(path, key, p));
    }
    if let Some(Err(p)) = d.as_ref().map(|d| crate::ranges::check_support(key, d.support())) {
        return Err(key_error(path, key, p));
    }
    // The angular forms take and return degrees: on any other key they would be a unit error.
    let angular = matches!(
        d,
        Some(Distribution::SinGaussian { .. } | Distribution::Isotropic { .. } | Distribution::VonMises { .. })
    );
    if angular && !key.ends_with("_deg") {
        return Err(key_error(
            path,
            key,
            "sin-gaussian, isotropic and von-mises are angles in degrees: use them on *_deg keys",
        ));
    }
    Ok(d)
}

fn required(path: &Path, key: &str, d: Option<Distribution>) -> Result<Distribution> {
    checked(path, key, d)?.ok_or_else(|| {
        key_error(
            path,
            key,
            "missing: expected a distribution, e.g. { dist = \"uniform\", lo = 0, hi = 1 }",
        )
    })
}

fn uniform_angle() -> Distribution {
    Distribution::Uniform { lo: 0.0, hi: 360.0 }
}

impl PopulationSpecFile {
    fn resolve(self, path: &Path) -> Result<Spec> {
        if let Some(import) = self.import {
            if self.orbit.is_some() || self.photometry.is_some() {
                let why = "a spec with [import] clones a table: remove [orbit] and [photometry]";
                return Err(key_error(path, "import", why));
            }
            return resolve_import(path, import).map(Spec::Clone);
        }
        let pop = self.population.ok_or_else(|| {
            key_error(
                path,
                "population",
                "missing: expected a [population] table with epoch_mjd",
            )
        })?;
        let epoch_mjd = pop.epoch_mjd.ok_or_else(|| {
            key_error(
                path,
                "population.epoch_mjd",
                "missing: expected the epoch of the elements as a TDB MJD",
            )
        })?;
        crate::ranges::check_key(&path.display().to_string(), "population.epoch_mjd", epoch_mjd)?;
        let orbit = self
            .orbit
            .ok_or_else(|| key_error(path, "orbit", "missing: expected an [orbit] table"))?;
        let phot = self.photometry.unwrap_or_default();
        let shape = resolve_shape(path, &orbit)?;
        let inc = required(path, "orbit.inc_deg", orbit.inc_deg)?;
        let angles = resolve_angles(path, orbit.node_deg, orbit.argperi_deg, orbit.varpi_deg)?;
        let anomaly = resolve_anomaly(path, orbit.mean_anomaly_deg, orbit.perihelion_mjd)?;
        let h = required(path, "photometry.h_mag", phot.h_mag)?;
        let phase = resolve_phase(path, phot.beta_mag_per_deg, phot.hg_g)?;
        let colors = resolve_colors(path, phot.color)?;
        let zero = Distribution::Fixed { value: 0.0 };
        let lc_amp = checked(path, "photometry.lc_amp_mag", phot.lc_amp_mag)?.unwrap_or(zero.clone());
        let lc_period_hr = checked(path, "photometry.lc_period_hr", phot.lc_period_hr)?.unwrap_or(zero);
        let constraints = resolve_constraints(path, &self.constraints)?;
        let proposal_m = checked(path, "importance.mean_anomaly_deg", self.importance.mean_anomaly_deg)?;
        let proposal_h = checked(path, "importance.h_mag", self.importance.h_mag)?;
        let population = Population {
            name: pop.name.unwrap_or_else(|| "population".into()),
            epoch_mjd,
            center: pop.frame,
            shape,
            inc,
            angles,
            anomaly,
            h,
            phase,
            colors,
            lc_amp,
            lc_period_hr,
            constraints,
            proposal_m,
            proposal_h,
        };
        check_importance(path, &population)?;
        check_constraint_supports(path, &population)?;
        Ok(Spec::Draw(Box::new(population)))
    }
}

fn resolve_import(path: &Path, import: ImportSection) -> Result<CloneSpec> {
    if import.clones == 0 {
        return Err(key_error(
            path,
            "import.clones",
            "0: expected at least 1 clone per particle",
        ));
    }
    let h = checked(path, "import.h_mag", import.h_mag)?;
    if let Some(p) = import.resonance.as_ref().and_then(|r| r.problem()) {
        return Err(key_error(path, "import.resonance", p));
    }
    let base = path.parent().unwrap_or(Path::new(""));
    Ok(CloneSpec {
        objects: base.join(import.objects),
        clones: import.clones,
        h,
        rotate_node: import.rotate_node,
        resonance: import.resonance,
    })
}

/// M (default uniform) or the time of perihelion, not both.
fn resolve_anomaly(path: &Path, m: Option<Distribution>, tp: Option<Distribution>) -> Result<Anomaly> {
    match (m, tp) {
        (Some(_), Some(_)) => Err(key_error(
            path,
            "orbit",
            "give mean_anomaly_deg or perihelion_mjd, not both",
        )),
        (None, Some(t)) => Ok(Anomaly::PerihelionTime(required(
            path,
            "orbit.perihelion_mjd",
            Some(t),
        )?)),
        (m, None) => Ok(Anomaly::Mean(
            checked(path, "orbit.mean_anomaly_deg", m)?.unwrap_or_else(uniform_angle),
        )),
    }
}

/// β (default fixed 0.14) or G, not both.
fn resolve_phase(path: &Path, beta: Option<Distribution>, g: Option<Distribution>) -> Result<Phase> {
    match (beta, g) {
        (Some(_), Some(_)) => Err(key_error(path, "photometry", "give beta_mag_per_deg or hg_g, not both")),
        (None, Some(g)) => Ok(Phase::G(required(path, "photometry.hg_g", Some(g))?)),
        (b, None) => Ok(Phase::Beta(
            checked(path, "photometry.beta_mag_per_deg", b)?.unwrap_or(Distribution::Fixed { value: DEFAULT_BETA }),
        )),
    }
}

/// One colour per band; the band becomes part of a column name (`color_<band>`).
fn resolve_colors(path: &Path, color: BTreeMap<String, Distribution>) -> Result<Vec<(String, Distribution)>> {
    let mut colors = Vec::new();
    for (band, d) in color {
        let key = format!("photometry.color.{band}");
        if band.is_empty() || !band.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
            return Err(key_error(path, &key, "expected a band name of letters, digits and _"));
        }
        colors.push((band, required(path, &key, Some(d))?));
    }
    Ok(colors)
}

/// Exactly two of a, e, q.
fn resolve_shape(path: &Path, o: &OrbitSection) -> Result<OrbitShape> {
    let a = checked(path, "orbit.a_au", o.a_au.clone())?;
    let e = checked(path, "orbit.e", o.e.clone())?;
    let q = checked(path, "orbit.q_au", o.q_au.clone())?;
    match (a, e, q) {
        (Some(a), Some(e), None) => Ok(OrbitShape::AE(a, e)),
        (Some(a), None, Some(q)) => Ok(OrbitShape::AQ(a, q)),
        (None, Some(e), Some(q)) => Ok(OrbitShape::QE(q, e)),
        (a, e, q) => {
            let given: Vec<&str> = [("a_au", a.is_some()), ("e", e.is_some()), ("q_au", q.is_some())]
                .iter()
                .filter(|x| x.1)
                .map(|x| x.0)
                .collect();
            Err(key_error(
                path,
                "orbit",
                format!("expected exactly two of a_au, e, q_au; found [{}]", given.join(", ")),
            ))
        }
    }
}

/// (Ω, ω) or (ϖ, Ω); missing angles are uniform on [0, 360).
fn resolve_angles(
    path: &Path,
    node: Option<Distribution>,
    argperi: Option<Distribution>,
    varpi: Option<Distribution>,
) -> Result<OrbitOrientation> {
    let node = checked(path, "orbit.node_deg", node)?.unwrap_or_else(uniform_angle);
    match (argperi, varpi) {
        (Some(_), Some(_)) => Err(key_error(
            path,
            "orbit",
            "give argperi_deg or varpi_deg (ω is then ϖ − Ω), not both",
        )),
        (None, Some(v)) => Ok(OrbitOrientation::VarpiNode(
            required(path, "orbit.varpi_deg", Some(v))?,
            node,
        )),
        (w, None) => Ok(OrbitOrientation::NodeArgperi(
            node,
            checked(path, "orbit.argperi_deg", w)?.unwrap_or_else(uniform_angle),
        )),
    }
}

fn resolve_constraints(path: &Path, c: &ConstraintSection) -> Result<Vec<Constraint>> {
    let all = [
        ("constraints.a_au", Quantity::A, c.a_au),
        ("constraints.e", Quantity::E, c.e),
        ("constraints.q_au", Quantity::Q, c.q_au),
        ("constraints.aphelion_au", Quantity::Aphelion, c.aphelion_au),
        ("constraints.inc_deg", Quantity::Inc, c.inc_deg),
    ];
    let mut out = Vec::new();
    for (key, quantity, range) in all {
        let Some([lo, hi]) = range else { continue };
        if !(lo.is_finite() && hi.is_finite() && lo <= hi) {
            return Err(key_error(
                path,
                key,
                format!("[{lo}, {hi}]: expected [lo, hi] with lo ≤ hi"),
            ));
        }
        out.push(Constraint { key, quantity, lo, hi });
    }
    Ok(out)
}

/// A proposal must cover the target's support and the target must have a density.
fn check_importance(path: &Path, p: &Population) -> Result<()> {
    if let Some(prop) = &p.proposal_m {
        let Anomaly::Mean(target) = &p.anomaly else {
            return Err(key_error(
                path,
                "importance.mean_anomaly_deg",
                "needs orbit.mean_anomaly_deg, not perihelion_mjd",
            ));
        };
        covers(path, "importance.mean_anomaly_deg", prop, target)?;
    }
    if let Some(prop) = &p.proposal_h {
        covers(path, "importance.h_mag", prop, &p.h)?;
    }
    Ok(())
}

fn covers(path: &Path, key: &str, proposal: &Distribution, target: &Distribution) -> Result<()> {
    let (plo, phi) = proposal.support();
    let (tlo, thi) = target.support();
    let below = match (plo, tlo) {
        (Some(p), Some(t)) => p <= t,
        (Some(_), None) => false,
        (None, _) => true,
    };
    let above = match (phi, thi) {
        (Some(p), Some(t)) => p >= t,
        (Some(_), None) => false,
        (None, _) => true,
    };
    if target.pdf(tlo.unwrap_or(0.0)).is_none() || proposal.pdf(plo.unwrap_or(0.0)).is_none() {
        return Err(key_error(
            path,
            key,
            "importance sampling needs target and proposal with densities (not fixed or values)",
        ));
    }
    if !(below && above) {
        return Err(key_error(
            path,
            key,
            format!("proposal support {plo:?}..{phi:?} must cover the target's {tlo:?}..{thi:?}"),
        ));
    }
    Ok(())
}

/// A constraint on a directly drawn quantity that its distribution can never meet fails at once.
fn check_constraint_supports(path: &Path, p: &Population) -> Result<()> {
    let (a, e, q) = match &p.shape {
        OrbitShape::AE(a, e) => (Some(a), Some(e), None),
        OrbitShape::AQ(a, q) => (Some(a), None, Some(q)),
        OrbitShape::QE(q, e) => (None, Some(e), Some(q)),
    };
    for c in &p.constraints {
        let d = match c.quantity {
            Quantity::A => a,
            Quantity::E => e,
            Quantity::Q => q,
            Quantity::Inc => Some(&p.inc),
            Quantity::Aphelion => None,
        };
        let Some((lo, hi)) = d.map(Distribution::support) else {
            continue;
        };
        if lo.is_some_and(|l| l > c.hi) || hi.is_some_and(|h| h < c.lo) {
            return Err(key_error(
                path,
                c.key,
                format!(
                    "[{}, {}] lies outside the drawn range {lo:?}..{hi:?}: no object can pass",
                    c.lo, c.hi
                ),
            ));
        }
    }
    Ok(())
}
