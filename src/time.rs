//! Epochs and time scales: UTC, TAI, TT and TDB as Modified Julian Dates (MJD = JD − 2400000.5).
//!
//! * TAI − UTC: the leap-second table of the IERS (Bulletin C), integer seconds since 1972.
//! * TT = TAI + 32.184 s (IAU 1991 definition of TT).
//! * TDB − TT: the leading periodic terms of the Fairhead & Bretagnon (1990) series in the
//!   form of Kaplan (2005, USNO Circular 179, eq. 2.6), good to about 10 µs for 1600–2200.
//!
//! UTC MJDs count days of 86400 s; an epoch inside a leap second is not representable, as
//! is usual for MJD time stamps in pointing logs.
//!
//! Where both scales meet (the Earth's rotation wants UTC ≈ UT1, the ephemerides TDB), epochs
//! travel as `MjdUtc` and `MjdTdb`, so passing one where the other is expected does not
//! compile; the conversions between them are the methods below. Columns of epochs in a
//! declared scale (visits, epochs tables) stay numbers with that scale beside them.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// The time scale of an input epoch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum TimeScale {
    #[default]
    Utc,
    Tai,
    Tt,
    Tdb,
}

impl TimeScale {
    pub fn parse(s: &str) -> Option<Self> {
        match s.to_ascii_lowercase().as_str() {
            "utc" => Some(Self::Utc),
            "tai" => Some(Self::Tai),
            "tt" => Some(Self::Tt),
            "tdb" => Some(Self::Tdb),
            _ => None,
        }
    }
}

/// A UTC epoch, MJD (days of 86400 s since 1858-11-17 UTC).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct MjdUtc(pub f64);

/// A TDB epoch, MJD (the time argument of the ephemerides and of orbital elements).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct MjdTdb(pub f64);

impl MjdUtc {
    /// The same instant in TDB; fails before 1972 (no leap-second offset).
    pub fn to_tdb(self) -> Result<MjdTdb> {
        to_tdb(self.0, TimeScale::Utc)
    }
}

impl MjdTdb {
    /// The same instant in UTC; fails before 1972 (no leap-second offset).
    pub fn to_utc(self) -> Result<MjdUtc> {
        to_utc(self.0, TimeScale::Tdb)
    }
}

pub const SECONDS_PER_DAY: f64 = 86400.0;
/// TT − TAI in seconds (exact by definition).
pub const TT_MINUS_TAI_S: f64 = 32.184;
/// MJD of J2000.0 (JD 2451545.0).
pub const MJD_J2000: f64 = 51544.5;
/// Offset between JD and MJD.
pub const JD_MINUS_MJD: f64 = 2400000.5;

/// (UTC MJD at which the offset starts, TAI − UTC in seconds), IERS Bulletin C.
const LEAP_SECONDS: [(f64, f64); 28] = [
    (41317.0, 10.0), // 1972-01-01
    (41499.0, 11.0), // 1972-07-01
    (41683.0, 12.0), // 1973-01-01
    (42048.0, 13.0), // 1974-01-01
    (42413.0, 14.0), // 1975-01-01
    (42778.0, 15.0), // 1976-01-01
    (43144.0, 16.0), // 1977-01-01
    (43509.0, 17.0), // 1978-01-01
    (43874.0, 18.0), // 1979-01-01
    (44239.0, 19.0), // 1980-01-01
    (44786.0, 20.0), // 1981-07-01
    (45151.0, 21.0), // 1982-07-01
    (45516.0, 22.0), // 1983-07-01
    (46247.0, 23.0), // 1985-07-01
    (47161.0, 24.0), // 1988-01-01
    (47892.0, 25.0), // 1990-01-01
    (48257.0, 26.0), // 1991-01-01
    (48804.0, 27.0), // 1992-07-01
    (49169.0, 28.0), // 1993-07-01
    (49534.0, 29.0), // 1994-07-01
    (50083.0, 30.0), // 1996-01-01
    (50630.0, 31.0), // 1997-07-01
    (51179.0, 32.0), // 1999-01-01
    (53736.0, 33.0), // 2006-01-01
    (54832.0, 34.0), // 2009-01-01
    (56109.0, 35.0), // 2012-07-01
    (57204.0, 36.0), // 2015-07-01
    (57754.0, 37.0), // 2017-01-01
];

