//! `seine demo`: arguments and printing; the run is `seine::commands::demo`.

use std::path::PathBuf;

use seine::Result;
use seine::commands::demo::{Say, demo};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Output directory for the demo's tables and report.
    #[arg(long, default_value = "seine-demo")]
    pub out: PathBuf,
}

pub fn run(a: Args) -> Result<()> {
    demo(&a.out, &mut |say| match say {
        Say::Line(text) => outln!("{text}"),
        Say::Stage(outcome) => super::common::print_outcome(outcome, false),
    })?;
    Ok(())
}
