//! The detection model: the live area as geometry (dead regions fixed in the turned focal
//! plane) against worked cases done by hand, the plain random loss against its own (cubed)
//! value, efficiencies per tracklet, tables in magnitudes and the bright limit.
//!
//! The hand values (all for stripes half dead: spacing p = 0.2°, width 0.1°, so the live set
//! along x is L = [p/4, 3p/4] modulo p; a source at x is detected at three visits when x, x + δ,
//! x + 2δ all lie in L, δ being its step modulo p between visits):
//! * a slow mover at one pointing (δ = 0): P = |L|/p = 1/2, the live fraction, not its cube;
//! * a fast mover crossing 2⅛ periods per step (δ = p/8): L ∩ (L − p/8) ∩ (L − p/4) =
//!   [p/4, p/2], P = 1/4, between the live fraction and its cube;
//! * a slow mover under dithers of 0, p/8, p/4 along x: the same 1/4 (a dither moves the gaps);
//! * a fast mover along the stripes (along y): P = 1/2;
//! * the random loss at 1/2: every event its own coin, P = 1/8.

mod common;

use std::path::Path;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use seine::engine::{Candidates, PreparedSurvey, StopRule, observe_object};
use seine::orbit::Orbit;
use seine::population::objects::ObjectTable;
use seine::rng::{Purpose, object_stream};
use seine::sky::apparent::observe;
use seine::sky::frames::lon_lat;
use seine::sky::observer::observer_states;
use seine::survey::Survey;
use seine::survey::footprint::from_focal_plane;
use seine::time::TimeScale;

const STRIPES: &str = "[[field.dead]]\nkind = \"stripes\"\nalong = \"x\"\nspacing_deg = 0.2\nwidth_deg = 0.1\n";
const CENTRE: (f64, f64, f64) = (150.0, 10.0, 30.0); // RA, Dec, rotation (deg)

/// A 2° × 2° rectangle survey with `extra` field keys and visits (mjd, ra, dec, rotation, dither_x, dither_y).
fn load(dir: &Path, name: &str, extra: &str, visits: &[(f64, f64, f64, f64, f64, f64)]) -> Survey {
    let mut csv = String::from("mjd,ra_deg,dec_deg,band,depth_mag,rotation_deg,dither_x_deg,dither_y_deg\n");
    for v in visits {
        csv.push_str(&format!("{},{},{},r,26.0,{},{},{}\n", v.0, v.1, v.2, v.3, v.4, v.5));
    }
    std::fs::write(dir.join(format!("{name}.csv")), csv).unwrap();
    let spec = format!(
        "[survey]\nname = \"{name}\"\nvisits = \"{name}.csv\"\n[field]\nshape = \"rectangle\"\nwidth_deg = 2.0\nheight_deg = 2.0\n{extra}"
    );
    let p = dir.join(format!("{name}.toml"));
    std::fs::write(&p, spec).unwrap();
    Survey::load(&p).unwrap_or_else(|e| panic!("{e}"))
}

/// Three visits of one pointing 1 h apart, with dithers along x.
fn triplet(dither_x: [f64; 3]) -> Vec<(f64, f64, f64, f64, f64, f64)> {
    let (ra, dec, rot) = CENTRE;
    (0..3)
        .map(|k| (60400.1 + k as f64 / 24.0, ra, dec, rot, dither_x[k], 0.0))
        .collect()
}

/// The fraction of sources found at all three visits, starting on a midpoint grid of
/// 4 stripe periods in x (and 5 rows in y), stepping `step` (focal-plane degrees) per visit.
/// `draws` gives each event's two uniforms (zeros: only the geometry decides).
fn found_fraction(s: &Survey, step: (f64, f64), mut draws: impl FnMut() -> (f64, f64)) -> f64 {
    found_fraction_at(s, step, 1.0, &mut draws)
}

/// As `found_fraction`, with detection probability `p` at every visit.
fn found_fraction_at(s: &Survey, step: (f64, f64), p: f64, draws: &mut dyn FnMut() -> (f64, f64)) -> f64 {
    let (ra, dec, rot) = CENTRE;
    let (nx, ny) = (1600, 5);
    let mut found = 0;
    for i in 0..nx {
        for j in 0..ny {
            let x0 = -0.9 + 0.8 * (i as f64 + 0.5) / nx as f64;
            let y0 = -0.5 + 0.2 * j as f64;
            let mut decide = s.decisions();
            let all = (0..3).all(|k| {
                let (x, y) = (x0 + k as f64 * step.0, y0 + k as f64 * step.1);
                let (a, d) = lon_lat(&from_focal_plane(ra.to_radians(), dec.to_radians(), rot, x, y));
                decide.detects(k, (a, d), p, draws())
            });
            found += all as usize;
        }
    }
    found as f64 / (nx * ny) as f64
}

