//! What an in-field event measures: its signal-to-noise ratio, its magnitude with noise and
//! that noise's 1σ, and the 1σ of its position. The derivations and sources are in
//! methods.md ("Measured quantities").
//!
//! * The visit's 5σ limit m₅ is its `depth_5sigma_mag` when the visits table gives one, else
//!   its `depth_mag` (common practice, no source: a search that keeps sources measured at
//!   S/N ≥ 5 with Gaussian noise keeps half of those whose true S/N is 5, so its 50 % magnitude
//!   is its 5σ limit).
//! * S/N = 5 · 10^(−0.4 (m + Δm_snr − m₅)): a background-limited point source, whose noise does
//!   not depend on its own flux (common practice); Δm_snr the signal-to-noise trailing loss
//!   (`efficiency::Trailing::SNR`) of the visit's trail.
//! * Measured flux f̂ = f (1 + z / S/N), z standard normal, so m̂ = m − 2.5 log10(1 + z / S/N)
//!   and σ_m = 2.5 / ln 10 / S/N. The noise is tied to the detection draw u (detected when
//!   u < p_detect) by z = Φ⁻¹(1 − u): z is standard normal over all events, and the detected
//!   ones are those with the largest z, so the sources detected near the limit are measured
//!   too bright (the Eddington bias), as when a search keeps what it measured brightest.
//! * Astrometric 1σ per coordinate: √(floor² + (√2 σ_psf / (S/N))²), σ_psf = FWHM / (2 √(2 ln 2)):
//!   the Cramér–Rao bound of a Gaussian image on a uniform background (derived in methods.md).

use statrs::distribution::{ContinuousCDF, Normal};

use super::efficiency::Trailing;

/// 2.5 / ln 10: magnitudes per unit of relative flux.
const MAG_PER_RELATIVE_FLUX: f64 = 1.085_736_204_758_129_6;
/// FWHM / σ of a Gaussian: 2 √(2 ln 2).
const FWHM_PER_SIGMA: f64 = 2.354_820_045_030_949_3;

/// The measured quantities of one in-field event.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Measured {
    /// True signal-to-noise ratio.
    pub snr: f64,
    /// Measured magnitude (None when not detected, or when the measured flux is not positive).
    pub mag_obs: Option<f64>,
    /// 1σ of the measured magnitude, mag.
    pub mag_err: f64,
    /// 1σ of the position per coordinate (RA·cos Dec and Dec), arcsec, floor included.
    pub sigma_astrometry_arcsec: f64,
}

/// `[measurement]` of the survey spec, checked.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MeasurementModel {
    pub astrometric_floor_arcsec: f64,
}

impl Default for MeasurementModel {
    fn default() -> Self {
        MeasurementModel {
            astrometric_floor_arcsec: 0.05,
        }
    }
}

/// One visit's conditions for the measurement.
#[derive(Debug, Clone, Copy)]
pub struct VisitConditions {
    pub depth_5sigma_mag: f64,
    pub seeing_arcsec: f64,
    pub exposure_s: f64,
}

impl MeasurementModel {
    /// The measurement of a source of magnitude `mag` moving at `rate` (″/h) in a visit;
    /// `detection_draw` is the uniform u that detected it (None: not detected).
    pub fn measure(
        &self,
        mag: f64,
        rate_arcsec_per_hr: f64,
        visit: VisitConditions,
        detection_draw: Option<f64>,
    ) -> Measured {
        let trail = rate_arcsec_per_hr * visit.exposure_s / 3600.0 / visit.seeing_arcsec;
        let snr = 5.0 * 10f64.powf(-0.4 * (mag + Trailing::SNR.loss_mag(trail) - visit.depth_5sigma_mag));
        let centroid = std::f64::consts::SQRT_2 * visit.seeing_arcsec / FWHM_PER_SIGMA / snr;
        Measured {
            snr,
            mag_obs: detection_draw.and_then(|u| measured_mag(mag, snr, u)),
            mag_err: MAG_PER_RELATIVE_FLUX / snr,
            sigma_astrometry_arcsec: self.astrometric_floor_arcsec.hypot(centroid),
        }
    }
}

