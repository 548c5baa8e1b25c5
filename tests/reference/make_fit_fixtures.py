#!/usr/bin/env python3
"""Outside-reference fixtures for the orbit fit (`seine observe --fit-orbits`, src/fit/).

Entry point:  python tests/reference/make_fit_fixtures.py

An independent least-squares orbit fit: invented distant objects observed from the
invented Sorrel Peak site (tests/reference/site.toml), their astrometric positions
computed here (pyerfa erfa.epv00 Earth and Sun at every light-time-retarded epoch,
astropy's site vector, numpy Kepler propagation, light time iterated to 1e-12 day),
Gaussian errors of 0.1" drawn with numpy, and an orbit fitted to the measured positions
by scipy.optimize.least_squares (method "lm", 3-point finite differences) on the
heliocentric ecliptic J2000 state at the epoch of the first detection. The covariance is
(J^T J)^-1 mapped to elements by a central-difference Jacobian of numpy's state -> elements.
None of seine's code or its parametrization is used: the Rust fit (angular position, rates,
inverse distance, Levenberg-Marquardt of its own) must land on the same minimum.

Writes fixtures/fit_observations.csv (id, mjd_utc, ra_deg, dec_deg, sigma_arcsec) and
fixtures/fit_reference.csv (id, epoch_mjd_tdb, fitted elements, their 1-sigma, chi2, n_obs,
and the true elements at the epoch). Seeds are fixed; reruns are identical.
"""

import math
import os
import sys

import numpy as np
from scipy.optimize import least_squares

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import make_fixtures as mf  # noqa: E402  (constants, erfa time scales and epv00, astropy site)

SIGMA_ARCSEC = 0.1
ARCSEC = math.pi / 180.0 / 3600.0
N_LONG = 5        # three oppositions
N_SEASON = 3      # one season, nights every ~10 days over 150 days
ELEMENT_NAMES = ["a_au", "e", "inc_deg", "node_deg", "argperi_deg", "mean_anomaly_deg"]


def kepler_state(gm, el, tdb):
    """Heliocentric ecliptic state at TDB MJD of elements dict (angles in degrees)."""
    n = math.sqrt(gm / el["a_au"] ** 3)
    M = math.radians(el["mean_anomaly_deg"]) + n * (tdb - el["epoch_mjd_tdb"])
    return mf.independent_kepler_state(gm, el["a_au"], el["e"], el["inc_deg"], el["node_deg"],
                                       el["argperi_deg"], M)


def elements_from_state(gm, r, v, epoch):
    """Textbook state -> elements (angles in degrees)."""
    r = np.asarray(r, float)
    v = np.asarray(v, float)
    rn = np.linalg.norm(r)
    h = np.cross(r, v)
    hn = np.linalg.norm(h)
    inc = math.acos(h[2] / hn)
    evec = np.cross(v, h) / gm - r / rn
    e = np.linalg.norm(evec)
    a = 1.0 / (2.0 / rn - np.dot(v, v) / gm)
    node = math.atan2(h[0], -h[1]) % (2 * math.pi)
    nvec = np.array([math.cos(node), math.sin(node), 0.0])
    mvec = np.cross(h / hn, nvec)
    argperi = math.atan2(np.dot(evec, mvec), np.dot(evec, nvec)) % (2 * math.pi)
    pvec = evec / e
    qvec = np.cross(h / hn, pvec)
    nu = math.atan2(np.dot(r, qvec), np.dot(r, pvec))
    E = math.atan2(math.sqrt(1 - e * e) * math.sin(nu), e + math.cos(nu))
    M = (E - e * math.sin(E)) % (2 * math.pi)
    return {"a_au": a, "e": e, "inc_deg": math.degrees(inc), "node_deg": math.degrees(node),
            "argperi_deg": math.degrees(argperi), "mean_anomaly_deg": math.degrees(M),
            "epoch_mjd_tdb": epoch}


def element_vector(el):
    return np.array([el[k] for k in ELEMENT_NAMES])


class Observer:
    """Barycentric ICRS position of the site at UTC MJDs, and the TDB MJDs."""

    def __init__(self, mjd_utc):
        self.mjd_utc = np.asarray(mjd_utc, float)
        self.tdb = np.array([mf.utc_to_tdb_mjd(t) for t in self.mjd_utc])
        site = mf.site_gcrs_offsets_au(self.mjd_utc)
        self.pos = np.array([mf.earth_bary(t) for t in self.tdb]) + site


def direction(state_at, obs, k):
    """Unit vector observer -> object (ICRS) with light time; state_at(tdb) gives the
    heliocentric ecliptic position."""
    t = obs.tdb[k]
    tau = 0.0
    for _ in range(50):
        te = t - tau
        ob = mf.ecl_to_icrs(state_at(te)) + mf.sun_bary(te)
        d = ob - obs.pos[k]
        new = float(np.linalg.norm(d)) / mf.C_AU_PER_DAY
        if abs(new - tau) < 1e-12:
            tau = new
            break
        tau = new
    ob = mf.ecl_to_icrs(state_at(t - tau)) + mf.sun_bary(t - tau)
    d = ob - obs.pos[k]
    return d / np.linalg.norm(d)


def tangent_basis(u):
    east = np.array([-u[1], u[0], 0.0])
    east /= np.linalg.norm(east)
    return east, np.cross(u, east)


