//! The `seine` command line: a thin layer over the library.

use clap::Parser;

fn main() {
    let cli = match seine_cli::Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => seine_cli::arguments::exit_with(e),
    };
    // Every command: an interrupt removes the temporaries of files being written.
    if let Err(e) = seine::interrupt::install().and_then(|()| seine_cli::run(cli)) {
        eprintln!("seine: {e}");
        std::process::exit(2);
    }
}

#[path = "cli/mod.rs"]
mod seine_cli;
