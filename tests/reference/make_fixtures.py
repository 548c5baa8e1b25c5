#!/usr/bin/env python3
"""Regenerate the outside-reference fixture tables for seine.

Single entry point:  python tests/reference/make_fixtures.py

Every number written here comes from a general-purpose reference library
(pyerfa, astropy, rebound, scipy, sbpy) or from numpy arithmetic on such
numbers; see README.md beside this file for which function produced which
column.  All random draws use fixed seeds, so reruns give identical files.
No network access is used: astropy's IERS auto-download is switched off and
the Earth-orientation parameters are zeroed (UT1 = UTC, no polar motion).
"""

import csv
import math
import os
import sys
import warnings

import numpy as np

# --- astropy: no network, no IERS download --------------------------------
from astropy.utils import iers
import astropy.utils.data

iers.conf.auto_download = False
iers.conf.iers_degraded_accuracy = "warn"
# The bundled table's predictions are "too old" by astropy's clock; since the
# table is zeroed below anyway, allow it to be used without an age check.
iers.conf.auto_max_age = None
astropy.utils.data.conf.allow_internet = False

import astropy.units as u  # noqa: E402
from astropy.coordinates import AltAz, EarthLocation, SkyCoord, get_sun  # noqa: E402
from astropy.time import Time  # noqa: E402
import astropy.stats  # noqa: E402

import erfa  # noqa: E402
import rebound  # noqa: E402
import scipy  # noqa: E402
import scipy.optimize  # noqa: E402
import scipy.special  # noqa: E402
import scipy.stats  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")

# --- constants (the seine conventions) ------------------------------------
K_GAUSS = 0.01720209895                 # AU^1.5 / day
GM_SUN = K_GAUSS ** 2                   # AU^3 / day^2
C_AU_PER_DAY = 173.1446326846693        # AU / day
OBLIQUITY_RAD = math.radians(84381.448 / 3600.0)   # IAU 1976 (Lieske et al. 1977, A&A 58, 1, from memory)
# IAU 2009 Sun/planet mass ratios (from memory, IAU 2009 system of
# astronomical constants).
MASS_RATIOS = {
    "Mercury": 6023657.33,
    "Venus": 408523.719,
    "Earth+Moon": 328900.5596,
    "Mars": 3098703.59,
    "Jupiter": 1047.348644,
    "Saturn": 3497.9018,
    "Uranus": 22902.98,
    "Neptune": 19412.26,
}
GM_BARY = GM_SUN * (1.0 + sum(1.0 / r for r in MASS_RATIOS.values()))

# Invented observing site "Sorrel Peak" (an invented mountain, far from any real observatory).
SITE = {"longitude_deg": 19.3, "latitude_deg": 20.6, "elevation_m": 2350.0}
SITE_LOCATION = EarthLocation.from_geodetic(
    lon=SITE["longitude_deg"] * u.deg,
    lat=SITE["latitude_deg"] * u.deg,
    height=SITE["elevation_m"] * u.m,
    ellipsoid="WGS84",
)

MJD0 = 2400000.5
AU_M = u.au.to(u.m)  # 149597870700 m (IAU 2012 exact)

COS_EPS = math.cos(OBLIQUITY_RAD)
SIN_EPS = math.sin(OBLIQUITY_RAD)


def zero_earth_orientation():
    """Replace astropy's Earth-orientation table by one with UT1-UTC = 0,
    polar motion = 0 and celestial-pole offsets dX = dY = 0 at every date, so
    that astropy works with UT1 = UTC exactly as seine does (and results do
    not depend on which IERS bulletin happens to be bundled)."""
    tab = iers.earth_orientation_table.get()
    tab = tab.copy()
    for col in ("UT1_UTC", "PM_x", "PM_y", "dX_2000A", "dY_2000A"):
        if col in tab.colnames:
            tab[col] = tab[col] * 0.0
    iers.earth_orientation_table.set(tab)


def write_csv(name, header, rows, fmt=None):
    """Write rows (sequences) with full double precision for floats."""
    path = os.path.join(OUT, name)
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(header)
        for row in rows:
            w.writerow([fmtval(v) for v in row])
    print(f"wrote {name}: {len(rows)} rows", file=sys.stderr)


def fmtval(v):
    if isinstance(v, (bool, np.bool_)):
        return "true" if v else "false"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (float, np.floating)):
        return "%.17g" % float(v)
    return str(v)


def join_floats(xs):
    return " ".join("%.17g" % float(x) for x in xs)


# =========================================================================
# Time scales
# =========================================================================

def split_mjd(mjd):
    """Two-part JD with the integer MJD in the first part, so that the day
    fraction is carried at full precision."""
    day = math.floor(mjd)
    return MJD0 + day, mjd - day


