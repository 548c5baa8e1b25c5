//! What the figures need besides the statistics of `crate::statistics` (bin edges, histograms,
//! weighted proportions and Wilson intervals, re-exported or used from there): the finite range
//! of values and the axis label of a quantity named by the units-in-names convention.

pub use crate::statistics::{Margin, histogram, lin_edges};

/// The robust range [min, max] of finite values, or None when there are none.
pub fn finite_range(xs: &[f64]) -> Option<(f64, f64)> {
    xs.iter().filter(|x| x.is_finite()).fold(None, |r, &x| match r {
        None => Some((x, x)),
        Some((a, b)) => Some((a.min(x), b.max(x))),
    })
}

/// The axis label of a quantity: a plain name with its symbol and unit.
pub fn label(name: &str) -> String {
    let known = match name {
        "a_au" => "semi-major axis a (AU)",
        "q_au" => "perihelion distance q (AU)",
        "e" => "eccentricity e (dimensionless)",
        "inc_deg" => "inclination i (deg)",
        "h_mag" => "absolute magnitude H (mag)",
        "r_au" => "heliocentric distance r (AU)",
        "varpi_deg" => "longitude of perihelion ϖ (deg)",
        "node_deg" => "longitude of ascending node Ω (deg)",
        "argperi_deg" => "argument of perihelion ω (deg)",
        "cadence_days" => "revisit interval (days)",
        _ => "",
    };
    if !known.is_empty() {
        return known.to_string();
    }
    generic_label(name)
}

/// `foo_bar_deg` → "foo bar (deg)", using the unit suffixes of the project's conventions.
fn generic_label(name: &str) -> String {
    // Longer suffixes first: `_sq_deg` must not be read as `_deg`.
    const UNITS: [(&str, &str); 7] = [
        ("_arcsec_per_hr", "arcsec/h"),
        ("_sq_deg", "deg²"),
        ("_deg", "deg"),
        ("_au", "AU"),
        ("_mag", "mag"),
        ("_days", "days"),
        ("_mjd", "MJD"),
    ];
    for (suffix, unit) in UNITS {
        if let Some(stem) = name.strip_suffix(suffix) {
            return format!("{} ({unit})", stem.replace('_', " "));
        }
    }
    format!("{} (dimensionless)", name.replace('_', " "))
}

/// The symbol of a quantity for short texts ("a", "H", "ϖ"), else its name.
pub fn symbol(name: &str) -> String {
    let s = match name {
        "a_au" => "a",
        "q_au" => "q",
        "inc_deg" => "i",
        "h_mag" => "H",
        "r_au" => "r",
        "varpi_deg" => "ϖ",
        "node_deg" => "Ω",
        "argperi_deg" => "ω",
        other => other,
    };
    s.to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_carry_units() {
        assert_eq!(label("a_au"), "semi-major axis a (AU)");
        assert_eq!(label("tisserand_deg"), "tisserand (deg)");
        assert_eq!(label("rate_arcsec_per_hr"), "rate (arcsec/h)");
    }
}
