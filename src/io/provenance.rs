//! Provenance of an output table: the tool version, the command line, a content hash of
//! every spec and table read, and the seed. Stored in Parquet key-value metadata (key
//! `seine.provenance`, JSON) or in a CSV table's sidecar file.

use std::path::Path;

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use crate::error::{Result, io_at};

#[derive(Debug, Clone, Default, Serialize, Deserialize, PartialEq)]
pub struct Provenance {
    pub tool: String,
    pub version: String,
    pub command_line: Vec<String>,
    pub inputs: Vec<InputHash>,
    pub seed: Option<u64>,
    /// For one shard of a table written in shards (`draw --shard K/N`): which one, so that a
    /// merge can check it has each shard of one run exactly once.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub shard: Option<ShardStamp>,
}

/// Shard `index` of `count`, of a table of `total_rows` rows in all.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
pub struct ShardStamp {
    pub index: u64,
    pub count: u64,
    pub total_rows: u64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct InputHash {
    pub path: String,
    pub sha256: String,
}

pub const METADATA_KEY: &str = "seine.provenance";

impl Provenance {
    /// Provenance for this process: tool, version and the command line as given.
    pub fn current() -> Self {
        Provenance {
            tool: "seine".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            command_line: std::env::args().collect(),
            inputs: Vec::new(),
            seed: None,
            shard: None,
        }
    }

    pub fn with_seed(mut self, seed: u64) -> Self {
        self.seed = Some(seed);
        self
    }

    /// Record a file that was read, with the SHA-256 of its bytes.
    pub fn add_input(&mut self, path: &Path) -> Result<()> {
        self.inputs.push(InputHash {
            path: path.display().to_string(),
            sha256: file_sha256(path)?,
        });
        Ok(())
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("provenance serializes")
    }

    pub fn key_values(&self) -> Vec<(String, String)> {
        vec![(
            METADATA_KEY.to_string(),
            serde_json::to_string(self).expect("provenance serializes"),
        )]
    }
}

pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes).iter().map(|b| format!("{b:02x}")).collect()
}

/// SHA-256 of a file, read in blocks: an input table may be far larger than memory.
pub fn file_sha256(path: &Path) -> Result<String> {
    use std::io::Read;
    let mut f = std::fs::File::open(path).map_err(|e| io_at(path, e))?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = f.read(&mut buf).map_err(|e| io_at(path, e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
    }
    Ok(hasher.finalize().iter().map(|b| format!("{b:02x}")).collect())
}
