//! `seine hideout`: the geometric check of exclusion by one survey, H from diameter and
//! albedo, the posterior map's normalisation, MOC serialization, and shard and thread
//! invariance of the tallies.

mod common;

use std::path::{Path, PathBuf};

use seine::engine::PreparedSurvey;
use seine::hideout::moc::{Moc, credible_cells};
use seine::hideout::{self, HideoutPrior, TallyOptions, diameter_from_h, evaluate, h_from_diameter};
use seine::io::table::{Columns, read_table};
use seine::sky::frames::{ecliptic_to_radec, separation, unit_vector};
use seine::survey::Survey;

/// Epoch of the single night of visits and of the map, UTC MJD.
const T: f64 = 61000.2;
const RADIUS_DEG: f64 = 4.0;
/// Field centres on the ecliptic, ecliptic longitude in degrees (far apart: no overlaps).
const FIELD_LON_DEG: [f64; 6] = [10.0, 70.0, 130.0, 190.0, 250.0, 310.0];

/// A bright planet prior near the ecliptic: m ≈ −3 + 5 log10(r Δ) ≤ 23.1 at r ≤ 440 AU.
const PRIOR: &str = r#"
[population]
name = "test prior"
epoch_mjd = 61000.0
[orbit]
a_au = { dist = "uniform", lo = 300.0, hi = 400.0 }
e = { dist = "uniform", lo = 0.0, hi = 0.1 }
inc_deg = { dist = "uniform", lo = 0.0, hi = 5.0 }
[photometry]
h_mag = { dist = "fixed", value = -3.0 }
"#;

/// Field centres (RA, Dec) in radians.
fn centres() -> Vec<(f64, f64)> {
    FIELD_LON_DEG
        .iter()
        .map(|l| ecliptic_to_radec(l.to_radians(), 0.0))
        .collect()
}

/// One geocentric survey: one visit per field at T, circles of RADIUS_DEG, a step at depth 30
/// with peak 1, no trailing loss, one detection discovers.
fn survey(dir: &Path, fill: f64) -> PathBuf {
    let mut csv = String::from("mjd,ra_deg,dec_deg,band,depth_mag\n");
    for (ra, dec) in centres() {
        csv.push_str(&format!("{T},{},{},r,30.0\n", ra.to_degrees(), dec.to_degrees()));
    }
    std::fs::write(dir.join(format!("visits{fill}.csv")), csv).unwrap();
    let spec = format!(
        "[survey]\nname = \"one-night {fill}\"\nvisits = \"visits{fill}.csv\"\n[field]\nshape = \"circle\"\nradius_deg = {RADIUS_DEG}\n\
         random_live_fraction = {fill}\n[efficiency]\nmodel = \"step\"\npeak = 1.0\ntrailing = \"none\"\n[linking]\nmin_detections_per_night = 1\nmin_nights = 1\n"
    );
    common::write(dir, &format!("survey{fill}.toml"), &spec)
}

fn prior(dir: &Path, text: &str) -> PathBuf {
    common::write(dir, "prior.toml", text)
}

fn options(count: u64) -> TallyOptions {
    TallyOptions {
        seed: 7,
        count,
        shard: None,
        epoch_mjd: T,
        order: 4,
        field_radius_deg: 6.0,
        n_fields: 5,
        a_bins: None,
        h_bins: None,
        chunk: 1000,
        progress: false,
    }
}

/// Smallest separation (degrees) of a position from the field centres.
fn nearest_field_deg(ra: f64, dec: f64) -> f64 {
    let u = unit_vector(ra, dec);
    centres()
        .iter()
        .map(|&(r, d)| separation(&u, &unit_vector(r, d)).to_degrees())
        .fold(f64::INFINITY, f64::min)
}

