//! The catalogue of bad inputs, one test each, through the binary: every case
//! exits with status 2, prints one sentence naming the file and the row or key and what was
//! expected, and leaves no output anywhere (the working directory is unchanged).

use std::path::{Path, PathBuf};
use std::process::Command;

mod common;

const SPEC: &str = r#"[survey]
name = "hardening"
visits = "visits.csv"
[field]
shape = "circle"
radius_deg = 1.0
"#;

const VISITS: &str = "visit_id,mjd,ra_deg,dec_deg,band,depth_mag
0,61000.1,10.0,-5.0,r,24.0
1,61000.2,10.1,-5.0,r,24.0
";

const OBJECTS: &str = "id,a_au,e,inc_deg,node_deg,argperi_deg,mean_anomaly_deg,epoch_mjd,h_mag
0,45.0,0.1,5.0,10.0,20.0,30.0,61000.0,7.0
1,60.0,0.3,15.0,100.0,200.0,300.0,61000.0,6.0
";

const POPULATION: &str = r#"[population]
name = "hardening"
epoch_mjd = 61000.0
[orbit]
a_au = { dist = "uniform", lo = 40.0, hi = 50.0 }
e = { dist = "uniform", lo = 0.0, hi = 0.2 }
inc_deg = { dist = "isotropic" }
[photometry]
h_mag = { dist = "uniform", lo = 5.0, hi = 8.0 }
"#;

/// A scratch directory holding a good survey, visits and objects, with some files replaced.
struct Case {
    dir: tempfile::TempDir,
}

impl Case {
    fn new(replace: &[(&str, &str)]) -> Case {
        let dir = tempfile::tempdir().unwrap();
        for (name, text) in [("survey.toml", SPEC), ("visits.csv", VISITS), ("objects.csv", OBJECTS)] {
            let text = replace.iter().find(|(n, _)| *n == name).map_or(text, |(_, t)| t);
            std::fs::write(dir.path().join(name), text).unwrap();
        }
        Case { dir }
    }
    fn p(&self, name: &str) -> String {
        self.dir.path().join(name).to_string_lossy().into_owned()
    }
    fn observe(&self, extra: &[&str]) -> Vec<String> {
        let mut a = args(&["observe", "--quiet", "--survey", &self.p("survey.toml")]);
        if !extra.contains(&"--objects") {
            a.extend(["--objects".into(), self.p("objects.csv")]);
        }
        if !extra.contains(&"--out") {
            a.extend(["--out".into(), self.p("out")]);
        }
        a.extend(extra.iter().map(|s| s.to_string()));
        a
    }
    /// Run seine: status 2, one line containing every `expect`, and no file added anywhere.
    fn fails(&self, args: &[String], expect: &[&str]) {
        let before = listing(self.dir.path());
        let o = Command::new(env!("CARGO_BIN_EXE_seine")).args(args).output().unwrap();
        let err = common::stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert_eq!(err.trim().lines().count(), 1, "one sentence expected: {err}");
        assert!(!err.contains("panicked"), "{err}");
        for e in expect {
            assert!(err.contains(e), "expected `{e}` in: {err}");
        }
        assert_eq!(
            listing(self.dir.path()),
            before,
            "output left behind by {args:?}: {err}"
        );
    }
}

fn listing(dir: &Path) -> Vec<PathBuf> {
    common::walk(dir)
}

/// Owned command-line arguments.
fn args(a: &[&str]) -> Vec<String> {
    a.iter().map(|s| s.to_string()).collect()
}

#[test]
fn malformed_toml_gives_line_and_column() {
    let c = Case::new(&[("survey.toml", "[survey\nname = \"x\"\n")]);
    c.fails(&c.observe(&[]), &["survey.toml", "line 1, column"]);
}

#[test]
fn unknown_key_is_refused_with_the_nearest_valid_key() {
    let c = Case::new(&[("survey.toml", &SPEC.replace("radius_deg", "radius_dg"))]);
    c.fails(
        &c.observe(&[]),
        &["survey.toml", "radius_dg", "did you mean `radius_deg`", "line 6"],
    );
}

