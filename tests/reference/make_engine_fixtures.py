#!/usr/bin/env python3
"""Outside-reference fixtures for the detection engine (`seine observe`).

Entry point:  python tests/reference/make_engine_fixtures.py
(separate from make_fixtures.py, whose functions it imports: light time,
erfa.epv00 Earth and Sun, astropy site vector, rebound two-body orbits.)

A plain brute force, every object against every visit, for two invented
surveys from the invented Sorrel Peak site (tests/reference/site.toml):

* `engref-circle`: a circular field of radius 1.2 deg;
* `engref-rect`: a 2.6 x 1.4 deg rectangle turned by a per-visit
  `rotation_deg`;
* `engref-gaps`: the same rectangle with chip gaps, stripes of dead area
  0.06 deg wide every 0.3 deg along the turned x axis, shifted per visit
  by a `dither_x_deg` (seine's `[[field.dead]]`, written here from the
  text of configuration.md: dead where |x - dx - k s| < w/2).

For each (survey, visit, object) the script computes the light-time
corrected astrometric position from the site (pyerfa + astropy + rebound,
numpy vector arithmetic), tests it against the footprint with its own
gnomonic projection, computes the magnitude and the rate of motion, and
decides detection with a deterministic efficiency (step, peak 1, live
fraction 1): detected <=> in field, mag < depth_mag, min_rate_arcsec_per_hr <= rate <=
max_rate_arcsec_per_hr (and, with gaps, outside every gap).  The linking rules (tracklets, nights, window) are implemented
here from the text of DESIGN.md, not by translating linking.rs.

Borderline cases are avoided: a pointing that puts any object within 0.5"
of a footprint edge, or an in-field object within 1% of a rate limit, is
redrawn, as is one that puts an in-field object within 0.5" of a gap's
edge; a depth within 0.001 mag of an in-field object's magnitude is
redrawn; every redraw is logged.  Seeds are fixed; reruns are identical.
"""

import csv
import math
import os
import sys
import tomllib
import warnings

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import make_fixtures as mf  # noqa: E402  (sets astropy offline, defines the conventions)
import erfa  # noqa: E402
import rebound  # noqa: E402

OUT = os.path.join(HERE, "fixtures", "engine")
EDGE_MARGIN_ARCSEC = 0.5
MAG_MARGIN = 0.001
RATE_MARGIN_REL = 0.01
START_MJD = 60680.0   # 2025-01-01 UTC
N_RUNS = 12           # observing runs, one every ~60 days: ~2 years

SURVEYS = [
    {
        "name": "engref-circle", "file": "circle", "shape": "circle",
        "radius_deg": 1.2, "min_rate_arcsec_per_hr": 0.4, "max_rate_arcsec_per_hr": 6.0,
        "linking": {"min_detections_per_night": 2, "min_tracklet_span_min": 30.0,
                    "min_nights": 2, "window_days": 60.0},
        "visit_id0": 5000, "seed": 5101, "group_sizes": (2, 4),
    },
    {
        "name": "engref-rect", "file": "rect", "shape": "rectangle",
        "width_deg": 2.6, "height_deg": 1.4, "min_rate_arcsec_per_hr": 0.2, "max_rate_arcsec_per_hr": 2.0,
        "linking": {"min_detections_per_night": 3, "min_tracklet_span_min": 40.0,
                    "min_nights": 2, "window_days": 30.0},
        "visit_id0": 9000, "seed": 5102, "group_sizes": (3, 5),
    },
    {
        "name": "engref-gaps", "file": "gaps", "shape": "rectangle",
        "width_deg": 2.6, "height_deg": 1.4, "min_rate_arcsec_per_hr": 0.2, "max_rate_arcsec_per_hr": 6.0,
        "gaps": {"spacing_deg": 0.3, "width_deg": 0.06},
        "linking": {"min_detections_per_night": 2, "min_tracklet_span_min": 30.0,
                    "min_nights": 2, "window_days": 60.0},
        "visit_id0": 13000, "seed": 5103, "group_sizes": (2, 4),
    },
]

log_lines = []


def log(msg):
    log_lines.append(msg)
    print(msg, file=sys.stderr)


# =========================================================================
# Site
# =========================================================================

with open(os.path.join(HERE, "site.toml"), "rb") as fh:
    SITE = tomllib.load(fh)["site"]
