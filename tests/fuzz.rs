//! Fuzzing of the spec and table loaders as property tests: random bytes, random
//! TOML built from the specs' own keys and random values, and random CSV tables built from
//! the contract's columns and hostile cells. Each loader must return (Ok or a typed error),
//! never panic, and never hang (each case has a deadline). The default run is short (a few
//! seconds); a long run: `PROPTEST_CASES=20000 cargo test --release --test fuzz` (DEVELOPERS.md).
//! Mutated files: valid Parquet, CSV and TOML files of the project (the shipped examples and
//! a table written here) with bytes flipped, inserted, deleted, a stretch repeated or the end
//! cut off, through the same loaders.
//! Also property tests of the orbit maths (8.4): Kepler's equation over e in [0, 0.9999] and
//! element ↔ state round trips.

use std::path::Path;
use std::sync::mpsc;
use std::time::Duration;

use proptest::prelude::*;
use seine::orbit::kepler::{eccentric_anomaly, mean_from_eccentric};
use seine::orbit::{Center, Elements};
use seine::population::Spec;
use seine::population::objects::ObjectTable;
use seine::survey::Survey;
use seine::survey::planner::PlanFile;
use seine::survey::spec::parse_toml;
use seine::survey::visits::Visits;
use seine::time::TimeScale;

/// Run `f` on another thread; a panic or a run longer than the deadline fails the case.
fn within<F: FnOnce() + Send + 'static>(what: &str, f: F) {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let ok = std::panic::catch_unwind(std::panic::AssertUnwindSafe(f)).is_ok();
        let _ = tx.send(ok);
    });
    match rx.recv_timeout(Duration::from_secs(10)) {
        Ok(true) => {}
        Ok(false) => panic!("{what}: the loader panicked"),
        Err(_) => panic!("{what}: the loader did not return within 10 s"),
    }
}

fn cases() -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(400)
}

const KEYS: &[&str] = &[
    "name",
    "visits",
    "time_scale",
    "reference_band",
    "longitude_deg",
    "latitude_deg",
    "elevation_m",
    "shape",
    "radius_deg",
    "width_deg",
    "height_deg",
    "chips",
    "random_live_fraction",
    "dead",
    "kind",
    "along",
    "spacing_deg",
    "model",
    "peak",
    "width_mag",
    "fall_width_mag",
    "tail_width_mag",
    "dm",
    "rates",
    "eta",
    "trailing",
    "min_rate_arcsec_per_hr",
    "max_rate_arcsec_per_hr",
    "min_detections_per_night",
    "min_tracklet_span_min",
    "min_nights",
    "window_days",
    "epoch_mjd",
    "frame",
    "a_au",
    "q_au",
    "e",
    "inc_deg",
    "node_deg",
    "argperi_deg",
    "mean_anomaly_deg",
    "h_mag",
    "dist",
    "lo",
    "hi",
    "k",
    "sigma",
    "mean",
    "kappa",
    "value",
    "first_night",
    "last_night",
    "seed",
    "band",
    "objects",
    "clones",
    "aphelion_au",
    "radiu_deg",
];
const SECTIONS: &[&str] = &[
    "survey",
    "site",
    "field",
    "efficiency",
    "motion",
    "linking",
    "population",
    "orbit",
    "photometry",
    "constraints",
    "importance",
    "import",
    "plan",
    "region",
    "revisit",
    "depth",
    "efficiency.classes.deep",
];

/// A TOML value: numbers at the edges, strings, arrays, inline distributions, junk.
fn value() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        any::<f64>().prop_map(|x| format!("{x:?}")),
        any::<i64>().prop_map(|x| x.to_string()),
        Just("nan".to_string()),
        Just("inf".to_string()),
        Just("-inf".to_string()),
        Just("1e308".to_string()),
        Just("0".to_string()),
        Just("true".to_string()),
        "[a-z\\-]{0,12}".prop_map(|s| format!("\"{s}\"")),
        prop::sample::select(vec![
            "uniform",
            "power-law",
            "isotropic",
            "rayleigh",
            "von-mises",
            "knee",
            "fixed"
        ])
        .prop_map(|d| format!("\"{d}\"")),
    ];
    leaf.prop_recursive(3, 16, 4, |inner| {
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..4).prop_map(|v| format!("[{}]", v.join(", "))),
            prop::collection::vec((prop::sample::select(KEYS), inner), 0..4).prop_map(|kv| {
                let body: Vec<String> = kv.iter().map(|(k, v)| format!("{k} = {v}")).collect();
                format!("{{ {} }}", body.join(", "))
            }),
        ]
    })
}

