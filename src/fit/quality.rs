//! The orbit-quality class of a fit and what decides it (the prior it used is `OrbitFit::prior`).

/// Arcs at least this long (days) are `multi_opposition`: longer than one observing season of a
/// distant object, so at least two oppositions (common practice, no source).
pub const MULTI_OPPOSITION_DAYS: f64 = 300.0;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quality {
    /// Every fitted detection on one night: the velocity prior decides a and e.
    SingleNight,
    /// Several nights, but the data constrain the radial rate γ̇ less than the prior, or their
    /// best orbit is unbound: the γ̇ prior, or the velocity prior where that leaves it unbound.
    ShortArc,
    /// All six parameters from the data, arc shorter than `MULTI_OPPOSITION_DAYS`.
    OneOpposition,
    /// All six parameters from the data, arc of `MULTI_OPPOSITION_DAYS` or more.
    MultiOpposition,
    /// Fewer than three detections, the best orbit is unbound even with the velocity prior, or
    /// the fit stalled (its χ² far beyond its distribution: `orbit_fit::stalled`).
    Failed,
}

impl Quality {
    pub const ALL: [Quality; 5] = [
        Quality::SingleNight,
        Quality::ShortArc,
        Quality::OneOpposition,
        Quality::MultiOpposition,
        Quality::Failed,
    ];

    /// The class as the objects table writes it (`fit_quality`).
    pub fn name(self) -> &'static str {
        match self {
            Quality::SingleNight => "single_night",
            Quality::ShortArc => "short_arc",
            Quality::OneOpposition => "one_opposition",
            Quality::MultiOpposition => "multi_opposition",
            Quality::Failed => "failed",
        }
    }

    pub fn parse(s: &str) -> Option<Quality> {
        Quality::ALL.into_iter().find(|q| q.name() == s)
    }

    /// The class of a fit without prior, by its arc.
    pub fn unconstrained(arc_days: f64) -> Quality {
        if arc_days >= MULTI_OPPOSITION_DAYS {
            Quality::MultiOpposition
        } else {
            Quality::OneOpposition
        }
    }
}
