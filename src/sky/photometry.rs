//! Magnitudes of an unresolved body in reflected sunlight.
//!
//! m = H + 5 log10(r Δ) + φ(α) + colour(band), with r and Δ in AU and α the phase angle.
//! * Linear phase law φ = β α, α in degrees: common for distant objects (β ≈ 0.1–0.2 mag/deg,
//!   common practice, no source); the default β = 0.14 mag/deg is the DESIGN default.
//! * IAU H,G system (Bowell et al. 1989, in *Asteroids II*, p. 524):
//!   φ = −2.5 log10((1 − G) Φ1 + G Φ2), Φi = exp(−Ai tan(α/2)^Bi),
//!   A1 = 3.33, B1 = 0.63, A2 = 1.87, B2 = 1.22.

use serde::{Deserialize, Serialize};

/// Default linear phase slope, mag/deg (DESIGN contract).
pub const DEFAULT_BETA_MAG_PER_DEG: f64 = 0.14;

#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum PhaseLaw {
    /// φ = β α with β in mag per degree.
    Linear { beta_mag_per_deg: f64 },
    /// The IAU H,G system with slope parameter G.
    HG { g: f64 },
}

impl Default for PhaseLaw {
    fn default() -> Self {
        PhaseLaw::Linear {
            beta_mag_per_deg: DEFAULT_BETA_MAG_PER_DEG,
        }
    }
}

impl PhaseLaw {
    /// Magnitude change at phase angle `alpha` (radians), relative to zero phase.
    #[inline]
    pub fn term(&self, alpha: f64) -> f64 {
        match *self {
            PhaseLaw::Linear { beta_mag_per_deg } => beta_mag_per_deg * alpha.to_degrees(),
            PhaseLaw::HG { g } => {
                let t = (0.5 * alpha).tan();
                let phi1 = (-3.33 * t.powf(0.63)).exp();
                let phi2 = (-1.87 * t.powf(1.22)).exp();
                -2.5 * ((1.0 - g) * phi1 + g * phi2).log10()
            }
        }
    }
}

/// Apparent magnitude in the reference band.
#[inline]
pub fn apparent_mag(h_mag: f64, r_au: f64, delta_au: f64, alpha: f64, law: &PhaseLaw) -> f64 {
    h_mag + 5.0 * (r_au * delta_au).log10() + law.term(alpha)
}

/// Sinusoidal light curve: the offset at time t (days) of a body whose brightness varies
/// with peak-to-peak amplitude `amp_mag`, period `period_days` and phase `phase0` (radians).
#[inline]
pub fn light_curve_offset(amp_mag: f64, period_days: f64, phase0: f64, t_days: f64) -> f64 {
    if amp_mag == 0.0 || !(period_days > 0.0) {
        return 0.0;
    }
    0.5 * amp_mag * (std::f64::consts::TAU * t_days / period_days + phase0).sin()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hg_at_zero_phase_is_zero_and_increases() {
        let law = PhaseLaw::HG { g: 0.15 };
        assert!(law.term(0.0).abs() < 1e-12);
        assert!(law.term(10f64.to_radians()) > law.term(5f64.to_radians()));
    }

    #[test]
    fn distance_modulus() {
        // A body with H = 5 at r = 40 AU, Δ = 39 AU and zero phase: 5 + 5 log10(1560) = 20.965.
        let m = apparent_mag(5.0, 40.0, 39.0, 0.0, &PhaseLaw::default());
        assert!((m - (5.0 + 5.0 * 1560f64.log10())).abs() < 1e-12);
    }
}