/// Geometric check worked out by hand: with one visit per field at T, live fraction 1 and a step
/// efficiency far below the draws' magnitudes, a draw is discovered exactly when its
/// astrometric position at T lies inside a field; the sky map at T is then fully excluded
/// inside the fields and not at all outside.
#[test]
fn a_bright_prior_is_excluded_inside_the_fields_and_nowhere_else() {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![PreparedSurvey::new(Survey::load(&survey(dir.path(), 1.0)).unwrap())];
    let p = HideoutPrior::read(&prior(dir.path(), PRIOR), None, None).unwrap();
    let objects = p.draw(7, 0..4000).unwrap();
    let epoch = hideout::epoch_observer(T).unwrap();
    let draws = evaluate(&objects, &surveys, &epoch, 7);
    let (mut inside, mut checked) = (0, 0);
    for d in &draws {
        let sep = nearest_field_deg(d.ra_rad, d.dec_rad);
        if (sep - RADIUS_DEG).abs() < 1e-6 {
            continue; // on the edge to rounding: either verdict is right
        }
        assert!(d.mag < 30.0, "draw {} is fainter than the depth: {}", d.id, d.mag);
        assert_eq!(
            d.discovered,
            sep < RADIUS_DEG,
            "draw {} at {sep:.4}° from a field centre",
            d.id
        );
        inside += (sep < RADIUS_DEG) as usize;
        checked += 1;
    }
    assert!(inside > 100 && checked - inside > 1000, "{inside} inside of {checked}");
    // The map: cells entirely inside a field keep nothing; cells entirely outside lose nothing.
    let (tally, _) = hideout::run_tally(&p, &surveys, &options(4000)).unwrap();
    let cell_deg = 2.0 * (std::f64::consts::PI / (3.0 * 4f64.powi(4))).sqrt().to_degrees();
    for c in (0..tally.sky.n_prior.len()).filter(|&c| tally.sky.n_prior[c] > 0) {
        let (ra, dec) = cdshealpix::nested::center(4, c as u64);
        let sep = nearest_field_deg(ra, dec);
        if sep < RADIUS_DEG - cell_deg {
            assert_eq!(tally.sky.n_surviving[c], 0, "cell {c} inside a field");
        } else if sep > RADIUS_DEG + cell_deg {
            assert_eq!(
                tally.sky.n_surviving[c], tally.sky.n_prior[c],
                "cell {c} outside every field"
            );
        }
    }
}

/// With live fraction 0.5 the in-field draws are excluded with probability 0.5 (binomial,
/// within 4σ) and the others never.
#[test]
fn exclusion_inside_the_fields_follows_the_live_fraction() {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![PreparedSurvey::new(Survey::load(&survey(dir.path(), 0.5)).unwrap())];
    let p = HideoutPrior::read(&prior(dir.path(), PRIOR), None, None).unwrap();
    let objects = p.draw(11, 0..6000).unwrap();
    let draws = evaluate(&objects, &surveys, &hideout::epoch_observer(T).unwrap(), 11);
    let (mut n_in, mut found_in) = (0f64, 0f64);
    for d in &draws {
        let sep = nearest_field_deg(d.ra_rad, d.dec_rad);
        if sep > RADIUS_DEG + 1e-6 {
            assert!(!d.discovered);
        } else if sep < RADIUS_DEG - 1e-6 {
            n_in += 1.0;
            found_in += d.discovered as u8 as f64;
        }
    }
    let f = found_in / n_in;
    let sigma = (0.25 / n_in).sqrt();
    assert!(
        (f - 0.5).abs() < 4.0 * sigma,
        "excluded {f:.3} of {n_in} in-field draws, σ = {sigma:.3}"
    );
}

