//! The bound-orbit prior for arcs too short to constrain all six parameters.
//!
//! A bound object has v² < 2 GM/r. As a Gaussian stand-in each barycentric velocity component
//! is taken as N(0, GM/(3r)), an isotropic velocity of the circular speed √(GM/r) (our choice,
//! no source); with v = (α̇, β̇, γ̇)/γ and r ≈ 1/γ, each of α̇, β̇, γ̇ is N(0, GM γ³/3). GM is the
//! Sun's: the prior is a scale, and the planets' 0.13 % does not matter to it.

use crate::foundation::constants::GM_SUN;

/// 1σ of α̇, β̇ or γ̇ under the prior, per day, at inverse distance γ (AU⁻¹).
pub fn velocity_sigma(gamma: f64) -> f64 {
    (GM_SUN * gamma.max(0.0).powi(3) / 3.0).sqrt()
}

/// Which parameters the prior constrains.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Prior {
    /// None: the data constrain all six parameters.
    None,
    /// γ̇ only (arcs of several nights that do not pin the radial velocity).
    RadialRate,
    /// α̇, β̇ and γ̇ (one night: α̇ and γ are degenerate without it).
    Velocity,
}

impl Prior {
    /// The parameter indices (into α, β, γ, α̇, β̇, γ̇) it constrains.
    pub fn indices(self) -> &'static [usize] {
        match self {
            Prior::None => &[],
            Prior::RadialRate => &[5],
            Prior::Velocity => &[3, 4, 5],
        }
    }
}
