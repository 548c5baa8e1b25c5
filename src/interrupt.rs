//! Interruptions: SIGINT and SIGTERM (a batch scheduler's preemption) end a run cleanly. A
//! long run checks a flag between chunks (`stop_flag`); a command that writes one file through
//! a temporary removes it (`remove_temporary_on_signal`). Either way no partial output stays.

use std::path::Path;
use std::sync::Arc;
use std::sync::atomic::AtomicBool;

use crate::error::{Error, Result};

/// A flag raised by the first SIGINT or SIGTERM, so that a long run stops cleanly after the
/// chunk in flight; a second signal ends the process at once.
pub fn stop_flag() -> Result<Arc<AtomicBool>> {
    use signal_hook::consts::{SIGINT, SIGTERM};
    use signal_hook::flag;
    let stop = Arc::new(AtomicBool::new(false));
    for sig in [SIGINT, SIGTERM] {
        // Order matters: the conditional shutdown sees the flag as it was before this signal.
        flag::register_conditional_shutdown(sig, 130, Arc::clone(&stop))
            .and_then(|_| flag::register(sig, Arc::clone(&stop)))
            .map_err(|e| Error::io(format!("cannot install the interrupt handler: {e}")))?;
    }
    Ok(stop)
}

/// For a command that writes one file through a temporary (`draw`): on SIGINT or SIGTERM,
/// remove the temporary of `out` and end with status 2, so that no hidden partial file stays.
pub fn remove_temporary_on_signal(out: &Path) -> Result<()> {
    use signal_hook::consts::{SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM])
        .map_err(|e| Error::io(format!("cannot install the interrupt handler: {e}")))?;
    let tmp = crate::io::table::temporary_name(out);
    let out = out.to_path_buf();
    std::thread::spawn(move || {
        if signals.forever().next().is_some() {
            let _ = std::fs::remove_file(&tmp);
            eprintln!("seine: interrupted; {} was not written", out.display());
            std::process::exit(2);
        }
    });
    Ok(())
}
