//! Errors of the argument parser as one sentence (exit status 2): the parser's own text is
//! several lines with a usage block; a negative number where the option takes none gets a
//! sentence of its own, since the parser reads it as an unknown option.

use clap::error::{ContextKind, ContextValue, ErrorKind};

/// Print `e` (help and version as they are, status 0) or one sentence (status 2), and exit.
pub fn exit_with(e: clap::Error) -> ! {
    if !e.use_stderr() {
        let _ = e.print(); // --help, --version
        std::process::exit(0);
    }
    if e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
        let _ = e.print(); // `seine` alone: the list of commands
        std::process::exit(2);
    }
    let args: Vec<String> = std::env::args().collect();
    eprintln!("seine: {}", sentence(&e, &args));
    std::process::exit(2);
}

/// The one sentence for a parser error, given the command line.
pub fn sentence(e: &clap::Error, args: &[String]) -> String {
    let invalid = match e.get(ContextKind::InvalidArg) {
        Some(ContextValue::String(s)) => Some(s.clone()),
        _ => None,
    };
    if e.kind() == ErrorKind::UnknownArgument
        && let Some(arg) = &invalid
        && arg.starts_with('-')
        && arg[1..].parse::<f64>().is_ok()
    {
        let option = args
            .iter()
            .position(|a| a == arg)
            .and_then(|i| i.checked_sub(1))
            .map(|i| args[i].clone())
            .unwrap_or_else(|| "an option".into());
        return format!("{option} {arg}: expected a value ≥ 0 (a negative number means nothing here)");
    }
    // The parser's first line, without its "error: " prefix, and a pointer to --help.
    let text = e.render().to_string();
    let first = text.lines().next().unwrap_or("").trim_start_matches("error: ").trim();
    let command = args
        .get(1)
        .filter(|a| !a.starts_with('-'))
        .map_or("seine".into(), |c| format!("seine {c}"));
    format!("{first} (see `{command} --help`)")
}
