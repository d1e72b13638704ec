//! What the machine can do, and what a run's counts ask of it.
//!
//! Counts that come from a user (replicates, rows to hold, Monte Carlo
//! draws, worker threads) are checked here before anything is allocated or
//! spawned: a count whose memory does not fit is refused with an
//! [`Error::Option`] naming the setting, the memory it needs, the memory
//! available and the largest count that fits; a thread count above
//! [`THREADS_PER_CORE`] per core is cut to that, with a [`ThreadCap`] the
//! front end can show.
//!
//! The memory available is the smallest of: the kernel's estimate of memory
//! available without swapping (`MemAvailable` in `/proc/meminfo`; 4 GiB
//! when it cannot be read), and the room left under the process's
//! address-space limit (`ulimit -v`, from `/proc/self/limits` and
//! `/proc/self/status`). The environment variable [`MEMORY_ENV`] (bytes)
//! replaces both, for tests.

use crate::{Error, Phrasing, Result, Setting};

/// Environment variable that sets the memory available, in bytes, in place
/// of the measured figure.
pub const MEMORY_ENV: &str = "CAUSEWAY_MEMORY_LIMIT";

/// At most this many worker threads per core.
pub const THREADS_PER_CORE: usize = 4;

/// Address space a worker thread reserves whatever its work: its stack
/// (2 MiB) and an allocator arena (64 MiB), which count against an
/// address-space limit.
pub const THREAD_RESERVE: u64 = 66 << 20;

/// The memory assumed when the system does not say (4 GiB).
const FALLBACK_MEMORY: u64 = 4 << 30;

/// What the machine offers a run.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Machine {
    /// Cores available to the process.
    pub cores: usize,
    /// Memory available, in bytes.
    pub memory: u64,
}

impl Machine {
    /// The machine as it is now (memory is measured at each call).
    pub fn now() -> Machine {
        let cores = std::thread::available_parallelism().map_or(1, usize::from);
        let memory = std::env::var(MEMORY_ENV)
            .ok()
            .and_then(|v| v.trim().parse::<u64>().ok())
            .unwrap_or_else(measured_memory);
        Machine { cores, memory }
    }

    /// The most worker threads a run may use.
    pub fn max_threads(&self) -> usize {
        self.cores.saturating_mul(THREADS_PER_CORE).max(1)
    }

    /// The worker threads a run asking for `asked` uses: `asked` (0: one
    /// per core) cut to [`Machine::max_threads`].
    pub fn threads(&self, asked: usize) -> usize {
        match asked {
            0 => self.cores.max(1),
            n => n.min(self.max_threads()),
        }
    }

    /// The cut of `asked` threads, when it is more than the machine allows.
    pub fn thread_cap(&self, asked: usize) -> Option<ThreadCap> {
        let used = self.threads(asked);
        (asked > used).then_some(ThreadCap {
            asked,
            used,
            cores: self.cores,
        })
    }

    /// Checks that `demand` fits in the memory available.
    pub fn check(&self, demand: &Demand) -> Result<()> {
        fits(demand, self.memory, "memory", "is available")
    }
}

/// Checks that `demand` fits in the free space of the file system holding
/// `path` (a file to be written: its folder is asked); passes when the
/// system does not say.
pub fn check_disk(demand: &Demand, path: &std::path::Path) -> Result<()> {
    match disk_free(path) {
        Some(free) => fits(demand, free, "disk space", "is free there"),
        None => Ok(()),
    }
}

/// Free bytes, for an unprivileged user, on the file system of the folder
/// of `path`.
#[cfg(unix)]
fn disk_free(path: &std::path::Path) -> Option<u64> {
    use std::os::unix::ffi::OsStrExt;
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => std::path::Path::new("."),
    };
    let c = std::ffi::CString::new(dir.as_os_str().as_bytes()).ok()?;
    let mut st = std::mem::MaybeUninit::<libc::statvfs>::uninit();
    // SAFETY: `c` is a NUL-terminated path and `st` is written by the call
    // before it is read, only on success.
    let st = unsafe {
        if libc::statvfs(c.as_ptr(), st.as_mut_ptr()) != 0 {
            return None;
        }
        st.assume_init()
    };
    // The field types are u64 here but narrower on some platforms.
    #[allow(clippy::useless_conversion)]
    u64::from(st.f_bavail).checked_mul(u64::from(st.f_frsize))
}

#[cfg(not(unix))]
fn disk_free(_: &std::path::Path) -> Option<u64> {
    None
}

/// Checks `demand` against `available` bytes of `store`.
fn fits(demand: &Demand, available: u64, store: &str, there: &str) -> Result<()> {
    {
        let need = demand.bytes();
        if need.is_some_and(|b| b <= available) {
            return Ok(());
        }
        let need = match need {
            Some(b) => format!("needs about {} of {store}", bytes_text(b)),
            None => format!("needs more {store} than any machine can address"),
        };
        let fit = available.saturating_sub(demand.fixed) / demand.per_unit.max(1);
        let advice = if fit >= demand.least {
            format!("at most {fit} {} fit", demand.unit)
        } else {
            format!(
                "not even {} {} fit; free some {store} or use a smaller input",
                demand.least, demand.unit
            )
        };
        Err(Error::option(
            demand.setting,
            format!(
                "{}: {need}; {} {there}; {advice}",
                demand.count,
                bytes_text(available)
            ),
        ))
    }
}

/// The memory a count asks for: `fixed` bytes plus `per_unit` bytes for
/// each of `count` units.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Demand {
    /// The setting the count comes from.
    pub setting: Setting,
    /// The count asked for.
    pub count: u64,
    /// What one unit is, in the plural ("replicates").
    pub unit: &'static str,
    /// Bytes per unit.
    pub per_unit: u64,
    /// Bytes needed whatever the count.
    pub fixed: u64,
    /// The smallest count the setting accepts.
    pub least: u64,
}

