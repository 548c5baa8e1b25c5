//! `seine ephemeris` from the command line: output contract and bad input.

mod common;

use common::{seine, stderr, write};

const HEADER: &str = "id,a_au,e,inc_deg,node_deg,argperi_deg,mean_anomaly_deg,epoch_mjd,h_mag";
const GOOD: &str = "1,45.0,0.1,5.0,10.0,20.0,30.0,60000.0,6.0";

fn run_with(objects: &str) -> (std::process::Output, std::path::PathBuf, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap();
    let obj = write(dir.path(), "objects.csv", objects);
    let ep = write(dir.path(), "epochs.csv", "mjd\n60000.0\n60001.0\n");
    let out = dir.path().join("eph.parquet");
    let o = seine(&[
        "ephemeris",
        "--objects",
        obj.to_str().unwrap(),
        "--epochs",
        ep.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    (o, out, dir)
}

fn assert_refused(objects: &str, must_mention: &[&str]) {
    let (o, out, _d) = run_with(objects);
    let msg = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "exit status for {objects:?}: {msg}");
    for m in must_mention {
        assert!(msg.contains(m), "message {msg:?} should mention {m:?}");
    }
    assert_eq!(msg.trim().lines().count(), 1, "one clear message: {msg}");
    assert!(!out.exists(), "no output file may be left behind");
    let leftovers: Vec<_> = std::fs::read_dir(out.parent().unwrap())
        .unwrap()
        .filter_map(|e| e.ok())
        .map(|e| e.file_name())
        .filter(|n| n.to_string_lossy().contains("tmp"))
        .collect();
    assert!(leftovers.is_empty(), "temporary files left: {leftovers:?}");
}

#[test]
fn writes_the_contract_columns() {
    let (o, out, _d) = run_with(&format!("{HEADER}\n{GOOD}\n"));
    assert!(o.status.success(), "{}", stderr(&o));
    let df = seine::io::read_table(&out).unwrap();
    let names: Vec<String> = df.get_column_names().iter().map(|s| s.to_string()).collect();
    for c in ["id", "mjd", "ra_deg", "dec_deg", "r_au", "delta_au", "phase_deg", "mag"] {
        assert!(names.contains(&c.to_string()), "missing {c} in {names:?}");
    }
    assert_eq!(df.height(), 2);
    let md = seine::io::table::read_parquet_metadata(&out).unwrap();
    let prov = md
        .iter()
        .find(|(k, _)| k == seine::io::provenance::METADATA_KEY)
        .expect("provenance");
    assert!(prov.1.contains("sha256") && prov.1.contains("ephemeris"), "{}", prov.1);
}

#[test]
fn eccentricity_of_one_is_refused() {
    assert_refused(
        &format!("{HEADER}\n{GOOD}\n2,45.0,1.0,5,10,20,30,60000,6\n"),
        &["objects.csv", "row 2", "`e`"],
    );
}

#[test]
fn negative_semimajor_axis_is_refused() {
    assert_refused(
        &format!("{HEADER}\n-3,0.1,5,10,20,30,60000,6\n")
            .replace("id,", "")
            .replace("\n1,", "\n"),
        &["row 1", "`a_au`"],
    );
}

#[test]
fn perihelion_beyond_semimajor_axis_is_refused() {
    let t = "a_au,q_au,inc_deg,node_deg,argperi_deg,mean_anomaly_deg,epoch_mjd,h_mag\n40,30,1,1,1,1,60000,6\n40,41,1,1,1,1,60000,6\n";
    assert_refused(t, &["row 2", "`q_au`"]);
}

#[test]
fn nan_is_refused() {
    assert_refused(
        &format!("{HEADER}\n1,NaN,0.1,5,10,20,30,60000,6\n"),
        &["row 1", "`a_au`", "finite"],
    );
}

#[test]
fn infinite_value_is_refused() {
    assert_refused(
        &format!("{HEADER}\n1,45,0.1,5,10,20,30,inf,6\n"),
        &["row 1", "`epoch_mjd`"],
    );
}

#[test]
fn inclination_out_of_range_is_refused() {
    assert_refused(
        &format!("{HEADER}\n1,45,0.1,190,10,20,30,60000,6\n"),
        &["row 1", "`inc_deg`"],
    );
}

#[test]
fn angle_out_of_range_is_refused() {
    assert_refused(
        &format!("{HEADER}\n1,45,0.1,10,10,720,30,60000,6\n"),
        &["row 1", "`argperi_deg`"],
    );
}

#[test]
fn missing_column_is_refused() {
    assert_refused(
        "id,a_au,e,inc_deg\n1,45,0.1,5\n",
        &["objects.csv", "missing required column", "node_deg"],
    );
}

#[test]
fn text_in_a_numeric_column_is_refused() {
    assert_refused(
        &format!("{HEADER}\n1,45,0.1,5,10,20,30,60000,6\n2,far,0.1,5,10,20,30,60000,6\n"),
        &["`a_au`"],
    );
}

#[test]
fn duplicate_ids_are_refused() {
    assert_refused(&format!("{HEADER}\n{GOOD}\n{GOOD}\n"), &["row 2", "`id`", "unique"]);
}

#[test]
fn missing_file_and_directory_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let ep = write(dir.path(), "epochs.csv", "mjd\n60000\n");
    let out = dir.path().join("e.csv");
    for objects in [dir.path().join("nope.csv"), dir.path().to_path_buf().join("sub.csv")] {
        if objects.ends_with("sub.csv") {
            std::fs::create_dir(&objects).unwrap();
        }
        let o = seine(&[
            "ephemeris",
            "--objects",
            objects.to_str().unwrap(),
            "--epochs",
            ep.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]);
        assert_eq!(o.status.code(), Some(2));
        assert!(
            stderr(&o).contains(objects.file_name().unwrap().to_str().unwrap()),
            "{}",
            stderr(&o)
        );
        assert!(!out.exists());
    }
}