/// H = 5 log10(1329 km / (D √p)): the constant 1329 km = 2 au 10^(V_sun/5) with
/// V_sun = −26.762 (Pravec & Harris 2007, Icarus 190, 250, appendix A; from memory), the worked
/// example D = 1329 km, p = 1 → H = 0, and the standard tabulation of absolute magnitude
/// against diameter (diameters in km for p = 0.5, 0.25, 0.05, printed to two or three
/// significant figures; values from memory).
#[test]
fn h_from_diameter_matches_its_worked_example_and_the_standard_table() {
    let au_km = 149_597_870.7;
    let k = 2.0 * au_km * 10f64.powf(-26.762 / 5.0);
    assert!((k - 1329.0).abs() < 1.0, "K = {k}");
    assert!(h_from_diameter(1329.0, 1.0).abs() < 1e-12);
    let table = [
        (-2.0, [4700.0, 6700.0, 14900.0]),
        (0.0, [1900.0, 2600.0, 5900.0]),
        (1.0, [1200.0, 1700.0, 3700.0]),
        (2.0, [750.0, 1050.0, 2400.0]),
    ];
    for (h, ds) in table {
        for (p, d) in [0.5, 0.25, 0.05].into_iter().zip(ds) {
            let ours = diameter_from_h(h, p);
            assert!((ours / d - 1.0).abs() < 0.025, "H = {h}, p = {p}: {ours:.0} km vs {d}");
            assert!((h_from_diameter(ours, p) - h).abs() < 1e-12);
        }
    }
}

/// A `[size]` table sets H from diameter and albedo; with h_mag as well it is refused.
#[test]
fn the_size_prior_sets_h_within_its_bounds() {
    let dir = tempfile::tempdir().unwrap();
    let text = PRIOR.replace("h_mag = { dist = \"fixed\", value = -3.0 }", "")
        + "[size]\ndiameter_km = { dist = \"uniform\", lo = 5000.0, hi = 10000.0 }\nalbedo = { dist = \"uniform\", lo = 0.1, hi = 0.5 }\n";
    let p = HideoutPrior::read(&prior(dir.path(), &text), None, None).unwrap();
    let h = p.draw(3, 0..500).unwrap().h_mag;
    let (lo, hi) = (h_from_diameter(10000.0, 0.5), h_from_diameter(5000.0, 0.1));
    assert!(h.iter().all(|&x| x >= lo && x <= hi), "H outside [{lo}, {hi}]");
    assert!(h.iter().any(|&x| x != h[0]));
    let both = PRIOR.to_string()
        + "[size]\ndiameter_km = { dist = \"fixed\", value = 5000.0 }\nalbedo = { dist = \"fixed\", value = 0.2 }\n";
    let e = HideoutPrior::read(&prior(dir.path(), &both), None, None)
        .unwrap_err()
        .to_string();
    assert!(e.contains("h_mag"), "{e}");
    // A diameter without an albedo (or the reverse) is refused, not read with a default.
    let half = PRIOR.replace("h_mag = { dist = \"fixed\", value = -3.0 }", "")
        + "[size]\ndiameter_km = { dist = \"fixed\", value = 5000.0 }\n";
    let e = HideoutPrior::read(&prior(dir.path(), &half), None, None)
        .unwrap_err()
        .to_string();
    assert!(e.contains("give both diameter_km and albedo"), "{e}");
    // Through the one spec parser: a misspelt key names its line and column, and the key meant.
    let typo = half.replace("diameter_km =", "diameter_kms =");
    let e = HideoutPrior::read(&prior(dir.path(), &typo), None, None)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("line ") && e.contains("column ") && e.contains("did you mean `diameter_km`"),
        "{e}"
    );
}

/// The posterior map's total probability equals the surviving fraction, and the credible
/// regions hold at least their level.
#[test]
fn the_posterior_map_sums_to_the_surviving_fraction() {
    let dir = tempfile::tempdir().unwrap();
    let s = survey(dir.path(), 1.0);
    let pr = prior(dir.path(), PRIOR);
    let out = run_cli(dir.path(), &s, &pr, "run", &[]);
    let summary = hideout::read_summary(&out).unwrap();
    let total: f64 = column(&out, "sky_map", "p_surviving").iter().sum();
    assert!(
        (total - summary.surviving_fraction).abs() < 1e-12,
        "{total} vs {}",
        summary.surviving_fraction
    );
    assert!(summary.surviving_fraction > 0.5 && summary.surviving_fraction < 0.99);
    let post: f64 = column(&out, "sky_map", "p_posterior").iter().sum();
    assert!((post - 1.0).abs() < 1e-12);
    assert!(summary.region_68.probability >= 0.68 && summary.region_95.probability >= 0.95);
    assert!(summary.conclusion.contains("would already have been found"));
}

