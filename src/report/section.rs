//! A section of the report's page and the naming every section shares: the small tables
//! and figures it holds, the name a run goes by (its directory under the report's), the
//! file-name-safe prefix of its figures, and links relative to the page.

use std::path::Path;

use super::figure::Figure;

/// A small table for the page, with an optional link to the full table it is taken from
/// (label, path relative to the page).
#[derive(Debug, Clone, Default)]
pub struct Table {
    pub caption: String,
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
    pub link: Option<(String, String)>,
}

#[derive(Debug, Clone, Default)]
pub struct Section {
    pub title: String,
    pub intro: String,
    /// Notices for the reader (an input left out, and why).
    pub notes: Vec<String>,
    pub tables: Vec<Table>,
    pub figures: Vec<Figure>,
}

/// The name a run or input goes by: its path under the report's directory, or the
/// directory's own name when it is the report's directory (never ".").
pub fn label(dir: &Path, p: &Path) -> String {
    let r = p.strip_prefix(dir).unwrap_or(p);
    if !r.as_os_str().is_empty() {
        return r.display().to_string();
    }
    let own = |d: &Path| d.file_name().map(|n| n.to_string_lossy().into_owned());
    own(dir)
        .or_else(|| dir.canonicalize().ok().as_deref().and_then(own))
        .unwrap_or_else(|| "report directory".into())
}

/// A label as a file-name-safe stem prefix.
pub(super) fn slug(s: &str) -> String {
    let t: String = s
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '_'
            }
        })
        .collect();
    t.trim_matches('_').to_string()
}

/// A table's header row.
pub(super) fn header(cols: &[&str]) -> Vec<String> {
    cols.iter().map(|c| c.to_string()).collect()
}

/// The stem prefix of a run's figures: its label as a file-name-safe word.
pub(super) fn run_prefix(dir: &Path, run: &Path) -> String {
    format!("{}_", slug(&label(dir, run)))
}

/// A path as the page links it: relative to the report's directory.
pub(super) fn href(dir: &Path, path: &Path) -> String {
    path.strip_prefix(dir)
        .map_or(path.display().to_string(), |p| p.display().to_string())
}
