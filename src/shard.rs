//! Shards of a job array. Shard k of n (k from 0) is the k-th of n contiguous, disjoint
//! ranges whose union is the whole: of the rows of an objects table (`observe`,
//! `detectability`, `bias-map`) or of the ids of a prior or population (`draw`, `hideout`).
//! One rule for every command, so `--shard K/N` splits any of them alike; and the one rule
//! that says which shard a task takes (`--shard`, `--shards`, a Slurm job array's variables).

use std::ops::Range;

use crate::error::{Error, Result};

/// k·len/n .. (k+1)·len/n, in u128 so that no count overflows; the whole without a shard.
pub fn shard_range(len: u64, shard: Option<(u64, u64)>) -> Range<u64> {
    match shard {
        None => 0..len,
        Some((k, n)) => {
            let at = |j: u64| (len as u128 * j as u128 / n as u128) as u64;
            at(k)..at(k + 1)
        }
    }
}

/// The same rule over the rows of a table.
pub fn shard_rows(len: usize, shard: Option<(usize, usize)>) -> Range<usize> {
    let r = shard_range(len as u64, shard.map(|(k, n)| (k as u64, n as u64)));
    r.start as usize..r.end as usize
}

/// The same rule over object ids 0..count.
pub fn shard_ids(count: u64, shard: Option<(u64, u64)>) -> Range<i64> {
    let r = shard_range(count, shard);
    r.start as i64..r.end as i64
}

/// Parse `K/N` (K from 0 to N − 1).
pub fn parse_shard(s: &str) -> Result<(usize, usize)> {
    let bad = || Error::input(format!("--shard `{s}`: expected K/N with 0 ≤ K < N, e.g. 0/4"));
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if n == 0 || k >= n {
        return Err(bad());
    }
    Ok((k, n))
}

/// Which shard a command takes, from `--shard K/N`, `--shards N` and the Slurm array
/// variables (passed in): `--shard` wins (and must agree with `--shards`); otherwise a Slurm
/// task id gives K, and `--shards` or the task count gives N. None: the whole input.
pub fn resolve(
    shard: Option<&str>,
    shards: Option<usize>,
    task_id: Option<&str>,
    task_count: Option<&str>,
) -> Result<Option<(usize, usize)>> {
    if shards == Some(0) {
        return Err(Error::input("--shards: expected at least 1"));
    }
    if let Some(s) = shard {
        let (k, n) = parse_shard(s)?;
        if shards.is_some_and(|m| m != n) {
            return Err(Error::input(format!(
                "--shard {s} and --shards {}: the shard counts differ; give one of them",
                shards.unwrap_or(0)
            )));
        }
        return Ok(Some((k, n)));
    }
    let Some(id) = task_id else {
        if shards.is_some() {
            return Err(Error::input(
                "--shards: needs SLURM_ARRAY_TASK_ID in the environment (or use --shard K/N)",
            ));
        }
        return Ok(None);
    };
    let k: usize = id
        .trim()
        .parse()
        .map_err(|_| Error::input(format!("SLURM_ARRAY_TASK_ID `{id}`: expected a task index 0, 1, 2, …")))?;
    let n = match (shards, task_count) {
        (Some(n), _) => n,
        (None, Some(c)) => c
            .trim()
            .parse()
            .map_err(|_| Error::input(format!("SLURM_ARRAY_TASK_COUNT `{c}`: expected a number of tasks")))?,
        (None, None) => {
            return Err(Error::input(
                "SLURM_ARRAY_TASK_ID is set but not SLURM_ARRAY_TASK_COUNT: give --shards N",
            ));
        }
    };
    if k >= n {
        return Err(Error::input(format!(
            "SLURM_ARRAY_TASK_ID = {k} with {n} shards: expected an index below {n} \
             (submit --array=0-{} and pass --shards {n})",
            n.saturating_sub(1)
        )));
    }
    Ok(Some((k, n)))
}
