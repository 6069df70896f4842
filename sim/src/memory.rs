//! Peak resident memory of this process, for the streaming summaries.

/// Peak resident set size in bytes (`VmHWM` of `/proc/self/status`); `None` where the system
/// does not provide it.
pub fn peak_rss_bytes() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    kb.checked_mul(1024)
}
