//! Small statistics the figures need: bin edges, histogram counts, binomial intervals, and the
//! axis label of a quantity named by the project's units-in-names convention.

/// `n + 1` equally spaced edges from `lo` to `hi`.
pub fn lin_edges(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..=n).map(|k| lo + (hi - lo) * k as f64 / n as f64).collect()
}

/// `n + 1` logarithmically spaced edges from `lo` to `hi` (both > 0).
pub fn log_edges(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    let (a, b) = (lo.ln(), hi.ln());
    (0..=n).map(|k| (a + (b - a) * k as f64 / n as f64).exp()).collect()
}

/// Counts of `xs` in the bins [e_k, e_k+1); values outside the edges are not counted.
pub fn histogram(xs: &[f64], edges: &[f64]) -> Vec<u64> {
    let mut n = vec![0u64; edges.len().saturating_sub(1)];
    for &x in xs {
        let k = edges.partition_point(|&e| e <= x);
        if k > 0 && k < edges.len() {
            n[k - 1] += 1;
        }
    }
    n
}

/// The Wilson score interval of k successes in n trials at `z` standard deviations
/// (Wilson 1927, J. Am. Stat. Assoc. 22, 209). It stays inside [0, 1] and is sensible at
/// k = 0 and k = n, where the normal approximation collapses to zero width.
pub fn wilson(k: u64, n: u64, z: f64) -> (f64, f64) {
    if n == 0 {
        return (0.0, 1.0);
    }
    let (k, n) = (k as f64, n as f64);
    let z2 = z * z;
    let centre = (k + z2 / 2.0) / (n + z2);
    let half = z / (n + z2) * (k * (n - k) / n + z2 / 4.0).sqrt();
    ((centre - half).max(0.0), (centre + half).min(1.0))
}

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
    fn wilson_matches_a_worked_example() {
        // From memory: Newcombe (1998), Stat. Med. 17, 857, example 81/263 → Wilson 95% CI 0.2553–0.3662.
        let (lo, hi) = wilson(81, 263, 1.959964);
        assert!((lo - 0.2553).abs() < 5e-4 && (hi - 0.3662).abs() < 5e-4, "{lo} {hi}");
        assert_eq!(wilson(0, 0, 1.96), (0.0, 1.0));
        assert!(wilson(0, 10, 1.96).1 > 0.2);
    }

    #[test]
    fn histogram_counts_half_open_bins() {
        assert_eq!(histogram(&[0.0, 0.5, 1.0, 2.0, 3.0], &[0.0, 1.0, 2.0]), vec![2, 1]);
    }

    #[test]
    fn labels_carry_units() {
        assert_eq!(label("a_au"), "semi-major axis a (AU)");
        assert_eq!(label("tisserand_deg"), "tisserand (deg)");
        assert_eq!(label("rate_arcsec_per_hr"), "rate (arcsec/h)");
    }
}
