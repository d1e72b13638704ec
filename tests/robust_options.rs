//! A seeded fuzz campaign on the option parser: argument lists made of each
//! command's known flags with hostile values (huge, negative, zero, NaN,
//! infinite, 1e308, empty, non-ASCII, lists of them), repeated flags,
//! unknown flags and missing values, over the small test data. Every run
//! must end within the harness's timeout and under its memory ceiling with
//! exit code 0, 2 or 3 (never a signal, an abort, 101 or an internal error
//! 1), no "panicked" on stderr, and a failure must lead (after any
//! warnings) with a one-line message.
//!
//! `CAUSEWAY_FUZZ_CASES` sets the number of generated cases (default 24)
//! and `CAUSEWAY_FUZZ_SEED` the seed (default 13), for a long campaign:
//! `CAUSEWAY_FUZZ_CASES=3000 cargo test --release --test main robust_options`.
//!
//! Counts of work (replicates, rows, Monte Carlo draws) take small values
//! or values too large for any machine: a large count that does fit is long
//! work by design (it shows progress and stops on Ctrl-C), not a hang to
//! catch.

use crate::helpers::{data, finish_within, repo};
use std::path::Path;
use std::process::Command;
use std::time::Duration;

/// A run taking longer than this fails the test.
const TIMEOUT: Duration = Duration::from_secs(20);

/// The address-space ceiling of each run, in KiB (`ulimit -v`).
const MEMORY_KIB: u64 = 4 << 20;

/// SplitMix64 (Steele, Lea & Flood 2014): a small seeded generator.
struct Gen(u64);

impl Gen {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    fn pick<'a>(&mut self, xs: &[&'a str]) -> &'a str {
        xs[self.below(xs.len())]
    }
}

/// Values that are not numbers of any kind, or odd spellings of one.
const ODD: &[&str] = &[
    "",
    " ",
    "ü",
    "数",
    "NaN",
    "nan",
    "inf",
    "-inf",
    "+inf",
    "infinity",
    "0x10",
    "1_000",
    "1,2",
    "--",
    "-",
    "\u{1b}[31m",
    "1e",
    "e5",
    "٣",
    "½",
    "true",
];

/// Real numbers: levels, bounds, coefficients, summary numbers.
const REAL: &[&str] = &[
    "0",
    "1",
    "-1",
    "0.5",
    "0.05",
    "0.95",
    "-0.5",
    "2",
    "1.5",
    "1e308",
    "-1e308",
    "1e309",
    "1e-308",
    "5e-324",
    "1e-320",
    "0.9999999999999999",
    "1e-16",
    "100",
    "-0",
    "3.4028235e38",
];

/// Counts of work: small, or beyond any machine's memory or disk.
const WORK: &[&str] = &[
    "0",
    "1",
    "2",
    "3",
    "10",
    "50",
    "-1",
    "-0",
    "1.5",
    "1e3",
    "10000000000000",
    "100000000000000",
    "18446744073709551615",
    "18446744073709551616",
    "99999999999999999999999",
];

/// Counts without a cost in memory (threads, seeds).
const FREE_COUNT: &[&str] = &[
    "0",
    "1",
    "2",
    "3",
    "1000000",
    "4294967296",
    "18446744073709551615",
    "18446744073709551616",
    "-1",
    "-9223372036854775808",
];

/// Monte Carlo draws: small only (a large count is long, bounded work).
const DRAWS: &[&str] = &["0", "1", "2", "3", "1000", "20001", "-5", "1e9"];

/// The kind of value a flag takes.
#[derive(Clone, Copy)]
enum Kind {
    Switch,
    Real,
    Reals,
    Work,
    Free,
    Draws,
    Names(&'static [&'static str]),
    Choice(&'static [&'static str]),
}

const NAMES: &[&str] = &[
    "x", "y", "z", "m", "q", "X", "x,y", "z,z", "x,", ",", "optimal", "minimal",
];
const METHODS: &[&str] = &[
    "regression",
    "ipw",
    "ipw-ht",
    "aipw",
    "frontdoor",
    "regression,ipw,aipw",
    "magic",
];
const FORMATS: &[&str] = &["text", "json", "markdown", "latex", "csv", "svg", "dot", "pdf"];