for k in ("longitude_deg", "latitude_deg", "elevation_m"):
    assert SITE[k] == mf.SITE[k], "site.toml and make_fixtures.SITE disagree"


def night_of(mjd_utc):
    """DESIGN.md: night = floor(mjd + longitude_deg/360 - 0.5), UTC MJD."""
    return math.floor(mjd_utc + SITE["longitude_deg"] / 360.0 - 0.5)


# =========================================================================
# Geometry helpers (numpy)
# =========================================================================

def unit(ra_deg, dec_deg):
    a, d = math.radians(ra_deg), math.radians(dec_deg)
    return np.array([math.cos(d) * math.cos(a), math.cos(d) * math.sin(a), math.sin(d)])


def sep_deg(u, v):
    return math.degrees(math.atan2(np.linalg.norm(np.cross(u, v)), float(np.dot(u, v))))


def offset_point(ra_deg, dec_deg, pa_deg, s_deg):
    """The point at angular distance s along position angle pa (north
    through east) from (ra, dec): spherical 'destination' formula."""
    d0, a0 = math.radians(dec_deg), math.radians(ra_deg)
    s, pa = math.radians(s_deg), math.radians(pa_deg)
    sd = math.sin(d0) * math.cos(s) + math.cos(d0) * math.sin(s) * math.cos(pa)
    d = math.asin(max(-1.0, min(1.0, sd)))
    a = a0 + math.atan2(math.sin(pa) * math.sin(s) * math.cos(d0),
                        math.cos(s) - math.sin(d0) * sd)
    return math.degrees(a) % 360.0, math.degrees(d)


def gnomonic(ra0, dec0, ra, dec):
    """Standard coordinates (xi east, eta north), degrees, of (ra, dec)
    about the tangent point (ra0, dec0): the TAN projection in its
    trigonometric form (Calabretta & Greisen 2002).  None on the far side."""
    a0, d0, a, d = map(math.radians, (ra0, dec0, ra, dec))
    da = a - a0
    cos_c = math.sin(d) * math.sin(d0) + math.cos(d) * math.cos(d0) * math.cos(da)
    if cos_c <= 0.0:
        return None
    xi = math.cos(d) * math.sin(da) / cos_c
    eta = (math.sin(d) * math.cos(d0) - math.cos(d) * math.sin(d0) * math.cos(da)) / cos_c
    return math.degrees(xi), math.degrees(eta)


def rect_coords(ra0, dec0, rot_deg, ra, dec):
    """Footprint coordinates: the +y (height) axis points to position angle
    rot_deg (north through east), the +x (width) axis to rot_deg + 90."""
    g = gnomonic(ra0, dec0, ra, dec)
    if g is None:
        return None
    xi, eta = g
    t = math.radians(rot_deg)
    ey = (math.sin(t), math.cos(t))            # PA t  in (xi, eta)
    ex = (math.sin(t + math.pi / 2), math.cos(t + math.pi / 2))   # PA t + 90
    return xi * ex[0] + eta * ex[1], xi * ey[0] + eta * ey[1]


def footprint_test(sv, ra0, dec0, rot, ra, dec):
    """(inside, distance to the nearest relevant edge in arcsec)."""
    if sv["shape"] == "circle":
        s = sep_deg(unit(ra0, dec0), unit(ra, dec))
        return s <= sv["radius_deg"], abs(s - sv["radius_deg"]) * 3600.0
    xy = rect_coords(ra0, dec0, rot, ra, dec)
    if xy is None:
        return False, 1e9
    x, y = xy
    hw, hh = 0.5 * sv["width_deg"], 0.5 * sv["height_deg"]
    inside = abs(x) <= hw and abs(y) <= hh
    # tangent-plane degrees ~ sky degrees this close to the centre (cos^2 c > 0.999)
    m = EDGE_MARGIN_ARCSEC / 3600.0 * 2
    d = 1e9
    if abs(y) <= hh + m:
        d = min(d, abs(abs(x) - hw) * 3600.0)
    if abs(x) <= hw + m:
        d = min(d, abs(abs(y) - hh) * 3600.0)
    return inside, d


def gap_test(sv, ra0, dec0, rot, dither_x, ra, dec):
    """(in a gap, distance to the nearest gap edge in arcsec): stripes of
    width w every s along the turned x axis, shifted by the visit's dither."""
    s, w = sv["gaps"]["spacing_deg"], sv["gaps"]["width_deg"]
    x, _ = rect_coords(ra0, dec0, rot, ra, dec)
    c = x - dither_x
    d = abs(c - s * round(c / s))
    return d < 0.5 * w, abs(d - 0.5 * w) * 3600.0


