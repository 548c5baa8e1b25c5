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
            "statistics",
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
const KNOWN_EXCEPTIONS: &[(&str, &str, &str)] = &[];

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

/// Files of one module that use each other today, with what removes the cycle: (module, the
/// files in the cycle, sorted, why). The test fails when one of them is gone, so this list only
/// shrinks.
const KNOWN_CYCLES: &[(&str, &[&str], &str)] = &[];

/// The sibling files of `src/<module>/` that each file names (`super::x` or `crate::<module>::x`).
fn sibling_uses(module: &str) -> Vec<(String, BTreeSet<String>)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("src").join(module);
    let mut files = Vec::new();
    rust_files(&dir, &mut files);
    let names: BTreeSet<String> = files
        .iter()
        .filter(|p| p.parent() == Some(dir.as_path()))
        .map(|p| p.file_stem().unwrap().to_string_lossy().to_string())
        .filter(|n| n != "mod")
        .collect();
    let own_prefix = format!("crate::{module}::");
    names
        .iter()
        .map(|name| {
            let text = fs::read_to_string(dir.join(format!("{name}.rs"))).unwrap();
            let mut used = BTreeSet::new();
            for line in text.lines().filter(|l| !l.trim_start().starts_with("//")) {
                for prefix in ["super::", own_prefix.as_str()] {
                    for (i, _) in line.match_indices(prefix) {
                        let rest = &line[i + prefix.len()..];
                        let end = rest
                            .find(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
                            .unwrap_or(rest.len());
                        let other = &rest[..end];
                        if other != name && names.contains(other) {
                            used.insert(other.to_string());
                        }
                    }
                }
            }
            (name.clone(), used)
        })
        .collect()
}

/// The groups of two or more files that reach each other through their uses (the strongly
/// connected components, found by following uses from every file: the graphs are small).
fn cycles(uses: &[(String, BTreeSet<String>)]) -> Vec<Vec<String>> {
    let reach = |from: &str| -> BTreeSet<String> {
        let mut seen = BTreeSet::new();
        let mut todo = vec![from.to_string()];
        while let Some(f) = todo.pop() {
            for u in uses.iter().filter(|(n, _)| *n == f).flat_map(|(_, u)| u) {
                if seen.insert(u.clone()) {
                    todo.push(u.clone());
                }
            }
        }
        seen
    };
    let mut groups: BTreeSet<Vec<String>> = BTreeSet::new();
    for (name, _) in uses {
        let from = reach(name);
        let group: Vec<String> = uses
            .iter()
            .map(|(n, _)| n.clone())
            .filter(|n| n == name || (from.contains(n) && reach(n).contains(name)))
            .collect();
        if group.len() > 1 {
            groups.insert(group);
        }
    }
    groups.into_iter().collect()
}

/// Inside a module, files form a hierarchy too: no two files use each other, directly or
/// through others (a cycle means neither can be read or changed alone).
#[test]
fn no_files_of_a_module_use_each_other() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut found = Vec::new();
    for entry in fs::read_dir(&root).unwrap() {
        let path = entry.unwrap().path();
        let module = path.file_name().unwrap().to_string_lossy().to_string();
        if path.is_dir() && module != "cli" {
            for group in cycles(&sibling_uses(&module)) {
                found.push((module.clone(), group));
            }
        }
    }
    let known = |m: &str, g: &[String]| {
        KNOWN_CYCLES
            .iter()
            .any(|(km, kg, _)| *km == m && kg.iter().eq(g.iter()))
    };
    let new: Vec<_> = found.iter().filter(|(m, g)| !known(m, g)).collect();
    assert!(new.is_empty(), "files of one module that use each other: {new:?}");
    let gone: Vec<_> = KNOWN_CYCLES
        .iter()
        .filter(|(km, kg, _)| !found.iter().any(|(m, g)| m == km && kg.iter().eq(g.iter())))
        .collect();
    assert!(
        gone.is_empty(),
        "fixed, remove from KNOWN_CYCLES (and DEVELOPERS.md): {gone:?}"
    );
}

#[test]
fn the_cycle_finder_sees_a_cycle() {
    let set = |xs: &[&str]| xs.iter().map(|x| x.to_string()).collect::<BTreeSet<String>>();
    let uses = vec![
        ("a".to_string(), set(&["b"])),
        ("b".to_string(), set(&["c"])),
        ("c".to_string(), set(&["a"])),
        ("d".to_string(), set(&["a"])),
    ];
    assert_eq!(
        cycles(&uses),
        vec![vec!["a".to_string(), "b".to_string(), "c".to_string()]]
    );
}

/// The name a line of code declares as a public type (`pub struct|enum|type|trait NAME`), if
/// any; `pub(crate)` and private types are not counted.
fn public_type_name(line: &str) -> Option<&str> {
    let rest = line.trim_start().strip_prefix("pub ")?;
    let rest = ["struct ", "enum ", "type ", "trait "]
        .iter()
        .find_map(|kw| rest.strip_prefix(kw))?;
    let end = rest
        .find(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
        .unwrap_or(rest.len());
    (end > 0).then(|| &rest[..end])
}

/// Names that explain themselves (DEVELOPERS.md, "Architecture"): no two public types of the
/// library share a name, so a type named in a message, a doc or a review is found in one step.
/// (The binary's one `Args` per `src/cli/` file is the binary's convention and not counted.)
#[test]
fn no_two_public_types_share_a_name() {
    let mut seen: std::collections::BTreeMap<String, Vec<String>> = Default::default();
    for (rel, _) in library_files() {
        let text = fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(&rel)).unwrap();
        for (n, line) in text.lines().enumerate() {
            if let Some(name) = public_type_name(line) {
                seen.entry(name.to_string())
                    .or_default()
                    .push(format!("{rel}:{}", n + 1));
            }
        }
    }
    let shared: Vec<String> = seen
        .into_iter()
        .filter(|(_, at)| at.len() > 1)
        .map(|(name, at)| format!("{name}: {}", at.join(", ")))
        .collect();
    assert!(
        shared.is_empty(),
        "public types that share a name (rename one so each says what it is):\n{}",
        shared.join("\n")
    );
}

#[test]
fn the_name_reader_sees_public_types_only() {
    assert_eq!(public_type_name("pub struct Batch<'a> {"), Some("Batch"));
    assert_eq!(public_type_name("    pub enum StopRule {"), Some("StopRule"));
    assert_eq!(
        public_type_name("pub type Result<T> = std::result::Result<T, Error>;"),
        Some("Result")
    );
    assert_eq!(public_type_name("pub(crate) struct Hidden;"), None);
    assert_eq!(public_type_name("struct Private;"), None);
    assert_eq!(public_type_name("pub fn struct_like() {}"), None);
}