/// The estimation flags of estimate and compare.
const ESTIMATION: &[(&str, Kind)] = &[
    ("--exposure", Kind::Names(NAMES)),
    ("--outcome", Kind::Names(NAMES)),
    ("--exposed", Kind::Names(&["0", "1", "yes", "2"])),
    ("--reference", Kind::Names(&["0", "1", "a"])),
    ("--method", Kind::Names(METHODS)),
    ("--estimand", Kind::Choice(&["ate", "att", "atc", "ATT", "att2"])),
    ("--adjust", Kind::Names(NAMES)),
    ("--force-adjust", Kind::Switch),
    ("--categorical", Kind::Names(NAMES)),
    (
        "--shape",
        Kind::Choice(&["linear", "quadratic", "spline", "cubic"]),
    ),
    ("--interact", Kind::Names(NAMES)),
    ("--scale", Kind::Choice(&["difference", "ratio", "odds", "log"])),
    ("--bootstrap", Kind::Work),
    (
        "--interval",
        Kind::Choice(&["percentile", "bca", "normal", "studentized"]),
    ),
    ("--level", Kind::Real),
    ("--trim", Kind::Real),
    ("--contrast", Kind::Reals),
    ("--at", Kind::Reals),
    ("--latent", Kind::Names(NAMES)),
    ("--seed", Kind::Free),
    ("--threads", Kind::Free),
    ("--check", Kind::Switch),
    ("--alpha", Kind::Real),
    ("--benchmark", Kind::Names(NAMES)),
    ("--benchmark-multiples", Kind::Reals),
    ("--format", Kind::Choice(FORMATS)),
    (
        "--delimiter",
        Kind::Choice(&["comma", "tab", "semicolon", "pipe"]),
    ),
    ("--out", Kind::Names(&["bundle", "", "g.graph"])),
];

