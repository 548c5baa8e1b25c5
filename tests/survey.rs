//! Survey model and planner: checks against outside references (each named beside it),
//! invariants of the footprints, and bad inputs through the binary.

use std::path::{Path, PathBuf};
use std::process::Command;

use nalgebra::{Rotation3, Unit, Vector3};
use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;

use seine::sky::earth::earth_sun_exact;
use seine::sky::frames::unit_vector;
use seine::sky::horizon::{LocalSky, airmass_kasten_young, airmass_secz, dark_interval, sun_altitude};
use seine::sky::observer::Site;
use seine::survey::Survey;
use seine::survey::footprint::{Footprint, from_focal_plane};
use seine::time::MjdUtc;

const DEG: f64 = std::f64::consts::PI / 180.0;

/// The site of the astropy fixtures (tests/reference/site.toml).
fn fixture_site() -> Site {
    Site {
        longitude_deg: 19.3,
        latitude_deg: 20.6,
        elevation_m: 2350.0,
    }
}

fn read_csv(name: &str) -> Vec<Vec<f64>> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference/fixtures")
        .join(name);
    let text = std::fs::read_to_string(&path).unwrap();
    text.lines()
        .skip(1)
        .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
        .collect()
}

#[test]
fn sun_altitude_matches_astropy() {
    // Source: astropy AltAz (pressure 0, UT1 = UTC), tests/reference/fixtures/sun_altaz.csv.
    let site = fixture_site();
    let mut worst: f64 = 0.0;
    for row in read_csv("sun_altaz.csv") {
        let alt = sun_altitude(&site, MjdUtc(row[0])).unwrap() / DEG;
        worst = worst.max((alt - row[1]).abs());
    }
    assert!(worst < 0.01, "worst Sun altitude difference {worst}°");
    eprintln!("Sun altitude vs astropy: worst {:.5}°", worst);
}

#[test]
fn field_altitude_and_airmass_match_astropy() {
    // Source: astropy AltAz and AltAz.secz; Kasten & Young (1989) computed in numpy from
    // astropy's zenith angle (tests/reference/fixtures/sun_altaz.csv).
    let site = fixture_site();
    let (mut worst_alt, mut worst_x): (f64, f64) = (0.0, 0.0);
    for row in read_csv("sun_altaz.csv") {
        let (utc, ra, dec, alt_ref, secz_ref, ky_ref) = (row[0], row[2], row[3], row[4], row[5], row[6]);
        let utc = MjdUtc(utc);
        let sky = LocalSky::new(&site, utc, &earth_sun_exact(utc.to_tdb().unwrap().0)).unwrap();
        let alt = sky.altitude(&unit_vector(ra * DEG, dec * DEG));
        worst_alt = worst_alt.max((alt / DEG - alt_ref).abs());
        // The formulas themselves, at astropy's altitude: exact agreement expected.
        assert!((airmass_secz(alt_ref * DEG) / secz_ref - 1.0).abs() < 1e-9);
        assert!((airmass_kasten_young(alt_ref * DEG) / ky_ref - 1.0).abs() < 1e-9);
        if alt_ref > 15.0 {
            worst_x = worst_x.max((airmass_kasten_young(alt) / ky_ref - 1.0).abs());
        }
    }
    assert!(worst_alt < 0.02, "worst field altitude difference {worst_alt}°");
    assert!(worst_x < 2e-3, "worst relative airmass difference {worst_x}");
    eprintln!("field altitude vs astropy: worst {worst_alt:.5}°; Kasten–Young airmass above 15°: worst {worst_x:.2e}");
}

#[test]
fn twilight_times_match_astropy() {
    // Source: scipy brentq on astropy's Sun altitude = −18° (tests/reference/fixtures/twilight.csv).
    let site = fixture_site();
    let mut worst: f64 = 0.0;
    for row in read_csv("twilight.csv") {
        let (dusk, dawn) = dark_interval(&site, row[0] as i64, -18.0, |t| sun_altitude(&site, MjdUtc(t)))
            .unwrap()
            .unwrap();
        worst = worst.max((dusk - row[1]).abs()).max((dawn - row[2]).abs());
    }
    assert!(
        worst * 86400.0 < 10.0,
        "worst twilight difference {} s",
        worst * 86400.0
    );
    eprintln!("astronomical twilight vs astropy: worst {:.2} s", worst * 86400.0);
}