#[test]
fn wrong_type_names_the_key() {
    let c = Case::new(&[("survey.toml", &SPEC.replace("radius_deg = 1.0", "radius_deg = \"one\""))]);
    c.fails(&c.observe(&[]), &["survey.toml", "field.radius_deg", "line 6"]);
}

#[test]
fn missing_required_column_is_named() {
    let c = Case::new(&[(
        "objects.csv",
        &OBJECTS
            .replace(",h_mag", "")
            .replace(",7.0\n", "\n")
            .replace(",6.0\n", "\n"),
    )]);
    c.fails(&c.observe(&[]), &["objects.csv", "missing required column `h_mag`"]);
}

#[test]
fn nan_and_infinity_are_refused_with_their_row() {
    let c = Case::new(&[("objects.csv", &OBJECTS.replace("60.0,0.3", "NaN,0.3"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "a_au", "finite"]);
    let c = Case::new(&[("visits.csv", &VISITS.replace("10.1,-5.0,r,24.0", "10.1,-5.0,r,inf"))]);
    c.fails(&c.observe(&[]), &["visits.csv", "row 2", "depth_mag"]);
}

#[test]
fn out_of_range_values_are_refused() {
    let c = Case::new(&[("objects.csv", &OBJECTS.replace("60.0,0.3", "60.0,1.3"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "`e`"]);
    let c = Case::new(&[("visits.csv", &VISITS.replace("10.1,-5.0", "10.1,-95.0"))]);
    c.fails(&c.observe(&[]), &["visits.csv", "row 2", "dec_deg"]);
}

#[test]
fn empty_tables_are_refused() {
    let c = Case::new(&[("objects.csv", OBJECTS.lines().next().unwrap())]);
    c.fails(&c.observe(&[]), &["objects.csv", "no rows"]);
    let c = Case::new(&[("visits.csv", VISITS.lines().next().unwrap())]);
    c.fails(&c.observe(&[]), &["visits.csv", "no rows"]);
}

#[test]
fn duplicate_ids_are_refused() {
    let c = Case::new(&[("objects.csv", &OBJECTS.replace("\n1,60.0", "\n0,60.0"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "id", "unique"]);
}

/// Ids that are not non-negative integers of 64 bits: negative, or too long for 64 bits
/// (a 23-digit id is one sentence, not a parser dump).
#[test]
fn ids_that_are_not_non_negative_integers_are_refused() {
    let c = Case::new(&[("objects.csv", &OBJECTS.replace("\n1,60.0", "\n-7,60.0"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "id", "non-negative", "-7"]);
    let c = Case::new(&[(
        "objects.csv",
        &OBJECTS.replace("\n1,60.0", "\n12345678901234567890123,60.0"),
    )]);
    c.fails(&c.observe(&[]), &["objects.csv", "id"]);
}

/// An unknown band: a visit band with no colour column while the objects give colours for
/// other bands (a misspelt band or a missing column); see `engine::run::check_bands`.
#[test]
fn unknown_band_is_refused() {
    let objects = OBJECTS
        .replace(",h_mag\n", ",h_mag,color_g\n")
        .replace(",7.0\n", ",7.0,0.5\n")
        .replace(",6.0\n", ",6.0,0.6\n");
    let visits = VISITS.replace("-5.0,r,24.0\n1", "-5.0,gg,24.0\n1");
    let c = Case::new(&[("objects.csv", &objects), ("visits.csv", &visits)]);
    c.fails(
        &c.observe(&[]),
        &["visits.csv", "band `gg`", "did you mean `g`", "color_gg"],
    );
}

#[test]
fn missing_visits_file_is_named_with_the_spec_and_seine_plan() {
    let c = Case::new(&[("survey.toml", &SPEC.replace("visits.csv", "nowhere.csv"))]);
    c.fails(
        &c.observe(&[]),
        &[
            "survey.toml",
            "survey.visits",
            "nowhere.csv",
            "does not exist",
            "seine plan --plan",
        ],
    );
}

/// A spec written by `seine plan` states the command that makes its visits: the message repeats it.
#[test]
fn missing_visits_of_a_planned_survey_repeat_the_command_of_its_header() {
    let header = "# Regenerate it and its visits with: seine plan --plan wide-plan.toml --out wide.parquet\n";
    let spec = format!("{header}{}", SPEC.replace("visits.csv", "wide.parquet"));
    let c = Case::new(&[("survey.toml", &spec)]);
    c.fails(
        &c.observe(&[]),
        &[
            "survey.toml",
            "wide.parquet",
            "`seine plan --plan wide-plan.toml --out wide.parquet`",
        ],
    );
}

/// A cadence plan whose nights give no visit (here one night with every field too close to
/// the Sun) is refused with the nights' fates, not written as an empty survey.
#[test]
fn a_plan_that_makes_no_visit_is_refused() {
    let shipped =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/survey-configs/deep-plan.toml")).unwrap();
    let plan = shipped
        .replace("last_night = 61830", "last_night = 61440")
        .replace("weather_loss = 0.2", "weather_loss = 0.0")
        .replace("ecliptic_lon_min_deg = 155.0", "ecliptic_lon_min_deg = 315.0")
        .replace("ecliptic_lon_max_deg = 165.0", "ecliptic_lon_max_deg = 325.0");
    let c = Case::new(&[]);
    std::fs::write(c.dir.path().join("plan.toml"), plan).unwrap();
    c.fails(
        &args(&["plan", "--plan", &c.p("plan.toml"), "--out", &c.p("v.parquet")]),
        &["plan.toml", "no visit", "1 no-field"],
    );
}

#[test]
fn a_cadence_plan_given_as_a_survey_spec_is_named_as_such() {
    let c = Case::new(&[(
        "survey.toml",
        "[plan]\nname = \"a plan\"\n[revisit]\nevery_nights = 3\n",
    )]);
    c.fails(
        &c.observe(&[]),
        &["survey.toml", "cadence plan", "not a survey spec", "seine plan --plan"],
    );
}

#[test]
fn a_survey_spec_given_as_a_cadence_plan_is_named_as_such() {
    let c = Case::new(&[]);
    let (spec, out) = (c.p("survey.toml"), c.p("planned.csv"));
    let a = args(&["plan", "--plan", &spec, "--out", &out]);
    c.fails(&a, &["survey.toml", "survey spec", "not a cadence plan", "--survey"]);
}

/// A key or value that was renamed: the message names the new one, "`OLD` was renamed `NEW`".
/// One case per renamed word of the survey spec: (what is appended to the spec, old, new).
#[test]
fn renamed_keys_and_values_name_their_new_word() {
    let cases = [
        ("fill_factor = 0.9\n", "fill_factor", "random_live_fraction"),
        ("[motion]\nmin_rate = 1.0\n", "min_rate", "min_rate_arcsec_per_hr"),
        ("[motion]\nmax_rate = 100.0\n", "max_rate", "max_rate_arcsec_per_hr"),
        (
            "[linking]\ntrack_after_days = 30.0\n",
            "track_after_days",
            "secure_after_days",
        ),
        (
            "[efficiency]\nmodel = \"step\"\n[efficiency.blocks.deep]\npeak = 0.5\n",
            "blocks",
            "classes",
        ),
        (
            "[efficiency]\nmodel = \"double-tanh\"\nfall_width_mag = 0.2\ntail_width_mag = 0.5\n",
            "double-tanh",
            "tanh-product",
        ),
        (
            "[efficiency]\nmodel = \"tanh-product\"\nw1_mag = 0.2\ntail_width_mag = 0.5\n",
            "w1_mag",
            "fall_width_mag",
        ),
        (
            "[efficiency]\nmodel = \"tanh-product\"\nfall_width_mag = 0.2\nw2_mag = 0.5\n",
            "w2_mag",
            "tail_width_mag",
        ),
    ];
    for (tail, old, new) in cases {
        let c = Case::new(&[("survey.toml", &format!("{SPEC}{tail}"))]);
        c.fails(
            &c.observe(&[]),
            &["survey.toml", &format!("`{old}` was renamed `{new}`")],
        );
    }
}

#[test]
fn renamed_block_column_of_the_visits() {
    let visits = VISITS
        .replace("depth_mag\n", "depth_mag,block\n")
        .replace(",24.0\n", ",24.0,deep\n");
    let c = Case::new(&[("visits.csv", &visits)]);
    c.fails(
        &c.observe(&[]),
        &["visits.csv", "`block` was renamed `efficiency_class`"],
    );
}

#[test]
fn directory_where_a_file_is_expected() {
    let c = Case::new(&[]);
    std::fs::create_dir(c.dir.path().join("dir.csv")).unwrap();
    c.fails(
        &c.observe(&["--objects", &c.p("dir.csv")]),
        &["dir.csv", "is a directory"],
    );
    let (spec, objects, out) = (c.p("dir.csv"), c.p("objects.csv"), c.p("out"));
    let a = args(&["observe", "--survey", &spec, "--objects", &objects, "--out", &out]);
    c.fails(&a, &["dir.csv", "is a directory", "survey spec"]);
}

#[test]
fn population_constraint_that_rejects_everything() {
    let c = Case::new(&[]);
    let spec = format!("{POPULATION}[constraints]\nq_au = [100.0, 200.0]\n");
    std::fs::write(c.dir.path().join("pop.toml"), spec).unwrap();
    let (spec, out) = (c.p("pop.toml"), c.p("o.parquet"));
    let a = args(&["draw", "--spec", &spec, "--count", "100", "--seed", "1", "--out", &out]);
    c.fails(&a, &["pop.toml", "constraints.q_au"]);
}

#[test]
fn unwritable_output_directory() {
    // A regular file where a directory is needed: refused even for root, who ignores modes.
    let c = Case::new(&[]);
    c.fails(
        &c.observe(&["--out", &format!("{}/out", c.p("objects.csv"))]),
        &["objects.csv/out", "cannot create"],
    );
}

#[test]
fn objects_with_a_column_observe_writes_are_refused_before_any_output() {
    let objects = OBJECTS
        .replace(",h_mag\n", ",h_mag,detected\n")
        .replace(",7.0\n", ",7.0,1\n")
        .replace(",6.0\n", ",6.0,0\n");
    let c = Case::new(&[("objects.csv", &objects)]);
    c.fails(&c.observe(&[]), &["detected", "rename or drop"]);
}

#[test]
fn inconsistent_shards_from_the_environment() {
    let c = Case::new(&[]);
    for (env, extra, expect) in [
        (Some(("7", "4")), vec![], "SLURM_ARRAY_TASK_ID = 7 with 4 shards"),
        (Some(("x", "4")), vec![], "SLURM_ARRAY_TASK_ID `x`"),
        (None, vec!["--shard", "1/4", "--shards", "3"], "the shard counts differ"),
        (None, vec!["--shards", "3"], "needs SLURM_ARRAY_TASK_ID"),
        (None, vec!["--shard", "4/4"], "--shard `4/4`"),
    ] {
        let before = listing(c.dir.path());
        let mut cmd = Command::new(env!("CARGO_BIN_EXE_seine"));
        cmd.args(c.observe(&extra))
            .env_remove("SLURM_ARRAY_TASK_ID")
            .env_remove("SLURM_ARRAY_TASK_COUNT");
        if let Some((id, n)) = env {
            cmd.env("SLURM_ARRAY_TASK_ID", id).env("SLURM_ARRAY_TASK_COUNT", n);
        }
        let o = cmd.output().unwrap();
        let err = common::stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{err}");
        assert!(err.contains(expect), "expected `{expect}` in {err}");
        assert_eq!(listing(c.dir.path()), before);
    }
}

/// A Parquet objects table is checked in blocks before the run: a duplicate id far apart is
/// found, with both rows, before anything is written.
#[test]
fn duplicate_ids_in_a_parquet_table_name_both_rows() {
    let c = Case::new(&[]);
    let mut df = common::bench_objects(1000);
    let ids: Vec<f64> = (0..1000).map(|i| if i == 900 { 3.0 } else { i as f64 }).collect();
    df.with_column(polars::prelude::Column::new("id".into(), ids)).unwrap();
    let path = c.dir.path().join("objects.parquet");
    seine::io::write_table(&mut df, &path, &seine::io::Provenance::current()).unwrap();
    let objects = c.p("objects.parquet");
    c.fails(
        &c.observe(&["--objects", &objects]),
        &["objects.parquet row 901", "`id`", "found 3 again"],
    );
}

/// Extreme but finite values (an orbit of 1e300 AU, a visit at MJD 1e308, an element epoch of
/// NaN in a spec, a distribution reaching 1e-130 AU) are refused by their plausible range
/// (src/ranges.rs), naming the row or key and the range, before anything is written.
#[test]
fn values_outside_their_plausible_range_are_refused() {
    let c = Case::new(&[("objects.csv", &OBJECTS.replace("60.0,0.3", "1e300,0.3"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "`a_au`", "[0.05, 200000]"]);
    let c = Case::new(&[("objects.csv", &OBJECTS.replace("60.0,0.3", "1e-130,0.3"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "`a_au`"]);
    let c = Case::new(&[("visits.csv", &VISITS.replace("1,61000.2", "1,1e308"))]);
    c.fails(&c.observe(&[]), &["visits.csv", "row 2", "`mjd`", "1972-2200"]);
    let c = Case::new(&[("visits.csv", &VISITS.replace("1,61000.2", "1,500000.0"))]);
    c.fails(&c.observe(&[]), &["visits.csv", "row 2", "`mjd`"]);
    let c = Case::new(&[("objects.csv", &OBJECTS.replace(",7.0\n", ",99.0\n"))]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 1", "`h_mag`"]);
    for (from, to, key) in [
        ("epoch_mjd = 61000.0", "epoch_mjd = nan", "population.epoch_mjd"),
        ("epoch_mjd = 61000.0", "epoch_mjd = 1e12", "population.epoch_mjd"),
        ("lo = 40.0, hi = 50.0", "lo = 1e-130, hi = 50.0", "orbit.a_au"),
    ] {
        let spec = POPULATION.replace(from, to);
        std::fs::write(c.dir.path().join("pop.toml"), spec).unwrap();
        let (spec, out) = (c.p("pop.toml"), c.p("o.parquet"));
        let a = args(&["draw", "--spec", &spec, "--count", "10", "--seed", "1", "--out", &out]);
        c.fails(&a, &["pop.toml", key, "expected"]);
        std::fs::remove_file(c.dir.path().join("pop.toml")).unwrap();
    }
}

/// Extreme spec parameters that used to hang (κ = 1e20, σ = 1e6°) or draw wrong values
/// without a word (a truncated normal 10σ from its mean) draw, quickly, what they describe.
#[test]
fn extreme_distribution_parameters_draw_what_they_describe() {
    let dir = tempfile::tempdir().unwrap();
    let spec = POPULATION.replace(
        "inc_deg = { dist = \"isotropic\" }",
        "inc_deg = { dist = \"truncated-normal\", mean = 0.0, sigma = 3.0, lo = 30.0, hi = 40.0 }\n\
             node_deg = { dist = \"von-mises\", mean = 100.0, kappa = 1e20 }",
    );
    let pop = common::write(dir.path(), "pop.toml", &spec);
    let out = dir.path().join("o.csv");
    let started = std::time::Instant::now();
    let o = common::seine(&[
        "draw",
        "--quiet",
        "--spec",
        pop.to_str().unwrap(),
        "--count",
        "2000",
        "--seed",
        "1",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", common::stderr(&o));
    assert!(started.elapsed().as_secs() < 60);
    let t = seine::population::objects::ObjectTable::read(&out).unwrap();
    let inc: Vec<f64> = t.elements.iter().map(|e| e.inc_rad.to_degrees()).collect();
    assert!(inc.iter().all(|i| (30.0..=40.0).contains(i)));
    // Far-tail mean ≈ lo + σ²/(lo − mean) = 30.3 (scipy: 30.294); not piled up at 40.
    let mean = inc.iter().sum::<f64>() / inc.len() as f64;
    assert!((mean - 30.294).abs() < 0.05, "mean inclination {mean}");
    assert!(
        t.elements
            .iter()
            .all(|e| (e.node_rad.to_degrees() - 100.0).abs() < 1e-6)
    );
    let spec = POPULATION.replace("{ dist = \"isotropic\" }", "{ dist = \"sin-gaussian\", sigma = 1e6 }");
    let pop = common::write(dir.path(), "pop2.toml", &spec);
    let o = common::seine(&[
        "draw",
        "--quiet",
        "--spec",
        pop.to_str().unwrap(),
        "--count",
        "2000",
        "--seed",
        "1",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", common::stderr(&o));
}

/// A table whose a, e and q disagree is refused (which one is meant is unknown).
#[test]
fn inconsistent_redundant_elements_are_refused() {
    let objects = OBJECTS
        .replace(",h_mag\n", ",h_mag,q_au\n")
        .replace(",7.0\n", ",7.0,40.5\n")
        .replace(",6.0\n", ",6.0,45.0\n");
    let c = Case::new(&[("objects.csv", &objects)]);
    c.fails(&c.observe(&[]), &["objects.csv", "row 2", "`q_au`", "a_au (1 - e)"]);
}

/// A closed stdout (`seine demo | head -1`) is a normal end: status 0, no panic.
#[test]
fn closed_stdout_is_a_quiet_end() {
    let dir = tempfile::tempdir().unwrap();
    let objects = common::write(dir.path(), "objects.csv", OBJECTS);
    let out = dir.path().join("demo");
    for a in [
        vec!["table", objects.to_str().unwrap()],
        vec!["demo", "--out", out.to_str().unwrap()],
    ] {
        // A pipe whose reading end is closed before the first line is written.
        let (reader, writer) = std::io::pipe().unwrap();
        drop(reader);
        let o = Command::new(env!("CARGO_BIN_EXE_seine"))
            .args(&a)
            .stdout(writer)
            .output()
            .unwrap();
        let err = common::stderr(&o);
        assert_eq!(o.status.code(), Some(0), "{a:?}: {err}");
        assert!(!err.contains("panicked"), "{a:?}: {err}");
    }
}

/// SIGINT during `draw` removes its hidden temporary: nothing is left, status 2.
#[test]
fn interrupted_draw_leaves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let pop = common::write(dir.path(), "pop.toml", POPULATION);
    let out = dir.path().join("o.parquet");
    let child = Command::new(env!("CARGO_BIN_EXE_seine"))
        .args([
            "draw",
            "--quiet",
            "--spec",
            pop.to_str().unwrap(),
            "--count",
            "20000000",
            "--seed",
            "1",
        ])
        .arg("--out")
        .arg(&out)
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Wait until the temporary exists (the draw is under way), then interrupt.
    let started = std::time::Instant::now();
    while listing(dir.path()).len() < 2 && started.elapsed().as_secs() < 60 {
        std::thread::sleep(std::time::Duration::from_millis(50));
    }
    assert_eq!(listing(dir.path()).len(), 2, "no temporary appeared");
    let pid = child.id().to_string();
    assert!(Command::new("kill").args(["-INT", &pid]).status().unwrap().success());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(2), "{}", common::stderr(&o));
    assert_eq!(listing(dir.path()), vec![pop], "{}", common::stderr(&o));
}

/// Merges check what they merge: `draw` shards (stamped in their provenance) must be the N
/// shards of one draw, each once, in any order given; no merge writes into one of its inputs;
/// a refused merge writes nothing.
#[test]
fn merges_check_their_shards() {
    let c = Case::new(&[]);
    std::fs::write(c.dir.path().join("pop.toml"), POPULATION).unwrap();
    let spec = c.p("pop.toml");
    let draw = |shard: Option<&str>, seed: &str, out: &str| {
        let mut a = args(&[
            "draw",
            "--quiet",
            "--spec",
            &spec,
            "--count",
            "30",
            "--seed",
            seed,
            "--out",
            &c.p(out),
        ]);
        if let Some(s) = shard {
            a.extend(["--shard".to_string(), s.to_string()]);
        }
        let o = Command::new(env!("CARGO_BIN_EXE_seine")).args(&a).output().unwrap();
        assert!(o.status.success(), "{}", common::stderr(&o));
    };
    draw(Some("0/3"), "1", "s0.parquet");
    draw(Some("1/3"), "1", "s1.parquet");
    draw(Some("2/3"), "1", "s2.parquet");
    draw(Some("2/3"), "9", "other_seed.parquet");
    draw(None, "1", "whole.parquet");
    let merge = |ins: &[&str], out: &str| {
        let mut a = args(&["merge", "--quiet"]);
        a.extend(ins.iter().map(|i| c.p(i)));
        a.extend(["--out".to_string(), c.p(out)]);
        a
    };
    c.fails(&merge(&["s0.parquet", "s1.parquet"], "m.parquet"), &["3 shards"]);
    c.fails(
        &merge(&["s0.parquet", "s1.parquet", "s1.parquet"], "m.parquet"),
        &["s1.parquet", "twice"],
    );
    c.fails(
        &merge(&["s0.parquet", "s1.parquet", "other_seed.parquet"], "m.parquet"),
        &["other_seed.parquet", "same draw"],
    );
    c.fails(
        &merge(&["s0.parquet", "s1.parquet", "s2.parquet"], "s1.parquet"),
        &["s1.parquet", "one of the inputs"],
    );
    // Any order given: the shards are put in shard order, the result is the whole draw.
    let o = Command::new(env!("CARGO_BIN_EXE_seine"))
        .args(merge(&["s2.parquet", "s0.parquet", "s1.parquet"], "m.parquet"))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let (m, whole) = (
        seine::population::objects::ObjectTable::read(&c.dir.path().join("m.parquet")).unwrap(),
        seine::population::objects::ObjectTable::read(&c.dir.path().join("whole.parquet")).unwrap(),
    );
    assert_eq!(m.ids, whole.ids);
    assert_eq!(m.elements, whole.elements);
    // An observe output merged into itself.
    let o = Command::new(env!("CARGO_BIN_EXE_seine"))
        .args(c.observe(&["--shard", "0/1"]))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let out = c.p("out");
    c.fails(&args(&["merge", &out, "--out", &out]), &["one of the inputs"]);
    // A damaged part (one byte changed in the middle) differs from its manifest's checksum.
    let part = common::walk(&c.dir.path().join("out"))
        .into_iter()
        .find(|p| p.to_string_lossy().contains("parts") && p.extension().is_some_and(|e| e == "parquet"))
        .expect("a part of the shard");
    let mut bytes = std::fs::read(&part).unwrap();
    let mid = bytes.len() / 2;
    bytes[mid] ^= 0x55;
    std::fs::write(&part, bytes).unwrap();
    c.fails(
        &args(&["merge", &out, "--out", &c.p("merged")]),
        &["checksum", "--resume"],
    );
}

/// The orbit-fit options outside their plausible range (src/ranges.rs): observe's astrometric
/// σ and floor, and the analyses' orbit-quality cut, each refused naming the option and range.
#[test]
fn fit_options_outside_their_plausible_range_are_refused() {
    let c = Case::new(&[]);
    for (option, value, range) in [
        ("--astrometric-sigma-arcsec", "0", "[0.0001, 10]"),
        ("--astrometric-sigma-arcsec", "1e6", "[0.0001, 10]"),
        ("--astrometric-floor-arcsec", "-0.1", "[0, 10]"),
        ("--astrometric-floor-arcsec", "inf", "[0, 10]"),
    ] {
        let bad = format!("{option}={value}");
        c.fails(&c.observe(&["--fit-orbits", &bad]), &[option, range, "arcsec"]);
    }
    let (survey, objects, out) = (c.p("survey.toml"), c.p("objects.csv"), c.p("out"));
    for (option, value, range) in [
        ("--min-arc-days", "-1", "[0, 100000]"),
        ("--min-arc-days", "1e9", "[0, 100000]"),
        ("--max-sigma-a-frac", "nan", "[0, 1000]"),
        ("--max-sigma-a-frac", "1e300", "[0, 1000]"),
    ] {
        let bad = format!("{option}={value}");
        let a = args(&[
            "bias-map",
            "--survey",
            &survey,
            "--objects",
            &objects,
            "--out",
            &out,
            "--fitted-elements",
            &bad,
        ]);
        c.fails(&a, &[option, range]);
    }
}

/// A clustering test of one object is refused before any map is made, leaving nothing.
#[test]
fn a_clustering_test_of_one_object_is_refused() {
    let one = OBJECTS.lines().take(2).collect::<Vec<_>>().join("\n") + "\n";
    let c = Case::new(&[("objects.csv", &one)]);
    let a = args(&[
        "cluster-test",
        "--survey",
        &c.p("survey.toml"),
        "--catalog",
        &c.p("objects.csv"),
        "--out",
        &c.p("out"),
    ]);
    c.fails(&a, &["objects.csv", "at least two"]);
}

/// Runaway jobs are refused before any work, with the estimate and the way out (--shard or
/// --over-budget): a draw of 10^12 objects, 10^10 bias-map cells, 10^10 cluster-test trials.
#[test]
fn runs_over_budget_are_refused() {
    let c = Case::new(&[]);
    std::fs::write(c.dir.path().join("pop.toml"), POPULATION).unwrap();
    let (spec, survey, objects) = (c.p("pop.toml"), c.p("survey.toml"), c.p("objects.csv"));
    let out = c.p("out");
    c.fails(
        &args(&[
            "draw",
            "--spec",
            &spec,
            "--count",
            "1000000000000",
            "--seed",
            "1",
            "--out",
            &c.p("o.parquet"),
        ]),
        &["--count", "objects drawn", "--over-budget"],
    );
    c.fails(
        &args(&[
            "bias-map",
            "--survey",
            &survey,
            "--objects",
            &objects,
            "--out",
            &out,
            "--grid",
            "100000,100000",
            "--per-cell",
            "1",
        ]),
        &["--grid", "--over-budget"],
    );
    c.fails(
        &args(&[
            "cluster-test",
            "--survey",
            &survey,
            "--catalog",
            &objects,
            "--out",
            &out,
            "--trials",
            "10000000000",
        ]),
        &["--trials"],
    );
    c.fails(
        &args(&[
            "hideout",
            "--survey",
            &survey,
            "--prior",
            &spec,
            "--count",
            "1000000000000",
            "--out",
            &out,
        ]),
        &["--count", "--over-budget"],
    );
}

/// Options: a negative number where none is meaningful is one sentence (not the parser's
/// usage block); a negative site longitude is a value.
#[test]
fn negative_option_values() {
    let c = Case::new(&[]);
    std::fs::write(c.dir.path().join("pop.toml"), POPULATION).unwrap();
    let spec = c.p("pop.toml");
    for (opt, v) in [("--count", "-5"), ("--seed", "-1")] {
        let mut a = args(&[
            "draw",
            "--spec",
            &spec,
            "--count",
            "10",
            "--seed",
            "1",
            "--out",
            &c.p("o.csv"),
        ]);
        let i = a.iter().position(|x| x == opt).unwrap();
        a[i + 1] = v.to_string();
        c.fails(&a, &[opt, v, "negative"]);
    }
    std::fs::write(c.dir.path().join("epochs.csv"), "mjd\n61000.5\n").unwrap();
    let o = Command::new(env!("CARGO_BIN_EXE_seine"))
        .args([
            "ephemeris",
            "--objects",
            &c.p("objects.csv"),
            "--epochs",
            &c.p("epochs.csv"),
        ])
        .args(["--out", &c.p("eph.csv"), "--site", "-70.5,-30.2,2000"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
}