/// A command: its fixed arguments and the flags the generator varies.
struct Cmd {
    name: &'static str,
    base: Vec<String>,
    flags: Vec<(&'static str, Kind)>,
}

/// Copies the test data into `dir`, where every run takes place, under
/// short names.
fn stage(dir: &Path) {
    for (from, to) in [
        (data("small.csv"), "small.csv"),
        (data("small-a.graph"), "a.graph"),
        (data("small-b.graph"), "b.graph"),
        (data("small-model.graph"), "model.graph"),
        (repo("demo-data/study.graph"), "study.graph"),
    ] {
        std::fs::copy(from, dir.join(to)).expect("test data copied");
    }
}

fn commands() -> Vec<Cmd> {
    let (small, a, b, model, out) = ("small.csv", "a.graph", "b.graph", "model.graph", "out.csv");
    let s = |xs: &[&str]| xs.iter().map(|x| x.to_string()).collect::<Vec<_>>();
    vec![
        Cmd {
            name: "estimate",
            base: s(&[
                "--graph",
                a,
                "--data",
                small,
                "--exposure",
                "x",
                "--outcome",
                "y",
                "--quiet",
            ]),
            flags: ESTIMATION.to_vec(),
        },
        Cmd {
            name: "compare",
            base: s(&[
                "--graph",
                a,
                "--graph",
                b,
                "--data",
                small,
                "--exposure",
                "x",
                "--outcome",
                "y",
                "--quiet",
            ]),
            flags: ESTIMATION.to_vec(),
        },
        Cmd {
            name: "demo",
            base: s(&["--quiet"]),
            flags: vec![
                ("--bootstrap", Kind::Work),
                ("--seed", Kind::Free),
                ("--threads", Kind::Free),
                ("--check", Kind::Switch),
                ("--format", Kind::Choice(FORMATS)),
            ],
        },
        Cmd {
            name: "check",
            base: s(&["--graph", a, "--data", small, "--quiet"]),
            flags: vec![
                ("--alpha", Kind::Real),
                ("--correction", Kind::Choice(&["holm", "bh", "bonferroni"])),
                ("--categorical", Kind::Names(NAMES)),
                ("--latent", Kind::Names(NAMES)),
                ("--exposure", Kind::Names(NAMES)),
                ("--outcome", Kind::Names(NAMES)),
                ("--adjust", Kind::Names(NAMES)),
                ("--format", Kind::Choice(FORMATS)),
            ],
        },
        Cmd {
            name: "simulate",
            base: s(&[
                "--graph", model, "--rows", "50", "--seed", "1", "--output", out, "--quiet",
            ]),
            flags: vec![
                ("--graph", Kind::Names(&["model.graph", "study.graph", "a.graph"])),
                ("--rows", Kind::Work),
                ("--seed", Kind::Free),
                ("--mc-draws", Kind::Draws),
                ("--default-coef", Kind::Real),
                ("--latent", Kind::Names(NAMES)),
                ("--exposure", Kind::Names(&["x", "enrolled", "q"])),
                ("--outcome", Kind::Names(&["y", "pain_days", "x"])),
                ("--truth", Kind::Names(&["t.json", ""])),
            ],
        },
        Cmd {
            name: "sensitivity",
            base: s(&["--quiet"]),
            flags: vec![
                ("--rr", Kind::Real),
                ("--or", Kind::Real),
                ("--hr", Kind::Real),
                ("--smd", Kind::Real),
                ("--estimate", Kind::Real),
                ("--se", Kind::Real),
                ("--df", Kind::Real),
                ("--ci", Kind::Reals),
                ("--common-outcome", Kind::Switch),
                ("--q", Kind::Real),
                ("--alpha", Kind::Real),
                ("--level", Kind::Real),
                ("--r2-exposure", Kind::Reals),
                ("--r2-outcome", Kind::Reals),
                ("--format", Kind::Choice(FORMATS)),
            ],
        },
        Cmd {
            name: "identify",
            base: s(&["--graph", a, "--exposure", "x", "--outcome", "y", "--quiet"]),
            flags: vec![
                ("--exposure", Kind::Names(NAMES)),
                ("--outcome", Kind::Names(NAMES)),
                ("--latent", Kind::Names(NAMES)),
                ("--adjust", Kind::Names(NAMES)),
                ("--format", Kind::Choice(FORMATS)),
            ],
        },
    ]
}

/// A value of `kind` (`None` for a switch).
fn value(g: &mut Gen, kind: Kind) -> Option<String> {
    // One value in twelve is an odd spelling, whatever the kind.
    if !matches!(kind, Kind::Switch) && g.below(12) == 0 {
        return Some(g.pick(ODD).to_string());
    }
    Some(match kind {
        Kind::Switch => return None,
        Kind::Real => g.pick(REAL).to_string(),
        Kind::Reals => {
            let k = g.below(4);
            (0..k).map(|_| g.pick(REAL)).collect::<Vec<_>>().join(",")
        }
        Kind::Work => g.pick(WORK).to_string(),
        Kind::Free => g.pick(FREE_COUNT).to_string(),
        Kind::Draws => g.pick(DRAWS).to_string(),
        Kind::Names(xs) | Kind::Choice(xs) => g.pick(xs).to_string(),
    })
}

/// One generated argument list: a command, its base, then one to three
/// mutations, most of them a known flag with a value of its kind.
fn case(g: &mut Gen, cmds: &[Cmd]) -> Vec<String> {
    let cmd = &cmds[g.below(cmds.len())];
    let mut args = vec![cmd.name.to_string()];
    let mut base = cmd.base.clone();
    let mut extra: Vec<String> = Vec::new();
    for _ in 0..1 + g.below(3) {
        let (flag, kind) = cmd.flags[g.below(cmd.flags.len())];
        match g.below(16) {
            // A known flag with a hostile value, as two words or with '='.
            0..=11 => match value(g, kind) {
                None => extra.push(flag.to_string()),
                Some(v) if g.below(4) == 0 => extra.push(format!("{flag}={v}")),
                Some(v) => extra.extend([flag.to_string(), v]),
            },
            // The same flag twice.
            12 => {
                for _ in 0..2 {
                    extra.push(flag.to_string());
                    extra.extend(value(g, kind));
                }
            }
            // An unknown flag, or a stray word.
            13 => extra.push(
                g.pick(&["--bootstraps", "--x", "-q", "--", "stray", "--threads-max"])
                    .to_string(),
            ),
            // A flag without its value, last.
            14 => {
                extra.push(flag.to_string());
                if base.len() > 1 {
                    // Keep the missing value at the very end.
                    args.append(&mut base);
                    args.append(&mut extra);
                    return args;
                }
            }
            // A base flag left out (a required one, often).
            _ => {
                if base.len() >= 2 {
                    let i = 2 * g.below(base.len() / 2);
                    base.drain(i..i + 2);
                }
            }
        }
    }
    args.append(&mut base);
    args.append(&mut extra);
    args
}

/// The regression corpus: argument lists that once aborted or asked for
/// more than any machine has, kept as fixed cases.
fn corpus() -> Vec<Vec<String>> {
    let words = |xs: &[&str]| xs.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    let est = |extra: &[&str]| {
        let mut v = words(&[
            "estimate",
            "--graph",
            "a.graph",
            "--data",
            "small.csv",
            "--exposure",
            "x",
            "--outcome",
            "y",
        ]);
        v.extend(words(extra));
        v
    };
    vec![
        // Aborted on a failed allocation of 6.4 TB.
        est(&["--bootstrap", "100000000000"]),
        est(&["--bootstrap", "18446744073709551615", "--threads", "1000000"]),
        // Accepted silently and started a million threads.
        est(&["--bootstrap", "20", "--threads", "1000000"]),
        // Aborted on allocation before writing a row.
        words(&[
            "simulate",
            "--graph",
            "study.graph",
            "--rows",
            "100000000000000",
            "--seed",
            "1",
            "-o",
            "x.csv",
        ]),
        words(&["demo", "--bootstrap", "100000000000", "--quiet"]),
    ]
}

/// The exit code of one run (`None`: none), and what is wrong with it, if
/// anything.
fn judge(args: &[String], dir: &Path) -> (Option<i32>, Option<String>) {
    let mut cmd = Command::new("sh");
    cmd.arg("-c")
        .arg(format!("ulimit -v {MEMORY_KIB}; exec \"$0\" \"$@\""))
        .arg(env!("CARGO_BIN_EXE_causeway"))
        .args(args)
        .current_dir(dir);
    let Some(run) = finish_within(cmd, TIMEOUT) else {
        return (None, Some(format!("still running after {TIMEOUT:?}")));
    };
    let stderr = run.stderr;
    // Warnings may come first; the first other line is the message.
    let first = stderr
        .lines()
        .find(|l| !l.starts_with("causeway: warning: "))
        .unwrap_or("");
    let code = run.code;
    if code == -1 {
        return (None, Some(format!("ended by a signal; stderr: {stderr}")));
    }
    if stderr.contains("panicked") || stderr.contains("internal error") {
        return (
            Some(code),
            Some(format!("exit {code}, a panic or internal error: {stderr}")),
        );
    }
    if ![0, 2, 3].contains(&code) {
        return (Some(code), Some(format!("exit {code}: {stderr}")));
    }
    let leads = first.starts_with("causeway: error: ")
        || first.starts_with("causeway: not identified: ")
        || first.starts_with("error: ");
    if code != 0 && (!leads || first.len() < 20) {
        return (
            Some(code),
            Some(format!("exit {code} without a leading message: {stderr:?}")),
        );
    }
    (Some(code), None)
}

fn env_number(name: &str, default: u64) -> u64 {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// Runs the corpus, then `CAUSEWAY_FUZZ_CASES` generated cases; prints the
/// campaign's figures (cases, exit codes seen) and fails listing each
/// failing argument list.
#[test]
fn hostile_option_values_end_cleanly() {
    let dir = tempfile::tempdir().unwrap();
    stage(dir.path());
    let cmds = commands();
    let cases = env_number("CAUSEWAY_FUZZ_CASES", 60);
    let mut g = Gen(env_number("CAUSEWAY_FUZZ_SEED", 13));
    let mut all = corpus();
    all.extend((0..cases).map(|_| case(&mut g, &cmds)));
    let mut codes = std::collections::BTreeMap::<Option<i32>, usize>::new();
    let mut failures = Vec::new();
    for args in &all {
        let (code, wrong) = judge(args, dir.path());
        *codes.entry(code).or_default() += 1;
        if let Some(why) = wrong {
            failures.push(format!("{args:?}: {why}"));
        }
    }
    eprintln!(
        "option fuzz: {} runs ({} generated), {} failed; runs by exit code: {codes:?}",
        all.len(),
        cases,
        failures.len()
    );
    assert!(
        failures.is_empty(),
        "{} failures:\n{}",
        failures.len(),
        failures.join("\n")
    );
}