/// Uniform directions in a cap of radius `r` about `c` (rad); returns (direction, cap solid angle).
fn cap_samples(c: &Vector3<f64>, r: f64, n: usize, rng: &mut Pcg64) -> (Vec<Vector3<f64>>, f64) {
    let axis = if c.z.abs() < 0.9 { Vector3::z() } else { Vector3::x() };
    let e1 = c.cross(&axis).normalize();
    let e2 = c.cross(&e1);
    let pts = (0..n)
        .map(|_| {
            let cz = 1.0 - rng.random::<f64>() * (1.0 - r.cos());
            let phi = rng.random::<f64>() * std::f64::consts::TAU;
            let s = (1.0 - cz * cz).sqrt();
            c * cz + e1 * (s * phi.cos()) + e2 * (s * phi.sin())
        })
        .collect();
    (pts, std::f64::consts::TAU * (1.0 - r.cos()))
}

fn mc_area_sq_deg(fp: &Footprint, ra: f64, dec: f64, rot: f64, n: usize, seed: u64) -> f64 {
    let mut rng = Pcg64::seed_from_u64(seed);
    let c = unit_vector(ra, dec);
    let (pts, cap) = cap_samples(&c, fp.bounding_radius_rad() * 1.05, n, &mut rng);
    let inside = pts.iter().filter(|d| fp.contains(ra, dec, rot, d)).count();
    inside as f64 / n as f64 * cap / (DEG * DEG)
}

#[test]
fn circle_area_is_the_spherical_cap() {
    // Source: the area of a spherical cap, 2π(1 − cos r) (any spherical geometry text).
    for &r in &[0.5, 2.0, 10.0] {
        let fp = Footprint::Circle { radius_deg: r };
        let exact = std::f64::consts::TAU * (1.0 - (r * DEG).cos()) / (DEG * DEG);
        assert!((fp.area_sq_deg() / exact - 1.0).abs() < 1e-12);
        let mc = mc_area_sq_deg(&fp, 1.0, -0.4, 0.0, 200_000, 1);
        assert!((mc / exact - 1.0).abs() < 0.01, "r = {r}: MC {mc} vs {exact}");
    }
}

fn four_chip_mosaic() -> Footprint {
    // 2 × 2 chips of 0.9° × 0.45° with 0.05° gaps, one chip missing a corner (a pentagon).
    let chip = |x0: f64, y0: f64| vec![(x0, y0), (x0 + 0.9, y0), (x0 + 0.9, y0 + 0.45), (x0, y0 + 0.45)];
    let mut c = vec![chip(-0.925, -0.475), chip(0.025, -0.475), chip(-0.925, 0.025)];
    c.push(vec![
        (0.025, 0.025),
        (0.925, 0.025),
        (0.925, 0.3),
        (0.8, 0.475),
        (0.025, 0.475),
    ]);
    Footprint::Mosaic { chips: c }
}

fn shoelace(p: &[(f64, f64)]) -> f64 {
    (0..p.len())
        .map(|i| p[i].0 * p[(i + 1) % p.len()].1 - p[(i + 1) % p.len()].0 * p[i].1)
        .sum::<f64>()
        .abs()
        / 2.0
}

#[test]
fn mosaic_area_is_the_sum_of_its_chips() {
    // Source: plane polygon areas (shoelace formula); a 1° field is flat to ~1e-4 (gnomonic small-field).
    let fp = four_chip_mosaic();
    let Footprint::Mosaic { chips } = &fp else {
        unreachable!()
    };
    let plane: f64 = chips.iter().map(|p| shoelace(p)).sum();
    assert!((fp.area_sq_deg() / plane - 1.0).abs() < 1e-3);
    let mc = mc_area_sq_deg(&fp, 4.0, 0.3, 37.0, 300_000, 2);
    assert!((mc / plane - 1.0).abs() < 0.01, "MC {mc} vs chips {plane}");
    // The gaps are outside: the centre (in the cross of gaps) is not covered.
    assert!(!fp.contains(4.0, 0.3, 37.0, &unit_vector(4.0, 0.3)));
}

