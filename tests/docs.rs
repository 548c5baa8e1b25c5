//! The documentation cannot rot: every fenced ```sh block of the tutorials is run, in order,
//! in a scratch directory that holds (a link to) `survey-configs/`, with the built binary
//! standing in for `seine`; each block must exit with status 0, and no `seine` command of a
//! tutorial may sit outside a ```sh block. The usage lines and option tables of
//! `configuration.md`, and the README's usage lines (placeholders, not runnable), are checked
//! against `seine CMD --help`:
//! every option they name exists, with the documented default where one is given.

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

/// Run the blocks of one document in a fresh directory, which is returned for checks of what
/// the text says the commands wrote.
fn run_doc(name: &str) -> tempfile::TempDir {
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
    tmp
}

/// The text of a report page.
fn read_page(page: &Path) -> String {
    std::fs::read_to_string(page).unwrap_or_else(|e| panic!("{}: {e}", page.display()))
}

#[test]
fn tutorial_bias_check_runs() {
    let d = run_doc("tutorial-bias-check.md");
    // Step 4 says the whole directory's report has a section per run: the maps' (the whole
    // catalogue's map with the objects marked) and the test's (its table, the banded roses and
    // the null distributions), each run's figures named by its directory.
    let html = read_page(&d.path().join("bias/index.html"));
    for f in [
        "maps_bias_map_varpi_deg_node_deg_catalogue",
        "cluster_rose_varpi_deg",
        "cluster_cluster_null_rayleigh_varpi",
        "cluster_cluster_null_mean_pole",
        "season_rose_varpi_deg",
    ] {
        assert!(html.contains(&format!("figures/{f}.svg")), "bias/index.html lacks {f}");
    }
    for section in ["Bias maps: maps", "Clustering test: cluster"] {
        assert!(
            html.contains(&format!("<h2>{section}</h2>")),
            "bias/index.html lacks {section}"
        );
    }
    assert!(html.contains("the bias-aware null") && html.contains("Cluster test cluster: each statistic"));
    for f in ["cluster_test", "cluster_null", "rose"] {
        assert!(d.path().join(format!("bias/cluster/{f}.parquet")).exists(), "{f}");
    }
    // Step 5 quotes the fit classes of the 100 discoveries.
    for (class, quoted) in [("one_opposition", "59"), ("short_arc", "37"), ("failed", "4")] {
        let out = Command::new(env!("CARGO_BIN_EXE_seine"))
            .args(["table", "bias/fitted/discoveries.parquet", "--count", "--where"])
            .arg(format!("fit_quality == {class}"))
            .current_dir(d.path())
            .output()
            .unwrap();
        let count = String::from_utf8_lossy(&out.stdout).trim().to_string();
        assert_eq!(count, quoted, "step 5 says {quoted} fits are {class}");
    }
    // Step 5: the same test on fitted orbits and on true ones, both under the quality cut.
    for run in ["cluster-cut-true", "cluster-cut-fitted"] {
        assert!(
            d.path().join(format!("bias/{run}/cluster_test.parquet")).exists(),
            "{run}"
        );
    }
}

#[test]
fn tutorial_cadence_runs() {
    let d = run_doc("tutorial-cadence.md");
    let html = read_page(&d.path().join("cadence/yield/index.html"));
    assert!(
        html.contains("figures/yield_cadence.svg") && html.contains("per 100 h"),
        "step 5's report draws the yield against cadence"
    );
}

#[test]
fn tutorial_likelihood_runs() {
    let d = run_doc("tutorial-likelihood.md");
    for f in [
        "detectability/detectability",
        "selection/selection_function",
        "compare/models",
        "compare/marginals",
    ] {
        assert!(d.path().join(format!("likelihood/{f}.parquet")).exists(), "{f}");
    }
    // The catalogue is observe's table of discoveries: objects-table columns first, each row
    // a discovery (no `detected` column to filter on), with its circumstances.
    let catalog = std::fs::read_to_string(d.path().join("likelihood/sky/discoveries.csv")).unwrap();
    let header: Vec<&str> = catalog.lines().next().unwrap().split(',').collect();
    assert!(
        header.starts_with(&["id", "a_au"]) && !header.contains(&"detected") && header.contains(&"discovery_mjd"),
        "the catalogue: objects-table columns and the discovery's circumstances: {header:?}"
    );
    assert!(catalog.lines().count() > 3, "a catalogue of a few discoveries at least");
    // The model that made the sky is favoured, beyond its model-sample error, and fits.
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.path().join("likelihood/compare/summary.json")).unwrap())
            .unwrap();
    let m = summary["models"].as_array().unwrap();
    let (a, b) = (&m[0], &m[1]);
    assert_eq!(a["name"], "A");
    let (la, lb) = (
        a["log_likelihood"].as_f64().unwrap(),
        b["log_likelihood"].as_f64().unwrap(),
    );
    let err = a["log_likelihood_error"]
        .as_f64()
        .unwrap()
        .hypot(b["log_likelihood_error"].as_f64().unwrap());
    assert!(la - lb > 2.0 * err, "A {la} vs B {lb} ± {err}");
    assert!(a["gof_p"].as_f64().unwrap() > 0.01, "{a}");
    assert!(a["log_likelihood_extended"].as_f64().is_some(), "{a}");
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

