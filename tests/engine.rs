//! The detection engine: the index against an independent brute force, geometric checks of
//! containment, the rate window, and thread and shard invariance.

mod common;

use std::path::Path;

use rand::{RngExt, SeedableRng};
use rand_pcg::Pcg64;
use seine::engine::{Candidates, ObjectOutcome, PreparedSurvey, StopRule, observe_object};
use seine::io::table::frame_f64;
use seine::orbit::{Center, Elements, Orbit};
use seine::population::objects::ObjectTable;
use seine::rng::{Purpose, object_stream};
use seine::sky::apparent::observe;
use seine::sky::frames::lon_lat;
use seine::sky::observer::observer_states;
use seine::survey::Survey;
use seine::time::TimeScale;

const SITE: &str = "[site]\nlongitude_deg = 19.3\nlatitude_deg = 20.6\nelevation_m = 2350.0\n";

/// Write a survey spec and its visits (mjd UTC, ra, dec, depth, rotation) and load it.
fn make_survey(dir: &Path, name: &str, field: &str, extra: &str, visits: &[(f64, f64, f64, f64, f64)]) -> Survey {
    let mut csv = String::from("visit_id,mjd,ra_deg,dec_deg,band,depth_mag,rotation_deg\n");
    for (k, v) in visits.iter().enumerate() {
        csv.push_str(&format!(
            "{},{},{},{},r,{},{}\n",
            k,
            v.0,
            v.1.rem_euclid(360.0),
            v.2.clamp(-90.0, 90.0),
            v.3,
            v.4
        ));
    }
    std::fs::write(dir.join(format!("{name}.csv")), csv).unwrap();
    let spec = format!("[survey]\nname = \"{name}\"\nvisits = \"{name}.csv\"\n{SITE}[field]\n{field}\n{extra}");
    let p = dir.join(format!("{name}.toml"));
    std::fs::write(&p, spec).unwrap();
    Survey::load(&p).unwrap_or_else(|e| panic!("{e}"))
}

/// Random distant objects, including a > 1000 AU, e = 0.99, retrograde and polar orbits.
fn random_objects(n: usize, seed: u64) -> ObjectTable {
    let mut rng = Pcg64::seed_from_u64(seed);
    let df = common::objects_frame((0..n).map(|i| {
        let a = match i % 5 {
            0 => 1000.0 + rng.random::<f64>() * 2000.0,
            _ => 30.0 * (100f64).powf(rng.random::<f64>()),
        };
        let e = if i % 7 == 0 {
            0.99
        } else {
            rng.random::<f64>() * (1.0 - 25.0 / a).clamp(0.0, 0.99)
        };
        let inc = match i % 4 {
            0 => 90.0 + 90.0 * rng.random::<f64>(),
            1 => 88.0 + 4.0 * rng.random::<f64>(),
            _ => 30.0 * rng.random::<f64>(),
        };
        [
            i as f64,
            a,
            e,
            inc,
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            360.0 * rng.random::<f64>(),
            60400.0,
            3.0 + 5.0 * rng.random::<f64>(),
        ]
    }));
    ObjectTable::from_frame(df, Path::new("random.csv")).unwrap()
}

/// Visits aimed near objects (so there are in-field events), plus fields at RA 0/360 and the poles.
fn aimed_visits(objects: &ObjectTable, seed: u64, n_nights: usize, offset_deg: f64) -> Vec<(f64, f64, f64, f64, f64)> {
    let mut rng = Pcg64::seed_from_u64(seed);
    let mut out = Vec::new();
    for night in 0..n_nights {
        let t0 = 60400.1 + night as f64 * (1000.0 / n_nights as f64);
        let epochs = [t0, t0 + 0.04, t0 + 0.09];
        let obs = observer_states(&epochs, TimeScale::Utc, None).unwrap();
        for _ in 0..6 {
            let i = rng.random_range(0..objects.len());
            let a = observe(&Orbit::new(objects.elements[i]), &obs[0]);
            let (ra, dec) = (a.ra.to_degrees(), a.dec.to_degrees());
            let (dra, ddec) = (
                (rng.random::<f64>() - 0.5) * 2.0 * offset_deg,
                (rng.random::<f64>() - 0.5) * 2.0 * offset_deg,
            );
            let rot = 360.0 * rng.random::<f64>();
            for t in epochs {
                out.push((t, ra + dra / dec.to_radians().cos().max(0.05), dec + ddec, 24.0, rot));
            }
        }
        for (ra, dec) in [(359.7, 10.0), (0.3, -5.0), (30.0, 89.6), (200.0, -89.5)] {
            out.push((t0 + 0.02, ra, dec, 24.0, 0.0));
        }
    }
    out
}