def utc_to_tt(mjd_utc):
    """UTC MJD -> (tt1, tt2) two-part JD via erfa.utctai, erfa.taitt."""
    u1, u2 = split_mjd(mjd_utc)
    a1, a2 = erfa.utctai(u1, u2)
    t1, t2 = erfa.taitt(a1, a2)
    return (u1, u2), (a1, a2), (t1, t2)


def tdb_minus_tt_geocentric(t1, t2, utc_frac):
    return erfa.dtdb(t1, t2, utc_frac, 0.0, 0.0, 0.0)


def utc_to_tdb_mjd(mjd_utc):
    """UTC MJD -> TDB MJD (geocentric TDB-TT, ut = UTC day fraction)."""
    (u1, u2), _, (t1, t2) = utc_to_tt(mjd_utc)
    dtr = tdb_minus_tt_geocentric(t1, t2, u2)
    # (t1 - MJD0) is an exact integer day count
    return (t1 - MJD0) + t2 + dtr / 86400.0


def leap_effective_mjds():
    """UTC MJDs (00:00) at which a new TAI-UTC took effect, 1990 on."""
    out = []
    for row in erfa.leap_seconds.get():
        y, m = int(row["year"]), int(row["month"])
        if y < 1990:
            continue
        _, mjd = erfa.cal2jd(y, m, 1)
        out.append(float(mjd))
    return out


def fixture_time_scales():
    rng = np.random.default_rng(1001)
    epochs = set()
    _, lo = erfa.cal2jd(1990, 1, 1)
    _, hi = erfa.cal2jd(2040, 12, 31)
    leaps = leap_effective_mjds()
    for L in leaps:
        # The leap second is the last second of UTC day L-1.  Rows avoid
        # instants strictly inside that day (where ERFA spreads the extra
        # second over the day's quasi-JD fraction) except its 00:00 start.
        for d in (-2.0, -1.5, -1.0, 0.0, 1.0 / 86400.0, 0.25, 0.5, 1.0, 1.5):
            epochs.add(L + d)
    # fill with random epochs, avoiding the inside of leap-second days
    while len(epochs) < 400:
        m = float(rng.uniform(lo, hi))
        m = round(m * 86400.0) / 86400.0  # whole seconds of UTC
        if any(L - 1.0 < m < L for L in leaps):
            continue
        epochs.add(m)
    rows = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)  # "dubious year"
        for mjd in sorted(epochs):
            (u1, u2), (a1, a2), (t1, t2) = utc_to_tt(mjd)
            # erfa.utctai/erfa.taitt carry the offset inside a quasi-JD day
            # fraction, so differencing them leaves ~1e-11 s of rounding.
            # Write the exact value erfa.utctai itself uses (erfa.dat for
            # the UTC calendar date) and check the round trip agrees.
            iy, im, iday, fd = erfa.jd2cal(u1, u2)
            tai_m_utc = float(erfa.dat(iy, im, iday, fd))
            tt_m_utc = tai_m_utc + 32.184   # erfa.taitt's TT-TAI constant
            via_jd_tai = ((a1 - u1) + (a2 - u2)) * 86400.0
            via_jd_tt = ((t1 - u1) + (t2 - u2)) * 86400.0
            assert abs(via_jd_tai - tai_m_utc) < 1e-9, (mjd, via_jd_tai)
            assert abs(via_jd_tt - tt_m_utc) < 1e-9, (mjd, via_jd_tt)
            dtr = tdb_minus_tt_geocentric(t1, t2, u2)
            rows.append((mjd, tai_m_utc, tt_m_utc, dtr))
    write_csv("time_scales.csv",
              ["utc_mjd", "tai_minus_utc_s", "tt_minus_utc_s", "tdb_minus_tt_s"],
              rows)


# =========================================================================
# Earth (erfa.epv00)
# =========================================================================

def epv00_mjd(tdb_mjd):
    day = math.floor(tdb_mjd)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        pvh, pvb = erfa.epv00(MJD0 + day, tdb_mjd - day)
    return pvh, pvb


def fixture_earth():
    rng = np.random.default_rng(1002)
    _, lo = erfa.cal2jd(1990, 1, 1)
    _, hi = erfa.cal2jd(2041, 1, 1)
    grid = np.linspace(lo, hi, 500, endpoint=False)
    tdb = grid + rng.uniform(0.0, (hi - lo) / 500.0, size=grid.size)
    rows = []
    for t in tdb:
        pvh, pvb = epv00_mjd(float(t))
        rows.append((float(t), *pvh["p"], *pvh["v"], *pvb["p"]))
    write_csv("earth.csv",
              ["tdb_mjd", "hx_au", "hy_au", "hz_au",
               "hvx_au_per_day", "hvy_au_per_day", "hvz_au_per_day",
               "bx_au", "by_au", "bz_au"], rows)


# =========================================================================
# Two-body propagation with rebound
# =========================================================================

_SIMS = {}


