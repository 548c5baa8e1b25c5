//! The survey model: the spec, the visits table, field footprints, detection efficiency,
//! linking rules, and the cadence planner with its coverage report.

pub mod coverage;
pub mod crowding;
pub mod decision;
pub mod efficiency;
pub mod footprint;
pub mod linking;
pub mod live_area;
pub mod measure;
pub mod plan_io;
pub mod planner;
pub mod revisit_check;
pub mod spec;
pub mod visits;

use std::path::{Path, PathBuf};

pub use efficiency::EfficiencyModel;
pub use footprint::Footprint;
pub use linking::{Detection, LinkOutcome, LinkingRules};
pub use live_area::LiveArea;
pub use spec::RateWindow;
pub use visits::Visits;

use crate::error::{Error, Result};
use crate::io::spec_text;
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
    /// Dead regions in the focal plane and the random loss (`live_area`).
    pub live: LiveArea,
    /// The mean live fraction over the footprint (dead regions × random loss; 1 for a bare
    /// mosaic, whose gaps are its outline): what a figure multiplies an efficiency by.
    pub live_fraction: f64,
    pub efficiency: EfficiencyModel,
    pub motion: RateWindow,
    pub linking: LinkingRules,
    /// What a detection measures (S/N, magnitude with noise, astrometric 1σ).
    pub measurement: measure::MeasurementModel,
    /// Sources lost behind stars (`[crowding]`), if modelled.
    pub crowding: Option<crowding::Crowding>,
}

impl Survey {
    /// Read a survey spec and its visits table (the path relative to the spec file).
    pub fn load(spec_path: &Path) -> Result<Survey> {
        let text = spec_text::read_spec_text(spec_path, "survey spec")?;
        if spec_text::has_table(&text, "plan") && !spec_text::has_table(&text, "survey") {
            return Err(Error::input(format!(
                "{p}: this is a cadence plan (it has a [plan] table), not a survey spec; make the \
                 survey spec and its visits with `seine plan --plan {p} --out VISITS.parquet` and \
                 pass the spec it writes (VISITS.survey.toml)",
                p = spec_path.display()
            )));
        }
        let spec: spec::SurveySpecFile = spec::parse_toml(&text, spec_path)?;
        Self::from_spec(spec, spec_path, &text)
    }

    fn from_spec(spec: spec::SurveySpecFile, spec_path: &Path, text: &str) -> Result<Survey> {
        let in_spec = |e: Error| match e {
            Error::Input(m) => Error::input(format!("{}: {m}", spec_path.display())),
            other => other,
        };
        let (footprint, live, default, classes) = Self::check_keys(&spec).map_err(in_spec)?;
        let measurement = spec.measurement.unwrap_or_default().build().map_err(in_spec)?;
        let dir = spec_path.parent().unwrap_or(Path::new(""));
        let crowding = spec
            .crowding
            .as_ref()
            .map(|c| c.build(dir))
            .transpose()
            .map_err(in_spec)?;
        let visits_path = dir.join(&spec.survey.visits);
        if !visits_path.exists() {
            return Err(in_spec(Error::input(missing_visits(&visits_path, dir, text))));
        }
        let visits = Visits::read(&visits_path, spec.survey.time_scale, spec.site.as_ref())?;
        if let Some(unused) = classes.keys().find(|k| !visits.class_names.contains(k)) {
            return Err(in_spec(Error::input(format!(
                "efficiency.classes.{unused}: no visit has efficiency class `{unused}` (classes in {}: {})",
                visits_path.display(),
                visits.class_names.join(", ")
            ))));
        }
        let per_class = visits.class_names.iter().map(|n| classes.get(n).cloned()).collect();
        Ok(Survey {
            name: spec.survey.name,
            spec_path: spec_path.to_path_buf(),
            visits_path: visits_path.clone(),
            site: spec.site,
            time_scale: spec.survey.time_scale,
            reference_band: spec.survey.reference_band,
            visits,
            live_fraction: live.mean_fraction(&footprint),
            live,
            footprint,
            efficiency: EfficiencyModel {
                default,
                classes: per_class,
            },
            motion: spec.motion,
            linking: spec.linking,
            measurement,
            crowding,
        })
    }

