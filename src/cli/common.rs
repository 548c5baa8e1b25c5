//! Small helpers shared by the subcommands: parsing of compound options.

use seine::sky::observer::Site;
use seine::{Error, Result};

/// Parse `LON_DEG,LAT_DEG[,ELEV_M]` into a site.
pub fn parse_site(s: &str) -> Result<Site> {
    let parts: Vec<&str> = s.split(',').map(str::trim).collect();
    let num = |i: usize, what: &str| -> Result<f64> {
        parts
            .get(i)
            .and_then(|p| p.parse::<f64>().ok())
            .filter(|x| x.is_finite())
            .ok_or_else(|| {
                Error::input(format!(
                    "--site `{s}`: expected LON_DEG,LAT_DEG[,ELEV_M] with a number for {what}"
                ))
            })
    };
    if !(2..=3).contains(&parts.len()) {
        return Err(Error::input(format!("--site `{s}`: expected LON_DEG,LAT_DEG[,ELEV_M]")));
    }
    let site = Site {
        longitude_deg: num(0, "the longitude")?,
        latitude_deg: num(1, "the latitude")?,
        elevation_m: if parts.len() == 3 {
            num(2, "the elevation")?
        } else {
            0.0
        },
    };
    if let Some(p) = site.problem() {
        return Err(Error::input(format!("--site: {p}")));
    }
    Ok(site)
}

/// Parse `K/N` (K from 0 to N − 1) into (K, N).
pub fn parse_shard(s: &str) -> Result<(u64, u64)> {
    let bad = || Error::input(format!("--shard `{s}`: expected K/N with 0 ≤ K < N, e.g. 0/4"));
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n) = (
        k.trim().parse::<u64>().map_err(|_| bad())?,
        n.trim().parse::<u64>().map_err(|_| bad())?,
    );
    if n == 0 || k >= n {
        return Err(bad());
    }
    Ok((k, n))
}