fn run_all(objects: &ObjectTable, surveys: &[PreparedSurvey], mode: Candidates) -> Vec<ObjectOutcome> {
    run_recording(objects, surveys, mode, StopRule::Everything)
}

fn run_recording(
    objects: &ObjectTable,
    surveys: &[PreparedSurvey],
    mode: Candidates,
    record: StopRule,
) -> Vec<ObjectOutcome> {
    let mut scratch = Vec::new();
    (0..objects.len())
        .map(|i| {
            let rng = object_stream(9, objects.ids[i], Purpose::Observe);
            observe_object(objects, i, surveys, (mode, record), rng, &mut scratch)
        })
        .collect()
}

#[test]
fn index_agrees_with_brute_force_on_every_decision() {
    let dir = tempfile::tempdir().unwrap();
    let objects = random_objects(300, 11);
    let visits = aimed_visits(&objects, 12, 120, 2.5);
    let mosaic = "shape = \"mosaic\"\nchips = [[[-1.0,-1.0],[-0.05,-1.0],[-0.05,1.0],[-1.0,1.0]], [[0.05,-1.0],[1.0,-1.0],[1.0,0.4],[0.05,1.0]]]";
    let surveys = vec![
        PreparedSurvey::new(make_survey(
            dir.path(),
            "circles",
            "shape = \"circle\"\nradius_deg = 1.5\nrandom_live_fraction = 0.9",
            "[linking]\nmin_detections_per_night = 2\nmin_nights = 2\n",
            &visits,
        )),
        PreparedSurvey::new(make_survey(dir.path(), "mosaic", mosaic, "", &visits)),
        // Chip gaps and dead cells in the turned focal plane, and an efficiency per tracklet.
        PreparedSurvey::new(make_survey(
            dir.path(),
            "boxes",
            "shape = \"rectangle\"\nwidth_deg = 3.0\nheight_deg = 1.0\n\
             [[field.dead]]\nkind = \"stripes\"\nalong = \"x\"\nspacing_deg = 0.3\nwidth_deg = 0.05\n\
             [[field.dead]]\nkind = \"cells\"\nsize_deg = 0.1\nfraction = 0.1\n",
            "[efficiency]\nmodel = \"logistic\"\nwidth_mag = 0.3\nper = \"tracklet\"\n",
            &visits,
        )),
    ];
    let fast = run_all(&objects, &surveys, Candidates::Indexed);
    let slow = run_all(&objects, &surveys, Candidates::All);
    let (mut events, mut candidates, mut brute, mut discovered) = (0, 0, 0, 0);
    for (i, (f, s)) in fast.iter().zip(&slow).enumerate() {
        assert_eq!(f.events, s.events, "object {i}: in-field events differ");
        assert_eq!(f.surveys, s.surveys, "object {i}: survey outcomes differ");
        events += f.events.len();
        candidates += f.candidates;
        brute += s.candidates;
        discovered += f.discovered() as usize;
    }
    eprintln!("events {events}, candidates {candidates} (brute force {brute}), discovered {discovered}");
    assert!(
        events > 500,
        "the scenario must exercise the footprint test: {events} events"
    );
    assert!(
        discovered > 10 && discovered < objects.len(),
        "discoveries {discovered}"
    );
    assert!(candidates * 20 < brute, "the index must prune: {candidates} vs {brute}");
}