    /// Check every key of the spec; the errors name the key path.
    #[allow(clippy::type_complexity)]
    fn check_keys(
        spec: &spec::SurveySpecFile,
    ) -> Result<(
        Footprint,
        LiveArea,
        efficiency::Efficiency,
        std::collections::BTreeMap<String, efficiency::Efficiency>,
    )> {
        if let Some(p) = spec.site.as_ref().and_then(Site::problem) {
            return Err(Error::input(p));
        }
        let (footprint, live) = spec.field.footprint()?;
        let m = spec.motion;
        if !(m.min_rate_arcsec_per_hr >= 0.0
            && m.max_rate_arcsec_per_hr >= m.min_rate_arcsec_per_hr
            && m.max_rate_arcsec_per_hr.is_finite())
        {
            return Err(Error::input(format!(
                "motion: expected 0 ≤ min_rate_arcsec_per_hr ≤ max_rate_arcsec_per_hr (arcsec per hour), found {} and {}",
                m.min_rate_arcsec_per_hr, m.max_rate_arcsec_per_hr
            )));
        }
        if let Some(p) = spec.linking.problem() {
            return Err(Error::input(p));
        }
        let (default, classes) = spec.efficiency.build_all()?;
        Ok((footprint, live, default, classes))
    }

    /// Detection probability at one visit: 0 outside the rate window; otherwise the visit's
    /// (or its efficiency class's) efficiency at the magnitude plus the trailing loss.
    pub fn p_detect(&self, visit: usize, mag: f64, rate_arcsec_per_hr: f64) -> f64 {
        if !self.motion.contains(rate_arcsec_per_hr) {
            return 0.0;
        }
        let v = &self.visits;
        self.efficiency.for_class(v.efficiency_class[visit]).p(
            mag,
            v.depth_mag[visit],
            rate_arcsec_per_hr,
            v.exposure_s[visit],
            v.seeing_arcsec[visit],
        )
    }

    /// What an in-field event at `visit` measures (`measure`); `detection_draw` is the
    /// uniform draw that detected it (None: not detected).
    pub fn measure(
        &self,
        visit: usize,
        mag: f64,
        rate_arcsec_per_hr: f64,
        detection_draw: Option<f64>,
    ) -> measure::Measured {
        let v = &self.visits;
        let conditions = measure::VisitConditions {
            depth_5sigma_mag: v.depth_5sigma_mag[visit],
            seeing_arcsec: v.seeing_arcsec[visit],
            exposure_s: v.exposure_s[visit],
        };
        self.measurement
            .measure(mag, rate_arcsec_per_hr, conditions, detection_draw)
    }

    /// Whether a source at (ra, dec), radians, in visit `visit` falls on live detector:
    /// behind no star (`crowding`) and outside every dead region of the turned, dithered
    /// focal plane.
    pub fn in_live_area(&self, visit: usize, ra_rad: f64, dec_rad: f64) -> bool {
        if self.crowding.as_ref().is_some_and(|c| c.hides(ra_rad, dec_rad)) {
            return false;
        }
        if self.live.dead.is_empty() {
            return true;
        }
        let v = &self.visits;
        let dir = crate::sky::frames::unit_vector(ra_rad, dec_rad);
        let centre = (v.ra_deg[visit].to_radians(), v.dec_deg[visit].to_radians());
        footprint::focal_plane(centre.0, centre.1, v.rotation_deg[visit], &dir)
            .is_some_and(|(x, y)| self.live.is_live(x, y, (v.dither_x_deg[visit], v.dither_y_deg[visit])))
    }
}

/// The message for a survey spec whose visits table is missing: the command that makes it,
/// from the spec's own header when `seine plan` wrote it.
fn missing_visits(visits_path: &Path, dir: &Path, text: &str) -> String {
    let stated = text.lines().take_while(|l| l.starts_with('#')).find_map(|l| {
        l.split_once("Regenerate it and its visits with:")
            .map(|(_, c)| c.trim())
    });
    let run_in = if dir.as_os_str().is_empty() {
        String::new()
    } else {
        format!(" (run in {})", dir.display())
    };
    let how = match stated {
        Some(cmd) => format!("make it with `{cmd}`{run_in}"),
        None => "if a cadence plan describes the survey, make the visits and a spec with \
                 `seine plan --plan PLAN.toml --out VISITS.parquet`"
            .to_string(),
    };
    format!(
        "survey.visits: the visits table {} does not exist; {how}",
        visits_path.display()
    )
}