def _sim(gm):
    """A rebound simulation in AU/day units (G = 1, primary mass = GM)."""
    if gm not in _SIMS:
        sim = rebound.Simulation()
        sim.G = 1.0
        sim.add(m=gm)  # primary at the origin, at rest
        _SIMS[gm] = sim
    return _SIMS[gm]


def rebound_state(gm, a, e, inc_deg, node_deg, argperi_deg, mean_anom_rad):
    """Ecliptic state (AU, AU/day) relative to the primary via rebound."""
    sim = _sim(gm)
    M = math.fmod(mean_anom_rad, 2.0 * math.pi)
    p = rebound.Particle(simulation=sim, primary=sim.particles[0], m=0.0,
                         a=a, e=e, inc=math.radians(inc_deg),
                         Omega=math.radians(node_deg),
                         omega=math.radians(argperi_deg), M=M)
    return np.array([p.x, p.y, p.z]), np.array([p.vx, p.vy, p.vz])


def propagate(obj, gm, tdb_mjd):
    """Heliocentric-or-barycentric ecliptic position at TDB MJD."""
    a = obj["a_au"]
    n = math.sqrt(gm / a ** 3)
    M = math.radians(obj["mean_anomaly_deg"]) + n * (tdb_mjd - obj["epoch_mjd"])
    pos, _ = rebound_state(gm, a, obj["e"], obj["inc_deg"], obj["node_deg"],
                           obj["argperi_deg"], M)
    return pos


def ecl_to_icrs(v):
    x, y, z = v
    return np.array([x, COS_EPS * y - SIN_EPS * z, SIN_EPS * y + COS_EPS * z])


def independent_kepler_state(gm, a, e, inc_deg, node_deg, argperi_deg, M):
    """Plain numpy check of rebound's element conventions (not written out
    as a fixture): Newton on Kepler's equation + the textbook rotation
    R3(-node) R1(-inc) R3(-argperi)."""
    M = math.fmod(M, 2 * math.pi)
    E = M if e < 0.8 else math.pi
    for _ in range(200):
        f = E - e * math.sin(E) - M
        dE = -f / (1 - e * math.cos(E))
        E += dE
        if abs(dE) < 1e-16:
            break
    cE, sE = math.cos(E), math.sin(E)
    b = a * math.sqrt(1 - e * e)
    xp, yp = a * (cE - e), b * sE
    r = a * (1 - e * cE)
    n = math.sqrt(gm / a ** 3)
    vxp, vyp = -a * n * sE * a / r, b * n * cE * a / r
    i, O, w = map(math.radians, (inc_deg, node_deg, argperi_deg))

    def rot(x, y):
        cO, sO, ci, si, cw, sw = (math.cos(O), math.sin(O), math.cos(i),
                                  math.sin(i), math.cos(w), math.sin(w))
        X = (cO * cw - sO * sw * ci) * x + (-cO * sw - sO * cw * ci) * y
        Y = (sO * cw + cO * sw * ci) * x + (-sO * sw + cO * cw * ci) * y
        Z = (sw * si) * x + (cw * si) * y
        return np.array([X, Y, Z])
    return rot(xp, yp), rot(vxp, vyp)


def mpmath_state(gm, a, e, inc_deg, node_deg, argperi_deg, M_deg):
    """40-digit evaluation (mpmath) of the same element -> state map, with the
    same angle conventions as rebound; rounded to double at the end.  The
    element values are taken as the exact doubles written to the CSV."""
    import mpmath as mp
    with mp.workdps(40):
        gm, a, e = mp.mpf(gm), mp.mpf(a), mp.mpf(e)
        M = mp.fmod(mp.mpf(M_deg) * mp.pi / 180, 2 * mp.pi)
        E = M if e < 0.8 else mp.pi
        for _ in range(500):
            dE = -(E - e * mp.sin(E) - M) / (1 - e * mp.cos(E))
            E += dE
            if abs(dE) < mp.mpf(10) ** -36:
                break
        cE, sE = mp.cos(E), mp.sin(E)
        b = a * mp.sqrt(1 - e * e)
        n = mp.sqrt(gm / a ** 3)
        den = 1 - e * cE
        xp, yp = a * (cE - e), b * sE
        vxp, vyp = -a * n * sE / den, b * n * cE / den
        i, O, w = [mp.mpf(v) * mp.pi / 180 for v in (inc_deg, node_deg, argperi_deg)]
        cO, sO, ci, si, cw, sw = (mp.cos(O), mp.sin(O), mp.cos(i), mp.sin(i),
                                  mp.cos(w), mp.sin(w))
        P = ((cO * cw - sO * sw * ci), (sO * cw + cO * sw * ci), (sw * si))
        Q = ((-cO * sw - sO * cw * ci), (-sO * sw + cO * cw * ci), (cw * si))
        pos = [float(P[j] * xp + Q[j] * yp) for j in range(3)]
        vel = [float(P[j] * vxp + Q[j] * vyp) for j in range(3)]
    return pos + vel