/// The MOC 2.0 ASCII and JSON examples (the Recommendation's "Example of an ASCII MOC" and
/// appendix "JSON encoding"): `1/1 2 4 2/12-14 21 23 25 8/`, given as the order-8 cells it covers.
#[test]
fn moc_serialization_reproduces_the_standards_example() {
    let mut cells = Vec::new();
    for (order, idx) in [(1u32, vec![1u64, 2, 4]), (2, vec![12, 13, 14, 21, 23, 25])] {
        let shift = 2 * (8 - order);
        for i in idx {
            cells.extend((i << shift)..((i + 1) << shift));
        }
    }
    let moc = Moc::from_cells(8, &cells);
    assert_eq!(moc.to_ascii(), "1/1 2 4 2/12-14 21 23 25 8/");
    let json: serde_json::Value = serde_json::from_str(&moc.to_json()).unwrap();
    let expected: serde_json::Value = serde_json::from_str(r#"{"1":[1,2,4],"2":[12,13,14,21,23,25],"8":[]}"#).unwrap();
    assert_eq!(json, expected);
    assert_eq!(Moc::from_cells(3, &[]).to_ascii(), "3/");
    // Smallest sets: 5 + 3 ≥ 6.8 of 10; 5 + 3 + 1.5 ≥ 9.5.
    let w = [3.0, 0.5, 5.0, 1.5];
    assert_eq!(credible_cells(&w, 0.68), vec![0, 2]);
    assert_eq!(credible_cells(&w, 0.95), vec![0, 2, 3]);
}

fn run_cli(dir: &Path, s: &Path, pr: &Path, name: &str, extra: &[&str]) -> PathBuf {
    run_cli_n(dir, s, pr, name, "2500", extra)
}

fn run_cli_n(dir: &Path, s: &Path, pr: &Path, name: &str, count: &str, extra: &[&str]) -> PathBuf {
    run_cli_env(dir, (s, pr), (name, count), extra, &[])
}

/// As `run_cli_n`, with variables `env` set in the command's environment.
fn run_cli_env(
    dir: &Path,
    (s, pr): (&Path, &Path),
    (name, count): (&str, &str),
    extra: &[&str],
    env: &[(&str, String)],
) -> PathBuf {
    let out = dir.join(name);
    let mut args = vec![
        "hideout",
        "--survey",
        s.to_str().unwrap(),
        "--prior",
        pr.to_str().unwrap(),
        "--count",
        count,
        "--seed",
        "5",
        "--epoch-mjd",
        "61000.2",
        "--order",
        "4",
        "--format",
        "csv",
        "--quiet",
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_seine"))
        .args(&args)
        .envs(env.iter().map(|(k, v)| (k, v)))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    out
}

fn column(dir: &Path, table: &str, name: &str) -> Vec<f64> {
    let path = dir.join(format!("{table}.csv"));
    let df = read_table(&path).unwrap();
    Columns::new(&df, &path).f64(name).unwrap()
}

/// Shards 0/3, 1/3, 2/3 merged give the single run's tables: counts exactly, weights to
/// rounding.
#[test]
fn merged_shards_equal_the_single_run() {
    let dir = tempfile::tempdir().unwrap();
    let (s, pr) = (survey(dir.path(), 0.5), prior(dir.path(), PRIOR));
    let whole = run_cli(dir.path(), &s, &pr, "whole", &[]);
    let shards: Vec<PathBuf> = (0..3)
        .map(|k| run_cli(dir.path(), &s, &pr, &format!("s{k}"), &["--shard", &format!("{k}/3")]))
        .collect();
    let mut args = vec![];
    for sh in &shards {
        args.extend(["--merge", sh.to_str().unwrap()]);
    }
    let merged = run_cli(dir.path(), &s, &pr, "merged", &args);
    for (table, cols) in [
        (
            "excluded",
            &["n_prior", "n_excluded", "w_prior", "w_excluded", "w2_excluded"][..],
        ),
        (
            "sky_map",
            &[
                "cell",
                "n_prior",
                "n_surviving",
                "w_surviving",
                "w_mag_sum",
                "w_rate_sum",
            ][..],
        ),
        ("sky_mag_hist", &["cell", "mag_bin", "w_surviving"][..]),
        ("fields", &["n_surviving", "p_field", "depth_90_mag", "mean_mag"][..]),
    ] {
        for name in cols {
            let (a, b) = (column(&whole, table, name), column(&merged, table, name));
            assert_eq!(a.len(), b.len(), "{table}.{name}");
            for (x, y) in a.iter().zip(&b) {
                assert!((x - y).abs() <= 1e-9 * x.abs().max(1.0), "{table}.{name}: {x} vs {y}");
            }
        }
    }
    // The coverage MOC (IVOA MOC 2.0 JSON: order → cells, normalized so that complete
    // sibling quads are written as their parent) is carried over unchanged by the merge.
    let cov = |d: &std::path::Path| std::fs::read_to_string(d.join("coverage_one_night_0_5.moc.json")).unwrap();
    let parsed: serde_json::Map<String, serde_json::Value> = serde_json::from_str(&cov(&whole)).unwrap();
    assert!(
        !parsed.is_empty() && parsed.keys().all(|k| k.parse::<u8>().is_ok_and(|o| o <= 9)),
        "{parsed:?}"
    );
    assert_eq!(cov(&whole), cov(&merged));
    let (w, m) = (
        hideout::read_summary(&whole).unwrap(),
        hideout::read_summary(&merged).unwrap(),
    );
    assert_eq!(w.n_draws, m.n_draws);
    assert_eq!(w.n_excluded, m.n_excluded);
    assert_eq!(w.region_95.moc_ascii, m.region_95.moc_ascii);
}

/// `seine merge` sums hideout shards given in any order, the shards of a Slurm job array
/// (SLURM_ARRAY_TASK_ID, SLURM_ARRAY_TASK_COUNT) are the `--shard K/N` slices, and a merge
/// that misses a shard, repeats one or writes into an input is refused with nothing written.
#[test]
fn seine_merge_sums_hideout_shards_from_a_job_array() {
    let dir = tempfile::tempdir().unwrap();
    let (s, pr) = (survey(dir.path(), 0.5), prior(dir.path(), PRIOR));
    let whole = run_cli(dir.path(), &s, &pr, "whole", &[]);
    let by_flag = run_cli(dir.path(), &s, &pr, "flag1", &["--shard", "1/3"]);
    let task = |k: usize| {
        let env = [
            ("SLURM_ARRAY_TASK_ID", k.to_string()),
            ("SLURM_ARRAY_TASK_COUNT", "3".to_string()),
        ];
        run_cli_env(dir.path(), (&s, &pr), (&format!("task{k}"), "2500"), &[], &env)
    };
    let tasks: Vec<PathBuf> = (0..3).map(task).collect();
    assert_eq!(
        column(&tasks[1], "excluded", "n_prior"),
        column(&by_flag, "excluded", "n_prior")
    );
    let merge = |inputs: &[&PathBuf], out: &Path| {
        let mut args = vec!["merge"];
        args.extend(inputs.iter().map(|p| p.to_str().unwrap()));
        args.extend(["--out", out.to_str().unwrap(), "--format", "csv", "--quiet"]);
        common::seine(&args)
    };
    let merged = dir.path().join("merged");
    let o = merge(&[&tasks[2], &tasks[0], &tasks[1]], &merged);
    assert!(o.status.success(), "{}", common::stderr(&o));
    for name in ["n_prior", "n_excluded"] {
        assert_eq!(
            column(&whole, "excluded", name),
            column(&merged, "excluded", name),
            "{name}"
        );
    }
    let (w, m) = (
        hideout::read_summary(&whole).unwrap(),
        hideout::read_summary(&merged).unwrap(),
    );
    assert_eq!((w.n_draws, w.n_excluded), (m.n_draws, m.n_excluded));
    assert_eq!(w.region_95.moc_ascii, m.region_95.moc_ascii);
    // Refusals: status 2, one sentence, nothing written.
    let refused = dir.path().join("refused");
    for (inputs, says) in [
        (vec![&tasks[0], &tasks[1]], "missing"),
        (vec![&tasks[0], &tasks[1], &tasks[1], &tasks[2]], "once"),
    ] {
        let o = merge(&inputs, &refused);
        assert_eq!(o.status.code(), Some(2), "{}", common::stderr(&o));
        assert!(common::stderr(&o).contains(says), "{}", common::stderr(&o));
        assert!(!refused.exists());
    }
    let before = std::fs::read_to_string(tasks[0].join("summary.json")).unwrap();
    let o = merge(&[&tasks[0], &tasks[1], &tasks[2]], &tasks[0]);
    assert_eq!(o.status.code(), Some(2), "{}", common::stderr(&o));
    assert_eq!(std::fs::read_to_string(tasks[0].join("summary.json")).unwrap(), before);
}

/// The tally does not depend on the thread count or the chunk size (draws are added in id order).
#[test]
fn tallies_do_not_depend_on_threads_or_chunks() {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![PreparedSurvey::new(Survey::load(&survey(dir.path(), 0.5)).unwrap())];
    let p = HideoutPrior::read(&prior(dir.path(), PRIOR), None, None).unwrap();
    let run = |threads: usize, chunk: usize| {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
        let opts = TallyOptions { chunk, ..options(1500) };
        pool.install(|| hideout::run_tally(&p, &surveys, &opts).unwrap().0)
    };
    let one = run(1, 1500);
    assert_eq!(one, run(2, 1500));
    assert_eq!(one.total.k, run(2, 97).total.k);
    assert_eq!(one.sky.n_surviving, run(2, 97).sky.n_surviving);
}

/// Every example prior loads and draws with H from its size table (the examples must not rot).
#[test]
fn example_priors_draw() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs/priors");
    let mut n = 0;
    for entry in std::fs::read_dir(&root).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "toml") {
            let t = HideoutPrior::read(&path, None, None).unwrap().draw(1, 0..200).unwrap();
            assert!(t.h_mag.iter().all(|h| h.is_finite()), "{}", path.display());
            n += 1;
        }
    }
    assert!(n >= 1);
}

