#!/usr/bin/env python3
"""Outside-reference fixtures for the likelihood machinery and the frames of elements.

    python tests/reference/make_likelihood_fixtures.py

Needs numpy, scipy, pyerfa and rebound only (pinned in requirements.txt); no
network. Writes into tests/reference/fixtures/:

- kde_weighted_data.csv, kde_weighted_eval.csv: scipy.stats.gaussian_kde with
  `weights=` (Scott's rule) on invented 2-D data; the eval table carries the
  density, and the data table's every row the kde's `factor` and `neff` (the
  latter is Kish's effective sample size (sum w)^2 / sum w^2, computed by scipy).
- vonmises_pdf.csv: scipy.stats.vonmises.pdf(x, kappa, loc) on a grid.
- recenter.csv: heliocentric ecliptic J2000 elements and the barycentric
  elements of the same state: the state from rebound (G = k^2, Sun of mass 1),
  plus the Sun's barycentric state from erfa.epv00 (Earth barycentric minus
  Earth heliocentric, BCRS axes, rotated to the ecliptic by 84381.448"), and
  the orbit about a primary of the Sun's and planets' total mass at rest at the
  barycentre, from rebound's `orbit(primary=...)`.
- neptune_longitude.csv: Neptune's osculating mean longitude from erfa.plan94
  (heliocentric J2000 positions; the velocity by a central difference over
  +-0.5 day, since plan94's own velocity omits the derivative of its periodic
  terms and is off by 1e-5 au/day, 0.3%; elements by rebound with
  GM_sun (1 + m_N)).
"""

import csv
import math
import os

import erfa
import numpy as np
import rebound
import scipy.stats

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")
K_GAUSS = 0.01720209895
GM_SUN = K_GAUSS ** 2
EPS = math.radians(84381.448 / 3600.0)
# IAU 2009 Sun/planet mass ratios (from memory), as in make_fixtures.py.
RATIOS = [6023657.33, 408523.719, 328900.5596, 3098703.59, 1047.348644,
          3497.9018, 22902.98, 19412.26]
M_TOTAL = 1.0 + sum(1.0 / r for r in RATIOS)
MJD0 = 2400000.5


def write(name, header, rows):
    with open(os.path.join(OUT, name), "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(header)
        for r in rows:
            w.writerow([("%.17g" % v) if isinstance(v, float) else v for v in r])


def kde_weighted():
    rng = np.random.default_rng(17)
    n = 150
    data = np.vstack([rng.normal(0.0, 1.0, n), rng.normal(2.0, 0.5, n)])
    data[1] += 0.6 * data[0]
    weights = rng.uniform(0.1, 3.0, n)
    kde = scipy.stats.gaussian_kde(data, weights=weights)
    ev = np.vstack([rng.uniform(-3, 3, 40), rng.uniform(-1, 5, 40)])
    dens = kde(ev)
    rows = [(float(data[0, i]), float(data[1, i]), float(weights[i]),
             float(kde.factor), float(kde.neff))
            for i in range(n)]
    write("kde_weighted_data.csv", ["x0", "x1", "weight", "factor", "neff"], rows)
    write("kde_weighted_eval.csv", ["x0", "x1", "density"],
          [(float(ev[0, i]), float(ev[1, i]), float(dens[i])) for i in range(ev.shape[1])])


def vonmises():
    rows = []
    for kappa in [0.5, 2.0, 10.0, 80.0, 400.0]:
        for loc in [0.3, 3.0, 6.0]:
            for x in np.linspace(-math.pi, math.pi, 13):
                rows.append((kappa, loc, float(x),
                             float(scipy.stats.vonmises.pdf(x, kappa, loc=loc))))
    write("vonmises_pdf.csv", ["kappa", "loc_rad", "x_rad", "pdf_per_rad"], rows)


def ecl(v):
    x, y, z = v
    return np.array([x, math.cos(EPS) * y + math.sin(EPS) * z,
                     -math.sin(EPS) * y + math.cos(EPS) * z])


def sun_bary_ecliptic(tdb_mjd):
    pvh, pvb = erfa.epv00(MJD0, tdb_mjd)
    return ecl(pvb[0] - pvh[0]), ecl(pvb[1] - pvh[1])


def recenter():
    rng = np.random.default_rng(23)
    rows = []
    for k in range(60):
        a = float(np.exp(rng.uniform(math.log(30.0), math.log(1500.0))))
        e = float(rng.uniform(0.0, 0.9))
        inc, node, peri, m = (float(rng.uniform(0, 60)), float(rng.uniform(0, 360)),
                              float(rng.uniform(0, 360)), float(rng.uniform(0, 360)))
        epoch = float(rng.uniform(51000.0, 62000.0))
        sim = rebound.Simulation()
        sim.G = GM_SUN
        sim.add(m=1.0)
        sim.add(primary=sim.particles[0], m=0.0, a=a, e=e, inc=math.radians(inc),
                Omega=math.radians(node), omega=math.radians(peri), M=math.radians(m))
        p = sim.particles[1]
        sp, sv = sun_bary_ecliptic(epoch)
        bary = rebound.Simulation()
        bary.G = GM_SUN
        bary.add(m=M_TOTAL)
        bary.add(m=0.0, x=p.x + sp[0], y=p.y + sp[1], z=p.z + sp[2],
                 vx=p.vx + sv[0], vy=p.vy + sv[1], vz=p.vz + sv[2])
        o = bary.particles[1].orbit(primary=bary.particles[0])
        if o.e >= 1.0:
            continue
        deg = lambda x: math.degrees(x) % 360.0
        rows.append((f"obj{k}", a, e, inc, node, peri, m, epoch,
                     o.a, o.e, math.degrees(o.inc), deg(o.Omega), deg(o.omega), deg(o.M)))
    write("recenter.csv", ["id", "a_au", "e", "inc_deg", "node_deg", "argperi_deg",
                           "mean_anomaly_deg", "epoch_mjd", "bary_a_au", "bary_e",
                           "bary_inc_deg", "bary_node_deg", "bary_argperi_deg",
                           "bary_mean_anomaly_deg"], rows)


def neptune_longitude():
    rows = []
    gm = GM_SUN * (1.0 + 1.0 / RATIOS[7])
    for mjd in np.linspace(45000.0, 65000.0, 21):
        pos = lambda t: ecl(erfa.plan94(MJD0, float(t), 8)[0])
        r, v = pos(mjd), pos(mjd + 0.5) - pos(mjd - 0.5)
        sim = rebound.Simulation()
        sim.G = gm
        sim.add(m=1.0)
        sim.add(m=0.0, x=r[0], y=r[1], z=r[2], vx=v[0], vy=v[1], vz=v[2])
        o = sim.particles[1].orbit(primary=sim.particles[0])
        rows.append((float(mjd), math.degrees(o.l) % 360.0))
    write("neptune_longitude.csv", ["tdb_mjd", "mean_longitude_deg"], rows)


if __name__ == "__main__":
    os.makedirs(OUT, exist_ok=True)
    kde_weighted()
    vonmises()
    recenter()
    neptune_longitude()