def fixture_elements_roundtrip():
    rng = np.random.default_rng(1003)
    rows = []
    maxdiff_r = 0.0
    mp_rows = []
    n = 300
    _, lo = erfa.cal2jd(1990, 1, 1)
    _, hi = erfa.cal2jd(2041, 1, 1)
    special_inc = [0.001, 179.999, 90.0, 0.01, 179.99, 1e-3, 45.0, 135.0]
    for k in range(n):
        if k % 6 == 5:
            a = float(np.exp(rng.uniform(math.log(1.0), math.log(30.0))))
        else:
            a = float(np.exp(rng.uniform(math.log(30.0), math.log(2000.0))))
        sel = k % 4
        if sel == 0:
            e = float(rng.uniform(0.0, 0.3))
        elif sel == 1:
            e = float(rng.uniform(0.0, 0.9))
        elif sel == 2:
            e = float(rng.uniform(0.9, 0.9999))
        else:
            e = float(1.0 - 10 ** rng.uniform(-4, -1))   # 0.9 .. 0.9999
        if k < 6:
            e = [0.0, 1e-9, 0.9999, 0.5, 0.99, 0.999][k]
        if k < len(special_inc):
            inc = special_inc[k]
        else:
            inc = float(math.degrees(math.acos(rng.uniform(-1.0, 1.0))))
            inc = min(max(inc, 0.001), 179.999)
        node = float(rng.uniform(0.0, 360.0))
        argp = float(rng.uniform(0.0, 360.0))
        M = float(rng.uniform(0.0, 360.0))
        if k in (6, 7):
            M = 0.0       # exactly at perihelion
        if k == 8:
            M = 180.0     # exactly at aphelion
        epoch = float(rng.uniform(lo, hi))
        h = float(rng.uniform(3.0, 12.0))
        beta = float(rng.uniform(0.1, 0.2))
        pos, vel = rebound_state(GM_SUN, a, e, inc, node, argp, math.radians(M))
        p2, v2 = independent_kepler_state(GM_SUN, a, e, inc, node, argp,
                                          math.radians(M))
        maxdiff_r = max(maxdiff_r, np.max(np.abs(pos - p2)) / a)
        rows.append((k, a, e, inc, node, argp, M, epoch, h, beta,
                     *pos, *vel))
        mp_rows.append((k, *mpmath_state(GM_SUN, a, e, inc, node, argp, M)))
    print(f"  rebound vs independent numpy Kepler: max |dr|/a = {maxdiff_r:.3g}",
          file=sys.stderr)
    write_csv("elements_roundtrip.csv",
              ["id", "a_au", "e", "inc_deg", "node_deg", "argperi_deg",
               "mean_anomaly_deg", "epoch_mjd", "h_mag", "beta_mag_per_deg",
               "x_au", "y_au", "z_au",
               "vx_au_per_day", "vy_au_per_day", "vz_au_per_day"], rows)
    write_csv("elements_roundtrip_mpmath.csv",
              ["id", "x_au", "y_au", "z_au",
               "vx_au_per_day", "vy_au_per_day", "vz_au_per_day"], mp_rows)


# =========================================================================
# Ephemerides
# =========================================================================

def sun_bary(tdb_mjd):
    pvh, pvb = epv00_mjd(tdb_mjd)
    return np.array(pvb["p"]) - np.array(pvh["p"])


def earth_bary(tdb_mjd):
    _, pvb = epv00_mjd(tdb_mjd)
    return np.array(pvb["p"])


def site_gcrs_offsets_au(mjd_utc_array):
    t = Time(np.asarray(mjd_utc_array, dtype=float), format="mjd", scale="utc")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        pos, _vel = SITE_LOCATION.get_gcrs_posvel(t)
    xyz = pos.get_xyz().to_value(u.m).T / AU_M
    return xyz


def object_bary_icrs(obj, tdb_mjd):
    """Returns (object_bary, object_helio, sun_bary) at TDB (ICRS, AU)."""
    sb = sun_bary(tdb_mjd)
    if obj.get("frame", "heliocentric") == "barycentric":
        ob = ecl_to_icrs(propagate(obj, GM_BARY, tdb_mjd))
        oh = ob - sb
    else:
        oh = ecl_to_icrs(propagate(obj, GM_SUN, tdb_mjd))
        ob = oh + sb
    return ob, oh, sb


def astrometric(obj, tdb_mjd, obs_bary):
    """Iterate light time; returns dict of geometry."""
    tau = 0.0
    for _ in range(100):
        ob, oh, sb = object_bary_icrs(obj, tdb_mjd - tau)
        delta = ob - obs_bary
        new_tau = float(np.linalg.norm(delta)) / C_AU_PER_DAY
        done = abs(new_tau - tau) < 1e-12
        tau = new_tau
        if done:
            break
    else:
        raise RuntimeError("light time did not converge")
    ob, oh, sb = object_bary_icrs(obj, tdb_mjd - tau)
    delta = ob - obs_bary
    return ob, oh, sb, delta, tau