/// A TOML-like document: sections and key = value lines, with some broken lines.
fn toml_text() -> impl Strategy<Value = String> {
    let line = prop_oneof![
        4 => (prop::sample::select(KEYS), value()).prop_map(|(k, v)| format!("{k} = {v}")),
        2 => prop::sample::select(SECTIONS).prop_map(|s| format!("[{s}]")),
        1 => "[ -~]{0,30}",
    ];
    prop::collection::vec(line, 0..24).prop_map(|l| l.join("\n"))
}

const COLUMNS: &[&str] = &[
    "id",
    "a_au",
    "e",
    "q_au",
    "inc_deg",
    "node_deg",
    "argperi_deg",
    "mean_anomaly_deg",
    "epoch_mjd",
    "h_mag",
    "beta_mag_per_deg",
    "hg_g",
    "color_g",
    "weight",
    "lc_amp_mag",
    "lc_period_hr",
    "frame",
    "mjd",
    "ra_deg",
    "dec_deg",
    "band",
    "depth_mag",
    "visit_id",
    "rotation_deg",
    "exposure_s",
    "seeing_arcsec",
    "efficiency_class",
    "junk",
];

fn cell() -> impl Strategy<Value = String> {
    prop_oneof![
        (-1e3f64..1e5).prop_map(|x| format!("{x}")),
        any::<f64>().prop_map(|x| format!("{x}")),
        any::<i64>().prop_map(|x| x.to_string()),
        prop::sample::select(vec![
            "",
            "NaN",
            "inf",
            "-inf",
            "r",
            "g",
            "heliocentric",
            "barycentric",
            "\"a,b\"",
            "1e400",
            "1e300",
            "-1e300",
            "1e-300",
            "5e-324",
            "1.7976931348623157e308",
            "12345678901234567890123"
        ])
        .prop_map(str::to_string),
        "[ -~]{0,8}".prop_map(|s| s.replace(['\n', '\r'], "")),
    ]
}

/// A CSV table: a header drawn from the contract's columns (plus junk), and rows of hostile cells.
fn csv_text() -> impl Strategy<Value = String> {
    (prop::collection::vec(prop::sample::select(COLUMNS), 1..14), 0usize..6).prop_flat_map(|(cols, rows)| {
        let width = cols.len();
        prop::collection::vec(prop::collection::vec(cell(), width..=width), rows..=rows).prop_map(move |body| {
            let mut t = cols.join(",");
            for r in body {
                t.push('\n');
                t.push_str(&r.join(","));
            }
            t
        })
    })
}

/// One edit of a file's bytes; positions are taken modulo the length.
#[derive(Debug, Clone)]
enum Mutation {
    Flip(usize, u8),
    Insert(usize, u8),
    Delete(usize, usize),
    Repeat(usize, usize),
    Truncate(usize),
}

fn mutations() -> impl Strategy<Value = Vec<Mutation>> {
    let one = prop_oneof![
        3 => (any::<usize>(), any::<u8>()).prop_map(|(p, b)| Mutation::Flip(p, b)),
        2 => (any::<usize>(), any::<u8>()).prop_map(|(p, b)| Mutation::Insert(p, b)),
        2 => (any::<usize>(), 1usize..64).prop_map(|(p, n)| Mutation::Delete(p, n)),
        1 => (any::<usize>(), 1usize..256).prop_map(|(p, n)| Mutation::Repeat(p, n)),
        1 => any::<usize>().prop_map(Mutation::Truncate),
    ];
    prop::collection::vec(one, 1..6)
}

