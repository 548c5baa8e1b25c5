//! Astrometry benchmark (on demand: `cargo bench --bench astrometry`): light-time-corrected
//! apparent positions per second on one core, many objects at one epoch and one object at
//! many epochs. Figures go to notebooks-free-docs/performance.md.

use std::time::Instant;

use seine::orbit::{Center, Elements, Orbit};
use seine::sky::apparent::{direction, direction_from, observe};
use seine::sky::observer::observer_states;
use seine::time::TimeScale;

/// CPU seconds used by this process so far (user + system, from /proc; 10 ms ticks). The
/// machine is shared with builds: CPU time, not wall time, is what one core delivers.
fn cpu_seconds() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let fields: Vec<&str> = stat.rsplit(')').next().unwrap_or("").split_whitespace().collect();
    let ticks = |i: usize| fields.get(i).and_then(|f| f.parse::<f64>().ok()).unwrap_or(0.0);
    (ticks(11) + ticks(12)) / 100.0
}

fn main() {
    let n = 2_000_000;
    let orbits: Vec<Orbit> = (0..n)
        .map(|i| {
            let x = i as f64 / n as f64;
            Orbit::new(Elements {
                a_au: 40.0 + 900.0 * x,
                e: 0.9 * x,
                inc_rad: 3.0 * x,
                node_rad: 6.0 * x,
                argperi_rad: 1.0 + x,
                mean_anomaly_rad: 5.0 * x,
                epoch_mjd_tdb: 61000.0,
                center: Center::Heliocentric,
            })
        })
        .collect();
    let obs = observer_states(&[61100.0], TimeScale::Utc, None).unwrap()[0];
    let mut acc = 0.0;
    let rate = |label: &str, count: f64, f: &mut dyn FnMut()| {
        let (t, c) = (Instant::now(), cpu_seconds());
        f();
        let (wall, cpu) = (t.elapsed().as_secs_f64(), cpu_seconds() - c);
        println!(
            "{label}: {:.2} M/s wall, {:.2} M per CPU second",
            count / wall / 1e6,
            count / cpu / 1e6
        );
    };
    rate("many objects, one epoch, direction", n as f64, &mut || {
        for o in &orbits {
            acc += direction(o, &obs).x;
        }
    });
    rate(
        "many objects, one epoch, full observation (RA/Dec, r, Δ, phase, elongation, rate)",
        n as f64,
        &mut || {
            for o in &orbits {
                acc += observe(o, &obs).ra;
            }
        },
    );
    let epochs: Vec<f64> = (0..20_000).map(|k| 60000.0 + 0.1 * k as f64).collect();
    let states = observer_states(&epochs, TimeScale::Utc, None).unwrap();
    rate(
        "one object, many epochs, direction with the light time carried",
        2e6,
        &mut || {
            for _ in 0..100 {
                let mut tau = f64::NAN;
                for st in &states {
                    let (d, next) = direction_from(&orbits[12345], st, tau);
                    tau = next;
                    acc += d.y;
                }
            }
        },
    );
    println!("checksum {acc:.3}");
}