def field_radius(sv):
    if sv["shape"] == "circle":
        return sv["radius_deg"]
    return 0.5 * max(sv["width_deg"], sv["height_deg"])


# =========================================================================
# Objects
# =========================================================================

def elements_from_state(pos_ecl, vel_ecl):
    """Osculating heliocentric elements of a state via rebound (G = 1,
    primary mass GM_sun)."""
    sim = rebound.Simulation()
    sim.G = 1.0
    sim.add(m=mf.GM_SUN)
    sim.add(m=0.0, x=pos_ecl[0], y=pos_ecl[1], z=pos_ecl[2],
            vx=vel_ecl[0], vy=vel_ecl[1], vz=vel_ecl[2])
    o = sim.particles[1].orbit(primary=sim.particles[0])
    return o.a, o.e, math.degrees(o.inc), math.degrees(o.Omega) % 360.0, \
        math.degrees(o.omega) % 360.0, math.degrees(o.M) % 360.0


def icrs_to_ecl(v):
    x, y, z = v
    return np.array([x, mf.COS_EPS * y + mf.SIN_EPS * z, -mf.SIN_EPS * y + mf.COS_EPS * z])


def geo_mag_radec(obj, mjd_utc):
    tdb = mf.utc_to_tdb_mjd(mjd_utc)
    ob, oh, sb, delta, tau = mf.astrometric(obj, tdb, mf.earth_bary(tdb))
    r, d = float(np.linalg.norm(oh)), float(np.linalg.norm(delta))
    return r, d, mf.radec(delta)


def make_objects():
    rng = np.random.default_rng(5001)
    mid = START_MJD + 360.0
    check_t = [START_MJD + k * 30.0 for k in range(26)]
    objs = []
    # Three objects solved from a chosen state so that they sit near the
    # north celestial pole, the south celestial pole and RA 0/360 during the
    # survey (seen from the Sun; the Earth's parallax at ~100 AU is ~0.6 deg).
    special = [(0.2, 88.2, 110.0), (200.0, -87.6, 95.0), (0.3, 3.0, 130.0)]
    for ra, dec, r in special:
        pos = icrs_to_ecl(unit(ra, dec) * r)
        vc = math.sqrt(mf.GM_SUN / r)
        while True:
            vdir = rng.normal(size=3)
            vdir -= pos * np.dot(vdir, pos) / np.dot(pos, pos)
            vdir /= np.linalg.norm(vdir)
            vel = vdir * vc * rng.uniform(0.85, 1.1) + pos / r * vc * rng.uniform(-0.1, 0.1)
            a, e, inc, node, argp, M = elements_from_state(pos, vel)
            if a > 0 and e < 0.95:
                break
        objs.append({"a_au": a, "e": e, "inc_deg": inc, "node_deg": node,
                     "argperi_deg": argp, "mean_anomaly_deg": M, "epoch_mjd": mid})
    while len(objs) < 40:
        a = float(np.exp(rng.uniform(math.log(31.0), math.log(1500.0))))
        emax = min(0.95, 1.0 - 30.0 / a)
        e = float(emax * (rng.uniform(0.7, 1.0) if len(objs) % 3 == 2 else rng.uniform(0.0, 1.0)))
        if len(objs) % 5 == 4:
            inc = float(rng.uniform(90.0, 180.0))   # retrograde
        else:
            inc = min(float(abs(rng.normal(0.0, 25.0))), 89.0)
        obj = {"a_au": a, "e": e, "inc_deg": max(inc, 0.01),
               "node_deg": float(rng.uniform(0, 360)),
               "argperi_deg": float(rng.uniform(0, 360)),
               "mean_anomaly_deg": float(rng.uniform(0, 360)),
               "epoch_mjd": float(round(rng.uniform(58000.0, 63000.0), 3))}
        rs = [np.linalg.norm(mf.propagate(obj, mf.GM_SUN, t)) for t in check_t]
        if not (30.0 <= min(rs) and max(rs) <= 1500.0):
            continue
        objs.append(obj)
    for i, obj in enumerate(objs):
        obj["id"] = 100 + 3 * i          # ids are not row numbers
        obj["beta_mag_per_deg"] = float(rng.uniform(0.05, 0.2))
        obj["color_g"] = float(rng.uniform(0.3, 0.9))
        # H chosen so that the geocentric r magnitude mid-survey is 21.5..25
        obj["h_mag"] = 0.0
        r, d, _ = geo_mag_radec(obj, mid)
        obj["h_mag"] = float(round(rng.uniform(21.5, 25.0) - 5.0 * math.log10(r * d), 3))
    return objs