fn mutate(mut bytes: Vec<u8>, edits: &[Mutation]) -> Vec<u8> {
    for m in edits {
        let len = bytes.len().max(1);
        match *m {
            Mutation::Flip(p, b) if !bytes.is_empty() => bytes[p % len] ^= b.max(1),
            Mutation::Insert(p, b) => bytes.insert(p % (bytes.len() + 1), b),
            Mutation::Delete(p, n) if !bytes.is_empty() => {
                let at = p % len;
                bytes.drain(at..(at + n).min(bytes.len()));
            }
            Mutation::Repeat(p, n) if !bytes.is_empty() => {
                let at = p % len;
                let piece: Vec<u8> = bytes[at..(at + n).min(bytes.len())].to_vec();
                bytes.splice(at..at, piece);
            }
            Mutation::Truncate(p) => bytes.truncate(p % len),
            _ => {}
        }
    }
    bytes
}

fn example(rel: &str) -> Vec<u8> {
    std::fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)).unwrap()
}

/// A valid objects table as Parquet bytes (written once per case: small).
fn parquet_objects() -> Vec<u8> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("o.parquet");
    let mut df = seine::io::table::read_table(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/populations/particles.csv"),
    )
    .unwrap();
    seine::io::write_table(&mut df, &path, &seine::io::Provenance::current()).unwrap();
    std::fs::read(&path).unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(), failure_persistence: None, ..ProptestConfig::default() })]

    /// Mutations of the shipped specs (population, survey, cadence plan) and of their tables.
    #[test]
    fn loaders_survive_mutated_files(which in 0usize..6, edits in mutations()) {
        let (name, rel) = [
            ("pop.toml", "survey-configs/populations/scattered-disk.toml"),
            ("pop.toml", "survey-configs/populations/clone-particles.toml"),
            ("survey.toml", "survey-configs/deep.survey.toml"),
            ("plan.toml", "survey-configs/deep-plan.toml"),
            ("objects.csv", "survey-configs/populations/particles.csv"),
            ("visits.csv", "survey-configs/deep.csv"),
        ][which];
        let dir = tempfile::tempdir().unwrap();
        for (n, r) in [("deep.csv", "survey-configs/deep.csv"), ("particles.csv", "survey-configs/populations/particles.csv")] {
            std::fs::write(dir.path().join(n), example(r)).unwrap();
        }
        let bytes = mutate(example(rel), &edits);
        let path = dir.path().join(name);
        std::fs::write(&path, &bytes).unwrap();
        let text = String::from_utf8_lossy(&bytes).into_owned();
        match name {
            "pop.toml" => within("mutated population spec", move || { let _ = Spec::read(&path); }),
            "survey.toml" => within("mutated survey spec", move || { let _ = Survey::load(&path); }),
            "plan.toml" => within("mutated cadence plan", move || { let _ = parse_toml::<PlanFile>(&text, Path::new("plan.toml")); }),
            "objects.csv" => within("mutated objects table", move || { let _ = ObjectTable::read(&path); }),
            _ => within("mutated visits table", move || { let _ = Visits::read(&path, TimeScale::Utc, None); }),
        }
    }

    /// Mutations of a valid Parquet objects table: read whole, in shards, and its metadata.
    #[test]
    fn parquet_loaders_survive_mutated_files(edits in mutations()) {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("objects.parquet");
        std::fs::write(&path, mutate(parquet_objects(), &edits)).unwrap();
        within("mutated parquet table", {
            let p = path.clone();
            move || { let _ = ObjectTable::read(&p); }
        });
        within("mutated parquet shard", {
            let p = path.clone();
            move || { let _ = seine::population::objects::ObjectSource::parquet(&p, Some((1, 2))); }
        });
        within("mutated parquet metadata", move || { let _ = seine::io::table::read_provenance(&path); });
    }

    #[test]
    fn spec_loaders_survive_random_toml(text in toml_text()) {
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(dir.path().join("visits.csv"), "mjd,ra_deg,dec_deg,band,depth_mag\n61000.1,10,-5,r,24\n").unwrap();
        let path = dir.path().join("spec.toml");
        std::fs::write(&path, &text).unwrap();
        within("population spec", {
            let (t, p) = (text.clone(), path.clone());
            move || { let _ = Spec::parse(&t, &p); }
        });
        within("survey spec", { let p = path.clone(); move || { let _ = Survey::load(&p); } });
        within("cadence plan", move || { let _ = parse_toml::<PlanFile>(&text, Path::new("plan.toml")); });
    }

    #[test]
    fn spec_loaders_survive_random_bytes(bytes in prop::collection::vec(any::<u8>(), 0..400)) {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("spec.toml");
        std::fs::write(&path, &bytes).unwrap();
        within("population spec (bytes)", { let p = path.clone(); move || { let _ = Spec::read(&p); } });
        within("survey spec (bytes)", move || { let _ = Survey::load(&path); });
    }

    #[test]
    fn table_loaders_survive_random_csv(text in csv_text()) {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("table.csv");
        std::fs::write(&path, &text).unwrap();
        within("objects table", { let p = path.clone(); move || { let _ = ObjectTable::read(&p); } });
        within("visits table", move || { let _ = Visits::read(&path, TimeScale::Utc, None); });
    }

    /// Kepler's equation is solved to near machine precision over the whole range of e.
    #[test]
    fn kepler_solution_satisfies_the_equation(m in -20.0f64..20.0, e in 0.0f64..=0.9999) {
        let big_e = eccentric_anomaly(m, e);
        let back = mean_from_eccentric(big_e, e);
        let d = (back - m).rem_euclid(std::f64::consts::TAU);
        let d = d.min(std::f64::consts::TAU - d);
        prop_assert!(d < 1e-12, "M = {m}, e = {e}: residual {d}");
    }

    /// Elements → state → elements → state gives back the same position and velocity.
    #[test]
    fn elements_state_round_trip(a in 1.0f64..5000.0, e in 0.0f64..0.999, inc in 0.0f64..3.14159,
                                 node in 0.0f64..6.2831, argperi in 0.0f64..6.2831, m in 0.0f64..6.2831) {
        let el = Elements { a_au: a, e, inc_rad: inc, node_rad: node, argperi_rad: argperi, mean_anomaly_rad: m, epoch_mjd_tdb: 61000.0, center: Center::Heliocentric };
        let (r, v) = el.to_state();
        let (r2, v2) = Elements::from_state(&r, &v, 61000.0, Center::Heliocentric).to_state();
        prop_assert!((r2 - r).norm() <= 1e-9 * r.norm(), "position: {} vs {}", r2, r);
        prop_assert!((v2 - v).norm() <= 1e-9 * v.norm(), "velocity: {} vs {}", v2, v);
    }
}

