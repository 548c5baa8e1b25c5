//! The survey model: the spec, the visits table, field footprints, detection efficiency,
//! linking rules, and the cadence planner with its coverage report.

pub mod coverage;
pub mod efficiency;
pub mod footprint;
pub mod linking;
pub mod plan_io;
pub mod planner;
pub mod revisit_check;
pub mod spec;
pub mod visits;

use std::path::{Path, PathBuf};

pub use efficiency::EfficiencyModel;
pub use footprint::Footprint;
pub use linking::{Detection, LinkOutcome, LinkingRules};
pub use spec::RateWindow;
pub use visits::Visits;

use crate::error::{Error, Result};
use crate::sky::observer::Site;
use crate::time::TimeScale;

#[derive(Debug, Clone)]
pub struct Survey {
    pub name: String,
    pub spec_path: PathBuf,
    /// The visits table the spec names (recorded with its hash in the provenance).
    pub visits_path: PathBuf,
    pub site: Option<Site>,
    pub time_scale: TimeScale,
    pub reference_band: String,
    pub visits: Visits,
    pub footprint: Footprint,
    /// Fraction of the footprint that is live detector (1 for a mosaic, whose gaps are explicit).
    pub fill_factor: f64,
    pub efficiency: EfficiencyModel,
    pub motion: RateWindow,
    pub linking: LinkingRules,
}

impl Survey {
    /// Read a survey spec and its visits table (the path relative to the spec file).
    pub fn load(spec_path: &Path) -> Result<Survey> {
        let text = crate::io::spec_text::read_spec_text(spec_path, "survey spec")?;
        let spec: spec::SpecFile = spec::parse_toml(&text, spec_path)?;
        Self::from_spec(spec, spec_path)
    }

    fn from_spec(spec: spec::SpecFile, spec_path: &Path) -> Result<Survey> {
        let in_spec = |e: Error| match e {
            Error::Input(m) => Error::input(format!("{}: {m}", spec_path.display())),
            other => other,
        };
        let (footprint, fill_factor, default, blocks) = Self::check_keys(&spec).map_err(in_spec)?;
        let dir = spec_path.parent().unwrap_or(Path::new(""));
        let visits_path = dir.join(&spec.survey.visits);
        let visits = Visits::read(&visits_path, spec.survey.time_scale, spec.site.as_ref())?;
        if let Some(unused) = blocks.keys().find(|k| !visits.block_names.contains(k)) {
            return Err(in_spec(Error::input(format!(
                "efficiency.blocks.{unused}: no visit has block `{unused}` (blocks in {}: {})",
                visits_path.display(),
                visits.block_names.join(", ")
            ))));
        }
        let per_block = visits.block_names.iter().map(|n| blocks.get(n).cloned()).collect();
        Ok(Survey {
            name: spec.survey.name,
            spec_path: spec_path.to_path_buf(),
            visits_path: visits_path.clone(),
            site: spec.site,
            time_scale: spec.survey.time_scale,
            reference_band: spec.survey.reference_band,
            visits,
            footprint,
            fill_factor,
            efficiency: EfficiencyModel {
                default,
                blocks: per_block,
            },
            motion: spec.motion,
            linking: spec.linking,
        })
    }

    /// Check every key of the spec; the errors name the key path.
    #[allow(clippy::type_complexity)]
    fn check_keys(
        spec: &spec::SpecFile,
    ) -> Result<(
        Footprint,
        f64,
        efficiency::Efficiency,
        std::collections::BTreeMap<String, efficiency::Efficiency>,
    )> {
        if let Some(p) = spec.site.as_ref().and_then(Site::problem) {
            return Err(Error::input(p));
        }
        let (footprint, fill_factor) = spec.field.footprint()?;
        let m = spec.motion;
        if !(m.min_rate >= 0.0 && m.max_rate >= m.min_rate && m.max_rate.is_finite()) {
            return Err(Error::input(format!(
                "motion: expected 0 ≤ min_rate ≤ max_rate (arcsec per hour), found {} and {}",
                m.min_rate, m.max_rate
            )));
        }
        if let Some(p) = spec.linking.problem() {
            return Err(Error::input(p));
        }
        let (default, blocks) = spec.efficiency.build_all()?;
        Ok((footprint, fill_factor, default, blocks))
    }

    /// Detection probability at one visit: 0 outside the rate window; otherwise the visit's
    /// (or its block's) efficiency at the magnitude plus the trailing loss.
    pub fn p_detect(&self, visit: usize, mag: f64, rate_arcsec_per_hr: f64) -> f64 {
        if !self.motion.contains(rate_arcsec_per_hr) {
            return 0.0;
        }
        let v = &self.visits;
        self.efficiency.for_block(v.block[visit]).p(
            mag,
            v.depth_mag[visit],
            rate_arcsec_per_hr,
            v.exposure_s[visit],
            v.seeing_arcsec[visit],
        )
    }
}
