//! `seine report DIR`: rebuild the HTML report of an observe, plan or analysis output directory.

use std::path::PathBuf;

use seine::Result;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Output directory to report on (it and its immediate subdirectories are read); the
    /// report is written to DIR/index.html with its figures in DIR/figures/.
    pub dir: PathBuf,
}

pub fn run(a: Args) -> Result<()> {
    let w = seine::report::report(&a.dir)?;
    for s in &w.skipped {
        eprintln!("seine report: left out {}", s.describe());
    }
    outln!("seine report: {} ({} figures)", w.index.display(), w.figures.len());
    Ok(())
}