OBJ_COLS = ["id", "a_au", "e", "inc_deg", "node_deg", "argperi_deg",
            "mean_anomaly_deg", "epoch_mjd", "h_mag", "beta_mag_per_deg", "color_g"]


# =========================================================================
# Visit epochs and observer states
# =========================================================================

def visit_plan(sv, objs):
    """Times and targets: N_RUNS runs every ~60 days, 5 nights each within
    ~25 days, 3 target objects a night from the run's 4, and 2-3 (circle)
    or 3-4 (rectangle) visits a target, 12-50 min apart, whole seconds, in
    the local night."""
    rng = np.random.default_rng(sv["seed"])
    n = len(objs)
    groups = []
    for run in range(N_RUNS):
        base = START_MJD + 60.0 * run + float(rng.uniform(0, 10))
        pool = list(rng.choice(n, size=4, replace=False))
        if run % 3 not in pool:
            pool[0] = run % 3                    # the pole / RA-0 objects
        nights = sorted(rng.choice(25, size=5, replace=False))
        for nt in nights:
            day = math.floor(base) + int(nt)
            # local night at +19.3 deg: start 21:55-23:07 local mean time
            # (UTC 20:38-21:50), so that the groups cross UTC midnight
            t = day + 0.86 + float(rng.uniform(0.0, 0.05))
            for tgt in rng.choice(pool, size=3, replace=False):
                k = int(rng.integers(*sv["group_sizes"]))
                times = [t]
                for _ in range(k - 1):
                    while True:
                        dt = float(rng.uniform(12.0, 50.0))
                        span = (times[-1] + dt / 1440.0 - times[0]) * 1440.0
                        lim = sv["linking"]["min_tracklet_span_min"]
                        if abs(span - lim) > 2.0 and abs(dt - lim) > 2.0:
                            break
                    times.append(times[-1] + dt / 1440.0)
                times = [round(x * 86400.0) / 86400.0 for x in times]
                groups.append({"target": int(tgt), "times": times})
                t = times[-1] + float(rng.uniform(5.0, 20.0)) / 1440.0
    return groups, rng


def observers(mjds):
    """Barycentric observer (site) positions at UTC mjds, and at +-0.5 h."""
    half = 0.5 / 24.0
    ts = []
    for m in mjds:
        ts.extend([m - half, m, m + half])
    tdbs = [mf.utc_to_tdb_mjd(m) for m in ts]
    offs = mf.site_gcrs_offsets_au(ts)
    obs = [mf.earth_bary(t) + o for t, o in zip(tdbs, offs)]
    return [(tdbs[3 * j + 1], obs[3 * j + 1], (tdbs[3 * j], obs[3 * j]),
             (tdbs[3 * j + 2], obs[3 * j + 2])) for j in range(len(mjds))]


def position(obj, tdb, ob):
    _, _, _, delta, _ = mf.astrometric(obj, tdb, ob)
    return mf.radec(delta)


def full_geometry(obj, mjd, state):
    """Magnitudes and rates, as make_fixtures.ephemeris_rows computes them."""
    tdb, ob0, (tm, obm), (tp, obp) = state
    ob, oh, sb, delta, tau = mf.astrometric(obj, tdb, ob0)
    ra, dec = mf.radec(delta)
    r, d = float(np.linalg.norm(oh)), float(np.linalg.norm(delta))
    phase = mf.angle_between(sb - ob, ob0 - ob)
    mag_r = obj["h_mag"] + 5.0 * math.log10(r * d) + obj["beta_mag_per_deg"] * phase
    ra_m, dec_m = position(obj, tm, obm)
    ra_p, dec_p = position(obj, tp, obp)
    dra = ((ra_p - ra_m + 180.0) % 360.0) - 180.0
    rate = math.hypot(dra * math.cos(math.radians(dec)), dec_p - dec_m) * 3600.0
    return {"ra": ra, "dec": dec, "r": r, "delta": d, "mag_r": mag_r, "rate": rate}


# =========================================================================
# Linking (from the text of DESIGN.md)
# =========================================================================

