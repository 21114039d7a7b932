//! Wall time and peak memory of a child process, for the benches
//! (`benches/report_scale.rs`, `benches/wide.rs`). Unix only: the peak
//! resident set size (`ru_maxrss`) comes from `wait4`, and covers the
//! child's own children that it waited for.

use std::error::Error;
use std::process::{Command, ExitStatus};
use std::time::{Duration, Instant};

/// Wall time and peak resident set size of one child process.
pub struct Measured {
    /// Wall-clock time from start to exit.
    pub wall: Duration,
    /// Peak resident set size, MB.
    pub peak_mb: f64,
    /// How the process ended.
    pub status: ExitStatus,
}

/// Runs `command` and measures it.
pub fn measure(command: &mut Command) -> Result<Measured, Box<dyn Error>> {
    use std::os::unix::process::ExitStatusExt;
    let start = Instant::now();
    let child = command.spawn()?;
    let pid = child.id() as libc::pid_t;
    let mut status = 0;
    // SAFETY: rusage is plain data that wait4 fills in for our own child.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: `pid` is a child of this process that has not been waited for.
    let waited = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
    let wall = start.elapsed();
    if waited != pid {
        return Err(format!("waiting for process {pid} failed").into());
    }
    Ok(Measured {
        wall,
        peak_mb: usage.ru_maxrss as f64 / 1024.0,
        status: ExitStatus::from_raw(status),
    })
}