#[test]
fn stripes_worked_cases_match_their_hand_values() {
    let dir = tempfile::tempdir().unwrap();
    let fixed = load(dir.path(), "fixed", STRIPES, &triplet([0.0; 3]));
    let none = || (0.0, 0.0);
    // The grid resolves L to 1/400 of a period: 0.01 covers the midpoint rule's error.
    let slow = found_fraction(&fixed, (0.0, 0.0), none);
    let fast = found_fraction(&fixed, (2.125 * 0.2, 0.0), none);
    let along = found_fraction(&fixed, (0.0, 0.3), none);
    let dithered = load(dir.path(), "dithered", STRIPES, &triplet([0.0, 0.025, 0.05]));
    let dither = found_fraction(&dithered, (0.0, 0.0), none);
    eprintln!("slow {slow}, fast across {fast}, fast along {along}, dithered {dither}");
    assert!(
        (slow - 0.5).abs() < 0.01,
        "slow mover: the live fraction 1/2, found {slow}"
    );
    assert!((fast - 0.25).abs() < 0.01, "fast mover across: 1/4, found {fast}");
    assert!(
        (along - 0.5).abs() < 0.01,
        "fast mover along the stripes: 1/2, found {along}"
    );
    assert!(
        (dither - 0.25).abs() < 0.01,
        "slow mover, dithered: 1/4, found {dither}"
    );
    // The mean live fraction over the 2° square: ten periods, half dead (gnomonic area weights
    // move it by well under 0.005).
    assert!((fixed.live_fraction - 0.5).abs() < 0.005, "{}", fixed.live_fraction);
}

#[test]
fn random_loss_cubes_over_a_triplet() {
    let dir = tempfile::tempdir().unwrap();
    let random = load(dir.path(), "random", "random_live_fraction = 0.5\n", &triplet([0.0; 3]));
    let mut rng = Pcg64::seed_from_u64(4);
    let p = found_fraction(&random, (0.0, 0.0), || (rng.random::<f64>(), rng.random::<f64>()));
    // 8000 sources: σ = √(1/8 · 7/8 / 8000) ≈ 0.0037; 4σ.
    assert!((p - 0.125).abs() < 4.0 * 0.0037, "random loss: 1/8, found {p}");
    assert_eq!(random.live_fraction, 0.5);
}

#[test]
fn dead_cells_lose_a_slow_mover_at_their_live_fraction() {
    let dir = tempfile::tempdir().unwrap();
    let cells = "[[field.dead]]\nkind = \"cells\"\nsize_deg = 0.05\nfraction = 0.3\nseed = 11\n";
    let s = load(dir.path(), "cells", cells, &triplet([0.0; 3]));
    // The sources cover 16 × 20 = 320 cells of the square; the footprint's mean covers 1600.
    // Both are the same pattern's live share, each within its own sampling of 0.7.
    let slow = found_fraction(&s, (0.0, 0.0), || (0.0, 0.0));
    eprintln!("cells: slow mover {slow}, mean live fraction {}", s.live_fraction);
    assert!(
        (s.live_fraction - 0.7).abs() < 4.0 * (0.21f64 / 1600.0).sqrt(),
        "{}",
        s.live_fraction
    );
    assert!(slow > 0.5 && slow < 0.9, "{slow}");
    // Cubing would give 0.34 or less.
    assert!(slow > 0.7f64.powi(3) + 0.1, "{slow}");
}

