//! Budgets before work: each command estimates what it is about to do (objects drawn, trials,
//! grid cells, bytes written, memory held) and refuses, in one sentence, a run past the
//! documented limit unless `--over-budget` says it is meant; before a large write it checks
//! the free space of the output's file system, which no flag overrides.
//!
//! The limits are about an hour of work or a few GB on one node (performance.md has the
//! rates); a bigger job is split with `--shard K/N` or confirmed with `--over-budget`.
//! configuration.md, "Budgets", lists them; a test keeps the two in agreement.

use std::path::Path;

use crate::error::{Error, Result};

/// One kind of work, its unit and its limit per run.
#[derive(Debug, Clone, Copy)]
pub struct Limit {
    pub what: &'static str,
    pub unit: &'static str,
    pub max: f64,
}

/// Objects one `draw` writes (~120 bytes each: 12 GB of Parquet).
pub const DRAW_OBJECTS: Limit = Limit {
    what: "objects drawn",
    unit: "objects",
    max: 1e8,
};
/// Objects × clones of `detectability` (about a quarter of an hour on a small survey).
pub const TRIALS: Limit = Limit {
    what: "trials (objects × clones)",
    unit: "trials",
    max: 1e8,
};
/// Hypothetical planets `hideout` carries through the surveys.
pub const HIDEOUT_DRAWS: Limit = Limit {
    what: "planets drawn",
    unit: "draws",
    max: 1e8,
};
/// Catalogue objects × redrawn catalogues of `cluster-test`.
pub const CLUSTER_TRIALS: Limit = Limit {
    what: "object draws of the trials (objects × trials)",
    unit: "draws",
    max: 1e9,
};
/// Objects × cells × trials per cell of a bias map with a fixed --per-cell (each trial an
/// engine run of one orbit).
pub const MAP_TRIALS: Limit = Limit {
    what: "bias-map trials (objects × cells × trials per cell)",
    unit: "trials",
    max: 1e8,
};
/// Memory a run may plan to hold, as a fraction of what the system has available.
pub const MEMORY_FRACTION: f64 = 0.8;

/// Refuse `amount` of `limit`'s work unless `over_budget`; `option` names what sets it.
pub fn check(limit: Limit, amount: f64, option: &str, over_budget: bool) -> Result<()> {
    if amount > limit.max && !over_budget {
        return Err(Error::input(format!(
            "{option}: {} {} {}, more than the {:e} one run takes; use --shard K/N or smaller \
             options, or add --over-budget if it is meant",
            format_amount(amount),
            limit.unit,
            limit.what,
            limit.max
        )));
    }
    Ok(())
}

/// Refuse a run that plans to hold more memory than the system has available (Linux: the
/// `MemAvailable` of /proc/meminfo; elsewhere not checked) unless `over_budget`.
pub fn check_memory(bytes: f64, option: &str, over_budget: bool) -> Result<()> {
    let Some(available) = available_memory_bytes() else {
        return Ok(());
    };
    if bytes > MEMORY_FRACTION * available && !over_budget {
        return Err(Error::input(format!(
            "{option}: the run would hold about {} of memory, more than {:.0}% of the {} available; \
             use --shard K/N or smaller options, or add --over-budget if it is meant",
            format_bytes(bytes),
            100.0 * MEMORY_FRACTION,
            format_bytes(available)
        )));
    }
    Ok(())
}

/// Refuse to start writing about `bytes` under `path` when its file system has less free
/// space (checked with `df -Pk`; where that is unavailable, not checked).
pub fn check_disk(path: &Path, bytes: f64) -> Result<()> {
    let Some(free) = free_disk_bytes(path) else {
        return Ok(());
    };
    if bytes > free {
        return Err(Error::input(format!(
            "{}: the output needs about {} but its file system has {} free",
            path.display(),
            format_bytes(bytes),
            format_bytes(free)
        )));
    }
    Ok(())
}

/// A bias-map run (`bias-map`, or `cluster-test` computing its maps): with a fixed number of
/// trials per object, those within `MAP_TRIALS` (adaptive maps stop at their discoveries, and
/// their cap per object bounds them); and the maps held at once (two 8-byte counts per cell and
/// object: all of them for a caller that keeps them, a batch for one that writes them as made)
/// within memory.
pub fn check_bias_maps(
    (objects, held): (usize, usize),
    cells: f64,
    fixed_trials: Option<u64>,
    over_budget: bool,
) -> Result<()> {
    let option = format!("--grid ({cells} cells) for {objects} objects");
    if let Some(t) = fixed_trials {
        check(
            MAP_TRIALS,
            objects as f64 * t as f64,
            &format!("{option} and --per-cell"),
            over_budget,
        )?;
    }
    check_memory(16.0 * held.min(objects) as f64 * cells, &option, over_budget)
}

fn available_memory_bytes() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024.0)
}

/// Free bytes of the file system holding `path` (or its nearest existing ancestor).
fn free_disk_bytes(path: &Path) -> Option<f64> {
    let mut dir = if path.as_os_str().is_empty() {
        Path::new(".")
    } else {
        path
    };
    while !dir.exists() {
        dir = dir
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
    }
    let out = std::process::Command::new("df").arg("-Pk").arg(dir).output().ok()?;
    let text = String::from_utf8(out.stdout).ok()?;
    // POSIX format: a header, then "filesystem blocks used available capacity mounted-on".
    let kb: f64 = text.lines().nth(1)?.split_whitespace().nth(3)?.parse().ok()?;
    Some(kb * 1024.0)
}

fn format_amount(x: f64) -> String {
    if x < 1e6 { format!("{x:.0}") } else { format!("{x:.3e}") }
}

fn format_bytes(b: f64) -> String {
    const UNITS: [&str; 6] = ["bytes", "kB", "MB", "GB", "TB", "PB"];
    let mut v = b;
    let mut i = 0;
    while v >= 1000.0 && i + 1 < UNITS.len() {
        v /= 1000.0;
        i += 1;
    }
    format!("{v:.1} {}", UNITS[i])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn over_the_limit_is_refused_unless_meant() {
        assert!(check(DRAW_OBJECTS, 1e8, "--count", false).is_ok());
        let e = check(DRAW_OBJECTS, 1e12, "--count", false).unwrap_err().to_string();
        assert!(e.contains("--count") && e.contains("--over-budget"), "{e}");
        assert!(check(DRAW_OBJECTS, 1e12, "--count", true).is_ok());
    }

    #[test]
    fn free_disk_is_read_and_a_huge_write_refused() {
        let dir = std::env::temp_dir();
        if free_disk_bytes(&dir).is_some() {
            assert!(check_disk(&dir.join("no/such/sub/dir"), 1e30).is_err());
            assert!(check_disk(&dir, 1.0).is_ok());
        }
        assert_eq!(format_bytes(1.5e12), "1.5 TB");
    }
}
