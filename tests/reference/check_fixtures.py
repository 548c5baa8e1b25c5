#!/usr/bin/env python3
"""Sanity checks of the generated fixtures (run after make_fixtures.py).

python tests/reference/check_fixtures.py   -> prints each check, exits 1 on failure
"""

import csv
import math
import os
import sys
import warnings

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import make_fixtures as mf  # noqa: E402  (also applies the no-network IERS setup)

FIX = mf.OUT
FAILED = []


def load(name):
    with open(os.path.join(FIX, name)) as fh:
        return list(csv.DictReader(fh))


def check(name, ok, detail):
    print(f"[{'ok' if ok else 'FAIL'}] {name}: {detail}")
    if not ok:
        FAILED.append(name)


def sep_arcsec(ra1, de1, ra2, de2):
    r1, d1, r2, d2 = map(math.radians, (ra1, de1, ra2, de2))
    c = (math.sin(d1) * math.sin(d2) + math.cos(d1) * math.cos(d2) * math.cos(r1 - r2))
    x = math.cos(d2) * math.sin(r1 - r2)
    y = math.cos(d1) * math.sin(d2) - math.sin(d1) * math.cos(d2) * math.cos(r1 - r2)
    return math.degrees(math.atan2(math.hypot(x, y), c)) * 3600.0