/// Distant, bright objects (a 300–600 AU, H = −6) each with its own pointing: a triplet 1 h apart
/// with the object somewhere inside the 2° square.
fn aimed(n: usize, seed: u64) -> (ObjectTable, Vec<(f64, f64, f64, f64, f64, f64)>) {
    let mut rng = Pcg64::seed_from_u64(seed);
    let df = common::objects_frame((0..n).map(|i| {
        [
            i as f64,
            300.0 + 300.0 * rng.random::<f64>(),
            0.05 * rng.random::<f64>(),
            20.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            60400.0,
            -6.0, // r ≈ 21.5 mag at 600 AU: far brighter than the depth (26)
        ]
    }));
    let objects = ObjectTable::from_frame(df, Path::new("aimed.csv")).unwrap();
    let mut visits = Vec::new();
    for i in 0..n {
        let t0 = 60400.1 + 2.0 * i as f64;
        let obs = observer_states(&[t0], TimeScale::Utc, None).unwrap();
        let a = observe(&Orbit::new(objects.elements[i]), &obs[0]);
        let (ra, dec) = (a.ra.to_degrees(), a.dec.to_degrees());
        let (dx, dy) = (rng.random::<f64>() - 0.5, rng.random::<f64>() - 0.5);
        let rot = 360.0 * rng.random::<f64>();
        let centre = (ra - 1.4 * dx / dec.to_radians().cos(), dec - 1.4 * dy);
        for k in 0..3 {
            visits.push((
                t0 + k as f64 / 24.0,
                centre.0.rem_euclid(360.0),
                centre.1,
                rot,
                0.0,
                0.0,
            ));
        }
    }
    (objects, visits)
}

/// Fraction of objects detected at all three visits of their own pointing (visits 3i..3i+2).
fn triplets_found(objects: &ObjectTable, survey: Survey, mode: Candidates) -> f64 {
    let surveys = [PreparedSurvey::new(survey)];
    let mut scratch = Vec::new();
    let found = (0..objects.len())
        .filter(|&i| {
            let rng = object_stream(3, objects.ids[i], Purpose::Observe);
            let out = observe_object(objects, i, &surveys, (mode, StopRule::Everything), rng, &mut scratch);
            let own = |e: &&seine::engine::Event| (e.visit as usize) / 3 == i;
            out.events.iter().filter(own).filter(|e| e.detected).count() == 3
        })
        .count();
    found as f64 / objects.len() as f64
}

#[test]
fn engine_finds_slow_movers_at_the_live_fraction_not_its_cube() {
    let dir = tempfile::tempdir().unwrap();
    let (objects, visits) = aimed(400, 21);
    let fixed = triplets_found(
        &objects,
        load(dir.path(), "gaps", STRIPES, &visits),
        Candidates::Indexed,
    );
    let brute = triplets_found(&objects, load(dir.path(), "gaps2", STRIPES, &visits), Candidates::All);
    let random = triplets_found(
        &objects,
        load(dir.path(), "coin", "random_live_fraction = 0.5\n", &visits),
        Candidates::Indexed,
    );
    eprintln!("400 slow movers at one pointing each: stripes {fixed}, random loss {random}");
    assert_eq!(fixed, brute, "index and brute force apply the same rule");
    // Binomial, n = 400: σ(1/2) = 0.025, σ(1/8) = 0.0165; 4σ.
    assert!((fixed - 0.5).abs() < 0.1, "stripes: 1/2, found {fixed}");
    assert!((random - 0.125).abs() < 0.066, "random loss: 1/8, found {random}");
}

#[test]
fn a_tracklet_efficiency_is_drawn_once_a_night() {
    let dir = tempfile::tempdir().unwrap();
    let per = |scope: &str| format!("[efficiency]\nmodel = \"step\"\nper = \"{scope}\"\n");
    let tracklet = load(dir.path(), "tracklet", &per("tracklet"), &triplet([0.0; 3]));
    let visit = load(dir.path(), "visit", &per("visit"), &triplet([0.0; 3]));
    let mut rng = Pcg64::seed_from_u64(8);
    let mut draws = || (rng.random::<f64>(), rng.random::<f64>());
    // An efficiency of 0.6: per tracklet a slow mover's night is found with 0.6; per visit
    // each of the three detections is its own draw, 0.6³ = 0.216. 8000 sources, 4σ.
    let t = found_fraction_at(&tracklet, (0.0, 0.0), 0.6, &mut draws);
    let v = found_fraction_at(&visit, (0.0, 0.0), 0.6, &mut draws);
    eprintln!("efficiency 0.6: per tracklet {t}, per visit {v}");
    assert!(
        (t - 0.6).abs() < 4.0 * (0.24f64 / 8000.0).sqrt(),
        "per tracklet: 0.6, found {t}"
    );
    assert!(
        (v - 0.216).abs() < 4.0 * (0.216f64 * 0.784 / 8000.0).sqrt(),
        "per visit: 0.216, found {v}"
    );
    // With stripes half dead as well, a slow mover's night: 0.6 × 1/2.
    let both = load(
        dir.path(),
        "both",
        &format!("{STRIPES}{}", per("tracklet")),
        &triplet([0.0; 3]),
    );
    let b = found_fraction_at(&both, (0.0, 0.0), 0.6, &mut draws);
    assert!(
        (b - 0.3).abs() < 4.0 * (0.21f64 / 8000.0).sqrt(),
        "tracklet × live fraction: 0.3, found {b}"
    );
}