def discovery(dets, rules):
    """dets: time-ordered (mjd, night, visit_id) of detections.  A night
    holds a tracklet once it has >= min_detections_per_night detections
    spanning >= min_tracklet_span_min minutes (last - first).  The object
    is discovered at the first detection after which there are tracklets
    on >= min_nights distinct nights whose first and last nights differ by
    <= window_days.  Brute force over prefixes and night subsets."""
    for i in range(len(dets)):
        per_night = {}
        for mjd, night, _ in dets[:i + 1]:
            per_night.setdefault(night, []).append(mjd)
        done = sorted(nt for nt, ts in per_night.items()
                      if len(ts) >= rules["min_detections_per_night"]
                      and (max(ts) - min(ts)) * 1440.0 >= rules["min_tracklet_span_min"])
        for j in range(len(done)):
            within = [nt for nt in done if 0 <= nt - done[j] <= rules["window_days"]]
            if len(within) >= rules["min_nights"]:
                return dets[i][2]
    return None


# =========================================================================
# One survey
# =========================================================================

def build_survey(sv, objs):
    groups, rng = visit_plan(sv, objs)
    mjds = sorted(t for g in groups for t in g["times"])
    assert len(set(mjds)) == len(mjds)
    states = dict(zip(mjds, observers(mjds)))
    # Brute force positions: every object at every visit epoch.
    pos = {}
    for oi, obj in enumerate(objs):
        for m in mjds:
            tdb, ob0, _, _ = states[m]
            pos[oi, m] = position(obj, tdb, ob0)
    geom = {}

    def geometry(oi, m):
        if (oi, m) not in geom:
            geom[oi, m] = full_geometry(objs[oi], m, states[m])
        return geom[oi, m]

    R = field_radius(sv)
    visits = []
    for g in groups:
        tgt = g["target"]
        ra_t, dec_t = pos[tgt, g["times"][0]]
        for attempt in range(100):
            # up to 2 field radii for 40% of the groups, up to 1 for the rest;
            # for the two pole objects, often towards (and across) the pole
            s = (2.0 if rng.uniform() < 0.4 else 1.0) * R * float(rng.uniform())
            pa = float(rng.uniform(0.0, 360.0))
            if tgt < 2 and rng.uniform() < 0.5:
                pa = 0.0 if dec_t > 0 else 180.0
                s = (90.0 - abs(dec_t)) * float(rng.uniform(0.4, 0.75))
            if tgt == 2 and rng.uniform() < 0.5:
                # the RA-0 object: a centre on the other side of RA 0/360
                pa = 270.0 if ra_t < 180.0 else 90.0
                s = float(rng.uniform(0.7, 1.1))
            ra0, dec0 = offset_point(ra_t, dec_t, pa, s)
            rots = [float(round(rng.uniform(0.0, 360.0), 6)) if sv["shape"] == "rectangle" else 0.0
                    for _ in g["times"]]
            dithers = ([float(round(rng.uniform(0.0, sv["gaps"]["spacing_deg"]), 6)) for _ in g["times"]]
                       if "gaps" in sv else [0.0 for _ in g["times"]])
            bad = None
            for m, rot, dx in zip(g["times"], rots, dithers):
                for oi in range(len(objs)):
                    ra, dec = pos[oi, m]
                    inside, dist = footprint_test(sv, ra0, dec0, rot, ra, dec)
                    if dist < EDGE_MARGIN_ARCSEC:
                        bad = f"object {objs[oi]['id']} {dist:.3f}\" from the edge"
                        break
                    if inside and "gaps" in sv and gap_test(sv, ra0, dec0, rot, dx, ra, dec)[1] < EDGE_MARGIN_ARCSEC:
                        bad = f"object {objs[oi]['id']} within {EDGE_MARGIN_ARCSEC}\" of a gap's edge"
                        break
                    if inside:
                        rate = geometry(oi, m)["rate"]
                        for lim in (sv["min_rate_arcsec_per_hr"], sv["max_rate_arcsec_per_hr"]):
                            if lim > 0 and abs(rate - lim) < RATE_MARGIN_REL * lim:
                                bad = f"object {objs[oi]['id']} rate {rate:.4f} near limit {lim}"
                if bad:
                    break
            if bad is None:
                break
            log(f"{sv['name']}: redrew the pointing of the group at {g['times'][0]:.5f}: {bad}")
        else:
            raise RuntimeError("no clean pointing")
        for m, rot, dx in zip(g["times"], rots, dithers):
            band = "g" if rng.uniform() < 0.25 else "r"
            visits.append({"mjd": m, "ra_deg": ra0, "dec_deg": dec0, "band": band,
                           "rotation_deg": rot, "dither_x_deg": dx, "target": tgt})
    visits.sort(key=lambda v: v["mjd"])
    for k, v in enumerate(visits):
        v["visit_id"] = sv["visit_id0"] + 3 * k
        v["night"] = night_of(v["mjd"])
    # In-field events, magnitudes, depths (redrawn when within 0.001 mag).
    events = []
    for v in visits:
        inf = []
        for oi, obj in enumerate(objs):
            ra, dec = pos[oi, v["mjd"]]
            inside, _ = footprint_test(sv, v["ra_deg"], v["dec_deg"], v["rotation_deg"], ra, dec)
            if inside:
                gm = geometry(oi, v["mjd"])
                mag = gm["mag_r"] + (obj["color_g"] if v["band"] == "g" else 0.0)
                inf.append((oi, gm, mag))
        while True:
            depth = float(round(rng.uniform(22.5, 25.5), 3))
            close = [objs[oi]["id"] for oi, _, mag in inf if abs(mag - depth) < MAG_MARGIN]
            if not close:
                break
            log(f"{sv['name']}: redrew the depth of visit {v['visit_id']}: objects {close} within {MAG_MARGIN} mag")
        v["depth_mag"] = depth
        for oi, gm, mag in inf:
            det = mag < depth and sv["min_rate_arcsec_per_hr"] <= gm["rate"] <= sv["max_rate_arcsec_per_hr"]
            if "gaps" in sv:
                ra, dec = pos[oi, v["mjd"]]
                det = det and not gap_test(sv, v["ra_deg"], v["dec_deg"], v["rotation_deg"],
                                           v["dither_x_deg"], ra, dec)[0]
            events.append({"oi": oi, "visit": v, "gm": gm, "mag": mag, "detected": det})
    # Discoveries.
    disc = {}
    for oi, obj in enumerate(objs):
        dets = [(e["visit"]["mjd"], e["visit"]["night"], e["visit"]["visit_id"])
                for e in events if e["oi"] == oi and e["detected"]]
        dets.sort()
        d = discovery(dets, sv["linking"])
        # sensitivity to the rule's boundaries: log (these are not rounding cases)
        for key, dv in (("window_days", 1.0), ("window_days", -1.0)):
            alt = dict(sv["linking"])
            alt[key] += dv
            if discovery(dets, alt) != d:
                log(f"{sv['name']}: object {obj['id']}: discovery changes with {key} {alt[key]}")
        disc[oi] = d
    return visits, events, disc


