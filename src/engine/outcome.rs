//! What the engine finds for one object: its in-field events and each survey's verdict.

/// One object inside one visit's footprint.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Event {
    pub survey: u16,
    pub visit: u32,
    pub ra_rad: f64,
    pub dec_rad: f64,
    pub mag: f64,
    pub rate_arcsec_per_hr: f64,
    pub r_au: f64,
    pub delta_au: f64,
    pub p_detect: f64,
    pub detected: bool,
    /// S/N, measured magnitude and its 1σ, astrometric 1σ (`survey::measure`).
    pub measured: crate::survey::measure::Measured,
}

/// One survey's verdict on one object.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SurveyOutcome {
    pub n_in_field: u32,
    pub n_detected: u32,
    pub n_nights: u32,
    pub discovered: bool,
    pub secured: bool,
    /// Index into the object's events of the detection that completed discovery.
    pub discovery_event: Option<usize>,
}

/// Everything the engine found for one object.
#[derive(Debug, Clone, Default)]
pub struct ObjectOutcome {
    pub events: Vec<Event>,
    pub surveys: Vec<SurveyOutcome>,
    /// Candidate visits whose exact position was computed.
    pub candidates: u64,
}

impl ObjectOutcome {
    pub fn discovered(&self) -> bool {
        self.surveys.iter().any(|s| s.discovered)
    }

    /// The earliest discovery over the surveys: (survey index, event index).
    pub fn first_discovery(&self, mjd_of: impl Fn(&Event) -> f64) -> Option<(usize, usize)> {
        self.surveys
            .iter()
            .enumerate()
            .filter_map(|(s, o)| o.discovery_event.map(|e| (s, e)))
            .min_by(|a, b| mjd_of(&self.events[a.1]).total_cmp(&mjd_of(&self.events[b.1])))
    }
}