def radec(v):
    x, y, z = v
    ra = math.degrees(math.atan2(y, x)) % 360.0
    dec = math.degrees(math.atan2(z, math.hypot(x, y)))
    return ra, dec


def angle_between(a, b):
    # robust angle via atan2(|a x b|, a.b)
    return math.degrees(math.atan2(np.linalg.norm(np.cross(a, b)),
                                   float(np.dot(a, b))))


def ephemeris_rows(objects, epochs_utc, observer):
    """observer: 'geocentre' or 'site'."""
    half = 0.5 / 24.0
    times = []
    for m in epochs_utc:
        times.extend([m - half, m, m + half])
    tdbs = [utc_to_tdb_mjd(m) for m in times]
    if observer == "site":
        offs = site_gcrs_offsets_au(times)
    else:
        offs = np.zeros((len(times), 3))
    obs = [earth_bary(t) + off for t, off in zip(tdbs, offs)]
    rows = []
    for obj in objects:
        for j, m in enumerate(epochs_utc):
            i0 = 3 * j + 1
            res = {}
            for di in (-1, 0, 1):
                i = i0 + di
                ob, oh, sb, delta, tau = astrometric(obj, tdbs[i], obs[i])
                res[di] = (ob, oh, sb, delta, tau)
            ob, oh, sb, delta, tau = res[0]
            ra, dec = radec(delta)
            r = float(np.linalg.norm(oh))
            d = float(np.linalg.norm(delta))
            phase = angle_between(sb - ob, obs[i0] - ob)
            sun_now = sun_bary(tdbs[i0])
            elong = angle_between(sun_now - obs[i0], delta)
            mag = obj["h_mag"] + 5.0 * math.log10(r * d) + obj["beta_mag_per_deg"] * phase
            ra_m, dec_m = radec(res[-1][3])
            ra_p, dec_p = radec(res[1][3])
            dra = ((ra_p - ra_m + 180.0) % 360.0) - 180.0
            dra_cosd = dra * math.cos(math.radians(dec))
            ddec = dec_p - dec_m
            # the two evaluations are 1 hour apart
            rate = math.hypot(dra_cosd, ddec) * 3600.0
            pa = math.degrees(math.atan2(dra_cosd, ddec)) % 360.0
            rows.append((obj["id"], m, ra, dec, r, d, phase, elong, mag, rate, pa))
    return rows


EPHEM_HEADER = ["id", "mjd", "ra_deg", "dec_deg", "r_au", "delta_au",
                "phase_deg", "elong_deg", "mag", "rate_arcsec_per_hr",
                "rate_pa_deg"]
OBJ_HEADER = ["id", "a_au", "e", "inc_deg", "node_deg", "argperi_deg",
              "mean_anomaly_deg", "epoch_mjd", "h_mag", "beta_mag_per_deg"]


def make_ephem_epochs():
    rng = np.random.default_rng(1004)
    _, lo = erfa.cal2jd(1990, 3, 1)
    _, hi = erfa.cal2jd(2040, 10, 1)
    leaps = leap_effective_mjds()
    grid = np.linspace(lo, hi, 25)
    out = []
    for g in grid:
        while True:
            m = float(g + rng.uniform(-30.0, 30.0))
            m = round(m * 1440.0) / 1440.0   # whole UTC minutes
            # keep the +-0.5 h rate window away from leap-second days
            if not any(L - 2.0 < m < L + 1.0 for L in leaps):
                break
        out.append(m)
    return out


def r_range_ok(obj, gm, tdb_epochs, lo=30.0, hi=1500.0):
    for t in tdb_epochs:
        p = propagate(obj, gm, t)
        r = float(np.linalg.norm(p))
        if not (lo <= r <= hi):
            return False
    return True


def make_objects(rng, n, prefix, frame, tdb_epochs):
    _, elo = erfa.cal2jd(1990, 1, 1)
    _, ehi = erfa.cal2jd(2041, 1, 1)
    gm = GM_BARY if frame == "barycentric" else GM_SUN
    objs = []
    k = 0
    while len(objs) < n:
        k += 1
        a = float(np.exp(rng.uniform(math.log(31.0), math.log(1500.0))))
        emax = min(0.99, 1.0 - 30.0 / a)   # q >= 30 AU
        if len(objs) % 3 == 2:
            e = float(emax * rng.uniform(0.8, 1.0))
        else:
            e = float(emax * rng.uniform(0.0, 1.0))
        if len(objs) % 5 == 4:
            inc = float(rng.uniform(90.0, 180.0))    # retrograde
        else:
            inc = float(abs(rng.normal(0.0, 25.0))) % 180.0
        inc = min(max(inc, 0.001), 179.999)
        obj = {
            "id": {"h": 0, "b": 1000}[prefix] + len(objs),  # integer ids (DESIGN contract)
            "a_au": a, "e": e, "inc_deg": inc,
            "node_deg": float(rng.uniform(0, 360)),
            "argperi_deg": float(rng.uniform(0, 360)),
            "mean_anomaly_deg": float(rng.uniform(0, 360)),
            "epoch_mjd": float(rng.uniform(elo, ehi)),
            "h_mag": float(rng.uniform(3.0, 9.0)),
            "beta_mag_per_deg": float(rng.uniform(0.1, 0.2)),
        }
        if frame == "barycentric":
            obj["frame"] = "barycentric"
        if r_range_ok(obj, gm, tdb_epochs):
            objs.append(obj)
    return objs