#[test]
fn rectangle_area_exact_and_by_monte_carlo() {
    // Source: solid angle of a gnomonic rectangle, 4 atan(AB / √(1 + A² + B²)), checked by Monte Carlo.
    let fp = Footprint::Rectangle {
        width_deg: 6.0,
        height_deg: 3.0,
    };
    let mc = mc_area_sq_deg(&fp, 2.0, 1.2, 20.0, 300_000, 3);
    assert!((mc / fp.area_sq_deg() - 1.0).abs() < 0.01);
}

#[test]
fn containment_is_invariant_under_rotation() {
    // Turning the footprint by θ (position angle, north through east) and the test point about
    // the centre by the same angle leaves containment unchanged. A PA increase is a rotation by
    // −θ about the outward centre direction (east is to the left of north on the sky).
    let mut rng = Pcg64::seed_from_u64(4);
    let shapes = [
        Footprint::Rectangle {
            width_deg: 3.0,
            height_deg: 1.0,
        },
        four_chip_mosaic(),
    ];
    for fp in &shapes {
        let mut n_in = 0;
        for _ in 0..5000 {
            let ra = rng.random::<f64>() * std::f64::consts::TAU;
            let dec = (rng.random::<f64>() * 2.0 - 1.0).asin();
            let theta = rng.random::<f64>() * 360.0;
            let c = unit_vector(ra, dec);
            let d = from_focal_plane(
                ra,
                dec,
                0.0,
                rng.random::<f64>() * 4.0 - 2.0,
                rng.random::<f64>() * 4.0 - 2.0,
            );
            let turned = Rotation3::from_axis_angle(&Unit::new_normalize(c), -theta * DEG) * d;
            let a = fp.contains(ra, dec, 0.0, &d);
            assert_eq!(a, fp.contains(ra, dec, theta, &turned));
            n_in += a as usize;
        }
        assert!(n_in > 100, "the test must include inside points");
    }
}

#[test]
fn ra_wraps_and_poles_work() {
    let circle = Footprint::Circle { radius_deg: 0.5 };
    let rect = Footprint::Rectangle {
        width_deg: 1.0,
        height_deg: 1.0,
    };
    let (ra, dec) = (359.9 * DEG, 0.0);
    for fp in [&circle, &rect] {
        assert!(
            fp.contains(ra, dec, 0.0, &unit_vector(0.3 * DEG, 0.0)),
            "across RA 0/360"
        );
        assert!(!fp.contains(ra, dec, 0.0, &unit_vector(0.5 * DEG, 0.0)));
        assert!(!fp.contains(ra, dec, 0.0, &unit_vector(359.3 * DEG, 0.0)));
    }
    // At the north pole every RA at dec 89.7° lies within 0.3°; the rectangle's corners reach 0.707°.
    for k in 0..36 {
        let d = unit_vector(k as f64 * 10.0 * DEG, 89.7 * DEG);
        assert!(circle.contains(0.0, 90.0 * DEG, 0.0, &d));
        assert!(rect.contains(1.0, 90.0 * DEG, 45.0, &d));
        assert!(rect.contains(0.0, -90.0 * DEG, 0.0, &unit_vector(k as f64 * 10.0 * DEG, -89.7 * DEG)));
    }
    assert!(!circle.contains(0.0, 90.0 * DEG, 0.0, &unit_vector(0.0, 89.4 * DEG)));
}

// ---------- specs and visits through the library and the binary ----------

fn tmpdir() -> tempfile::TempDir {
    tempfile::tempdir().unwrap()
}

const SPEC: &str = r#"
[survey]
name = "test survey"
visits = "visits.csv"
[site]
longitude_deg = 19.3
latitude_deg = 20.6
elevation_m = 2350.0
[field]
shape = "circle"
radius_deg = 1.0
[efficiency]
model = "logistic"
peak = 0.9
width_mag = 0.3
[efficiency.classes.deep]
model = "tanh-product"
fall_width_mag = 0.2
tail_width_mag = 0.5
peak = 0.8
[motion]
min_rate_arcsec_per_hr = 0.1
max_rate_arcsec_per_hr = 100.0
"#;

const VISITS: &str = "visit_id,mjd,ra_deg,dec_deg,band,depth_mag,exposure_s,seeing_arcsec,efficiency_class
3,61000.30,10.0,-5.0,r,24.0,0,1.0,wide
1,61000.10,10.0,-5.0,r,24.5,300,1.0,deep
2,61000.10,12.0,-5.0,g,23.5,300,1.0,wide
";

