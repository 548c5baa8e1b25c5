//! Shards of a job array. Shard k of n (k from 0) is the k-th of n contiguous, disjoint
//! ranges whose union is the whole: of the rows of an objects table (`observe`,
//! `detectability`, `bias-map`) or of the ids of a prior or population (`draw`, `hideout`).
//! One rule for every command, so `--shard K/N` splits any of them alike.

use std::ops::Range;

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