/// The discovery event of survey `s`, if any.
/// Survey s's discovering event, without what it measured (the stop rules leave that out).
fn discovery_of(o: &ObjectOutcome, s: usize) -> Option<seine::engine::Event> {
    o.surveys[s].discovery_event.map(|e| seine::engine::Event {
        measured: Default::default(),
        ..o.events[e]
    })
}

#[test]
fn stopping_at_the_verdict_changes_no_verdict() {
    let dir = tempfile::tempdir().unwrap();
    let objects = random_objects(400, 23);
    let visits = aimed_visits(&objects, 24, 120, 2.0);
    let linking = "[linking]\nmin_detections_per_night = 2\nmin_nights = 2\nsecure_after_days = 20.0\n";
    let surveys: Vec<PreparedSurvey> = [
        // Logistic efficiency, every rate: mostly early stops (p is zero only ~11 mag past the depth).
        (
            "logistic",
            "[efficiency]\nmodel = \"logistic\"\npeak = 0.9\nwidth_mag = 0.3\n",
        ),
        // A step at the depth: draws too faint for every visit are skipped.
        ("step", "[efficiency]\nmodel = \"step\"\npeak = 0.95\n"),
        // Fast movers only: the distant draws are skipped by their rate.
        (
            "fast",
            "[motion]\nmin_rate_arcsec_per_hr = 1.5\nmax_rate_arcsec_per_hr = 500.0\n",
        ),
        // Per tracklet, and a table that is not monotone in magnitude (the bound on p must
        // hold for both).
        (
            "tracklet",
            "[efficiency]\nmodel = \"tanh-product\"\npeak = 0.9\nfall_width_mag = 0.15\ntail_width_mag = 0.45\nper = \"tracklet\"\n",
        ),
        (
            "table",
            "[efficiency]\nmodel = \"table\"\ndm = [-3.0, -1.0, 0.0, 0.5, 1.5]\nrates = [0.0, 10.0]\neta = [[0.5, 0.4], [0.9, 0.8], [0.4, 0.3], [0.6, 0.2], [0.0, 0.0]]\n",
        ),
    ]
    .iter()
    .map(|(name, extra)| {
        let extra = format!("{linking}{extra}");
        PreparedSurvey::new(make_survey(
            dir.path(),
            name,
            "shape = \"circle\"\nradius_deg = 1.5",
            &extra,
            &visits,
        ))
    })
    .collect();
    let all = run_recording(&objects, &surveys, Candidates::Indexed, StopRule::Everything);
    let until_secured = run_recording(&objects, &surveys, Candidates::Indexed, StopRule::UntilSecured);
    let until_found = run_recording(&objects, &surveys, Candidates::Indexed, StopRule::UntilDiscovery);
    let (mut skipped, mut discovered, mut secured) = (vec![0; surveys.len()], 0, 0);
    for i in 0..objects.len() {
        let orbit = Orbit::new(objects.elements[i]);
        for (s, ps) in surveys.iter().enumerate() {
            let (a, t, d) = (
                &all[i].surveys[s],
                &until_secured[i].surveys[s],
                &until_found[i].surveys[s],
            );
            assert_eq!(
                (a.discovered, a.secured),
                (t.discovered, t.secured),
                "object {i} survey {s}"
            );
            assert_eq!(a.discovered, d.discovered, "object {i} survey {s}");
            assert_eq!(
                discovery_of(&all[i], s),
                discovery_of(&until_found[i], s),
                "object {i} survey {s}"
            );
            assert_eq!(
                discovery_of(&all[i], s),
                discovery_of(&until_secured[i], s),
                "object {i} survey {s}"
            );
            // The bound on the detection probability bounds every visit's (what lets the
            // stop rules skip a survey whose efficiency draws all lie above it).
            // So does the bound the stop rules take, from the walk's first anchor instead of
            // the survey's middle.
            let bound = ps.reach.p_bound(&objects, i, &orbit);
            let from_anchor =
                ps.reach
                    .p_bound_at(&objects, i, &orbit, ps.walk(&orbit, Candidates::Indexed).first_anchor());
            assert!(
                all[i]
                    .events
                    .iter()
                    .all(|e| e.survey as usize != s || e.p_detect <= bound.min(from_anchor)),
                "object {i} survey {s}: bounds {bound}, {from_anchor}"
            );
            if !ps.reach.could_detect(&objects, i, &orbit) {
                skipped[s] += 1;
                // Ruled out by the bounds: no visit gave it any chance at all.
                assert!(
                    all[i]
                        .events
                        .iter()
                        .all(|e| e.survey as usize != s || e.p_detect == 0.0),
                    "object {i} survey {s}"
                );
            }
            discovered += a.discovered as usize;
            secured += a.secured as usize;
        }
    }
    let events = |o: &[ObjectOutcome]| o.iter().map(|o| o.events.len()).sum::<usize>();
    let (e_all, e_secured, e_found) = (events(&all), events(&until_secured), events(&until_found));
    eprintln!(
        "events {e_all} / {e_secured} / {e_found}; skipped {skipped:?}; discovered {discovered}, secured {secured}"
    );
    assert!(
        discovered > 30 && secured > 10,
        "the scenario must discover and secure: {discovered}, {secured}"
    );
    assert!(
        skipped[1] > skipped[0] && skipped[1] > 20 && skipped[2] > 50,
        "skipped {skipped:?}"
    );
    assert!(
        e_found < e_secured && e_secured < e_all,
        "events {e_all} / {e_secured} / {e_found}"
    );
}

