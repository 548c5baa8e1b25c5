//! The library's dependency rules (DEVELOPERS.md, "Architecture"): modules are stacked in
//! layers, and a module may use its own layer and the layers below it, never one above.
//! The check reads every `crate::<module>` path in `src/` (comments skipped), so a new
//! `use` that breaks a rule fails here, naming the file, the line and the two layers.
//! Source of the rules: the project's own design (DEVELOPERS.md); no outside reference.

use std::collections::BTreeSet;
use std::fs;
use std::path::{Path, PathBuf};

/// The layers, lowest first: (layer name, the top-level modules of `src/` in it).
/// The commands (`src/commands/`, one library call per command) sit on top of the library; the
/// binary (`src/main.rs`, `src/cli/`) above them uses the library as `seine::`.
const LAYERS: &[(&str, &[&str])] = &[
    (
        "foundation",
        &[
            "foundation",
            "time",
            "error",
            "rng",
            "shard",
            "progress",
            "budget",
            "interrupt",
        ],
    ),
    ("tables", &["io", "ranges"]),
    ("orbit", &["orbit"]),
    ("sky", &["sky"]),
    ("population and survey", &["population", "survey"]),
    ("engine", &["engine"]),
    ("analyses", &["analysis", "hideout", "fit"]),
    ("report", &["report"]),
    ("commands", &["commands"]),
];

/// Uses that break a rule today, each with why and what removes it: (file, used module, why).
/// The test fails when one of them disappears too, so this list only shrinks.
const KNOWN_EXCEPTIONS: &[(&str, &str, &str)] = &[(
    "src/engine/run.rs",
    "fit",
    "observe --fit-orbits fits inside the engine's chunk loop; goes with the one engine entry (issue 15, item 3)",
)];

fn layer_of(module: &str) -> Option<usize> {
    LAYERS.iter().position(|(_, mods)| mods.contains(&module))
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The module names after each `crate::` on a line of code.
fn used_modules(line: &str) -> Vec<&str> {
    line.match_indices("crate::")
        .map(|(i, _)| {
            let rest = &line[i + "crate::".len()..];
            let end = rest
                .find(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
                .unwrap_or(rest.len());
            &rest[..end]
        })
        .collect()
}

/// (file relative to the crate, its top-level module), for every library file.
fn library_files() -> Vec<(String, String)> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files = Vec::new();
    rust_files(&root.join("src"), &mut files);
    files
        .into_iter()
        .filter_map(|p| {
            let rel = p.strip_prefix(root).unwrap().to_string_lossy().replace('\\', "/");
            let top = rel
                .trim_start_matches("src/")
                .split('/')
                .next()
                .unwrap()
                .trim_end_matches(".rs")
                .to_string();
            (!["main", "lib", "cli"].contains(&top.as_str())).then_some((rel, top))
        })
        .collect()
}

#[test]
fn every_library_module_has_a_layer() {
    let missing: BTreeSet<String> = library_files()
        .into_iter()
        .map(|(_, top)| top)
        .filter(|m| layer_of(m).is_none())
        .collect();
    assert!(
        missing.is_empty(),
        "modules with no layer in tests/architecture.rs (and DEVELOPERS.md): {missing:?}"
    );
}

#[test]
fn no_module_uses_a_higher_layer() {
    let mut breaks = Vec::new();
    let mut excepted = BTreeSet::new();
    for (rel, top) in library_files() {
        let Some(own) = layer_of(&top) else { continue };
        let text = fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(&rel)).unwrap();
        for (n, line) in text.lines().enumerate() {
            if line.trim_start().starts_with("//") {
                continue;
            }
            for used in used_modules(line) {
                let Some(theirs) = layer_of(used) else { continue };
                if theirs <= own {
                    continue;
                }
                if KNOWN_EXCEPTIONS.iter().any(|(f, m, _)| *f == rel && *m == used) {
                    excepted.insert((rel.clone(), used.to_string()));
                    continue;
                }
                breaks.push(format!(
                    "{rel}:{}: `{top}` (layer {}) uses `{used}` (layer {})",
                    n + 1,
                    LAYERS[own].0,
                    LAYERS[theirs].0
                ));
            }
        }
    }
    assert!(
        breaks.is_empty(),
        "a lower layer uses a higher one:\n{}",
        breaks.join("\n")
    );
    let gone: Vec<_> = KNOWN_EXCEPTIONS
        .iter()
        .filter(|(f, m, _)| !excepted.contains(&(f.to_string(), m.to_string())))
        .collect();
    assert!(
        gone.is_empty(),
        "fixed, remove from KNOWN_EXCEPTIONS (and DEVELOPERS.md): {gone:?}"
    );
}

#[test]
fn the_checker_sees_a_violation() {
    // The reader of paths itself: a line like this one in `orbit` would be flagged.
    assert_eq!(
        used_modules("use crate::sky::frames::{lon_lat}; crate::engine::run(x)"),
        ["sky", "engine"]
    );
    assert!(layer_of("orbit") < layer_of("sky"));
}
