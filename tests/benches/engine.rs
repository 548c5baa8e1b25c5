//! Engine benchmark (run on demand: `cargo bench --bench engine -- [N_OBJECTS] [N_VISITS]`).
//!
//! A 3-year survey of an ecliptic band centred on opposition from the fictional Cerro Seine
//! Observatory: each night ~N_VISITS/900 visits in triplets an hour apart, 1°-radius fields
//! tiling ±10° of ecliptic latitude around the anti-Sun point; objects a scattered-disk-like
//! population (a 30–1000 AU log-uniform, q ≥ 30 AU, i < 40°). Prints wall time, objects per
//! second, candidates per in-field event. Figures go to notebooks-free-docs/performance.md.

use std::path::Path;
use std::time::Instant;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use seine::engine::{ObserveOptions, PreparedSurvey, observe};
use seine::io::Provenance;
use seine::io::objects::ObjectTable;
use seine::io::table::frame_f64;
use seine::sky::ephemeris::observer_states;
use seine::sky::frames::{ecliptic_to_radec, icrs_to_ecliptic, lon_lat};
use seine::survey::Survey;
use seine::time::TimeScale;

fn survey(dir: &Path, n_visits: usize) -> Survey {
    let nights = 900;
    let per_night = (n_visits / nights / 3).max(1);
    let mut rng = Pcg64::seed_from_u64(5);
    let mut csv = String::from("visit_id,mjd,ra_deg,dec_deg,band,depth_mag\n");
    let mut id = 0;
    for k in 0..nights {
        let t0 = 60676.1 + k as f64 * (1095.0 / nights as f64);
        let obs = observer_states(&[t0], TimeScale::Utc, None).unwrap()[0];
        let anti = icrs_to_ecliptic(&(obs.pos - obs.sun_pos));
        let (lon0, _) = lon_lat(&anti);
        for f in 0..per_night {
            let lon = lon0 + ((f % 20) as f64 - 10.0).to_radians() * 1.7;
            let lat = (((f / 20) as f64) * 1.7 - 10.0 + rng.random::<f64>()).to_radians();
            let (ra, dec) = ecliptic_to_radec(lon, lat);
            for rep in 0..3 {
                csv.push_str(&format!(
                    "{id},{},{},{},r,24.5\n",
                    t0 + 0.04 * rep as f64 + 0.001 * f as f64,
                    ra.to_degrees(),
                    dec.to_degrees()
                ));
                id += 1;
            }
        }
    }
    std::fs::write(dir.join("bench.csv"), csv).unwrap();
    let spec = "[survey]\nname = \"bench\"\nvisits = \"bench.csv\"\n[site]\nlongitude_deg = -70.45\nlatitude_deg = -30.35\nelevation_m = 2450.0\n[field]\nshape = \"circle\"\nradius_deg = 1.0\n[linking]\nmin_detections_per_night = 2\nmin_nights = 2\n";
    std::fs::write(dir.join("bench.toml"), spec).unwrap();
    Survey::load(&dir.join("bench.toml")).unwrap()
}

fn objects(n: usize) -> ObjectTable {
    let mut rng = Pcg64::seed_from_u64(6);
    let mut c: Vec<Vec<f64>> = vec![Vec::with_capacity(n); 9];
    for i in 0..n {
        let a = 30.0 * (1000f64 / 30.0).powf(rng.random::<f64>());
        let e = rng.random::<f64>() * (1.0 - 30.0 / a);
        let row = [
            i as f64,
            a,
            e,
            40.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            61000.0,
            4.0 + 6.0 * rng.random::<f64>(),
        ];
        for (col, v) in c.iter_mut().zip(row) {
            col.push(v);
        }
    }
    let names = [
        "id",
        "a_au",
        "e",
        "inc_deg",
        "node_deg",
        "argperi_deg",
        "mean_anomaly_deg",
        "epoch_mjd",
        "h_mag",
    ];
    ObjectTable::from_frame(
        frame_f64(names.iter().zip(c).map(|(n, v)| (*n, v)).collect()),
        Path::new("bench"),
    )
    .unwrap()
}

fn main() {
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let (n_obj, n_vis) = (
        args.first().copied().unwrap_or(100_000),
        args.get(1).copied().unwrap_or(100_000),
    );
    let dir = tempfile::tempdir().unwrap();
    let t = Instant::now();
    let s = survey(dir.path(), n_vis);
    let gen_s = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let prepared = vec![PreparedSurvey::new(s)];
    let prep_s = t.elapsed().as_secs_f64();
    println!("generated the visits in {gen_s:.2} s");
    let objs = objects(n_obj);
    let t = Instant::now();
    let report = observe(
        &prepared,
        &objs,
        &dir.path().join("out"),
        &ObserveOptions::default(),
        &Provenance::current(),
    )
    .unwrap();
    let run_s = t.elapsed().as_secs_f64();
    let s = &report.summary;
    println!(
        "objects {n_obj}, visits {}, threads {}: prepare {prep_s:.2} s, observe {run_s:.2} s ({:.0} objects/s), in-field events {}, candidates/event {:.2}, discovered {}",
        prepared[0].len(),
        rayon::current_num_threads(),
        s.objects_per_second,
        s.in_field_events,
        s.candidates_per_in_field_event,
        s.n_detected
    );
}
