//! The documentation cannot rot: every fenced ```sh block of the tutorials is run, in order,
//! in a scratch directory that holds (a link to) `survey-configs/`, with the built binary
//! standing in for `seine`; each block must exit with status 0. Commands of analyses that do
//! not exist yet are in ```text blocks, which are not run.

use std::path::{Path, PathBuf};
use std::process::Command;

fn docs_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("notebooks-free-docs")
}

/// The contents of every block fenced as ```sh, in document order.
fn sh_blocks(markdown: &str) -> Vec<String> {
    let mut blocks = Vec::new();
    let mut current: Option<String> = None;
    for line in markdown.lines() {
        match (&mut current, line.trim_end()) {
            (None, "```sh") => current = Some(String::new()),
            (Some(b), "```") => {
                blocks.push(std::mem::take(b));
                current = None;
            }
            (Some(b), _) => {
                b.push_str(line);
                b.push('\n');
            }
            (None, _) => {}
        }
    }
    assert!(current.is_none(), "an unclosed ```sh block");
    blocks
}

/// Run the blocks of one document in a fresh directory.
fn run_doc(name: &str) {
    let text = std::fs::read_to_string(docs_dir().join(name)).unwrap();
    let blocks = sh_blocks(&text);
    assert!(!blocks.is_empty(), "{name}: no ```sh blocks");
    let tmp = tempfile::tempdir().unwrap();
    let configs = Path::new(env!("CARGO_MANIFEST_DIR")).join("survey-configs");
    std::os::unix::fs::symlink(&configs, tmp.path().join("survey-configs")).unwrap();
    // A shell function puts the built binary where the docs say `seine`.
    let preamble = format!("seine() {{ '{}' \"$@\"; }}\n", env!("CARGO_BIN_EXE_seine"));
    for (k, block) in blocks.iter().enumerate() {
        let out = Command::new("sh")
            .arg("-euc")
            .arg(format!("{preamble}{block}"))
            .current_dir(tmp.path())
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{name}, block {} failed:\n{block}\nstderr:\n{}",
            k + 1,
            String::from_utf8_lossy(&out.stderr)
        );
    }
}

#[test]
fn tutorial_bias_check_runs() {
    run_doc("tutorial-bias-check.md");
}

#[test]
fn tutorial_cadence_runs() {
    run_doc("tutorial-cadence.md");
}

#[test]
fn tutorial_likelihood_runs() {
    run_doc("tutorial-likelihood.md");
}

#[test]
fn every_tutorial_is_tested() {
    let mut found: Vec<String> = std::fs::read_dir(docs_dir())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with("tutorial-") && n.ends_with(".md"))
        .collect();
    found.sort();
    assert_eq!(
        found,
        [
            "tutorial-bias-check.md",
            "tutorial-cadence.md",
            "tutorial-likelihood.md"
        ]
    );
}

#[test]
fn blocks_are_found_in_order() {
    let md = "a\n```sh\necho 1\n```\n```text\nseine later\n```\n```sh\necho 2\necho 3\n```\n";
    assert_eq!(sh_blocks(md), vec!["echo 1\n", "echo 2\necho 3\n"]);
}