/// A shard with no draws (more shards than draws) still writes its tables and merges.
#[test]
fn an_empty_shard_merges() {
    let dir = tempfile::tempdir().unwrap();
    let (s, pr) = (survey(dir.path(), 1.0), prior(dir.path(), PRIOR));
    let shards: Vec<PathBuf> = (0..4)
        .map(|k| {
            run_cli_n(
                dir.path(),
                &s,
                &pr,
                &format!("e{k}"),
                "3",
                &["--shard", &format!("{k}/4")],
            )
        })
        .collect();
    assert_eq!(hideout::read_summary(&shards[1]).map(|x| x.n_draws).unwrap_or(0), 1);
    let mut args = vec![];
    for sh in &shards {
        args.extend(["--merge", sh.to_str().unwrap()]);
    }
    let merged = run_cli_n(dir.path(), &s, &pr, "merged", "3", &args);
    assert_eq!(column(&merged, "excluded", "n_prior")[0], 3.0);
}

/// Importance weights of the prior are respected: a proposal that oversamples bright H gives
/// the same weighted excluded fraction as plain sampling (E_g[w I] = E_f[I]), while its
/// unweighted fraction is visibly biased. Statistics: 4σ of the two estimates combined.
#[test]
fn importance_weighted_priors_give_the_plain_excluded_fraction() {
    let dir = tempfile::tempdir().unwrap();
    let surveys = vec![PreparedSurvey::new(Survey::load(&survey(dir.path(), 1.0)).unwrap())];
    let plain = PRIOR.replace(
        "h_mag = { dist = \"fixed\", value = -3.0 }",
        "h_mag = { dist = \"uniform\", lo = -3.0, hi = 12.0 }",
    );
    let weighted =
        plain.clone() + "[importance]\nh_mag = { dist = \"exponential\", alpha = -0.3, lo = -3.0, hi = 12.0 }\n";
    let tally = |text: &str| {
        let p = HideoutPrior::read(&prior(dir.path(), text), None, None).unwrap();
        hideout::run_tally(&p, &surveys, &options(8000)).unwrap().0.total
    };
    let (a, b) = (tally(&plain), tally(&weighted));
    let (a, b, counts) = (a.proportion(), b.proportion(), b);
    let sigma = (a.std_error.powi(2) + b.std_error.powi(2)).sqrt();
    let (fa, fb) = (a.fraction, b.fraction);
    assert!(
        (fa - fb).abs() < 4.0 * sigma,
        "plain {fa:.4}, weighted {fb:.4}, σ {sigma:.4}"
    );
    let unweighted = counts.k as f64 / counts.n as f64;
    let su = (unweighted * (1.0 - unweighted) / counts.n as f64).sqrt() + a.std_error;
    assert!(
        unweighted > fa + 5.0 * su,
        "unweighted {unweighted:.4} vs {fa:.4}, σ {su:.4}"
    );
}