def fixture_ephemerides():
    epochs = make_ephem_epochs()
    write_csv("ephem_epochs.csv", ["mjd"], [(m,) for m in epochs])
    tdb_epochs = [utc_to_tdb_mjd(m) for m in epochs]
    rng = np.random.default_rng(1005)
    helio = make_objects(rng, 40, "h", "heliocentric", tdb_epochs)
    bary = make_objects(rng, 15, "b", "barycentric", tdb_epochs)
    write_csv("ephem_objects.csv", OBJ_HEADER,
              [[o[c] for c in OBJ_HEADER] for o in helio])
    write_csv("ephem_objects_bary.csv", OBJ_HEADER + ["frame"],
              [[o[c] for c in OBJ_HEADER + ["frame"]] for o in bary])
    write_csv("ephem_geocentric.csv", EPHEM_HEADER,
              ephemeris_rows(helio, epochs, "geocentre"))
    write_csv("ephem_site.csv", EPHEM_HEADER,
              ephemeris_rows(helio, epochs, "site"))
    write_csv("ephem_bary_geocentric.csv", EPHEM_HEADER,
              ephemeris_rows(bary, epochs, "geocentre"))


def write_site_toml():
    path = os.path.join(HERE, "site.toml")
    with open(path, "w") as fh:
        fh.write("# Invented observing site \"Sorrel Peak\" used by the reference fixtures.\n")
        fh.write("# Geodetic (WGS84) coordinates; longitude east-positive.\n")
        fh.write("[site]\n")
        fh.write('name = "Sorrel Peak"\n')
        fh.write(f"longitude_deg = {SITE['longitude_deg']!r}\n")
        fh.write(f"latitude_deg = {SITE['latitude_deg']!r}\n")
        fh.write(f"elevation_m = {SITE['elevation_m']!r}\n")


# =========================================================================
# Sun altitude, fields, airmass, twilight (astropy)
# =========================================================================

def kasten_young(z_deg):
    z_deg = np.asarray(z_deg, dtype=float)
    return 1.0 / (np.cos(np.radians(z_deg)) + 0.50572 * (96.07995 - z_deg) ** -1.6364)


def sun_alt_deg(mjd_utc):
    t = Time(np.atleast_1d(np.asarray(mjd_utc, dtype=float)), format="mjd", scale="utc")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        aa = get_sun(t).transform_to(AltAz(obstime=t, location=SITE_LOCATION,
                                           pressure=0.0 * u.hPa))
    return aa.alt.to_value(u.deg)


def fixture_sun_altaz():
    rng = np.random.default_rng(1006)
    _, lo = erfa.cal2jd(2025, 1, 1)
    _, hi = erfa.cal2jd(2031, 1, 1)
    n = 300
    mjd = np.sort(rng.uniform(lo, hi, size=n))
    mjd = np.round(mjd * 86400.0) / 86400.0
    alt_sun = sun_alt_deg(mjd)
    t = Time(mjd, format="mjd", scale="utc")
    frame = AltAz(obstime=t, location=SITE_LOCATION, pressure=0.0 * u.hPa)
    ra = np.empty(n)
    dec = np.empty(n)
    todo = np.ones(n, bool)
    # draw fields uniformly on the sky, redraw those with alt < 1 deg
    while todo.any():
        idx = np.nonzero(todo)[0]
        ra[idx] = rng.uniform(0.0, 360.0, size=idx.size)
        dec[idx] = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, size=idx.size)))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            aa = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs").transform_to(frame)
        todo = aa.alt.to_value(u.deg) < 1.0
    alt = aa.alt.to_value(u.deg)
    secz = aa.secz.to_value(u.one)
    zen = aa.zen.to_value(u.deg)
    ky = kasten_young(zen)
    rows = list(zip(mjd, alt_sun, ra, dec, alt, secz, ky))
    write_csv("sun_altaz.csv",
              ["utc_mjd", "sun_alt_deg", "field_ra_deg", "field_dec_deg",
               "field_alt_deg", "field_airmass_secz", "field_airmass_kasten_young"],
              rows)