/// First UTC MJD the table covers.
pub const UTC_MJD_MIN: f64 = 41317.0;

/// TAI − UTC in seconds at a UTC MJD, or `None` before 1972 (no integer-second UTC then).
pub fn tai_minus_utc_s(utc_mjd: f64) -> Option<f64> {
    if !(utc_mjd >= UTC_MJD_MIN) {
        return None;
    }
    let i = LEAP_SECONDS.partition_point(|&(start, _)| start <= utc_mjd);
    Some(LEAP_SECONDS[i - 1].1)
}

/// TDB − TT in seconds at a TT (or TDB) MJD; Kaplan (2005) eq. 2.6.
pub fn tdb_minus_tt_s(tt_mjd: f64) -> f64 {
    let t = (tt_mjd - MJD_J2000) / 36525.0;
    0.001657 * (628.3076 * t + 6.2401).sin()
        + 0.000022 * (575.3385 * t + 4.2970).sin()
        + 0.000014 * (1256.6152 * t + 6.1969).sin()
        + 0.000005 * (606.9777 * t + 4.0212).sin()
        + 0.000005 * (52.9691 * t + 0.4444).sin()
        + 0.000002 * (21.3299 * t + 5.5431).sin()
        + 0.000010 * t * (628.3076 * t + 4.2490).sin()
}

/// TT − UTC in seconds at a UTC MJD.
pub fn tt_minus_utc_s(utc_mjd: f64) -> Option<f64> {
    tai_minus_utc_s(utc_mjd).map(|d| d + TT_MINUS_TAI_S)
}

/// Convert an MJD in `scale` to TDB.
pub fn to_tdb(mjd: f64, scale: TimeScale) -> Result<MjdTdb> {
    let tt = match scale {
        TimeScale::Tdb => return Ok(MjdTdb(mjd)),
        TimeScale::Tt => mjd,
        TimeScale::Tai => mjd + TT_MINUS_TAI_S / SECONDS_PER_DAY,
        TimeScale::Utc => {
            let d = tt_minus_utc_s(mjd).ok_or_else(|| {
                Error::input(format!(
                    "UTC epoch MJD {mjd} is before 1972-01-01, where UTC has no leap-second offset; give the epochs in TT or TDB"
                ))
            })?;
            mjd + d / SECONDS_PER_DAY
        }
    };
    Ok(MjdTdb(tt + tdb_minus_tt_s(tt) / SECONDS_PER_DAY))
}

/// Convert an MJD in `scale` to UTC (used for the Earth's rotation and night numbers).
pub fn to_utc(mjd: f64, scale: TimeScale) -> Result<MjdUtc> {
    let tai = match scale {
        TimeScale::Utc => return Ok(MjdUtc(mjd)),
        TimeScale::Tai => mjd,
        TimeScale::Tt => mjd - TT_MINUS_TAI_S / SECONDS_PER_DAY,
        TimeScale::Tdb => {
            let tt = mjd - tdb_minus_tt_s(mjd) / SECONDS_PER_DAY;
            tt - TT_MINUS_TAI_S / SECONDS_PER_DAY
        }
    };
    // TAI − UTC is constant except across a leap second: evaluate it at the guess, then again.
    let before_1972 = || {
        Error::input(format!(
            "epoch MJD {mjd} is before 1972-01-01, where UTC is not defined by the leap-second table"
        ))
    };
    let guess = tai - tai_minus_utc_s(tai).ok_or_else(before_1972)? / SECONDS_PER_DAY;
    let d = tai_minus_utc_s(guess).ok_or_else(before_1972)?;
    Ok(MjdUtc(tai - d / SECONDS_PER_DAY))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leap_second_steps_at_2017() {
        // 2017-01-01 (MJD 57754): TAI − UTC went from 36 s to 37 s (IERS Bulletin C 52).
        assert_eq!(tai_minus_utc_s(57753.999), Some(36.0));
        assert_eq!(tai_minus_utc_s(57754.0), Some(37.0));
        assert_eq!(tai_minus_utc_s(41316.0), None);
    }

    #[test]
    fn utc_tdb_round_trip() {
        for mjd in [48000.3, 51544.5, 57753.9, 60000.123456, 65000.0] {
            let back = MjdUtc(mjd).to_tdb().unwrap().to_utc().unwrap();
            assert!((back.0 - mjd).abs() * 86400.0 < 1e-6, "{mjd}");
        }
    }
}