/// The excluded fraction's error is the weighted proportion's of `statistics` (the larger of
/// Kish's and the linearization error), not the linearization error alone: two excluded draws
/// of weight 0.01 among 98 of weight 1 give a linearization error √(Σw²(d − f)²)/Σw of about
/// 1.5 × 10⁻⁴, a tenth of Kish's √(f(1 − f)/n_K) ≈ 1.4 × 10⁻³ (n_K = (Σw)²/Σw²). Arithmetic
/// of the definitions (methods.md, "Weighted proportions"); no outside source.
#[test]
fn excluded_fraction_error_is_never_below_kish() {
    use seine::hideout::{DrawOutcome, ExclusionBins, RunTally};
    let draw = |id: i64, weight: f64, discovered: bool| DrawOutcome {
        id,
        a_au: 300.0,
        h_mag: 5.0,
        weight,
        discovered,
        discovered_by: discovered as u64,
        ra_rad: 1.0,
        dec_rad: 0.2,
        mag: 22.0,
        rate_arcsec_per_hr: 1.0,
    };
    let draws: Vec<DrawOutcome> = (0..100)
        .map(|i| draw(i, if i < 2 { 0.01 } else { 1.0 }, i < 2))
        .collect();
    let bins = |q| ExclusionBins::linear(q, 0.0, 1000.0, 1);
    let mut t = RunTally::new(bins("a_au"), bins("h_mag"), 2, 1);
    t.add_draws(&draws);
    let (w, w2): (f64, f64) = (
        draws.iter().map(|d| d.weight).sum(),
        draws.iter().map(|d| d.weight * d.weight).sum(),
    );
    let f = 0.02 / w;
    let linear = draws
        .iter()
        .map(|d| (d.weight * (d.discovered as u8 as f64 - f)).powi(2))
        .sum::<f64>()
        .sqrt()
        / w;
    let kish = (f * (1.0 - f) / (w * w / w2)).sqrt();
    let p = t.total.proportion();
    assert!((p.fraction - f).abs() < 1e-15);
    assert!(
        linear < 0.8 * kish,
        "the case must separate the two: {linear} vs {kish}"
    );
    assert!(
        (p.std_error - kish).abs() < 1e-12 * kish,
        "{} vs Kish {kish}",
        p.std_error
    );
}
