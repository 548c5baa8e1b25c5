//! Argument groups of the commands that read a catalogue: which of its elements and rows an
//! analysis takes, and how its orbits were fitted (for simulated objects that must pass the
//! same fit and cut). The checks are the library's (`seine::commands::catalogue_selection`,
//! `seine::fit`).

use seine::Result;

/// Which elements of a catalogue an analysis takes, and the orbit-quality cut: for catalogues
/// written by `seine observe --fit-orbits` (flatten into a command that reads a catalogue).
#[derive(clap::Args, Debug, Clone, Default)]
pub struct CatalogueArgs {
    /// Take the catalogue's fitted elements (fit_a_au …, written by observe --fit-orbits)
    /// instead of the true ones.
    #[arg(long)]
    pub fitted_elements: bool,
    /// Keep only catalogue objects with a fitted arc of at least this many days.
    #[arg(long)]
    pub min_arc_days: Option<f64>,
    /// Keep only catalogue objects whose fitted σa/a is at most this.
    #[arg(long)]
    pub max_sigma_a_frac: Option<f64>,
    /// Keep only catalogue objects of these fit classes, comma-separated (single_night,
    /// short_arc, one_opposition, multi_opposition).
    #[arg(long, value_delimiter = ',')]
    pub fit_quality: Vec<String>,
}

impl CatalogueArgs {
    /// The selection, checked (`seine::commands::catalogue_selection`).
    pub fn selection(&self) -> Result<seine::fit::catalogue::Selection> {
        seine::commands::catalogue_selection(
            self.fitted_elements,
            self.min_arc_days,
            self.max_sigma_a_frac,
            &self.fit_quality,
        )
    }
}

/// How the catalogue's orbits were fitted, for a command whose simulated objects (bias-map
/// trials, compare-models' model objects) go through the catalogue's fit and cut.
#[derive(clap::Args, Debug, Clone)]
pub struct TrialFitArgs {
    /// With --fitted-elements or a cut on the fits: which detections a simulated object's orbit
    /// is fitted to, as the catalogue's `observe --fit-orbits --fit-span` (all, discovery,
    /// discovery-night, recovery).
    #[arg(long, default_value = "all")]
    pub fit_span: String,
    /// With --fitted-elements or a cut: astrometric 1σ per coordinate, arcsec, of a simulated
    /// detection whose detection model gives none, as the catalogue's `observe --fit-orbits`.
    #[arg(long, default_value_t = seine::fit::span::DEFAULT_SIGMA_ARCSEC)]
    pub astrometric_sigma_arcsec: f64,
    /// With --fitted-elements or a cut: systematic astrometric floor, arcsec, as the
    /// catalogue's `observe --fit-orbits`.
    #[arg(long, default_value_t = 0.0)]
    pub astrometric_floor_arcsec: f64,
}

impl TrialFitArgs {
    /// The fit options, checked.
    pub fn options(&self) -> Result<seine::fit::FitOptions> {
        use seine::fit::{AstrometricErrors, FitOptions, FitSpan};
        Ok(FitOptions {
            span: FitSpan::parse(&self.fit_span)?,
            errors: AstrometricErrors::new(self.astrometric_sigma_arcsec, self.astrometric_floor_arcsec)?,
        })
    }
}
