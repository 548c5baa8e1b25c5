//! The `seine` command line: a thin layer over the library.

use clap::Parser;

fn main() {
    let cli = seine_cli::Cli::parse();
    if let Err(e) = seine_cli::run(cli) {
        eprintln!("seine: {e}");
        std::process::exit(2);
    }
}

#[path = "cli/mod.rs"]
mod seine_cli;