/// Every single-byte change of a valid Parquet objects table (three patterns per byte: the low
/// bit, which turns a zigzag-coded count negative, the high bit, which lengthens a varint, and
/// all bits) is read or refused: none panics or aborts the process. Deterministic, unlike the
/// random cases above: a damaged page header claiming a negative value count once aborted the
/// process on an allocation of 2^61 bytes inside the Parquet decoder.
#[test]
fn every_single_byte_change_of_a_parquet_table_is_read_or_refused() {
    let valid = parquet_objects();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("objects.parquet");
    let mut refused = 0;
    for at in 0..valid.len() {
        for pattern in [0x01u8, 0x80, 0xff] {
            let mut bytes = valid.clone();
            bytes[at] ^= pattern;
            std::fs::write(&path, &bytes).unwrap();
            let p = path.clone();
            let read = std::panic::catch_unwind(move || ObjectTable::read(&p).is_ok());
            match read {
                Ok(true) => {}
                Ok(false) => refused += 1,
                Err(_) => {
                    let kept = std::env::temp_dir().join("seine-fuzz-failure.parquet");
                    std::fs::write(&kept, &bytes).unwrap();
                    panic!(
                        "byte {at} ^ {pattern:#04x}: the Parquet reader panicked (file kept: {})",
                        kept.display()
                    )
                }
            }
        }
    }
    // The checks above would pass on a reader that refuses nothing; a reader that notices
    // nothing of the damage would fail here.
    assert!(
        refused > valid.len(),
        "only {refused} of {} damaged files were refused",
        3 * valid.len()
    );
}
