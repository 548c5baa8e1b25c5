#!/usr/bin/env python3
"""Outside-reference fixture for the universal-variable two-body propagator
(src/orbit/universal.rs, checked in tests/numerics.rs).

    python tests/reference/make_conic_fixtures.py

Needs rebound only (pinned in requirements.txt); no network. Writes
tests/reference/fixtures/conic_states.csv: invented heliocentric states (AU, AU/day, any
frame) on ellipses, near-parabolic orbits on either side of e = 1 and hyperbolas, each
integrated by rebound's IAS15 (an adaptive 15th-order integrator, independent of any
Kepler solve; G = 1 and the primary's mass GM_sun = k^2 with Gauss's k, as in
src/foundation/constants.rs) forward and backward by steps from a day to ten years, with
exact_finish_time, printed to 17 digits.
"""

import csv
import math
import os

import rebound

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")
GM_SUN = 0.01720209895 ** 2

# (case, a_au or q_au for e >= 1, e, inc, node, argperi, true anomaly; degrees): invented.
CASES = [
    ("ellipse_distant", 250.0, 0.85, 17.0, 40.0, 150.0, 10.0),
    ("ellipse_mild", 44.0, 0.08, 3.0, 200.0, 20.0, 250.0),
    ("near_parabolic_bound", 40.0, 0.9999, 25.0, 100.0, 300.0, 5.0),
    ("near_parabolic_unbound", 40.0, 1.0001, 25.0, 100.0, 300.0, -5.0),
    ("hyperbola_mild", 35.0, 1.2, 8.0, 10.0, 80.0, 30.0),
    ("hyperbola_fast", 5.0, 3.0, 120.0, 300.0, 45.0, -60.0),
]
STEPS = [1.0, -1.0, 30.0, -30.0, 365.25, -365.25, 3652.5, -3652.5]


def initial_state(q_or_a, e, inc, node, argp, f):
    """Cartesian state from elements via rebound (a for e < 1, q = a(1 - e) given for e >= 1)."""
    sim = rebound.Simulation()
    sim.G = 1.0
    sim.add(m=GM_SUN)
    a = q_or_a if e < 1.0 else q_or_a / (1.0 - e)
    sim.add(primary=sim.particles[0], m=0.0, a=a, e=e, inc=math.radians(inc),
            Omega=math.radians(node), omega=math.radians(argp), f=math.radians(f))
    p = sim.particles[1]
    return (p.x, p.y, p.z, p.vx, p.vy, p.vz)


def propagate(state, dt):
    sim = rebound.Simulation()
    sim.G = 1.0
    sim.integrator = "ias15"
    sim.exact_finish_time = 1
    sim.add(m=GM_SUN)
    x, y, z, vx, vy, vz = state
    sim.add(m=0.0, x=x, y=y, z=z, vx=vx, vy=vy, vz=vz)
    # A massless particle about a fixed Sun: the Sun does not move (test particle).
    sim.N_active = 1
    sim.integrate(dt)
    p = sim.particles[1]
    s = sim.particles[0]
    return (p.x - s.x, p.y - s.y, p.z - s.z, p.vx - s.vx, p.vy - s.vy, p.vz - s.vz)


def main():
    rows = []
    for case, qa, e, inc, node, argp, f in CASES:
        s0 = initial_state(qa, e, inc, node, argp, f)
        for dt in STEPS:
            rows.append([case, *s0, dt, *propagate(s0, dt)])
    header = ["case", "x0_au", "y0_au", "z0_au", "vx0_au_per_day", "vy0_au_per_day",
              "vz0_au_per_day", "dt_days", "x_au", "y_au", "z_au", "vx_au_per_day",
              "vy_au_per_day", "vz_au_per_day"]
    with open(os.path.join(OUT, "conic_states.csv"), "w", newline="") as out:
        w = csv.writer(out, lineterminator="\n")
        w.writerow(header)
        for r in rows:
            w.writerow([("%.17g" % v) if isinstance(v, float) else v for v in r])


if __name__ == "__main__":
    main()
