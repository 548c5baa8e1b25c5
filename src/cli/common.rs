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

/// Parse `K/N` (K from 0 to N − 1).
pub fn parse_shard(s: &str) -> Result<(usize, usize)> {
    let bad = || Error::input(format!("--shard `{s}`: expected K/N with 0 ≤ K < N, e.g. 0/4"));
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if n == 0 || k >= n {
        return Err(bad());
    }
    Ok((k, n))
}

/// Size the worker pool; results never depend on it.
pub fn set_threads(threads: Option<usize>) -> Result<()> {
    if let Some(n) = threads {
        if n == 0 {
            return Err(Error::input("--threads: expected at least 1"));
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| Error::io(e.to_string()))?;
    }
    Ok(())
}

/// Survey names label output columns and rows; two surveys may not share one.
pub fn check_unique_survey_names(surveys: &[seine::engine::PreparedSurvey]) -> Result<()> {
    let mut seen = std::collections::HashSet::new();
    for s in surveys {
        let key = seine::engine::run::survey_key(&s.survey.name);
        if !seen.insert(key.clone()) {
            return Err(Error::input(format!(
                "{}: survey name `{}` is already used by another --survey; names must differ",
                s.survey.spec_path.display(),
                s.survey.name
            )));
        }
    }
    Ok(())
}