/// An object placed exactly at the centre of a visit's field, seen from the site.
fn object_at(ra_deg: f64, dec_deg: f64, r_au: f64, mjd: f64, h_mag: f64) -> ObjectTable {
    let df = frame_f64(vec![
        ("id", vec![1.0]),
        ("a_au", vec![r_au]),
        ("e", vec![0.0]),
        ("inc_deg", vec![0.0]),
        ("node_deg", vec![0.0]),
        ("argperi_deg", vec![0.0]),
        ("mean_anomaly_deg", vec![0.0]),
        ("epoch_mjd", vec![mjd]),
        ("h_mag", vec![h_mag]),
    ]);
    let mut t = ObjectTable::from_frame(df, Path::new("one.csv")).unwrap();
    // Place the body on the line of sight at distance ≈ r from the observer, then solve for
    // elements from that state (circular velocity perpendicular to the Sun direction).
    let site = seine::sky::observer::Site {
        longitude_deg: 19.3,
        latitude_deg: 20.6,
        elevation_m: 2350.0,
    };
    let obs = observer_states(&[mjd], TimeScale::Utc, Some(&site)).unwrap()[0];
    let dir = seine::sky::frames::unit_vector(ra_deg.to_radians(), dec_deg.to_radians());
    let mut el = t.elements[0];
    for _ in 0..4 {
        let tau = r_au / seine::foundation::constants::C_AU_PER_DAY;
        let pos_bary = obs.pos + dir * r_au;
        let sun_then = obs.sun_pos - obs.sun_vel * tau;
        let helio = seine::sky::frames::icrs_to_ecliptic(&(pos_bary - sun_then));
        let h = helio.norm();
        let up = nalgebra::Vector3::new(0.0, 0.0, 1.0);
        let vel = up.cross(&helio).normalize() * (seine::foundation::constants::GM_SUN / h).sqrt();
        el = Elements::from_state(&helio, &vel, obs.tdb_mjd - tau, Center::Heliocentric);
        t.elements[0] = el;
        let a = observe(&Orbit::new(el), &obs);
        let (ra, dec) = lon_lat(&a.unit);
        assert!(
            (ra.to_degrees() - ra_deg).abs() < 1e-6 && (dec.to_degrees() - dec_deg).abs() < 1e-6 || a.delta_au > 0.0
        );
    }
    let _ = el;
    t
}

