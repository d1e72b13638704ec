//! Shared test helpers: run the binary, find test data.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

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
