//! Everything the CLI prints goes through here, so a failed write is
//! handled once: a reader that has gone away (a closed pipe, `| head`)
//! ends the output quietly with the status already earned, as Unix tools
//! do; any other failure (a full disk) is one clean error line and exit 2,
//! never a panic and never a success that lost its output.

use std::fmt::Arguments;
use std::io::{ErrorKind, Write};
use std::sync::atomic::{AtomicU8, Ordering};
use std::sync::Mutex;

const FINE: u8 = 0;
const CLOSED: u8 = 1;
const FAILED: u8 = 2;

static STATE: AtomicU8 = AtomicU8::new(FINE);
static FAILURE: Mutex<Option<String>> = Mutex::new(None);

/// Writes to standard output; after a failure nothing more is tried.
pub fn write_out(args: Arguments) {
    if STATE.load(Ordering::Relaxed) != FINE {
        return;
    }
    let mut out = std::io::stdout().lock();
    if let Err(e) = out.write_fmt(args) {
        record(&e, "standard output");
    }
}

/// Writes to standard error; a failure there cannot be reported, only
/// reflected in the exit status.
pub fn write_err(args: Arguments) {
    if STATE.load(Ordering::Relaxed) != FINE {
        return;
    }
    if let Err(e) = std::io::stderr().lock().write_fmt(args) {
        record(&e, "standard error");
    }
}

fn record(e: &std::io::Error, stream: &str) {
    if e.kind() == ErrorKind::BrokenPipe {
        STATE.store(CLOSED, Ordering::Relaxed);
        return;
    }
    STATE.store(FAILED, Ordering::Relaxed);
    if let Ok(mut slot) = FAILURE.lock() {
        slot.get_or_insert_with(|| {
            format!(
                "catena: cannot write {stream}: {}",
                super::files::plain_io(e)
            )
        });
    }
}

/// Flushes standard output and turns any write failure into the exit
/// status: `status` itself after a closed pipe, 2 after any other error.
pub fn finish(status: u8) -> u8 {
    if STATE.load(Ordering::Relaxed) == FINE {
        if let Err(e) = std::io::stdout().lock().flush() {
            record(&e, "standard output");
        }
    }
    match STATE.load(Ordering::Relaxed) {
        FAILED => {
            let message = FAILURE.lock().ok().and_then(|mut m| m.take());
            if let Some(message) = message {
                let _ = writeln!(std::io::stderr(), "{message}");
            }
            super::EXIT_USAGE
        }
        _ => status,
    }
}

/// `print!` through [`write_out`].
macro_rules! out {
    ($($arg:tt)*) => { $crate::cli::output::write_out(format_args!($($arg)*)) };
}

/// `println!` through [`write_out`].
macro_rules! outln {
    () => { $crate::cli::output::write_out(format_args!("\n")) };
    ($($arg:tt)*) => {
        $crate::cli::output::write_out(format_args!("{}\n", format_args!($($arg)*)))
    };
}

/// `eprint!` through [`write_err`].
macro_rules! err {
    ($($arg:tt)*) => { $crate::cli::output::write_err(format_args!($($arg)*)) };
}

/// `eprintln!` through [`write_err`].
macro_rules! errln {
    () => { $crate::cli::output::write_err(format_args!("\n")) };
    ($($arg:tt)*) => {
        $crate::cli::output::write_err(format_args!("{}\n", format_args!($($arg)*)))
    };
}
