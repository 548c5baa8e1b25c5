//! Orbit-fit benchmark (on demand: `cargo bench --bench fit [-- N]`): CPU milliseconds per
//! fitted object on one core, for long arcs (three oppositions, 36 detections), one season (30
//! detections) and one night (3 detections); then the wall time of N fits (default 10⁴, one
//! season each, the typical discovery) on every core, as `observe --fit-orbits` runs them.
//! Figures go to notebooks-free-docs/performance.md.

#[path = "../common/fit_scenario.rs"]
mod scenario;

use rand::SeedableRng;
use rand_pcg::Pcg64;
use scenario::*;
use seine::fit::{Observation, fit_orbit};
use seine::orbit::{Center, Orbit};

/// CPU seconds used by this process so far (user + system, from /proc; 10 ms ticks).
fn cpu_seconds() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let fields: Vec<&str> = stat.rsplit(')').next().unwrap_or("").split_whitespace().collect();
    let ticks = |i: usize| fields.get(i).and_then(|f| f.parse::<f64>().ok()).unwrap_or(0.0);
    (ticks(11) + ticks(12)) / 100.0
}

fn main() {
    let n = 300;
    let mut rng = Pcg64::seed_from_u64(7);
    let cases: [(&str, fn(f64) -> Vec<f64>); 3] = [
        ("three oppositions, 36 detections", long_arc),
        ("one season, 30 detections", one_season),
        ("one night, 3 detections", |b| schedule(b, &[0.0], 3)),
    ];
    for (label, epochs) in cases {
        let sets: Vec<Vec<Observation>> = (0..n)
            .map(|_| {
                let orbit = Orbit::new(draw_elements(&mut rng));
                observations(&orbit, &epochs(opposition_mjd(&orbit)), 0.1, Some(&mut rng))
            })
            .collect();
        let t0 = cpu_seconds();
        let mut iterations = 0;
        for obs in &sets {
            iterations += fit_orbit(obs, Center::Heliocentric).iterations;
        }
        let ms = (cpu_seconds() - t0) * 1000.0 / n as f64;
        println!(
            "{label}: {ms:.2} ms CPU per fit ({:.1} iterations on average, {n} fits)",
            iterations as f64 / n as f64
        );
    }
    many_in_parallel(&mut rng);
}

/// Fifteen nights over one season, two visits each.
fn one_season(base: f64) -> Vec<f64> {
    schedule(
        base,
        &[
            -60.0, -40.0, -20.0, -1.0, 0.0, 1.0, 20.0, 40.0, 60.0, 80.0, 81.0, 100.0, 120.0, 121.0, 130.0,
        ],
        2,
    )
}

/// N one-season fits in parallel (rayon, every core), wall time: the fitting part of
/// `observe --fit-orbits` on N discoveries.
fn many_in_parallel(rng: &mut Pcg64) {
    use rayon::prelude::*;
    let n: usize = std::env::args().skip(1).find_map(|a| a.parse().ok()).unwrap_or(10_000);
    // 500 distinct orbits (their observer states are the slow part of the set-up), each
    // measured afresh: N sets of independent noise.
    let truths: Vec<Vec<Observation>> = (0..500)
        .map(|_| {
            let orbit = Orbit::new(draw_elements(rng));
            observations(&orbit, &one_season(opposition_mjd(&orbit)), 0.1, None)
        })
        .collect();
    let sets: Vec<Vec<Observation>> = (0..n)
        .map(|k| {
            truths[k % truths.len()]
                .iter()
                .map(|o| Observation::measured(o.observer, o.night, &o.unit, o.sigma_rad, rng))
                .collect()
        })
        .collect();
    let (t0, c0) = (std::time::Instant::now(), cpu_seconds());
    let fitted = sets
        .par_iter()
        .filter(|obs| fit_orbit(obs, Center::Heliocentric).elements.is_some())
        .count();
    let (wall, cpu) = (t0.elapsed().as_secs_f64(), cpu_seconds() - c0);
    println!(
        "{n} one-season fits on {} threads: {wall:.1} s wall, {cpu:.1} s CPU ({:.2} ms CPU per fit), {fitted} with an orbit",
        rayon::current_num_threads(),
        cpu * 1000.0 / n as f64
    );
}