fn write_spec(dir: &Path, spec: &str, visits: &str) -> PathBuf {
    std::fs::write(dir.join("visits.csv"), visits).unwrap();
    let p = dir.join("survey.toml");
    std::fs::write(&p, spec).unwrap();
    p
}

#[test]
fn survey_loads_sorts_and_detects() {
    let dir = tmpdir();
    let s = Survey::load(&write_spec(dir.path(), SPEC, VISITS)).unwrap();
    assert_eq!(s.visits.visit_id, vec![1, 2, 3], "sorted by (mjd, visit_id)");
    assert_eq!(s.visits.band_names, vec!["r", "g"]);
    // Night from local noon: floor(61000.1 + 19.3/360 − 0.5) = 60999.
    assert_eq!(s.visits.night, vec![60999, 60999, 60999]);
    assert_eq!(s.reference_band, "r");
    // Logistic at its depth: peak/2 (no exposure on visit 3, so no trailing).
    assert!((s.p_detect(2, 24.0, 1.0) - 0.45).abs() < 1e-12);
    // The deep class's tanh product at its depth with no trailing (rate 0.1, tiny trail): ≈ 0.8/2.
    assert!((s.p_detect(0, 24.5, 0.1) - 0.4).abs() < 1e-3);
    assert_eq!(s.p_detect(2, 10.0, 0.05), 0.0, "below the rate window");
    assert_eq!(s.p_detect(2, 10.0, 150.0), 0.0, "above the rate window");
    // Trailing (Vereš & Chesley 2017 detection loss, a = 0.42, b = 0.003): 12″/h × 300 s = 1″
    // = 1 FWHM → Δm = 1.25 log10(1 + 0.42/1.003).
    let dm = 1.25 * (1.0 + 0.42 / 1.003f64).log10();
    let expect = 0.9 / (1.0 + (dm / 0.3f64).exp());
    assert!((s.p_detect(1, 23.5, 12.0) - expect).abs() < 1e-12);
}