def opposition_mjd(el):
    days = 61000.0 + np.arange(366.0)
    best, best_elong = None, -1.0
    for t in days:
        tdb = mf.utc_to_tdb_mjd(t)
        earth = mf.earth_bary(tdb)
        obj = mf.ecl_to_icrs(kepler_state(mf.GM_SUN, el, tdb)[0]) + mf.sun_bary(tdb)
        elong = mf.angle_between(mf.sun_bary(tdb) - earth, obj - earth)
        if elong > best_elong:
            best, best_elong = t, elong
    return best + 0.3


def schedule(base, nights, per_night=2):
    return [base + d + k * 40.0 / 1440.0 for d in nights for k in range(per_night)]


def draw_elements(rng):
    return {"a_au": rng.uniform(35, 90), "e": rng.uniform(0.02, 0.35),
            "inc_deg": rng.uniform(1, 40), "node_deg": rng.uniform(0, 360),
            "argperi_deg": rng.uniform(0, 360), "mean_anomaly_deg": rng.uniform(0, 360),
            "epoch_mjd_tdb": 61000.0}


def fit(obs, measured, t0, start):
    """scipy least squares on the heliocentric ecliptic state at t0; returns the
    solution state, the state covariance and chi2."""
    bases = [tangent_basis(u) for u in measured]
    sig = SIGMA_ARCSEC * ARCSEC
    scale = np.array([1.0, 1.0, 1.0, 1e-3, 1e-3, 1e-3])

    def residuals(x):
        s = x * scale
        el = elements_from_state(mf.GM_SUN, s[:3], s[3:], t0)
        out = []
        for k in range(len(measured)):
            p = direction(lambda te: kepler_state(mf.GM_SUN, el, te)[0], obs, k)
            e, n = bases[k]
            along = np.dot(p, measured[k])
            out += [np.dot(p, e) / along / sig, np.dot(p, n) / along / sig]
        return np.array(out)

    res = least_squares(residuals, start / scale, method="lm", jac="3-point",
                        x_scale="jac", xtol=1e-14, ftol=1e-14, gtol=1e-14, max_nfev=4000)
    J = res.jac
    cov = np.linalg.inv(J.T @ J) * np.outer(scale, scale)
    return res.x * scale, cov, float(np.sum(res.fun ** 2))


def element_covariance(state, cov, t0):
    base = element_vector(elements_from_state(mf.GM_SUN, state[:3], state[3:], t0))
    G = np.zeros((6, 6))
    sd = np.sqrt(np.diag(cov))
    for j in range(6):
        h = 1e-3 * sd[j]
        up, dn = state.copy(), state.copy()
        up[j] += h
        dn[j] -= h
        d = (element_vector(elements_from_state(mf.GM_SUN, up[:3], up[3:], t0))
             - element_vector(elements_from_state(mf.GM_SUN, dn[:3], dn[3:], t0)))
        for k in (3, 4, 5):
            d[k] = (d[k] + 180.0) % 360.0 - 180.0
        G[:, j] = d / (2 * h)
    return G @ cov @ G.T


def main():
    rng = np.random.default_rng(19_2026)
    obs_rows, ref_rows = [], []
    long_nights = [d + 365.25 * y for y in range(3) for d in (-20, -19, 0, 1, 25, 26)]
    season_nights = [float(d) for d in range(-70, 81, 10)] + [1.0]
    for i in range(N_LONG + N_SEASON):
        el = draw_elements(rng)
        base = opposition_mjd(el)
        mjd = schedule(base, sorted(long_nights if i < N_LONG else season_nights))
        obs = Observer(mjd)
        truth = lambda te, el=el: kepler_state(mf.GM_SUN, el, te)[0]  # noqa: E731
        measured = []
        for k in range(len(mjd)):
            u = direction(truth, obs, k)
            e, n = tangent_basis(u)
            m = u + (e * rng.normal() + n * rng.normal()) * SIGMA_ARCSEC * ARCSEC
            measured.append(m / np.linalg.norm(m))
        t0 = obs.tdb[0]
        r0, v0 = kepler_state(mf.GM_SUN, el, t0)
        true_el = elements_from_state(mf.GM_SUN, r0, v0, t0)
        state, cov, chi2 = fit(obs, measured, t0, np.concatenate([r0, v0]))
        fitted = elements_from_state(mf.GM_SUN, state[:3], state[3:], t0)
        ecov = element_covariance(state, cov, t0)
        for k in range(len(mjd)):
            ra, dec = mf.radec(measured[k])
            obs_rows.append([i, mjd[k], ra, dec, SIGMA_ARCSEC])
        row = [i, t0] + [fitted[k] for k in ELEMENT_NAMES] + list(np.sqrt(np.diag(ecov)))
        row += [chi2, len(mjd)] + [true_el[k] for k in ELEMENT_NAMES]
        ref_rows.append(row)
        print(f"object {i}: n={len(mjd)} chi2={chi2:.2f} a={fitted['a_au']:.4f}+-{math.sqrt(ecov[0, 0]):.4f} "
              f"(true {true_el['a_au']:.4f})")
    mf.write_csv("fit_observations.csv", ["id", "mjd_utc", "ra_deg", "dec_deg", "sigma_arcsec"], obs_rows)
    header = (["id", "epoch_mjd_tdb"] + ELEMENT_NAMES + ["sigma_" + k for k in ELEMENT_NAMES]
              + ["chi2", "n_obs"] + ["true_" + k for k in ELEMENT_NAMES])
    mf.write_csv("fit_reference.csv", header, ref_rows)


if __name__ == "__main__":
    main()
