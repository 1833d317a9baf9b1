//! Wait for a child process and read its peak memory (shared, through
//! `#[path]`, by the hostile-size tests in `tests/it/hostile.rs` and the
//! scale benchmark in `benches/scale.rs`).

/// How a waited child ended: its exit code or the signal that ended it,
/// and its peak resident set in bytes.
pub struct Waited {
    /// Exit code, when it exited.
    pub code: Option<i32>,
    /// The signal that ended it, when one did.
    pub signal: Option<i32>,
    /// Peak resident set (`ru_maxrss`), in bytes.
    pub max_rss_bytes: u64,
}

/// Wait for `child` with `wait4`, which reaps it and gives its resource
/// usage (`Child::wait` would not give the memory; do not wait on the
/// child again).
#[allow(clippy::zombie_processes)]
pub fn wait_with_peak_memory(child: std::process::Child) -> Waited {
    let pid = libc::pid_t::try_from(child.id()).expect("a pid fits pid_t");
    let mut status: libc::c_int = 0;
    // SAFETY: a zeroed rusage is a valid value for wait4 to fill; the pid
    // is our child's, reaped here once.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    let got = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
    assert_eq!(got, pid, "wait4: {}", std::io::Error::last_os_error());
    Waited {
        code: libc::WIFEXITED(status).then(|| libc::WEXITSTATUS(status)),
        signal: libc::WIFSIGNALED(status).then(|| libc::WTERMSIG(status)),
        // Linux reports ru_maxrss in KiB.
        max_rss_bytes: u64::try_from(usage.ru_maxrss).expect("non-negative") * 1024,
    }
}