fn seine(args: &[&str]) -> (i32, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_seine")).args(args).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A bad survey spec or visits table: exit status 2, one line naming the problem, no output.
fn assert_bad_survey(spec: &str, visits: &str, expect: &[&str]) {
    let dir = tmpdir();
    let p = write_spec(dir.path(), spec, visits);
    let out = dir.path().join("report.coverage.json");
    let (code, err) = seine(&["plan", "--survey", p.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert_eq!(err.trim().lines().count(), 1, "one message: {err}");
    for e in expect {
        assert!(err.contains(e), "expected `{e}` in: {err}");
    }
    assert!(
        !out.exists() && !dir.path().join("report.moc.json").exists(),
        "no output on error"
    );
}

#[test]
fn mosaic_spec_loads_and_refuses_a_live_fraction() {
    let mosaic = "shape = \"mosaic\"\nchips = [[[-0.5, -0.5], [0.5, -0.5], [0.5, 0.0], [-0.5, 0.0]], [[-0.5, 0.05], [0.5, 0.05], [0.5, 0.5]]]";
    let spec = SPEC.replace("shape = \"circle\"\nradius_deg = 1.0", mosaic);
    let dir = tmpdir();
    let s = Survey::load(&write_spec(dir.path(), &spec, VISITS)).unwrap();
    assert_eq!(s.live_fraction, 1.0);
    assert!((s.footprint.area_sq_deg() - 0.5 - 0.225).abs() < 1e-3);
    assert_bad_survey(
        &format!("{spec}").replace("[efficiency]", "random_live_fraction = 0.9\n[efficiency]"),
        VISITS,
        &["field.random_live_fraction"],
    );
    assert_bad_survey(
        &spec.replace("[0.5, 0.5]]]", "[0.5, 0.5], [0.4, 1e9]]]"),
        VISITS,
        &["field.chips[1]"],
    );
}

#[test]
fn bad_visits_tables_name_the_row() {
    let head = "visit_id,mjd,ra_deg,dec_deg,band,depth_mag\n";
    assert_bad_survey(
        SPEC,
        &format!("{head}1,61000.1,10,0,r,24\n1,61000.2,10,0,r,24\n"),
        &["row 2", "visit_id", "first at row 1"],
    );
    assert_bad_survey(
        SPEC,
        &format!("{head}1,61000.1,10,0,r,24\n2,NaN,10,0,r,24\n"),
        &["row 2", "`mjd`"],
    );
    assert_bad_survey(
        SPEC,
        &format!("{head}1,61000.1,360,0,r,24\n"),
        &["row 1", "ra_deg", "[0, 360)"],
    );
    assert_bad_survey(
        SPEC,
        &format!("{head}1,61000.1,10,0,r,24\n2,61000.1,10,-91,r,24\n"),
        &["row 2", "dec_deg"],
    );
    assert_bad_survey(SPEC, &format!("{head}1,61000.1,10,0,r,99\n"), &["row 1", "depth_mag"]);
    assert_bad_survey(
        SPEC,
        "mjd,ra_deg,dec_deg,band\n61000.1,10,0,r\n",
        &["missing required column `depth_mag`"],
    );
}

#[test]
fn bad_specs_name_the_key() {
    let v = VISITS;
    assert_bad_survey(
        &SPEC.replace("radius_deg = 1.0", "radius = 1.0"),
        v,
        &["line 11", "unknown field `radius`", "did you mean `radius_deg`?"],
    );
    assert_bad_survey(
        &SPEC.replace("shape = \"circle\"", "shape = \"hexagon\""),
        v,
        &["field.shape"],
    );
    assert_bad_survey(
        &SPEC.replace("model = \"logistic\"", "model = \"sigmoid\""),
        v,
        &["efficiency.model"],
    );
    assert_bad_survey(
        &SPEC.replace("width_mag = 0.3", "width_mag = -0.3"),
        v,
        &["efficiency.width_mag"],
    );
    assert_bad_survey(
        &SPEC.replace("fall_width_mag = 0.2", ""),
        v,
        &["efficiency.classes.deep.fall_width_mag"],
    );
    assert_bad_survey(
        &SPEC.replace("[efficiency.classes.deep]", "[efficiency.classes.shallow]"),
        v,
        &["efficiency.classes.shallow", "no visit has efficiency class"],
    );
    assert_bad_survey(
        &SPEC.replace("max_rate_arcsec_per_hr = 100.0", "max_rate_arcsec_per_hr = 0.01"),
        v,
        &["motion"],
    );
    assert_bad_survey(
        &SPEC.replace("latitude_deg = 20.6", "latitude_deg = -130.35"),
        v,
        &["site.latitude_deg"],
    );
    assert_bad_survey(
        &SPEC.replace("name = \"test survey\"", "name = \"x\"\ntime_scale = \"gps\""),
        v,
        &["line 4", "`gps`", "utc"],
    );
}

// ---------- the planner ----------

fn random_plan(rng: &mut Pcg64, k: usize) -> String {
    let u = |rng: &mut Pcg64, a: f64, b: f64| a + (b - a) * rng.random::<f64>();
    let first = 60700 + (rng.random::<f64>() * 3600.0) as i64;
    let lat_lo = u(rng, -30.0, 10.0);
    let region = if k % 2 == 0 {
        format!(
            "mode = \"opposition\"\nopposition_half_width_deg = {}",
            u(rng, 10.0, 90.0)
        )
    } else {
        let lon = u(rng, 0.0, 360.0);
        format!(
            "mode = \"fixed\"\necliptic_lon_min_deg = {lon}\necliptic_lon_max_deg = {}",
            (lon + u(rng, 5.0, 200.0)) % 360.0
        )
    };
    let field = if k % 3 == 0 {
        format!("shape = \"circle\"\nradius_deg = {}", u(rng, 0.5, 3.0))
    } else {
        format!(
            "shape = \"rectangle\"\nwidth_deg = {}\nheight_deg = {}",
            u(rng, 0.5, 4.0),
            u(rng, 0.5, 4.0)
        )
    };
    format!(
        r#"[plan]
name = "random {k}"
first_night = {first}
last_night = {}
seed = {k}
sun_alt_max_deg = {}
exposure_s = {}
overhead_s = {}
max_airmass = {}
min_solar_elongation_deg = {}
weather_loss = {}
[site]
longitude_deg = {}
latitude_deg = {}
elevation_m = 1000.0
[field]
{field}
[region]
{region}
ecliptic_lat_min_deg = {lat_lo}
ecliptic_lat_max_deg = {}
avoid_galactic_lat_deg = {}
[revisit]
visits_per_night = {}
spacing_min = {}
every_nights = {}
[depth]
zenith_mag = 24.0
extinction_mag_per_airmass = 0.15
moon = {}
min_moon_separation_deg = {}
"#,
        first + 1 + (rng.random::<f64>() * 6.0) as i64,
        u(rng, -20.0, -6.0),
        u(rng, 20.0, 300.0),
        u(rng, 0.0, 60.0),
        u(rng, 1.1, 3.0),
        u(rng, 30.0, 170.0),
        u(rng, 0.0, 0.5),
        u(rng, -180.0, 180.0),
        u(rng, -70.0, 70.0),
        lat_lo + u(rng, 2.0, 40.0),
        u(rng, 0.0, 20.0),
        1 + (rng.random::<f64>() * 4.0) as usize,
        u(rng, 0.0, 90.0),
        1 + (rng.random::<f64>() * 2.0) as i64,
        k % 2 == 1,
        if k % 4 < 2 { 0.0 } else { u(rng, 10.0, 60.0) },
    )
}

#[test]
fn no_random_plan_breaks_its_limits() {
    // Property: over many random plans, every visit (start, middle and end of the exposure) has
    // the Sun below the twilight limit, airmass ≤ the maximum and solar elongation ≥ the minimum
    // (and, at mid-exposure, the Moon no nearer than the plan's minimum separation),
    // rechecked here independently of the scheduler, on a fresh Earth grid (VSOP87 samples,
    // interpolation error < 1e-9 AU, checked against the direct evaluation in sky::earth).
    use seine::survey::planner::{PlanFile, make_plan};
    let mut rng = Pcg64::seed_from_u64(5);
    let (mut n_visits, mut n_plans_with_visits) = (0, 0);
    for k in 0..150 {
        let text = random_plan(&mut rng, k);
        let file: PlanFile = toml::from_str(&text).unwrap_or_else(|e| panic!("{e}\n{text}"));
        let p = &file.plan;
        let moon_min = file.depth.min_moon_separation_deg;
        let (limit, xmax, emin, exp) = (
            p.sun_alt_max_deg,
            p.max_airmass,
            p.min_solar_elongation_deg,
            p.exposure_s,
        );
        let site = file.site;
        // A plan with no visit is refused (its nights' fates said); nothing to recheck.
        let plan = match make_plan(file.clone()) {
            Err(e) if e.to_string().contains("makes no visit") => continue,
            made => made.unwrap_or_else(|e| panic!("{e}\n{text}")),
        };
        let v = &plan.visits;
        let tdb0 = MjdUtc(p.first_night as f64).to_tdb().unwrap().0;
        let grid = seine::sky::earth::EphemerisGrid::covering(tdb0, tdb0 + (p.last_night - p.first_night) as f64 + 2.0);
        n_visits += v.mjd.len();
        n_plans_with_visits += (!v.mjd.is_empty()) as usize;
        for i in 0..v.mjd.len() {
            let dir = unit_vector(v.ra_deg[i] * DEG, v.dec_deg[i] * DEG);
            for dt in [-0.5, 0.0, 0.5] {
                let t = MjdUtc(v.mjd[i] + dt * exp / 86400.0);
                let sky = LocalSky::new(&site, t, &grid.at(t.to_tdb().unwrap().0)).unwrap();
                let (sun, alt, el) = (
                    sky.sun_altitude() / DEG,
                    sky.altitude(&dir),
                    sky.solar_elongation(&dir) / DEG,
                );
                assert!(
                    sun < limit,
                    "plan {k} visit {i}: Sun at {sun}° (limit {limit}°)\n{text}"
                );
                assert!(
                    alt > 0.0 && airmass_kasten_young(alt) <= xmax,
                    "plan {k} visit {i}: airmass\n{text}"
                );
                assert!(el >= emin, "plan {k} visit {i}: elongation {el}° < {emin}°\n{text}");
            }
            let t = MjdUtc(v.mjd[i]);
            let sky = LocalSky::new(&site, t, &grid.at(t.to_tdb().unwrap().0)).unwrap();
            let moon = seine::sky::moon::moon_view(t, &sky.site_geo, &sky.sun_dir).unwrap();
            let rho = seine::sky::frames::separation(&moon.dir, &dir) / DEG;
            assert!(
                rho >= moon_min,
                "plan {k} visit {i}: {rho}° from the Moon (limit {moon_min}°)"
            );
            assert!(v.moon_penalty_mag[i] >= 0.0 && v.moon_penalty_mag[i] < 10.0);
            let night = seine::survey::visits::night_of(v.mjd[i], site.longitude_deg);
            assert!((p.first_night..=p.last_night).contains(&night));
            let log = plan.nights.iter().find(|n| n.night == night).unwrap();
            assert_eq!(
                log.status, "observed",
                "visits only on nights the pattern and the weather allow"
            );
        }
    }
    assert!(
        n_plans_with_visits >= 75,
        "most random plans should schedule something ({n_plans_with_visits})"
    );
    eprintln!("random plans: {n_visits} visits in {n_plans_with_visits} of 150 plans, none outside the limits");
}

/// Every shipped survey spec is usable as shipped: the one command of its header, run beside a
/// copy of its plan, writes that very spec and a loadable survey; survey-configs/README.md
/// states the same command; a spec whose visits table is committed loads in place.
#[test]
fn shipped_survey_specs_are_made_by_the_command_of_their_header() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs");
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let mut n = 0;
    for entry in std::fs::read_dir(&root).unwrap() {
        let path = entry.unwrap().path();
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        if !name.ends_with(".survey.toml") {
            continue;
        }
        let shipped = std::fs::read_to_string(&path).unwrap();
        let command = shipped
            .lines()
            .find_map(|l| {
                l.split_once("Regenerate it and its visits with: ")
                    .map(|(_, c)| c.trim())
            })
            .unwrap_or_else(|| panic!("{name}: no command in its header"));
        assert!(readme.contains(command), "survey-configs/README.md lacks `{command}`");
        let words: Vec<&str> = command.split_whitespace().collect();
        assert!(
            words.len() == 6 && words[..3] == ["seine", "plan", "--plan"] && words[4] == "--out",
            "{name}: {command}"
        );
        let dir = tmpdir();
        std::fs::copy(root.join(words[3]), dir.path().join(words[3])).unwrap();
        let out = Command::new(env!("CARGO_BIN_EXE_seine"))
            .args(&words[1..])
            .current_dir(dir.path())
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{command}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let made = dir.path().join(&name);
        assert_eq!(
            std::fs::read_to_string(&made).unwrap(),
            shipped,
            "{name} differs from what `{command}` writes"
        );
        let s = Survey::load(&made).unwrap();
        assert!(s.visits.len() > 100, "{name}: {} visits", s.visits.len());
        let cov = dir.path().join(name.replace(".survey.toml", ".coverage.json"));
        let cov: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(cov).unwrap()).unwrap();
        assert!(cov["coverage"]["covered_sq_deg"].as_f64().unwrap() > 10.0);
        if root.join(words[5]).exists() && shipped.contains(&format!("visits = \"{}\"", words[5])) {
            assert_eq!(
                Survey::load(&path).unwrap().visits.len(),
                s.visits.len(),
                "{name} in place"
            );
        }
        n += 1;
    }
    assert_eq!(n, 3, "the three example surveys");
}

#[test]
fn bad_plans_exit_2_without_output() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/synoptic-plan.toml");
    let good = std::fs::read_to_string(root).unwrap();
    let cases = [
        (
            good.replace("max_airmass = 1.8", "max_airmass = 0.5"),
            "plan.max_airmass",
        ),
        (
            good.replace("min_solar_elongation_deg = 100.0", "min_solar_elongation_deg = 10.0"),
            "min_solar_elongation_deg",
        ),
        (
            good.replace("every_nights = 3", "every_night = 3"),
            "unknown field `every_night`",
        ),
        (
            good.replace("mode = \"opposition\"", "mode = \"everywhere\""),
            "region.mode",
        ),
        (good.replace("min_nights = 3", "min_nights = 0"), "linking.min"),
        (
            good.replace("weather_loss = 0.25", "weather_loss = 1.5"),
            "plan.weather_loss",
        ),
    ];
    for (text, expect) in cases {
        let dir = tmpdir();
        let p = dir.path().join("plan.toml");
        std::fs::write(&p, &text).unwrap();
        let out = dir.path().join("v.csv");
        let (code, err) = seine(&["plan", "--plan", p.to_str().unwrap(), "--out", out.to_str().unwrap()]);
        assert_eq!(code, 2, "{err}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(err.contains(expect), "expected `{expect}` in {err}");
        assert_eq!(
            std::fs::read_dir(dir.path()).unwrap().count(),
            1,
            "only the plan itself: no output"
        );
    }
}