def fixture_twilight():
    rng = np.random.default_rng(1007)
    _, lo = erfa.cal2jd(2025, 1, 1)
    _, hi = erfa.cal2jd(2030, 12, 31)
    nights = sorted(set(int(x) for x in rng.integers(int(lo), int(hi), size=20)))
    while len(nights) < 20:
        nights = sorted(set(nights) | {int(rng.integers(int(lo), int(hi)))})
    lon = SITE["longitude_deg"]
    rows = []
    f = lambda m: float(sun_alt_deg(m)[0]) + 18.0  # noqa: E731
    for N in nights:
        noon = N + 0.5 - lon / 360.0          # local mean noon, UTC MJD
        midnight = noon + 0.5
        next_noon = noon + 1.0
        ev = scipy.optimize.brentq(f, noon, midnight, xtol=1e-10, rtol=1e-15)
        mo = scipy.optimize.brentq(f, midnight, next_noon, xtol=1e-10, rtol=1e-15)
        rows.append((N, ev, mo))
    write_csv("twilight.csv",
              ["night_mjd", "evening_astro_twilight_utc_mjd",
               "morning_astro_twilight_utc_mjd"], rows)


# =========================================================================
# Statistics
# =========================================================================

def fixture_rayleigh():
    rng = np.random.default_rng(1008)
    rows = []
    ns = [5, 6, 8, 10, 12, 15, 20, 25, 30, 40, 50, 60, 75, 100, 120, 150, 200]
    for s in range(30):
        n = int(ns[s % len(ns)])
        if s % 3 == 0:
            ang = rng.uniform(0.0, 360.0, size=n)
            kind = "uniform"
        else:
            kappa = [0.5, 1.0, 2.0, 4.0][s % 4]
            mu = rng.uniform(-math.pi, math.pi)
            ang = np.degrees(rng.vonmises(mu, kappa, size=n)) % 360.0
            kind = f"vonmises_kappa_{kappa:g}"
        ang = np.round(ang, 6) % 360.0
        rad = np.radians(ang)
        R = float(np.hypot(np.sum(np.cos(rad)), np.sum(np.sin(rad))))
        p = float(astropy.stats.rayleightest(rad * u.rad))
        V, kp = astropy.stats.kuiper(ang / 360.0, cdf=lambda x: x)
        rows.append((s, n, kind, join_floats(ang), R, p, float(V), float(kp)))
    write_csv("rayleigh.csv",
              ["sample_id", "n", "kind", "angles_deg", "R", "p_value",
               "kuiper_V", "kuiper_p"], rows)


def fixture_anderson_ksamp():
    rng = np.random.default_rng(1009)
    rows = []
    for c in range(20):
        nx = int(rng.integers(5, 120))
        ny = int(rng.integers(5, 120))
        shift = [0.0, 0.0, 0.2, 0.5, 1.0][c % 5]
        scale = [1.0, 1.5][c % 2]
        x = np.round(rng.normal(0.0, 1.0, size=nx), 6)
        y = np.round(rng.normal(shift, scale, size=ny), 6)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = scipy.stats.anderson_ksamp([x, y], variant="midrank")
        method = "exact" if nx * ny <= 2500 else "asymp"
        ks = scipy.stats.ks_2samp(x, y, method=method)
        rows.append((c, join_floats(x), join_floats(y), float(res.statistic),
                     float(res.pvalue), float(ks.statistic), float(ks.pvalue),
                     method))
    write_csv("anderson_ksamp.csv",
              ["case_id", "x", "y", "statistic", "significance_level",
               "ks_statistic", "ks_pvalue", "ks_method"], rows)


