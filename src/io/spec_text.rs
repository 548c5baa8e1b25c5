//! Spec files (TOML) as people write them: one parser for every spec, so that every
//! message has the same form: the file, the line and column, the key path, what was
//! expected, and for an unknown key or value the nearest valid one ("did you mean …?").

use std::path::Path;

use crate::error::{Error, Result};

/// The text of a spec file; `what` names the kind of spec in messages ("survey spec").
pub fn read_spec_text(path: &Path, what: &str) -> Result<String> {
    if path.is_dir() {
        return Err(Error::input(format!(
            "{}: is a directory, expected a {what} (TOML) file",
            path.display()
        )));
    }
    std::fs::read_to_string(path).map_err(|e| match e.kind() {
        std::io::ErrorKind::NotFound => Error::input(format!("{}: no such {what}", path.display())),
        std::io::ErrorKind::InvalidData => Error::input(format!(
            "{}: expected a {what} in UTF-8 TOML text, found bytes that are not UTF-8",
            path.display()
        )),
        _ => Error::input(format!("{}: cannot read the {what}: {e}", path.display())),
    })
}

/// Parse TOML text into `T` (whose tables should refuse unknown keys), with one clear error.
pub fn parse_toml<T: serde::de::DeserializeOwned>(text: &str, path: &Path) -> Result<T> {
    toml::from_str(text).map_err(|e| toml_error(path, text, e))
}

/// Whether the TOML text has a top-level table `name` (false when it is not TOML at all): tells
/// one kind of spec from another before the parse that would only list unknown keys.
pub fn has_table(text: &str, name: &str) -> bool {
    text.parse::<toml::Table>()
        .is_ok_and(|t| t.get(name).is_some_and(toml::Value::is_table))
}

/// The candidate closest to `found` by edit distance, if it is close enough to be a typo,
/// or else a candidate that extends it (a key given without its unit: `radius` → `radius_deg`).
pub fn nearest<'a>(found: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let candidates: Vec<&'a str> = candidates.into_iter().collect();
    let best = candidates.iter().map(|o| (edit_distance(found, o), *o)).min();
    match best {
        Some((d, o)) if d <= 2.max(found.chars().count() / 3) => Some(o),
        _ => candidates
            .into_iter()
            .filter(|o| !found.is_empty() && o.starts_with(found))
            .min_by_key(|o| o.len()),
    }
}

/// One message from a toml error: file, line and column, key path, what was expected, and
/// for an unknown key the nearest valid one.
pub fn toml_error(path: &Path, text: &str, e: toml::de::Error) -> Error {
    let mut bare = e.clone();
    bare.set_input(None);
    let shown = bare.to_string();
    let mut lines = shown.lines();
    let message = lines.next().unwrap_or("").to_string();
    let keys = lines
        .find_map(|l| l.strip_prefix("in `").and_then(|k| k.strip_suffix('`')))
        .map(str::to_string);
    let at = e
        .span()
        .map(|s| line_column(text, s.start))
        .map(|(l, c)| format!(" line {l}, column {c}"))
        .unwrap_or_default();
    let key = keys.map(|k| format!(", key `{k}`")).unwrap_or_default();
    let hint = nearest_key_hint(&message);
    Error::input(format!("{}:{at}{key}: {message}{hint}", path.display()))
}

fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let before = &text[..offset.min(text.len())];
    let line = before.matches('\n').count() + 1;
    let column = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, column)
}

/// Keys and values of the specs that were renamed: (old, new). A file that still uses an old
/// name is refused with a hint naming the new one.
pub const RENAMED: [(&str, &str); 9] = [
    ("blocks", "classes"),
    ("double-tanh", "tanh-product"),
    ("w1_mag", "fall_width_mag"),
    ("w2_mag", "tail_width_mag"),
    ("fill_factor", "random_live_fraction"),
    ("live_fraction", "random_live_fraction"),
    ("min_rate", "min_rate_arcsec_per_hr"),
    ("max_rate", "max_rate_arcsec_per_hr"),
    ("track_after_days", "secure_after_days"),
];

/// "; `OLD` was renamed `NEW`" when `found` is a renamed key or value, else "".
pub fn renamed_hint(found: &str) -> String {
    RENAMED
        .iter()
        .find(|(old, _)| *old == found)
        .map_or(String::new(), |(old, new)| format!("; `{old}` was renamed `{new}`"))
}

/// "unknown field `x`, expected one of `a`, `b`" → "; did you mean `a`?" when one is close,
/// or "; `x` was renamed `a`" when `x` is a former name.
fn nearest_key_hint(message: &str) -> String {
    if !(message.starts_with("unknown field") || message.starts_with("unknown variant")) {
        return String::new();
    }
    let quoted: Vec<&str> = message.split('`').skip(1).step_by(2).collect();
    let Some((found, options)) = quoted.split_first() else {
        return String::new();
    };
    let renamed = renamed_hint(found);
    if !renamed.is_empty() {
        return renamed;
    }
    nearest(found, options.iter().copied()).map_or(String::new(), |o| format!("; did you mean `{o}`?"))
}

/// Levenshtein distance (small strings only).
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut prev = row[0];
        row[0] = i + 1;
        for j in 0..b.len() {
            let cur = row[j + 1];
            row[j + 1] = (prev + (ca != b[j]) as usize).min(row[j] + 1).min(cur + 1);
            prev = cur;
        }
    }
    row[b.len()]
}