def write_rows(name, header, rows):
    path = os.path.join(OUT, name)
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(header)
        for row in rows:
            w.writerow([mf.fmtval(x) for x in row])
    print(f"wrote engine/{name}: {len(rows)} rows", file=sys.stderr)


def write_spec(sv):
    lk = sv["linking"]
    if sv["shape"] == "circle":
        field = f'shape = "circle"\nradius_deg = {sv["radius_deg"]}\n'
    else:
        field = (f'shape = "rectangle"\nwidth_deg = {sv["width_deg"]}\n'
                 f'height_deg = {sv["height_deg"]}\n')
    gaps = ""
    if "gaps" in sv:
        gaps = ('[[field.dead]]\nkind = "stripes"\nalong = "x"\n'
                f'spacing_deg = {sv["gaps"]["spacing_deg"]}\nwidth_deg = {sv["gaps"]["width_deg"]}\n\n')
    text = (
        "# Invented survey for the engine reference check (make_engine_fixtures.py).\n"
        f'[survey]\nname = "{sv["name"]}"\nvisits = "visits_{sv["file"]}.csv"\n'
        'time_scale = "utc"\nreference_band = "r"\n\n'
        "# Sorrel Peak (tests/reference/site.toml), invented\n"
        f'[site]\nlongitude_deg = {SITE["longitude_deg"]}\nlatitude_deg = {SITE["latitude_deg"]}\n'
        f'elevation_m = {SITE["elevation_m"]}\n\n'
        f"[field]\n{field}random_live_fraction = 1.0\n\n{gaps}"
        '[efficiency]\nmodel = "step"\npeak = 1.0\ntrailing = "none"\n\n'
        f'[motion]\nmin_rate_arcsec_per_hr = {sv["min_rate_arcsec_per_hr"]}\nmax_rate_arcsec_per_hr = {sv["max_rate_arcsec_per_hr"]}\n\n'
        f'[linking]\nmin_detections_per_night = {lk["min_detections_per_night"]}\n'
        f'min_tracklet_span_min = {lk["min_tracklet_span_min"]}\n'
        f'min_nights = {lk["min_nights"]}\nwindow_days = {lk["window_days"]}\n'
    )
    with open(os.path.join(OUT, f"survey_{sv['file']}.toml"), "w") as fh:
        fh.write(text)


