//! Interrupts (SIGINT, SIGTERM): what a command leaves behind when it is stopped.
//!
//! Every file is written under a hidden temporary name and renamed into place when complete
//! (`io::table`, `io::sink`); the temporary's name comes from [`temporary_for`], which records
//! it. One handler, installed for every command by [`install`], removes every recorded
//! temporary and ends the process with status 2, so an interrupted command leaves no partial
//! file. A command that can stop cleanly after the work in flight (`observe`, which keeps its
//! finished chunks for `--resume`) asks for [`graceful_stop`]: the first signal then raises
//! its flag instead, and a second signal ends the process as above.
//!
//! Exit statuses: 2 for an interrupted command, as for any refused or failed one (the
//! message says which).

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, OnceLock};

use crate::error::{Error, Result};

/// Temporaries this process has named; some are renamed or removed since, which is harmless.
static TEMPORARIES: Mutex<BTreeSet<PathBuf>> = Mutex::new(BTreeSet::new());
/// The flag of a command that stops cleanly on the first signal.
static GRACEFUL: OnceLock<Arc<AtomicBool>> = OnceLock::new();

/// The hidden temporary (`.NAME.PID.tmp`, beside `path`) a writer fills before renaming it
/// into place; recorded so that an interrupt removes it. A writer must take the name from
/// here before creating the file: the handler holds the record's lock while it removes the
/// files and ends the process, so no temporary is created after the removal.
pub fn temporary_for(path: &Path) -> PathBuf {
    let tmp = temporary_name(path);
    lock().insert(tmp.clone());
    tmp
}

/// The name of the temporary of `path`, without recording it.
pub fn temporary_name(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.{}.tmp", std::process::id()))
}

/// Install the handler (once per process; later calls do nothing).
pub fn install() -> Result<()> {
    static INSTALLED: OnceLock<()> = OnceLock::new();
    if INSTALLED.get().is_some() {
        return Ok(());
    }
    use signal_hook::consts::{SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM])
        .map_err(|e| Error::io(format!("cannot install the interrupt handler: {e}")))?;
    std::thread::spawn(move || {
        for _ in signals.forever() {
            if let Some(flag) = GRACEFUL.get().filter(|f| !f.load(Ordering::SeqCst)) {
                flag.store(true, Ordering::SeqCst);
                eprintln!("seine: stopping after the work in flight (interrupt again to stop at once)");
                continue;
            }
            end_now();
        }
    });
    let _ = INSTALLED.set(());
    Ok(())
}

/// The flag the first signal raises for a command that stops cleanly (checked between
/// chunks); installs the handler if needed.
pub fn graceful_stop() -> Result<Arc<AtomicBool>> {
    install()?;
    Ok(Arc::clone(GRACEFUL.get_or_init(|| Arc::new(AtomicBool::new(false)))))
}

/// Remove every recorded temporary and end with status 2. The lock is held to the end, so
/// a writer about to name a new temporary waits instead of creating it.
fn end_now() -> ! {
    let temporaries = lock();
    for tmp in temporaries.iter() {
        let _ = std::fs::remove_file(tmp);
    }
    eprintln!("seine: interrupted; no partial file was left");
    std::process::exit(2);
}

fn lock() -> std::sync::MutexGuard<'static, BTreeSet<PathBuf>> {
    // A poisoned lock still holds a valid set of names.
    TEMPORARIES.lock().unwrap_or_else(|p| p.into_inner())
}