def fixture_kde():
    rng = np.random.default_rng(1010)
    # 2-D: a mixture of two correlated Gaussians
    n = 400
    a = rng.multivariate_normal([0.0, 0.0], [[1.0, 0.6], [0.6, 1.0]], size=n // 2)
    b = rng.multivariate_normal([3.0, -1.0], [[0.5, 0.0], [0.0, 2.0]], size=n // 2)
    data = np.round(np.vstack([a, b]), 6)
    kde = scipy.stats.gaussian_kde(data.T)   # default bw_method = 'scott'
    ev = np.round(np.column_stack([rng.uniform(-3, 6, 100), rng.uniform(-5, 4, 100)]), 6)
    dens = kde(ev.T)
    write_csv("kde_data.csv", ["x0", "x1"], data.tolist())
    write_csv("kde_eval.csv", ["x0", "x1", "density"],
              [(p[0], p[1], d) for p, d in zip(ev, dens)])
    # 1-D
    x = np.round(np.concatenate([rng.normal(0.0, 1.0, 150), rng.normal(4.0, 0.5, 50)]), 6)
    kde1 = scipy.stats.gaussian_kde(x)
    xe = np.linspace(-4.0, 7.0, 100)
    write_csv("kde1_data.csv", ["x"], [(v,) for v in x])
    write_csv("kde1_eval.csv", ["x", "density"], list(zip(xe, kde1(xe))))
    return kde.factor, kde1.factor


def fixture_wilson():
    rows = []
    for n in [1, 2, 3, 5, 10, 20, 37, 50, 100, 250, 1000]:
        ks = sorted(set([0, 1, 2, n // 4, n // 2, (3 * n) // 4, n - 1, n]))
        for k in ks:
            if 0 <= k <= n:
                lo, hi = astropy.stats.binom_conf_interval(
                    k, n, confidence_level=0.95, interval="wilson")
                rows.append((k, n, float(lo), float(hi)))
    write_csv("wilson.csv", ["k", "n", "lower", "upper"], rows)


def fixture_vonmises():
    kappa = np.round(np.linspace(0.1, 20.0, 200), 12)
    A = scipy.special.i1(kappa) / scipy.special.i0(kappa)
    write_csv("vonmises.csv", ["kappa", "mean_resultant_length"], list(zip(kappa, A)))


def fixture_hg():
    """reduced_mag_offset: the two-parameter exponential form of the IAU H,G
    system (Bowell et al. 1989, Asteroids II, Eq. A5 approximation, with
    A1=3.33, B1=0.63, A2=1.87, B2=1.22), computed in numpy -- this is the
    form seine implements.  reduced_mag_offset_sbpy_a4: sbpy's HG model,
    which implements the full Eq. A4 (small-angle smoothing term W and
    A1=3.332, B1=0.631, C1=0.986, A2=1.862, B2=1.218, C2=0.238); it differs
    from the simple form by up to ~0.04 mag at small phase angles."""
    from sbpy.photometry import HG
    rows = []
    alphas = np.linspace(0.0, 30.0, 61)
    for g in (0.0, 0.15, 0.5):
        t = np.tan(np.radians(alphas) / 2.0)
        phi1 = np.exp(-3.33 * t ** 0.63)
        phi2 = np.exp(-1.87 * t ** 1.22)
        ref = -2.5 * np.log10((1 - g) * phi1 + g * phi2)
        vals = HG(H=0.0 * u.mag, G=g)(alphas * u.deg).to_value(u.mag)
        rows.extend(zip(alphas, [g] * alphas.size, ref, vals))
    write_csv("hg_phase.csv",
              ["phase_deg", "g", "reduced_mag_offset", "reduced_mag_offset_sbpy_a4"],
              rows)


def fixture_galactic():
    """ICRS -> galactic: ERFA's eraIcrs2g (the Hipparcos definition, ESA 1997,
    SP-1200, vol. 1, sec. 1.5.3, applied directly to ICRS) and astropy's
    Galactic frame (defined through FK5 J2000, so it differs from ERFA by the
    ICRS-FK5 frame bias, about 0.02 arcsec)."""
    rng = np.random.default_rng(20261202)
    ra = np.concatenate([[192.85948, 266.40499, 0.0, 180.0], rng.uniform(0.0, 360.0, 196)])
    dec = np.concatenate([[27.12825, -28.93617, 0.0, -60.0],
                          np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, 196)))])
    l_rad, b_rad = erfa.icrs2g(np.radians(ra), np.radians(dec))
    gal = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs").galactic
    rows = zip(ra, dec, np.degrees(l_rad) % 360.0, np.degrees(b_rad),
               gal.l.to_value(u.deg) % 360.0, gal.b.to_value(u.deg))
    write_csv("galactic.csv",
              ["ra_deg", "dec_deg", "l_deg_erfa", "b_deg_erfa", "l_deg_astropy", "b_deg_astropy"],
              list(rows))


def main():
    os.makedirs(OUT, exist_ok=True)
    # ERFA flags years beyond its leap-second table as "dubious"; TAI-UTC is
    # then held at its last value (37 s), which is the intended behaviour.
    warnings.filterwarnings("ignore", category=erfa.ErfaWarning)
    zero_earth_orientation()
    write_site_toml()
    fixture_time_scales()
    fixture_earth()
    fixture_elements_roundtrip()
    fixture_ephemerides()
    fixture_sun_altaz()
    fixture_twilight()
    fixture_rayleigh()
    fixture_anderson_ksamp()
    f2, f1 = fixture_kde()
    print(f"  kde Scott factors: 2-D {f2!r}, 1-D {f1!r}", file=sys.stderr)
    fixture_wilson()
    fixture_vonmises()
    fixture_hg()
    fixture_galactic()
    versions = {
        "python": sys.version.split()[0],
        "numpy": np.__version__, "scipy": scipy.__version__,
        "pyerfa": erfa.__version__, "astropy": __import__("astropy").__version__,
        "rebound": rebound.__version__,
        "sbpy": __import__("sbpy").__version__,
        "mpmath": __import__("mpmath").__version__,
    }
    print("  versions: " + ", ".join(f"{k} {v}" for k, v in versions.items()),
          file=sys.stderr)


if __name__ == "__main__":
    main()
