//! Plausible physical ranges of the numeric inputs, in one table: a value that is a valid
//! number but outside what the tool can treat well (an orbit of 1e300 AU, a visit in the year
//! 3000) is refused with one sentence naming the file, row or key, before any work starts.
//!
//! Each loader checks its values against this table (`check_column` for a table's column,
//! `check_key` for a spec key or an option), and a distribution of the population spec has
//! its bounded support checked (`check_support`). configuration.md lists the table ("Plausible
//! ranges"); a test keeps the two in agreement. A helper adding a key adds its row here.

use crate::error::{Error, Result};
use crate::io::table::Columns;

/// One row of the table: `lo ≤ value ≤ hi` (or `< hi` when `hi_open`), in `unit`.
#[derive(Debug, Clone, Copy)]
pub struct Range {
    pub key: &'static str,
    pub lo: f64,
    pub hi: f64,
    pub hi_open: bool,
    pub unit: &'static str,
    /// Why these bounds: the physics or the limit of a method, in a few words.
    pub why: &'static str,
}

/// MJD of 1972-01-01, where the leap-second table (hence UTC as an MJD) starts.
pub const MJD_1972: f64 = 41317.0;
/// MJD of 1600-01-01 and 2200-01-01 (Gregorian): the span over which the TDB − TT series
/// (Kaplan 2005) is good to ~10 µs and the Earth's ephemeris is used well inside its range.
pub const MJD_1600: f64 = -94553.0;
pub const MJD_2200: f64 = 124593.0;

const fn closed(key: &'static str, lo: f64, hi: f64, unit: &'static str, why: &'static str) -> Range {
    Range {
        key,
        lo,
        hi,
        hi_open: false,
        unit,
        why,
    }
}

const fn open(key: &'static str, lo: f64, hi: f64, unit: &'static str, why: &'static str) -> Range {
    Range {
        key,
        lo,
        hi,
        hi_open: true,
        unit,
        why,
    }
}

/// The table. Keys are column names of the contract and the last part of spec keys.
pub const RANGES: &[Range] = &[
    closed(
        "a_au",
        0.05,
        2.0e5,
        "AU",
        "from inside Mercury's orbit to the Sun's Hill sphere in the Galaxy",
    ),
    open("e", 0.0, 1.0, "", "bound orbits only"),
    closed(
        "q_au",
        0.005,
        2.0e5,
        "AU",
        "perihelia outside the Sun's surface, inside its Hill sphere",
    ),
    closed("inc_deg", 0.0, 180.0, "deg", "inclination"),
    closed("node_deg", -360.0, 360.0, "deg", "an angle"),
    closed("argperi_deg", -360.0, 360.0, "deg", "an angle"),
    closed("varpi_deg", -360.0, 360.0, "deg", "an angle"),
    closed("mean_anomaly_deg", -360.0, 360.0, "deg", "an angle"),
    closed(
        "epoch_mjd",
        MJD_1600,
        MJD_2200,
        "TDB MJD",
        "years 1600-2200, where the time scales and the Earth's ephemeris are good",
    ),
    closed(
        "perihelion_mjd",
        -1.0e9,
        1.0e9,
        "TDB MJD",
        "a time of perihelion within a few million years",
    ),
    closed("h_mag", -10.0, 30.0, "mag", "from a giant planet to a metre-sized body"),
    closed(
        "beta_mag_per_deg",
        0.0,
        2.0,
        "mag/deg",
        "linear phase slopes of small bodies",
    ),
    closed("hg_g", -0.5, 1.5, "", "the IAU H,G slope parameter"),
    closed("color", -5.0, 5.0, "mag", "band minus reference band"),
    closed("lc_amp_mag", 0.0, 5.0, "mag", "light-curve amplitude"),
    closed("lc_period_hr", 0.0, 1.0e5, "h", "rotation period (0: no light curve)"),
    closed("weight", 0.0, 1.0e300, "", "an importance weight"),
    closed(
        "mjd",
        MJD_1972,
        MJD_2200,
        "MJD",
        "1972-2200: the leap-second table's start to the end of the span the time scales serve",
    ),
    open("ra_deg", 0.0, 360.0, "deg", "a right ascension"),
    closed("dec_deg", -90.0, 90.0, "deg", "a declination"),
    closed("depth_mag", 0.0, 40.0, "mag", "a limiting magnitude"),
    closed("depth_5sigma_mag", 0.0, 40.0, "mag", "a limiting magnitude"),
    closed("dither_x_deg", -60.0, 60.0, "deg", "a focal-plane offset"),
    closed("dither_y_deg", -60.0, 60.0, "deg", "a focal-plane offset"),
    closed("rotation_deg", -360.0, 360.0, "deg", "a field rotation"),
    closed("exposure_s", 0.0, 1.0e5, "s", "an exposure of at most about a day"),
    open("seeing_arcsec", 1.0e-3, 100.0, "arcsec", "a seeing FWHM"),
    closed("longitude_deg", -360.0, 360.0, "deg", "a site longitude, east positive"),
    closed("latitude_deg", -90.0, 90.0, "deg", "a geodetic latitude"),
    closed("elevation_m", -500.0, 1.0e4, "m", "a site on the ground"),
    closed(
        "astrometric_sigma_arcsec",
        1.0e-4,
        10.0,
        "arcsec",
        "a detection's positional 1σ, from space-astrometry precision to a poor plate",
    ),
    closed(
        "astrometric_floor_arcsec",
        0.0,
        10.0,
        "arcsec",
        "a systematic astrometric floor, as a survey spec's [measurement] allows",
    ),
    closed(
        "min_arc_days",
        0.0,
        1.0e5,
        "days",
        "an arc within the 1972-2200 span of visits",
    ),
    closed(
        "max_sigma_a_frac",
        0.0,
        1.0e3,
        "",
        "a cut on σa/a (a single night's fit has σa/a of order 1)",
    ),
];