def main():
    os.makedirs(OUT, exist_ok=True)
    warnings.filterwarnings("ignore", category=erfa.ErfaWarning)
    mf.zero_earth_orientation()
    objs = make_objects()
    write_rows("objects.csv", OBJ_COLS, [[o[c] for c in OBJ_COLS] for o in objs])
    in_field, disc_rows = [], []
    for sv in SURVEYS:
        visits, events, disc = build_survey(sv, objs)
        write_spec(sv)
        dither = ["dither_x_deg"] if "gaps" in sv else []
        write_rows(f"visits_{sv['file']}.csv",
                   ["visit_id", "mjd", "ra_deg", "dec_deg", "band", "depth_mag", "rotation_deg"] + dither,
                   [[v["visit_id"], v["mjd"], v["ra_deg"], v["dec_deg"], v["band"],
                     v["depth_mag"], v["rotation_deg"]] + [v["dither_x_deg"] for _ in dither] for v in visits])
        for e in sorted(events, key=lambda e: (objs[e["oi"]]["id"], e["visit"]["visit_id"])):
            in_field.append([sv["name"], objs[e["oi"]]["id"], e["visit"]["visit_id"], e["mag"],
                             e["gm"]["ra"], e["gm"]["dec"], e["gm"]["rate"], e["detected"]])
        for oi, obj in enumerate(objs):
            d = disc[oi]
            disc_rows.append([sv["name"], obj["id"], d is not None, "" if d is None else d])
        # coverage of the special cases
        n_in = len(events)
        n_det = sum(e["detected"] for e in events)
        n_disc = sum(d is not None for d in disc.values())
        wrap = sum(1 for e in events
                   if abs(((e["gm"]["ra"] - e["visit"]["ra_deg"] + 180) % 360) - 180) < 5
                   and abs(e["gm"]["ra"] - e["visit"]["ra_deg"]) > 180)
        pole = sum(1 for e in events if abs(e["visit"]["dec_deg"]) + field_radius(sv) > 90)
        pole_fields = sum(1 for v in visits if abs(v["dec_deg"]) + field_radius(sv) > 90)
        rate_cut = sum(1 for e in events if e["mag"] < e["visit"]["depth_mag"] and not e["detected"])
        faint = sum(1 for e in events if e["mag"] >= e["visit"]["depth_mag"])
        retro = sum(1 for e in events if objs[e["oi"]]["inc_deg"] > 90)
        log(f"{sv['name']}: {len(visits)} visits, {n_in} in-field events ({n_det} detected, "
            f"{faint} too faint, {rate_cut} outside the rate window, {retro} of retrograde objects), "
            f"{n_disc} of {len(objs)} objects discovered; {wrap} in-field events across RA 0/360 "
            f"from the field centre; {pole_fields} fields containing a pole with {pole} in-field events")
        if "gaps" in sv:
            gap_lost = sum(1 for e in events if not e["detected"] and e["mag"] < e["visit"]["depth_mag"]
                           and sv["min_rate_arcsec_per_hr"] <= e["gm"]["rate"] <= sv["max_rate_arcsec_per_hr"])
            log(f"{sv['name']}: {gap_lost} in-field events lost in a gap")
            assert gap_lost > 10
        assert wrap > 0 and pole > 0 and rate_cut > 0 and n_disc > 3
    write_rows("expected_in_field.csv",
               ["survey", "id", "visit_id", "mag", "ra_deg", "dec_deg", "rate_arcsec_per_hr", "detected"],
               in_field)
    write_rows("expected_discovery.csv", ["survey", "id", "discovered", "discovery_visit_id"], disc_rows)
    with open(os.path.join(OUT, "generation.log"), "w") as fh:
        fh.write("\n".join(log_lines) + "\n")


if __name__ == "__main__":
    main()