def main():
    warnings.filterwarnings("ignore")
    mf.zero_earth_orientation()

    # --- earth.csv
    e = load("earth.csv")
    r = [math.sqrt(sum(float(x[k]) ** 2 for k in ("hx_au", "hy_au", "hz_au"))) for x in e]
    check("earth heliocentric distance", 0.983 < min(r) and max(r) < 1.0175,
          f"{min(r):.6f} .. {max(r):.6f} AU")
    v = [math.sqrt(sum(float(x[k]) ** 2 for k in ("hvx_au_per_day", "hvy_au_per_day",
                                                   "hvz_au_per_day"))) for x in e]
    check("earth heliocentric speed", 0.0166 < min(v) and max(v) < 0.0175,
          f"{min(v):.6f} .. {max(v):.6f} AU/day")
    bz = max(abs(float(x["hz_au"])) for x in e)
    check("earth near ICRS equator tilt", 0.35 < bz < 0.45,
          f"max |hz| = {bz:.4f} AU (sin(eps) ~ 0.398)")

    # --- time scales
    t = load("time_scales.csv")
    dt = [float(x["tdb_minus_tt_s"]) for x in t]
    check("tdb-tt amplitude", max(map(abs, dt)) < 1.7e-3, f"max |TDB-TT| = {max(map(abs, dt)):.6f} s")
    tai = sorted(set(float(x["tai_minus_utc_s"]) for x in t))
    check("tai-utc values", tai == [float(v) for v in range(24, 38)], f"{tai}")

    # --- roundtrip vs mpmath
    rb = load("elements_roundtrip.csv")
    mp = {x["id"]: x for x in load("elements_roundtrip_mpmath.csv")}
    worst = 0.0
    worst_far = 0.0
    worst_v = 0.0
    for x in rb:
        y = mp[x["id"]]
        p = np.array([float(x[k]) for k in ("x_au", "y_au", "z_au")])
        q = np.array([float(y[k]) for k in ("x_au", "y_au", "z_au")])
        pv = np.array([float(x[k]) for k in ("vx_au_per_day", "vy_au_per_day", "vz_au_per_day")])
        qv = np.array([float(y[k]) for k in ("vx_au_per_day", "vy_au_per_day", "vz_au_per_day")])
        rel = np.linalg.norm(p - q) / np.linalg.norm(q)
        worst = max(worst, rel)
        worst_v = max(worst_v, np.linalg.norm(pv - qv) / np.linalg.norm(qv))
        if float(x["e"]) < 0.999:
            worst_far = max(worst_far, rel)
    check("rebound vs mpmath position", worst < 1e-10,
          f"max |dr|/r = {worst:.3g} (e<0.999: {worst_far:.3g}); velocity max rel {worst_v:.3g}")
    # energy check of rebound states
    de = 0.0
    for x in rb:
        p = np.array([float(x[k]) for k in ("x_au", "y_au", "z_au")])
        pv = np.array([float(x[k]) for k in ("vx_au_per_day", "vy_au_per_day", "vz_au_per_day")])
        a = float(x["a_au"])
        eps = 0.5 * pv @ pv - mf.GM_SUN / np.linalg.norm(p)
        de = max(de, abs(eps + mf.GM_SUN / (2 * a)) / (mf.GM_SUN / (2 * a)))
    check("vis-viva of rebound states", de < 1e-8, f"max rel energy error {de:.3g}")

    # --- ephemerides: geocentre vs site
    geo = {(x["id"], x["mjd"]): x for x in load("ephem_geocentric.csv")}
    site = load("ephem_site.csv")
    worst_ratio = 0.0
    max_sep = 0.0
    for s in site:
        g = geo[(s["id"], s["mjd"])]
        sep = sep_arcsec(float(g["ra_deg"]), float(g["dec_deg"]),
                         float(s["ra_deg"]), float(s["dec_deg"]))
        bound = 8.794143 * (6378.137 + 2.4) / 6378.137 / float(g["delta_au"])
        worst_ratio = max(worst_ratio, sep / bound)
        max_sep = max(max_sep, sep)
    check("site-geocentre parallax bounded by diurnal parallax", worst_ratio <= 1.0005,
          f"max sep {max_sep:.4f} arcsec, max sep/(8.794\"*rho/delta) = {worst_ratio:.4f}")

    rows = list(geo.values()) + site + load("ephem_bary_geocentric.csv")
    rmin = min(float(x["r_au"]) for x in rows)
    rmax = max(float(x["r_au"]) for x in rows)
    check("r in 30..1500 AU", rmin >= 30 and rmax <= 1500, f"{rmin:.2f} .. {rmax:.2f}")
    bad = [x for x in rows if float(x["phase_deg"]) > math.degrees(math.asin(1.02 / float(x["r_au"])))]
    check("phase angle <= asin(1.02/r)", not bad, f"{len(bad)} violations")
    dmax = max(abs(float(x["dec_deg"])) for x in rows)
    print(f"       max |dec| = {dmax:.2f} deg")
    # mag recomputation
    objs = {o["id"]: o for o in load("ephem_objects.csv") + load("ephem_objects_bary.csv")}
    dm = max(abs(float(x["mag"]) - (float(objs[x["id"]]["h_mag"])
                                    + 5 * math.log10(float(x["r_au"]) * float(x["delta_au"]))
                                    + float(objs[x["id"]]["beta_mag_per_deg"]) * float(x["phase_deg"])))
             for x in rows)
    check("mag formula", dm < 1e-12, f"max diff {dm:.3g}")

    # --- rate rule of thumb: 40 AU circular, ecliptic, at opposition
    epoch_utc = 60676.0 + 0.3  # 2025-01-01 ~07h UTC
    tdb = mf.utc_to_tdb_mjd(epoch_utc)
    eb = mf.earth_bary(tdb)
    sb = mf.sun_bary(tdb)
    eh = eb - sb
    # ecliptic longitude of the Earth's heliocentric position
    x, y, z = eh
    ye = mf.COS_EPS * y + mf.SIN_EPS * z
    lam = math.degrees(math.atan2(ye, x)) % 360.0
    a = 40.0
    n = math.sqrt(mf.GM_SUN / a ** 3)
    # place the object on the Earth's heliocentric longitude at t - tau
    tau = (a - 1.0) / mf.C_AU_PER_DAY
    obj = {"id": "opp", "a_au": a, "e": 0.0, "inc_deg": 0.001, "node_deg": 0.0,
           "argperi_deg": 0.0, "mean_anomaly_deg": lam, "epoch_mjd": tdb - tau,
           "h_mag": 5.0, "beta_mag_per_deg": 0.15}
    row = mf.ephemeris_rows([obj], [epoch_utc], "geocentre")[0]
    rate, pa, elong = row[9], row[10], row[7]
    check("opposition rate for 40 AU circular", 3.0 < rate < 3.4,
          f"rate {rate:.4f} arcsec/hr, PA {pa:.1f} deg (westward ~ 270 expected near "
          f"RA~{row[2]:.0f}), elong {elong:.3f} deg")

    # --- sun / fields
    sa = load("sun_altaz.csv")
    sal = [float(x["sun_alt_deg"]) for x in sa]
    check("sun altitude range", -90 < min(sal) and max(sal) < 90 and min(sal) < -50 and max(sal) > 60,
          f"{min(sal):.2f} .. {max(sal):.2f}")
    d = max(abs(float(x["field_airmass_secz"]) - 1 / math.cos(math.radians(90 - float(x["field_alt_deg"]))))
            for x in sa)
    check("secz = 1/sin(alt)", d < 1e-9, f"max diff {d:.3g}")
    # twilight roots
    tw = load("twilight.csv")
    alts = mf.sun_alt_deg(np.array([float(x[k]) for x in tw for k in
                                    ("evening_astro_twilight_utc_mjd", "morning_astro_twilight_utc_mjd")]))
    check("twilight roots at -18 deg", np.max(np.abs(alts + 18)) < 1e-5,
          f"max |alt+18| = {np.max(np.abs(alts + 18)):.2g} deg")
    lens = [24 * (float(x["morning_astro_twilight_utc_mjd"]) - float(x["evening_astro_twilight_utc_mjd"]))
            for x in tw]
    check("astronomical night length", 6 < min(lens) and max(lens) < 12,
          f"{min(lens):.2f} .. {max(lens):.2f} h")

    # --- stats
    vm = load("vonmises.csv")
    ok = all(0 < float(x["mean_resultant_length"]) < 1 for x in vm)
    k = float(vm[-1]["kappa"])
    approx = 1 - 1 / (2 * k) - 1 / (8 * k * k)
    check("von Mises A(kappa)", ok and abs(float(vm[-1]["mean_resultant_length"]) - approx) < 1e-3,
          f"A({k:g}) = {float(vm[-1]['mean_resultant_length']):.6f} vs asymptotic {approx:.6f}")
    w = load("wilson.csv")
    check("wilson bounds", all(-1e-15 <= float(x["lower"]) <= int(x["k"]) / int(x["n"]) + 1e-15
                               and int(x["k"]) / int(x["n"]) <= float(x["upper"]) + 1e-15
                               and float(x["upper"]) <= 1 + 1e-15 for x in w), f"{len(w)} rows")
    ry = load("rayleigh.csv")
    check("rayleigh R recompute", max(abs(float(x["R"]) - abs(np.sum(np.exp(1j * np.radians(
        np.array(x["angles_deg"].split(), float)))))) for x in ry) < 1e-9, f"{len(ry)} samples")

    total = sum(os.path.getsize(os.path.join(FIX, f)) for f in os.listdir(FIX))
    check("fixture size", total < 5e6, f"{total / 1e6:.2f} MB in {len(os.listdir(FIX))} files")

    if FAILED:
        print("FAILED:", ", ".join(FAILED))
        sys.exit(1)
    print("all checks passed")


if __name__ == "__main__":
    main()
