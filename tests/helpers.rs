//! Shared test helpers: run the binary, find test data.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

/// The folder of committed test data (tests/data).
pub fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("data")
        .join(name)
}

/// The folder of committed fixtures from reference libraries (tests/fixtures).
pub fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("fixtures")
        .join(name)
}

/// A path inside the repository.
pub fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// The result of one run of the binary.
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

impl From<Output> for Run {
    fn from(o: Output) -> Self {
        Run {
            code: o.status.code().unwrap_or(-1),
            stdout: String::from_utf8_lossy(&o.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&o.stderr).into_owned(),
        }
    }
}

/// Runs `causeway` with `args` in `dir`.
pub fn run_in(dir: &Path, args: &[&str]) -> Run {
    Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("the causeway binary runs")
        .into()
}

/// Runs `cmd` (standard input empty, both pipes drained while it runs)
/// under a harness timeout: `None` when it was still running after `limit`
/// and had to be killed. A run ended by a signal has code -1.
pub fn finish_within(mut cmd: Command, limit: Duration) -> Option<Run> {
    let mut child = cmd
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the command starts");
    let drain = |mut pipe: Box<dyn std::io::Read + Send>| {
        std::thread::spawn(move || {
            let mut v = Vec::new();
            pipe.read_to_end(&mut v).ok();
            v
        })
    };
    let out = drain(Box::new(child.stdout.take().expect("stdout")));
    let err = drain(Box::new(child.stderr.take().expect("stderr")));
    let start = Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().expect("wait") {
            break Some(s);
        }
        if start.elapsed() > limit {
            child.kill().ok();
            child.wait().ok();
            break None;
        }
        std::thread::sleep(Duration::from_millis(5));
    };
    let (stdout, stderr) = (out.join().unwrap_or_default(), err.join().unwrap_or_default());
    status.map(|s| Run {
        code: s.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&stdout).into_owned(),
        stderr: String::from_utf8_lossy(&stderr).into_owned(),
    })
}

/// The binary with `args`, to run in `dir`.
pub fn causeway<S: AsRef<std::ffi::OsStr>>(dir: &Path, args: &[S]) -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_causeway"));
    cmd.args(args).current_dir(dir);
    cmd
}

/// Runs `causeway` with `args` in `dir` under a harness timeout of
/// `limit`, failing the test when the run has to be killed.
pub fn run_bounded(dir: &Path, args: &[&str], limit: Duration) -> Run {
    finish_within(causeway(dir, args), limit)
        .unwrap_or_else(|| panic!("causeway {args:?} did not end within {limit:?}"))
}

/// Runs `causeway` with `args` in a fresh temporary folder, which is
/// returned so the caller can inspect files written there.
pub fn run(args: &[&str]) -> (Run, tempfile::TempDir) {
    let dir = tempfile::tempdir().expect("temp dir");
    (run_in(dir.path(), args), dir)
}

/// Writes `text` to `name` inside `dir` and returns its path as a string.
pub fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).expect("write test file");
    p.display().to_string()
}

/// The demo study's question, as flags: exposure, outcome and the
/// categorical covariate (run from the repository root).
pub const DEMO_QUESTION: [&str; 6] = [
    "--exposure",
    "enrolled",
    "--outcome",
    "pain_days",
    "--categorical",
    "role",
];

/// The row of `method` in an `estimate --format json` result.
pub fn method_row<'a>(v: &'a serde_json::Value, method: &str) -> &'a serde_json::Value {
    v["estimates"]
        .as_array()
        .expect("an estimates list")
        .iter()
        .find(|e| e["method"] == method)
        .unwrap_or_else(|| panic!("no row for {method}"))
}

/// Whether `a` is within `rel` of `b`, relative to `b`.
pub fn rel_close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}