#[test]
fn every_seine_command_of_a_tutorial_is_run() {
    for name in [
        "tutorial-bias-check.md",
        "tutorial-cadence.md",
        "tutorial-likelihood.md",
    ] {
        let text = std::fs::read_to_string(docs_dir().join(name)).unwrap();
        let mut fence: Option<String> = None;
        for (k, line) in text.lines().enumerate() {
            let t = line.trim();
            if let Some(lang) = t.strip_prefix("```") {
                fence = if fence.is_some() { None } else { Some(lang.to_string()) };
                continue;
            }
            if let Some(lang) = &fence {
                assert!(
                    lang == "sh" || !t.starts_with("seine "),
                    "{name}, line {}: a seine command in a ```{lang} block is never run: {t}",
                    k + 1
                );
            }
        }
    }
}

/// `--name` options in a piece of text, in order, without repeats.
fn options_in(text: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    let b = text.as_bytes();
    let mut i = 0;
    while let Some(j) = text[i..].find("--") {
        let start = i + j + 2;
        let mut end = start;
        while end < b.len() && (b[end].is_ascii_lowercase() || b[end].is_ascii_digit() || b[end] == b'-') {
            end += 1;
        }
        let before_ok = i + j == 0 || !(b[i + j - 1].is_ascii_alphanumeric() || b[i + j - 1] == b'-');
        if end > start && b[start].is_ascii_lowercase() && before_ok {
            let o = format!("--{}", &text[start..end]);
            if !out.contains(&o) {
                out.push(o);
            }
        }
        i = end.max(start);
    }
    out
}

/// The help of one subcommand (it must exist).
fn help_of(cmd: &str) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_seine"))
        .args([cmd, "--help"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "the docs name `seine {cmd}`, which is not a command"
    );
    String::from_utf8(out.stdout).unwrap()
}

/// The paragraph of `option` in a help text: from its line to the next option's line.
fn option_help<'a>(help: &'a str, option: &str) -> Option<&'a str> {
    let lines: Vec<&str> = help.lines().collect();
    let names = |l: &str| -> bool {
        let t = l.trim_start();
        t.starts_with('-')
            && options_in(t.split("  ").next().unwrap_or(""))
                .iter()
                .any(|o| o == option)
    };
    let k = lines.iter().position(|l| names(l))?;
    let end = (k + 1..lines.len())
        .find(|&j| lines[j].trim_start().starts_with('-'))
        .unwrap_or(lines.len());
    let (a, b) = (
        lines[k].as_ptr() as usize,
        lines[end - 1].as_ptr() as usize + lines[end - 1].len(),
    );
    let base = help.as_ptr() as usize;
    Some(&help[a - base..b - base])
}

/// The commands a configuration.md heading names: `seine NAME …` or a bare `NAME` in backticks.
fn heading_commands(heading: &str, known: &[String]) -> Vec<String> {
    heading
        .split('`')
        .skip(1)
        .step_by(2)
        .filter_map(|code| {
            let w: Vec<&str> = code.split_whitespace().collect();
            let name = if w.first() == Some(&"seine") {
                w.get(1)
            } else {
                w.first()
            };
            name.map(|n| n.to_string()).filter(|n| known.contains(n))
        })
        .collect()
}