#[test]
fn demo_runs_the_whole_job_and_its_report_shows_the_cluster_test() {
    let dir = tempfile::tempdir().unwrap();
    let o = seine(&["demo", "--out", dir.path().to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("discovered") && text.contains("Sorrel Peak"), "{text}");
    // The model comparison states its likelihood ratio as a number even beyond f64's range.
    let err = stderr(&o);
    assert!(
        err.contains("likelihood ratio ") && !err.contains("likelihood ratio inf"),
        "{err}"
    );
    // The demo's cluster test writes its null samples and rose band; its report shows them
    // (a run's figures are named after its directory, `cluster_test_`).
    let html = std::fs::read_to_string(dir.path().join("index.html")).unwrap();
    for f in [
        "cluster_test_cluster_null_rayleigh_varpi",
        "cluster_test_cluster_null_kuiper_node",
        "cluster_test_rose_varpi_deg",
        "cluster_test_rose_node_deg",
    ] {
        assert!(
            html.contains(&format!("src=\"figures/{f}.svg\"")),
            "{f} missing from the demo's report"
        );
        assert!(dir.path().join("figures").join(format!("{f}.svg")).exists(), "{f}.svg");
    }
    assert!(
        html.contains("the bias-aware null"),
        "the demo's roses carry the bias-aware band"
    );
    assert!(
        html.contains("Cluster test cluster-test: each statistic"),
        "the cluster test's table"
    );
    // The cadence step: three revisit intervals through `seine yield`, fewer found the sparser.
    assert!(
        html.contains("src=\"figures/yield_cadence_yield.svg\"") && html.contains("per 100 h"),
        "the yield against cadence"
    );
    let found: Vec<u64> = ["every night", "every 3 nights", "every 7 nights"]
        .iter()
        .map(|plan| {
            let at = err
                .find(&format!("synoptic, {plan}: "))
                .unwrap_or_else(|| panic!("{plan} in {err}"));
            let rest = &err[at + plan.len() + 11..];
            rest.split_whitespace().next().unwrap().parse().unwrap()
        })
        .collect();
    assert!(
        found[0] > found[1] && found[1] > found[2],
        "discoveries by cadence {found:?}"
    );
    // The hideout step: where the invented planet could still be, with its own section and
    // map, and the conclusion of its summary on the page.
    assert!(
        html.contains("<h2>Where a planet could still hide: hideout</h2>")
            && html.contains("src=\"figures/hideout_hideout_sky_map.svg\""),
        "the demo's hideout section"
    );
    let summary = seine::hideout::read_summary(&dir.path().join("hideout")).unwrap();
    assert!(
        summary.n_draws == 20_000 && summary.n_excluded > 0,
        "{}",
        summary.conclusion
    );
    assert!(text.contains("6. hideout"), "{text}");
}