impl Demand {
    /// The bytes needed, or `None` beyond 2^64.
    pub fn bytes(&self) -> Option<u64> {
        self.count.checked_mul(self.per_unit)?.checked_add(self.fixed)
    }
}

/// More worker threads asked for than the machine allows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ThreadCap {
    /// Threads asked for.
    pub asked: usize,
    /// Threads used.
    pub used: usize,
    /// The machine's cores.
    pub cores: usize,
}

impl ThreadCap {
    /// The cut as a warning, in `phrasing`.
    pub fn text(&self, phrasing: &dyn Phrasing) -> String {
        format!(
            "{} {}: more than {THREADS_PER_CORE} per core on this machine's {} core{}; using {}",
            phrasing.setting(Setting::Threads),
            self.asked,
            self.cores,
            if self.cores == 1 { "" } else { "s" },
            self.used
        )
    }
}

/// `size_of::<T>()` as bytes of a demand.
pub fn size<T>() -> u64 {
    std::mem::size_of::<T>() as u64
}

/// Bytes for people: B, KiB, MiB, GiB, TiB, PiB, EiB.
pub fn bytes_text(b: u64) -> String {
    const UNITS: [&str; 6] = ["KiB", "MiB", "GiB", "TiB", "PiB", "EiB"];
    if b < 1024 {
        return format!("{b} B");
    }
    let mut x = b as f64 / 1024.0;
    let mut unit = 0;
    while x >= 1024.0 && unit + 1 < UNITS.len() {
        x /= 1024.0;
        unit += 1;
    }
    format!("{x:.1} {}", UNITS[unit])
}

/// Memory available now: the kernel's estimate, within the address-space
/// limit's headroom.
fn measured_memory() -> u64 {
    let available = std::fs::read_to_string("/proc/meminfo")
        .ok()
        .and_then(|s| kib_field(&s, "MemAvailable:"))
        .unwrap_or(FALLBACK_MEMORY);
    let headroom = address_limit().map(|limit| {
        let used = std::fs::read_to_string("/proc/self/status")
            .ok()
            .and_then(|s| kib_field(&s, "VmSize:"))
            .unwrap_or(0);
        limit.saturating_sub(used)
    });
    headroom.map_or(available, |h| h.min(available))
}

/// A `Name: N kB` line of a /proc file, in bytes.
fn kib_field(text: &str, name: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with(name))?;
    let kib: u64 = line[name.len()..].split_whitespace().next()?.parse().ok()?;
    kib.checked_mul(1024)
}

/// The soft address-space limit in bytes, when there is one.
fn address_limit() -> Option<u64> {
    let limits = std::fs::read_to_string("/proc/self/limits").ok()?;
    let line = limits.lines().find(|l| l.starts_with("Max address space"))?;
    line["Max address space".len()..]
        .split_whitespace()
        .next()?
        .parse()
        .ok()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Words;

    fn machine() -> Machine {
        Machine {
            cores: 2,
            memory: 8 << 30,
        }
    }

    #[test]
    fn threads_are_cut_at_four_per_core() {
        let m = machine();
        assert_eq!(m.threads(0), 2);
        assert_eq!(m.threads(3), 3);
        assert_eq!(m.threads(8), 8);
        assert_eq!(m.threads(1_000_000), 8);
        assert_eq!(m.thread_cap(8), None);
        let cap = m.thread_cap(usize::MAX).unwrap();
        assert_eq!(cap.used, 8);
        assert_eq!(
            cap.text(&Words),
            format!(
                "the number of worker threads {}: more than 4 per core on this machine's 2 cores; using 8",
                usize::MAX
            )
        );
    }

    #[test]
    fn a_demand_beyond_memory_is_refused_with_what_fits() {
        let m = machine();
        let ok = Demand {
            setting: Setting::Bootstrap,
            count: 1000,
            unit: "replicates",
            per_unit: 64,
            fixed: 1 << 20,
            least: 2,
        };
        assert!(m.check(&ok).is_ok());
        let big = Demand {
            count: 100_000_000_000,
            ..ok.clone()
        };
        let e = m.check(&big).unwrap_err();
        assert_eq!(e.exit_code(), 2);
        let fit = ((8u64 << 30) - (1 << 20)) / 64;
        assert_eq!(
            e.to_string(),
            format!(
                "the number of bootstrap replicates 100000000000: needs about 5.8 TiB of memory; \
                 8.0 GiB is available; at most {fit} replicates fit"
            )
        );
        let overflow = Demand {
            count: u64::MAX,
            ..ok.clone()
        };
        assert!(
            m.check(&overflow)
                .unwrap_err()
                .to_string()
                .contains("more memory than any machine")
        );
        let none_fit = Demand {
            fixed: 16 << 30,
            ..ok
        };
        assert!(
            m.check(&none_fit)
                .unwrap_err()
                .to_string()
                .contains("not even 2 replicates fit")
        );
    }

    #[test]
    fn bytes_for_people() {
        assert_eq!(bytes_text(512), "512 B");
        assert_eq!(bytes_text(1536), "1.5 KiB");
        assert_eq!(bytes_text(6_400_000_000_000), "5.8 TiB");
        assert_eq!(bytes_text(u64::MAX), "16.0 EiB");
    }

    #[test]
    fn proc_fields_are_read_in_bytes() {
        let text = "MemTotal:       32000000 kB\nMemAvailable:   24000000 kB\n";
        assert_eq!(kib_field(text, "MemAvailable:"), Some(24_000_000 * 1024));
        assert_eq!(kib_field(text, "Missing:"), None);
        assert!(Machine::now().memory > 0);
    }
}