#[test]
fn configuration_and_readme_usage_lines_and_option_tables_match_the_help() {
    let text = std::fs::read_to_string(docs_dir().join("configuration.md")).unwrap();
    let top = Command::new(env!("CARGO_BIN_EXE_seine"))
        .arg("--help")
        .output()
        .unwrap();
    let known: Vec<String> = String::from_utf8(top.stdout)
        .unwrap()
        .lines()
        .skip_while(|l| !l.starts_with("Commands:"))
        .skip(1)
        .take_while(|l| l.starts_with("  "))
        .filter_map(|l| l.split_whitespace().next().map(String::from))
        .filter(|c| c != "help")
        .collect();
    assert!(known.contains(&"cluster-test".to_string()), "{known:?}");
    let mut helps: std::collections::HashMap<String, String> = Default::default();
    let mut help = |cmd: &str| helps.entry(cmd.to_string()).or_insert_with(|| help_of(cmd)).clone();
    let mut checked = 0;

    // Usage lines: in ```sh blocks (continued with a trailing backslash) and in inline code.
    let mut usages: Vec<String> = Vec::new();
    let mut in_sh = false;
    let mut pending = String::new();
    for line in text.lines() {
        let t = line.trim();
        if t.starts_with("```") {
            in_sh = !in_sh && t == "```sh";
            continue;
        }
        if in_sh {
            pending.push_str(t.trim_end_matches('\\'));
            pending.push(' ');
            if !t.ends_with('\\') {
                usages.push(std::mem::take(&mut pending));
            }
        } else {
            usages.extend(line.split('`').skip(1).step_by(2).map(String::from));
        }
    }
    // The README's table of commands, in inline code, too.
    let readme = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md")).unwrap();
    let readme_usages: Vec<String> = readme
        .lines()
        .flat_map(|l| l.split('`').skip(1).step_by(2).map(String::from).collect::<Vec<_>>())
        .collect();
    for (doc, u) in usages
        .iter()
        .map(|u| ("configuration.md", u))
        .chain(readme_usages.iter().map(|u| ("README.md", u)))
        .filter(|(_, u)| u.starts_with("seine "))
        // `seine COMMAND --help` is a placeholder, not a command.
        .filter(|(_, u)| {
            u.split_whitespace()
                .nth(1)
                .is_some_and(|c| c.chars().any(|ch| ch.is_ascii_lowercase()))
        })
    {
        let cmd = u.split_whitespace().nth(1).unwrap();
        if !known.contains(&cmd.to_string()) {
            help(cmd); // fails: a command that does not exist
        }
        let h = help(cmd);
        let usage = u.split('#').next().unwrap();
        for o in options_in(usage) {
            assert!(option_help(&h, &o).is_some(), "{doc}: `{u}`: seine {cmd} has no {o}");
            checked += 1;
        }
    }

    // Option tables: a row `| `--x` | default | meaning |` belongs to its section's commands.
    struct Section {
        level: usize,
        commands: Vec<String>,
        rows: Vec<(String, Option<String>)>,
        blocks: Vec<String>,
    }
    let mut sections: Vec<Section> = Vec::new();
    let mut header: Vec<String> = Vec::new();
    let mut fence = false;
    for line in text.lines() {
        if line.trim().starts_with("```") {
            fence = !fence;
            continue;
        }
        if fence {
            if let (Some(s), Some(cmd)) = (sections.last_mut(), line.trim().strip_prefix("seine ")) {
                s.blocks.extend(cmd.split_whitespace().next().map(String::from));
            }
            continue;
        }
        let level = line.chars().take_while(|c| *c == '#').count();
        if (2..=3).contains(&level) {
            sections.push(Section {
                level,
                commands: heading_commands(line, &known),
                rows: Vec::new(),
                blocks: Vec::new(),
            });
            continue;
        }
        if !line.starts_with('|') {
            continue;
        }
        let cells: Vec<String> = line
            .trim_matches('|')
            .split('|')
            .map(|c| c.trim().to_string())
            .collect();
        if cells[0] == "option" {
            header = cells;
            continue;
        }
        let Some(s) = sections.last_mut() else { continue };
        if cells[0].starts_with("`--") {
            let default = (header.get(1).map(String::as_str) == Some("default")).then(|| cells[1].clone());
            for o in options_in(&cells[0]) {
                s.rows.push((o, default.clone()));
            }
        }
    }
    for k in 0..sections.len() {
        let s = &sections[k];
        if s.rows.is_empty() {
            continue;
        }
        // A section without a command of its own: its subsections' commands (the options are
        // shared by all of them), else the commands of its usage blocks (any of them).
        let subsections: Vec<String> = sections[k + 1..]
            .iter()
            .take_while(|t| t.level > s.level)
            .flat_map(|t| t.commands.clone())
            .collect();
        let (commands, all) = if !s.commands.is_empty() {
            (s.commands.clone(), false)
        } else if !subsections.is_empty() {
            (subsections, true)
        } else {
            (s.blocks.clone(), false)
        };
        assert!(
            !commands.is_empty(),
            "configuration.md: an option table under no command: {:?}",
            s.rows
        );
        for (o, default) in &s.rows {
            let found: Vec<(String, String)> = commands
                .iter()
                .filter_map(|c| option_help(&help(c), o).map(|h| (c.clone(), h.to_string())))
                .collect();
            if all {
                assert_eq!(
                    found.len(),
                    commands.len(),
                    "configuration.md: {o} is not an option of every one of {commands:?}"
                );
            } else {
                assert!(
                    !found.is_empty(),
                    "configuration.md: {o} is not an option of {commands:?}"
                );
            }
            // A default given as one literal must be the one the help states.
            let literal = default
                .as_deref()
                .map(|d| d.trim_matches('`'))
                .filter(|d| !d.is_empty() && !d.contains(' ') && !d.contains('—') && *d != "required" && *d != "off");
            if let Some(d) = literal {
                for (c, h) in &found {
                    let h = h.split_whitespace().collect::<Vec<_>>().join(" ");
                    assert!(
                        h.contains(&format!("[default: {d}]")),
                        "configuration.md: {o} of seine {c}: documented default `{d}`, the help says: {h}"
                    );
                }
            }
            checked += 1;
        }
    }
    assert!(
        checked > 60,
        "only {checked} options checked: is the parser still reading the tables?"
    );
}