#[test]
fn object_at_field_centre_is_found_and_just_outside_is_not() {
    let dir = tempfile::tempdir().unwrap();
    let mjd = 60700.2;
    let (ra, dec, radius) = (150.0, 12.0, 1.0);
    let objects = object_at(ra, dec, 45.0, mjd, 4.0);
    let a = observe(
        &Orbit::new(objects.elements[0]),
        &observer_states(
            &[mjd],
            TimeScale::Utc,
            Some(&seine::sky::observer::Site {
                longitude_deg: 19.3,
                latitude_deg: 20.6,
                elevation_m: 2350.0,
            }),
        )
        .unwrap()[0],
    );
    let sep = seine::sky::frames::separation(
        &a.unit,
        &seine::sky::frames::unit_vector(ra.to_radians(), dec.to_radians()),
    );
    assert!(
        sep.to_degrees() * 3600.0 < 0.01,
        "placed within 0.01″ of the centre: {}″",
        sep.to_degrees() * 3600.0
    );
    let field = format!("shape = \"circle\"\nradius_deg = {radius}");
    let inside = PreparedSurvey::new(make_survey(
        dir.path(),
        "centre",
        &field,
        "",
        &[(mjd, ra, dec, 26.0, 0.0)],
    ));
    // The same object, now 1.0001 radii from the field centre (in declination).
    let outside = PreparedSurvey::new(make_survey(
        dir.path(),
        "offset",
        &field,
        "",
        &[(mjd, ra, dec + radius * 1.0001, 26.0, 0.0)],
    ));
    let edge_in = PreparedSurvey::new(make_survey(
        dir.path(),
        "edge",
        &field,
        "",
        &[(mjd, ra, dec + radius * 0.9999, 26.0, 0.0)],
    ));
    for mode in [Candidates::Indexed, Candidates::All] {
        let r = |s: &PreparedSurvey| run_all(&objects, std::slice::from_ref(s), mode)[0].clone();
        assert_eq!(r(&inside).events.len(), 1);
        assert!(
            r(&inside).discovered(),
            "a bright object at the centre of a deep field is found"
        );
        assert_eq!(r(&outside).events.len(), 0, "just outside the radius: not in the field");
        assert_eq!(r(&edge_in).events.len(), 1, "just inside the radius: in the field");
    }
}

#[test]
fn slow_distant_object_and_the_rate_window() {
    // Rule of thumb (common practice, no source): a 500 AU object at opposition moves
    // ≈ 0.28″/hr, so a search with min_rate_arcsec_per_hr = 1″/hr loses it and min_rate_arcsec_per_hr = 0.1 finds it.
    let dir = tempfile::tempdir().unwrap();
    let mjd = 60755.3; // near the March equinox: opposition is at RA ≈ 180°
    let obs = observer_states(&[mjd], TimeScale::Utc, None).unwrap()[0];
    let anti_sun = -(obs.sun_pos - obs.pos);
    let (ra, dec) = lon_lat(&anti_sun);
    let objects = object_at(ra.to_degrees(), dec.to_degrees(), 500.0, mjd, -2.0);
    let field = "shape = \"circle\"\nradius_deg = 1.0";
    let visit = [(mjd, ra.to_degrees(), dec.to_degrees(), 25.0, 0.0)];
    let fast = PreparedSurvey::new(make_survey(
        dir.path(),
        "fast",
        field,
        "[motion]\nmin_rate_arcsec_per_hr = 1.0\n",
        &visit,
    ));
    let slow = PreparedSurvey::new(make_survey(
        dir.path(),
        "slow",
        field,
        "[motion]\nmin_rate_arcsec_per_hr = 0.1\n",
        &visit,
    ));
    let lost = run_all(&objects, &[fast], Candidates::Indexed)[0].clone();
    let found = run_all(&objects, &[slow], Candidates::Indexed)[0].clone();
    assert_eq!(lost.events.len(), 1);
    let rate = lost.events[0].rate_arcsec_per_hr;
    assert!((0.2..0.4).contains(&rate), "rate {rate}″/hr");
    assert_eq!(lost.events[0].p_detect, 0.0);
    assert!(!lost.discovered());
    assert!(found.discovered() && found.events[0].p_detect > 0.5);
}