/// The row for `key` (the last part of a dotted spec key; `color_<band>` and `color.<band>`
/// share the row `color`).
pub fn range(key: &str) -> Option<&'static Range> {
    let last = key.rsplit('.').next().unwrap_or(key);
    let name = if last.starts_with("color") || key.contains(".color.") {
        "color"
    } else {
        last
    };
    RANGES.iter().find(|r| r.key == name)
}

impl Range {
    pub fn contains(&self, v: f64) -> bool {
        v >= self.lo && if self.hi_open { v < self.hi } else { v <= self.hi }
    }

    /// "a value in [lo, hi] unit (why)", for the messages.
    pub fn expected(&self) -> String {
        let close = if self.hi_open { ")" } else { "]" };
        let unit = if self.unit.is_empty() {
            String::new()
        } else {
            format!(" {}", self.unit)
        };
        format!("a value in [{}, {}{close}{unit} ({})", self.lo, self.hi, self.why)
    }
}

/// Refuse the first value of a column outside its range, naming the file, row and column.
/// A column with no row in the table is not checked.
pub fn check_column(cols: &Columns, key: &str, values: &[f64]) -> Result<()> {
    let Some(r) = range(key) else {
        return Ok(());
    };
    match values.iter().position(|&v| !r.contains(v)) {
        Some(i) => Err(cols.bad_value(i, key, &format!("{}, found {}", r.expected(), values[i]))),
        None => Ok(()),
    }
}

/// Refuse a spec key's or an option's value outside its range; `place` names the file (or
/// the option), `key` the key.
pub fn check_key(place: &str, key: &str, v: f64) -> Result<()> {
    match range(key) {
        Some(r) if !r.contains(v) => Err(Error::input(format!(
            "{place}: key `{key}`: expected {}, found {v}",
            r.expected()
        ))),
        _ => Ok(()),
    }
}

/// Refuse a command-line option's value outside its range (the row of the option's name with
/// `_` for `-`), naming the option.
pub fn check_option(option: &str, v: f64) -> Result<()> {
    match range(&option.trim_start_matches('-').replace('-', "_")) {
        Some(r) if !r.contains(v) => Err(Error::input(format!("{option}: expected {}, found {v}", r.expected()))),
        _ => Ok(()),
    }
}

/// Refuse a distribution whose bounded support reaches outside the key's range: every value it
/// can draw must be plausible. Unbounded sides (a normal's tails) are left to the draws.
pub fn check_support(key: &str, support: (Option<f64>, Option<f64>)) -> std::result::Result<(), String> {
    let Some(r) = range(key) else {
        return Ok(());
    };
    let outside = |v: Option<f64>| v.filter(|v| !(*v >= r.lo && *v <= r.hi));
    match outside(support.0).or(outside(support.1)) {
        Some(v) => Err(format!(
            "can draw {v}: expected every value in [{}, {}] {} ({})",
            r.lo, r.hi, r.unit, r.why
        )),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_row_is_a_range_and_keys_are_unique() {
        let mut keys: Vec<&str> = RANGES.iter().map(|r| r.key).collect();
        keys.sort_unstable();
        keys.dedup();
        assert_eq!(keys.len(), RANGES.len());
        for r in RANGES {
            assert!(r.lo < r.hi, "{}", r.key);
        }
    }

    #[test]
    fn dotted_and_colour_keys_find_their_rows() {
        assert_eq!(range("orbit.a_au").map(|r| r.key), Some("a_au"));
        assert_eq!(range("color_g").map(|r| r.key), Some("color"));
        assert_eq!(range("photometry.color.g").map(|r| r.key), Some("color"));
        assert!(range("no_such_key").is_none());
        assert!(range("e").unwrap().contains(0.999) && !range("e").unwrap().contains(1.0));
    }

    #[test]
    fn options_find_their_rows_and_name_themselves() {
        for option in [
            "--astrometric-sigma-arcsec",
            "--astrometric-floor-arcsec",
            "--min-arc-days",
            "--max-sigma-a-frac",
        ] {
            check_option(option, 1.0).unwrap();
            let e = check_option(option, f64::NAN).unwrap_err().to_string();
            assert!(e.starts_with(option) && e.contains("found NaN"), "{e}");
        }
        assert!(check_option("--astrometric-sigma-arcsec", 0.0).is_err());
        assert!(check_option("--astrometric-floor-arcsec", 0.0).is_ok());
        assert!(check_option("--min-arc-days", -1.0).is_err());
    }
}
