#!/usr/bin/env python3
"""Outside-reference fixtures for the numeric routines that must be total over their
validated domain (tests/numerics.rs).

    python tests/reference/make_numerics_fixtures.py

Needs mpmath and scipy only (pinned in requirements.txt); no network. Writes into
tests/reference/fixtures/:

- kepler_extreme.csv: the eccentric anomaly E solving E - e sin E = M, by
  mpmath.findroot at 60 significant digits, for eccentricities up to 1 - 1e-12 and
  mean anomalies from 1e-300 rad to pi (and negative ones), printed to 17 digits.
- truncnorm_tails.csv: scipy.stats.truncnorm quantiles (ppf), the density at each
  quantile, and the mean and standard deviation, for windows near the mean and far in
  either tail (up to 30 sigma away).
"""

import csv
import math
import os

import mpmath
import scipy.stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")


def write(name, header, rows):
    with open(os.path.join(OUT, name), "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(header)
        for r in rows:
            w.writerow([("%.17g" % v) if isinstance(v, float) else v for v in r])


def kepler_extreme():
    mpmath.mp.dps = 60
    es = ["0", "0.1", "0.5", "0.9", "0.99", "0.999999", "0.9999999999", "0.999999999999"]
    ms = [1e-300, 1e-100, 1e-12, 1e-8, 1e-6, 1e-4, 0.01, 0.3, 1.0, 2.0, 3.0,
          math.pi - 1e-9, -1e-8, -0.5, -3.0]
    rows = []
    for e_text in es:
        # e as the double the Rust test reads back, converted exactly.
        e_double = float(e_text)
        e = mpmath.mpf(e_double)
        for m_double in ms:
            m = mpmath.mpf(m_double)
            f = lambda x: x - e * mpmath.sin(x) - m
            # Start from the cubic root for small M and e near 1 (E^3 e/6 + (1-e) E = M),
            # else from M + e sign(M); findroot (secant) polishes to 60 digits.
            start = mpmath.sign(m) * mpmath.cbrt(6 * abs(m)) if abs(m) < 0.5 else m + e * mpmath.sign(m)
            root = mpmath.findroot(f, start, tol=mpmath.mpf(10) ** -55, maxsteps=500)
            assert abs(f(root)) < mpmath.mpf(10) ** -50 * max(1, abs(m))
            rows.append([e_double, m_double, float(root)])
    write("kepler_extreme.csv", ["e", "mean_anomaly_rad", "ecc_anomaly_rad"], rows)


def truncnorm_tails():
    # (mean, sigma, lo, hi): near the mean, one window 10 sigma away (the example:
    # inc 30-40 deg of a 3-deg Gaussian about 0), narrow far windows, the lower tail,
    # an open upper tail 20 sigma out and a window 30 sigma out.
    cases = [
        (0.0, 1.0, -1.0, 2.0),
        (0.0, 3.0, 30.0, 40.0),
        (0.0, 1.0, 8.0, 9.0),
        (5.0, 2.0, 25.0, 25.02),
        (0.0, 1.0, -12.0, -11.5),
        (10.0, 1.0, 30.0, 1e6),
        (0.0, 1.0, 30.0, 31.0),
        (0.0, 1.0, 1.5, 1.6),
        (0.0, 1.0, -0.01, 0.01),
    ]
    probs = [0.01, 0.1, 0.5, 0.9, 0.99]
    rows = []
    for k, (mean, sigma, lo, hi) in enumerate(cases):
        a, b = (lo - mean) / sigma, (hi - mean) / sigma
        d = scipy.stats.truncnorm(a, b, loc=mean, scale=sigma)
        mu, sd = d.mean(), d.std()
        for p in probs:
            x = d.ppf(p)
            rows.append([k, mean, sigma, lo, hi, p, float(x), float(d.pdf(x)), float(mu), float(sd)])
    write(
        "truncnorm_tails.csv",
        ["case", "mean", "sigma", "lo", "hi", "p", "quantile", "pdf_at_quantile", "dist_mean", "dist_std"],
        rows,
    )


if __name__ == "__main__":
    kepler_extreme()
    truncnorm_tails()
