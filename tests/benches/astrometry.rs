//! Astrometry benchmark (on demand: `cargo bench --bench astrometry`): light-time-corrected
//! apparent positions per second on one core, many objects at one epoch and one object at
//! many epochs. Figures go to notebooks-free-docs/performance.md.

use std::time::Instant;

use seine::orbit::{Center, Elements, Orbit};
use seine::sky::apparent::{direction, observe};
use seine::sky::ephemeris::observer_states;
use seine::time::TimeScale;

fn main() {
    let n = 2_000_000;
    let orbits: Vec<Orbit> = (0..n)
        .map(|i| {
            let x = i as f64 / n as f64;
            Orbit::new(Elements {
                a_au: 40.0 + 900.0 * x,
                e: 0.9 * x,
                inc: 3.0 * x,
                node: 6.0 * x,
                argperi: 1.0 + x,
                mean_anomaly: 5.0 * x,
                epoch_mjd_tdb: 61000.0,
                center: Center::Heliocentric,
            })
        })
        .collect();
    let obs = observer_states(&[61100.0], TimeScale::Utc, None).unwrap()[0];
    let t = Instant::now();
    let mut acc = 0.0;
    for o in &orbits {
        acc += direction(o, &obs).x;
    }
    let s = t.elapsed().as_secs_f64();
    println!("many objects, one epoch: {:.2} M directions/s/core", n as f64 / s / 1e6);
    let t = Instant::now();
    for o in &orbits {
        acc += observe(o, &obs).ra;
    }
    let s2 = t.elapsed().as_secs_f64();
    println!(
        "many objects, one epoch, full observation (RA/Dec, r, Δ, phase, rate): {:.2} M/s/core",
        n as f64 / s2 / 1e6
    );
    let epochs: Vec<f64> = (0..20_000).map(|k| 60000.0 + 0.1 * k as f64).collect();
    let states = observer_states(&epochs, TimeScale::Utc, None).unwrap();
    let t = Instant::now();
    for _ in 0..100 {
        for st in &states {
            acc += direction(&orbits[12345], st).y;
        }
    }
    let s3 = t.elapsed().as_secs_f64();
    println!(
        "one object, many epochs: {:.2} M directions/s/core (checksum {acc:.3})",
        2e6 / s3 / 1e6
    );
}
