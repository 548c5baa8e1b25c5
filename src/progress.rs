//! The one progress bar of every command: on standard error, only when it is a terminal and
//! the user did not ask for quiet, with the rate as a whole number of units per second (a
//! rate of "2345.1872/s" says nothing more than "2345/s").

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressState, ProgressStyle};

/// A bar over `len` steps of `unit` (e.g. "objects", "nights"), or `None` when no bar is to
/// be shown; callers `inc` it and `finish_and_clear` it.
pub fn bar(len: u64, unit: &str, wanted: bool) -> Option<ProgressBar> {
    if !wanted || !std::io::stderr().is_terminal() {
        return None;
    }
    let template = format!("{{bar:40}} {{pos}}/{{len}} {unit}  {{rate}}  eta {{eta}}");
    let style = ProgressStyle::with_template(&template)
        .expect("valid template")
        .with_key("rate", |s: &ProgressState, w: &mut dyn std::fmt::Write| {
            let _ = write!(w, "{}", whole_rate(s.per_sec()));
        });
    Some(ProgressBar::new(len).with_style(style))
}

/// A rate as a whole number per second ("0/s" below one half).
pub fn whole_rate(per_sec: f64) -> String {
    if per_sec.is_finite() {
        format!("{:.0}/s", per_sec.max(0.0))
    } else {
        "–/s".into()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rates_are_whole_numbers() {
        assert_eq!(whole_rate(2345.1872), "2345/s");
        assert_eq!(whole_rate(0.4), "0/s");
        assert_eq!(whole_rate(f64::INFINITY), "–/s");
    }
}