#[test]
fn a_published_style_tracklet_table_loads_as_it_is() {
    let dir = tempfile::tempdir().unwrap();
    // Efficiency per tracklet on a grid of magnitude × rate, as a characterization tabulates
    // it (invented numbers), with a bright limit.
    let table = "[efficiency]\nmodel = \"table\"\nper = \"tracklet\"\nbright_limit_mag = 18.0\n\
                 magnitudes = [22.0, 24.0, 25.0, 26.0]\nrates = [0.5, 5.0]\n\
                 eta = [[0.9, 0.85], [0.8, 0.7], [0.4, 0.3], [0.0, 0.0]]\n";
    let s = load(dir.path(), "published", table, &triplet([0.0; 3]));
    let e = s.efficiency.for_class(0);
    assert_eq!(e.scope, seine::survey::efficiency::Scope::Tracklet);
    assert_eq!(
        e.trailing,
        seine::survey::efficiency::Trailing::NONE,
        "measured on trailed sources: no trailing loss"
    );
    // The visits' depth_mag (26) does not move a table in magnitudes: 24.5 at 0.5″/h is 0.6.
    assert!((s.p_detect(0, 24.5, 0.5) - 0.6).abs() < 1e-12);
    assert_eq!(s.p_detect(0, 17.9, 0.5), 0.0, "brighter than the bright limit");
    assert!(s.p_detect(0, 18.1, 0.5) > 0.85);
    // Both axes at once, or neither, are refused with the key named.
    for (bad, key) in [
        (
            table.replace("magnitudes =", "dm = [0.0, 1.0, 2.0, 3.0]\nmagnitudes ="),
            "efficiency.dm / efficiency.magnitudes",
        ),
        (
            table.replace("magnitudes = [22.0, 24.0, 25.0, 26.0]\n", ""),
            "efficiency.dm or efficiency.magnitudes",
        ),
        (table.replace("per = \"tracklet\"", "per = \"night\""), "efficiency.per"),
        (
            table.replace("bright_limit_mag = 18.0", "bright_limit_mag = 99.0"),
            "efficiency.bright_limit_mag",
        ),
    ] {
        let spec = format!(
            "[survey]\nname = \"bad\"\nvisits = \"published.csv\"\n[field]\nshape = \"circle\"\nradius_deg = 1.0\n{bad}"
        );
        let p = dir.path().join("bad.toml");
        std::fs::write(&p, spec).unwrap();
        let e = Survey::load(&p).expect_err("refused").to_string();
        assert!(e.contains(key), "{e}");
    }
}

#[test]
fn a_healpix_crowding_map_hides_its_cells_on_the_sky() {
    let dir = tempfile::tempdir().unwrap();
    let (ra, dec, _) = CENTRE;
    // Every order-3 cell (7.3°) wholly dead: every source hidden.
    let all: String = (0..768).map(|c| format!("{c},0.0\n")).collect();
    std::fs::write(dir.path().join("stars.csv"), format!("healpix,live_fraction\n{all}")).unwrap();
    let crowd = "[crowding]\nmodel = \"healpix\"\ntable = \"stars.csv\"\norder = 3\n";
    let s = load(dir.path(), "crowded", crowd, &triplet([0.0; 3]));
    assert_eq!(
        found_fraction(&s, (0.0, 0.0), || (0.0, 0.0)),
        0.0,
        "every source hidden"
    );
    // Only the cell opposite the field listed: the field's cells are left out, wholly live.
    let far = cdshealpix::nested::hash(3, (ra + 180.0).to_radians(), (-dec).to_radians());
    std::fs::write(
        dir.path().join("stars.csv"),
        format!("healpix,live_fraction\n{far},0.0\n"),
    )
    .unwrap();
    let s = load(dir.path(), "elsewhere", crowd, &triplet([0.0; 3]));
    assert_eq!(found_fraction(&s, (0.0, 0.0), || (0.0, 0.0)), 1.0);
    // A bad row is refused with the file, the row and the column named.
    std::fs::write(dir.path().join("stars.csv"), "healpix,live_fraction\n5,1.5\n").unwrap();
    let spec = dir.path().join("crowded.toml");
    let e = Survey::load(&spec).expect_err("refused").to_string();
    assert!(
        e.contains("stars.csv") && e.contains("live_fraction") && e.contains("row"),
        "{e}"
    );
}
