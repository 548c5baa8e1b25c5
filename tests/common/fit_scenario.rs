//! Invented orbits and observing schedules for the orbit-fit tests and benchmark: objects of
//! the distant solar system seen from the invented site Sorrel Peak around their oppositions.
#![allow(dead_code)]

use rand::RngExt;
use rand_pcg::Pcg64;
use seine::fit::Observation;
use seine::orbit::{Center, Elements, Orbit};
use seine::sky::apparent::observe_from;
use seine::sky::frames::{icrs_to_ecliptic, lon_lat};
use seine::sky::observer::Site;
use seine::sky::observer::observer_states;
use seine::survey::visits::night_of;
use seine::time::TimeScale;

pub const ARCSEC: f64 = std::f64::consts::PI / 180.0 / 3600.0;

pub fn site() -> Site {
    Site {
        longitude_deg: 19.3,
        latitude_deg: 20.6,
        elevation_m: 2350.0,
    }
}

/// A distant orbit: a in [35, 90] AU, e in [0.02, 0.35], i in [1°, 40°], angles uniform.
pub fn draw_elements(rng: &mut Pcg64) -> Elements {
    let u = |rng: &mut Pcg64, lo: f64, hi: f64| lo + (hi - lo) * rng.random::<f64>();
    Elements {
        a_au: u(rng, 35.0, 90.0),
        e: u(rng, 0.02, 0.35),
        inc_rad: u(rng, 1.0, 40.0).to_radians(),
        node_rad: u(rng, 0.0, std::f64::consts::TAU),
        argperi_rad: u(rng, 0.0, std::f64::consts::TAU),
        mean_anomaly_rad: u(rng, 0.0, std::f64::consts::TAU),
        epoch_mjd_tdb: 61000.0,
        center: Center::Heliocentric,
    }
}

/// The UTC MJD of the object's first opposition after MJD 61000, near enough for a schedule:
/// when the Earth's mean heliocentric longitude, 100.46646° + 0.98564736°/day from J2000
/// (the Sun's mean longitude plus 180°; Meeus, *Astronomical Algorithms*, ch. 25, from
/// memory), reaches the object's ecliptic longitude at MJD 61000.
pub fn opposition_mjd(orbit: &Orbit) -> f64 {
    let (lon, _) = lon_lat(&icrs_to_ecliptic(&orbit.position(61000.0)));
    let earth = 100.46646 + 0.98564736 * (61000.0 - 51544.5);
    let ahead = (lon.to_degrees() - earth).rem_euclid(360.0);
    61000.0 + (ahead / 0.98564736).floor() + 0.3
}

/// Epochs (UTC MJD): on each night offset (days from `base`), `per_night` visits 40 min apart.
pub fn schedule(base: f64, night_offsets: &[f64], per_night: usize) -> Vec<f64> {
    night_offsets
        .iter()
        .flat_map(|&d| (0..per_night).map(move |k| base + d + k as f64 * 40.0 / 1440.0))
        .collect()
}

/// Three oppositions: nights −20, −19, 0, 1, 25, 26 days about each, two visits a night.
pub fn long_arc(base: f64) -> Vec<f64> {
    let nights: Vec<f64> = (0..3)
        .flat_map(|y| [-20.0, -19.0, 0.0, 1.0, 25.0, 26.0].map(|d| d + 365.25 * y as f64))
        .collect();
    schedule(base, &nights, 2)
}

/// Measured observations of `orbit` at `mjd_utc` from Sorrel Peak with error σ (arcsec); with
/// `rng` none, the exact directions.
pub fn observations(orbit: &Orbit, mjd_utc: &[f64], sigma_arcsec: f64, rng: Option<&mut Pcg64>) -> Vec<Observation> {
    let s = site();
    let states = observer_states(mjd_utc, TimeScale::Utc, Some(&s)).unwrap();
    let mut rng = rng;
    states
        .iter()
        .zip(mjd_utc)
        .map(|(o, &t)| {
            let truth = observe_from(orbit, o, f64::NAN).unit;
            let night = night_of(t, s.longitude_deg);
            match rng.as_deref_mut() {
                Some(r) => Observation::measured(*o, night, &truth, sigma_arcsec * ARCSEC, r),
                None => Observation::at(*o, night, truth, sigma_arcsec * ARCSEC),
            }
        })
        .collect()
}
