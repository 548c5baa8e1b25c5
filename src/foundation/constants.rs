//! Physical and astronomical constants, each with its source.

/// Gaussian gravitational constant k, AU^1.5 / day (IAU 1976; exact by definition in the
/// pre-2012 system, retained here as the conventional value for GM_sun in AU and days).
pub const GAUSS_K: f64 = 0.01720209895;
/// GM of the Sun, AU^3 / day^2 (k², IAU 1976).
pub const GM_SUN: f64 = GAUSS_K * GAUSS_K;
/// Speed of light, AU / day: 299 792 458 m/s × 86400 s / 149 597 870 700 m (IAU 2012 au).
pub const C_AU_PER_DAY: f64 = 173.144_632_684_669_3;
/// Astronomical unit in km (IAU 2012 Resolution B2).
pub const AU_KM: f64 = 149_597_870.7;

/// Sun / planet mass ratios of the IAU 2009 system of astronomical constants (Earth
/// includes the Moon). From memory; checked to give GM_total/GM_sun ≈ 1.00134.
pub const SUN_PLANET_MASS_RATIOS: [f64; 8] = [
    6_023_657.33,  // Mercury
    408_523.719,   // Venus
    328_900.559_6, // Earth + Moon
    3_098_703.59,  // Mars
    1_047.348_644, // Jupiter
    3_497.901_8,   // Saturn
    22_902.98,     // Uranus
    19_412.26,     // Neptune
];

/// GM of the Sun plus the planets, for barycentric two-body orbits of distant objects.
pub fn gm_total() -> f64 {
    GM_SUN * (1.0 + SUN_PLANET_MASS_RATIOS.iter().map(|r| 1.0 / r).sum::<f64>())
}