/// m − 2.5 log10(1 + z / S/N) with z = Φ⁻¹(1 − u); None when the measured flux is not positive.
fn measured_mag(mag: f64, snr: f64, u: f64) -> Option<f64> {
    // u is a multiple of 2⁻⁵³ in [0, 1): keep 1 − u inside (0, 1) for Φ⁻¹.
    let q = (1.0 - u).clamp(f64::EPSILON, 1.0 - f64::EPSILON);
    let z = Normal::standard().inverse_cdf(q);
    let relative = 1.0 + z / snr;
    (relative > 0.0).then(|| mag - 2.5 * relative.log10())
}

#[cfg(test)]
mod tests {
    use super::*;

    const VISIT: VisitConditions = VisitConditions {
        depth_5sigma_mag: 24.0,
        seeing_arcsec: 1.0,
        exposure_s: 0.0,
    };

    #[test]
    fn snr_is_five_at_the_limit_and_scales_with_flux() {
        let m = MeasurementModel::default();
        assert!((m.measure(24.0, 0.0, VISIT, None).snr - 5.0).abs() < 1e-12);
        // 2.5 mag brighter: ten times the flux, ten times the S/N (background-limited).
        assert!((m.measure(21.5, 0.0, VISIT, None).snr - 50.0).abs() < 1e-9);
        // σ_m = 1.0857 / S/N: 0.2171 mag at the limit.
        assert!((m.measure(24.0, 0.0, VISIT, None).mag_err - 0.217_147).abs() < 1e-6);
    }

    #[test]
    fn astrometric_error_has_its_floor_and_the_centroid_term() {
        let m = MeasurementModel {
            astrometric_floor_arcsec: 0.02,
        };
        // S/N 50, FWHM 1″: √2 · (1/2.35482) / 50 = 0.012011″, in quadrature with 0.02″.
        let s = m.measure(21.5, 0.0, VISIT, None).sigma_astrometry_arcsec;
        assert!((s - 0.02f64.hypot(0.012_011)).abs() < 1e-6, "{s}");
        // Very bright: the floor.
        assert!((m.measure(10.0, 0.0, VISIT, None).sigma_astrometry_arcsec - 0.02).abs() < 1e-6);
    }

    #[test]
    fn trailing_lowers_the_snr_by_its_snr_loss() {
        let m = MeasurementModel::default();
        // 3.6″/h for 1000 s in 1″ seeing: a 1″ trail, x = 1, Δm = 0.16372 mag.
        let trailed = VisitConditions {
            exposure_s: 1000.0,
            ..VISIT
        };
        let s = m.measure(24.0, 3.6, trailed, None).snr;
        assert!((s - 5.0 * 10f64.powf(-0.4 * 0.163_716)).abs() < 1e-4, "{s}");
    }

    #[test]
    fn detected_near_the_limit_are_measured_too_bright() {
        // Sources at the limit detected with p = 0.5 (u < 0.5): z > 0, so each is measured
        // brighter than it is; over u uniform on [0, 0.5) the mean of z is φ(0)/0.5 = 0.798.
        let n = 20000;
        let mean_z: f64 = (0..n)
            .map(|k| {
                let u = 0.5 * (k as f64 + 0.5) / n as f64;
                let m = measured_mag(24.0, 5.0, u).unwrap();
                assert!(m < 24.0);
                5.0 * (10f64.powf(-0.4 * (m - 24.0)) - 1.0)
            })
            .sum::<f64>()
            / n as f64;
        assert!(
            (mean_z - 2.0 * (-0.0f64).exp() / (2.0 * std::f64::consts::PI).sqrt()).abs() < 1e-3,
            "{mean_z}"
        );
        // Over all draws z is standard normal: mean 0.
        let all: f64 = (0..n)
            .map(|k| measured_mag(30.0, 1e6, (k as f64 + 0.5) / n as f64).unwrap() - 30.0)
            .sum();
        assert!(all.abs() / (n as f64) < 1e-8);
    }
}
