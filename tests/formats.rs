//! Data formats: NHEFS written in every format causeway reads gives the same
//! numbers, bit for bit, as the CSV (files made by pandas 3.1.1 and pyarrow
//! 26.0.1 with tests/scripts/make_format_fixtures.py, into
//! tests/data/formats/); damaged and mislabelled files are refused with a
//! message naming the file; `simulate` writes Parquet.

use crate::helpers::{data, rel_close, repo, run_in};
use causeway::data::{Dataset, ReadOptions};
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::sync::Arc;

fn formats(name: &str) -> PathBuf {
    data(&format!("formats/{name}"))
}

/// Every file holding the NHEFS columns, unlabelled.
const SAME_DATA: [&str; 10] = [
    "nhefs.csv.gz",
    "nhefs.csv.zst",
    "nhefs.tsv",
    "nhefs.parquet",
    "nhefs.arrow",
    "nhefs-114.dta",
    "nhefs-117.dta",
    "nhefs-118.dta",
    "nhefs-119.dta",
    "nhefs.csv",
];

/// The columns of tests/data/nhefs.graph.
const GRAPH: [&str; 11] = [
    "qsmk",
    "wt82_71",
    "sex",
    "race",
    "age",
    "education",
    "smokeintensity",
    "smokeyrs",
    "exercise",
    "active",
    "wt71",
];

fn open(path: &Path) -> Dataset {
    Dataset::open(path, &ReadOptions::default()).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn open_err(path: &Path) -> String {
    match Dataset::open(path, &ReadOptions::default()) {
        Ok(_) => panic!("{} was read", path.display()),
        Err(e) => {
            assert_eq!(e.exit_code(), 2, "{e}");
            e.to_string()
        }
    }
}

fn path_of(name: &str) -> String {
    if name == "nhefs.csv" {
        "tests/data/nhefs.csv".into()
    } else {
        format!("tests/data/formats/{name}")
    }
}

/// `estimate` of qsmk on wt82_71 as JSON, from `data` (a path from the
/// repository root).
fn estimate(data: &str) -> Value {
    let r = run_in(
        &repo(""),
        &[
            "estimate",
            "--graph",
            "tests/data/nhefs.graph",
            "--data",
            data,
            "--exposure",
            "qsmk",
            "--outcome",
            "wt82_71",
            "--categorical",
            "education,exercise,active",
            "--shape",
            "quadratic",
            "--format",
            "json",
            "--quiet",
        ],
    );
    assert_eq!(r.code, 0, "{data}: {}", r.stderr);
    serde_json::from_str(&r.stdout).expect("valid JSON")
}

#[test]
fn every_format_reads_the_same_values_bit_for_bit() {
    let csv = open(&data("nhefs.csv"));
    for name in SAME_DATA {
        let d = open(&repo(&path_of(name)));
        assert_eq!(d.nrows(), 1629, "{name}");
        for c in GRAPH.into_iter().chain(["seqn"]) {
            let (a, b) = (&csv.column(c).unwrap().values, &d.column(c).unwrap().values);
            let same = a
                .iter()
                .zip(b)
                .all(|(x, y)| x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan()));
            assert!(same && a.len() == b.len(), "{name}: column {c} differs");
        }
        // wt82_71: 63 missing in every format (What If, ch. 12).
        let w = d.column("wt82_71").unwrap();
        assert_eq!((0..1629).filter(|&i| w.is_missing(i)).count(), 63, "{name}");
        // ht is stored as a 32-bit float (the CSV value rounded to float32).
        let ht: Vec<f64> = csv
            .column("ht")
            .unwrap()
            .values
            .iter()
            .map(|&x| x as f32 as f64)
            .collect();
        let got = &d.column("ht").unwrap().values;
        if name == "nhefs.csv" {
            continue;
        }
        assert!(
            ht.iter().zip(got).all(|(x, y)| x.to_bits() == y.to_bits()),
            "{name}: ht"
        );
        // A text column: str#, strL (Stata 117, 118), dictionary strings (Arrow).
        let g = d.column("smoker_group").unwrap();
        let (codes, levels) = g
            .codes()
            .unwrap_or_else(|| panic!("{name}: smoker_group is text"));
        let mut sorted = levels.to_vec();
        sorted.sort();
        assert_eq!(sorted, ["heavy", "light", "moderate"], "{name}");
        let s = &csv.column("smokeintensity").unwrap().values;
        for (i, &c) in codes.iter().enumerate() {
            let want = if s[i] < 10.0 {
                "light"
            } else if s[i] < 20.0 {
                "moderate"
            } else {
                "heavy"
            };
            assert_eq!(levels[c as usize], want, "{name} row {i}");
        }
        if name == "nhefs-117.dta" || name == "nhefs-118.dta" {
            let l = d.column("smoker_group_l").unwrap().codes().unwrap();
            assert_eq!(
                l.0.iter().map(|&c| &l.1[c as usize]).collect::<Vec<_>>(),
                codes.iter().map(|&c| &levels[c as usize]).collect::<Vec<_>>(),
                "{name}: strL"
            );
        }
    }
}

#[test]
fn estimates_are_identical_from_every_format() {
    let want = estimate("tests/data/nhefs.csv");
    assert!(!want["estimates"].as_array().unwrap().is_empty());
    for name in SAME_DATA {
        let got = estimate(&path_of(name));
        // JSON numbers are written as the shortest decimal that reads
        // back as the same double: equal text means equal bits.
        assert_eq!(got["estimates"], want["estimates"], "{name}");
        assert_eq!(got["sample"], want["sample"], "{name}");
        assert_eq!(got["adjustment_set"], want["adjustment_set"], "{name}");
    }
}

#[test]
fn standard_input_takes_compressed_text_and_binary_formats() {
    let want = estimate("tests/data/nhefs.csv");
    for name in ["nhefs.csv.zst", "nhefs.parquet", "nhefs-118.dta"] {
        let bytes = std::fs::read(formats(name)).unwrap();
        let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_causeway"))
            .args([
                "estimate",
                "--graph",
                "tests/data/nhefs.graph",
                "--data",
                "-",
                "--exposure",
                "qsmk",
                "--outcome",
                "wt82_71",
                "--categorical",
                "education,exercise,active",
                "--shape",
                "quadratic",
                "--format",
                "json",
                "--quiet",
            ])
            .current_dir(repo(""))
            .stdin(std::process::Stdio::piped())
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .unwrap();
        let mut stdin = child.stdin.take().unwrap();
        let writer = std::thread::spawn(move || std::io::Write::write_all(&mut stdin, &bytes));
        let out = child.wait_with_output().unwrap();
        writer.join().unwrap().unwrap();
        assert_eq!(
            out.status.code(),
            Some(0),
            "{name}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let got: Value = serde_json::from_slice(&out.stdout).unwrap();
        assert_eq!(got["estimates"], want["estimates"], "{name} on standard input");
    }
}

#[test]
fn value_labels_become_the_levels() {
    let d = open(&formats("nhefs-labelled.dta"));
    let csv = open(&data("nhefs.csv"));
    for (name, labels) in [("sex", ["male", "female"]), ("race", ["white", "black or other"])] {
        let (codes, levels) = d.column(name).unwrap().codes().expect("labelled: text");
        let mut got = levels.to_vec();
        got.sort();
        let mut want = labels.map(String::from).to_vec();
        want.sort();
        assert_eq!(got, want, "{name}");
        let v = &csv.column(name).unwrap().values;
        for (i, &c) in codes.iter().enumerate() {
            assert_eq!(levels[c as usize], labels[v[i] as usize], "{name} row {i}");
        }
    }
    // The labelled covariates enter as categorical terms coded from the
    // labels ('female' before 'male'): the same model, parametrised
    // otherwise, so the estimates agree to rounding, not bit for bit.
    let want = estimate("tests/data/nhefs.csv");
    let got = estimate("tests/data/formats/nhefs-labelled.dta");
    for (a, b) in want["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .zip(got["estimates"].as_array().unwrap())
    {
        assert_eq!(a["method"], b["method"]);
        for k in ["estimate", "std_error"] {
            let (x, y) = (a[k].as_f64().unwrap(), b[k].as_f64().unwrap());
            assert!(rel_close(x, y, 1e-9), "{} {k}: {x} vs {y}", a["method"]);
        }
    }
}

#[test]
fn identify_check_and_draw_read_every_format() {
    let dir = repo("");
    for name in ["nhefs.parquet", "nhefs.arrow", "nhefs-117.dta", "nhefs.csv.gz"] {
        let data = path_of(name);
        let r = run_in(
            &dir,
            &[
                "identify",
                "--graph",
                "tests/data/nhefs.graph",
                "--data",
                &data,
                "--exposure",
                "qsmk",
                "--outcome",
                "wt82_71",
                "--format",
                "json",
            ],
        );
        assert_eq!(r.code, 0, "{name}: {}", r.stderr);
        let r = run_in(
            &dir,
            &[
                "check",
                "--graph",
                "tests/data/nhefs.graph",
                "--data",
                &data,
                "--categorical",
                "education,exercise,active",
                "--format",
                "json",
                "--quiet",
            ],
        );
        assert_eq!(r.code, 0, "{name}: {}", r.stderr);
        let got: Value = serde_json::from_str(&r.stdout).unwrap();
        let csv = run_in(
            &dir,
            &[
                "check",
                "--graph",
                "tests/data/nhefs.graph",
                "--data",
                "tests/data/nhefs.csv",
                "--categorical",
                "education,exercise,active",
                "--format",
                "json",
                "--quiet",
            ],
        );
        let want: Value = serde_json::from_str(&csv.stdout).unwrap();
        assert_eq!(got["implications"], want["implications"], "{name}");
    }
}

fn temp_file(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, bytes).unwrap();
    p
}

#[test]
fn damaged_files_are_refused_naming_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let parquet = std::fs::read(formats("nhefs.parquet")).unwrap();
    let p = temp_file(dir.path(), "cut.parquet", &parquet[..parquet.len() / 2]);
    let e = open_err(&p);
    assert!(
        e.starts_with(&format!("{}: not a readable Parquet file", p.display())),
        "{e}"
    );
    let p = temp_file(dir.path(), "zero.parquet", b"");
    assert!(open_err(&p).starts_with(&format!("{}: not a readable Parquet file", p.display())));

    let e = open_err(&formats("nhefs-120.dta"));
    assert!(
        e.contains("nhefs-120.dta: a Stata file of format version 120, which is not read"),
        "{e}"
    );
    let dta = std::fs::read(formats("nhefs-118.dta")).unwrap();
    let p = temp_file(dir.path(), "cut.dta", &dta[..dta.len() / 3]);
    let e = open_err(&p);
    assert!(
        e.starts_with(&format!("{}: the Stata file is cut short", p.display())),
        "{e}"
    );

    // A damaged checksum (the last 8 bytes hold the CRC-32 and length).
    let mut gz = std::fs::read(formats("nhefs.csv.gz")).unwrap();
    let n = gz.len();
    gz[n - 6] ^= 0x5a;
    let p = temp_file(dir.path(), "bad.csv.gz", &gz);
    let e = open_err(&p);
    assert!(
        e.starts_with(&format!("{}: the gzip stream is corrupt", p.display())),
        "{e}"
    );
    // Damaged compressed data: refused, naming the file, whether the
    // stream or the text it decodes to is found wrong first.
    let mut gz = std::fs::read(formats("nhefs.csv.gz")).unwrap();
    for b in &mut gz[n / 2..n / 2 + 64] {
        *b ^= 0x5a;
    }
    let p = temp_file(dir.path(), "bad2.csv.gz", &gz);
    assert!(open_err(&p).starts_with(&p.display().to_string()));
    let zst = std::fs::read(formats("nhefs.csv.zst")).unwrap();
    let p = temp_file(dir.path(), "cut.csv.zst", &zst[..zst.len() - 100]);
    let e = open_err(&p);
    assert!(e.starts_with(&format!("{}: the zstd stream", p.display())), "{e}");
    let gz = std::fs::read(formats("nhefs.csv.gz")).unwrap();
    let p = temp_file(dir.path(), "cut.csv.gz", &gz[..gz.len() - 100]);
    let e = open_err(&p);
    assert!(
        e.starts_with(&format!("{}: the gzip stream is cut short", p.display())),
        "{e}"
    );

    // Through the command line: exit 2, the file named.
    let r = run_in(
        dir.path(),
        &[
            "identify",
            "--graph",
            &data("nhefs.graph").display().to_string(),
            "--data",
            "cut.parquet",
            "--exposure",
            "qsmk",
            "--outcome",
            "wt82_71",
        ],
    );
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(
        r.stderr.contains("cut.parquet: not a readable Parquet file"),
        "{}",
        r.stderr
    );
}

#[test]
fn a_name_that_lies_is_refused_or_read_by_content() {
    let dir = tempfile::tempdir().unwrap();
    // Text named as Parquet: refused, saying what it holds.
    let p = temp_file(dir.path(), "table.parquet", b"a,b\n1,2\n");
    let e = open_err(&p);
    assert!(
        e.contains("table.parquet: is named as a Parquet file but holds delimited text"),
        "{e}"
    );
    // Parquet named .csv: read by its content.
    let p = temp_file(
        dir.path(),
        "nhefs.csv",
        &std::fs::read(formats("nhefs.parquet")).unwrap(),
    );
    assert_eq!(open(&p).nrows(), 1629);
    // Text named .gz: refused.
    let p = temp_file(dir.path(), "plain.csv.gz", b"a,b\n1,2\n");
    assert!(open_err(&p).contains("is named as gzip compressed but is not"));
}

/// A Parquet file with the columns `fields` and the arrays `arrays`.
fn parquet_file(path: &Path, fields: Vec<arrow_schema::Field>, arrays: Vec<arrow_array::ArrayRef>) {
    let schema = Arc::new(arrow_schema::Schema::new(fields));
    let f = std::fs::File::create(path).unwrap();
    let mut w = parquet::arrow::ArrowWriter::try_new(f, schema.clone(), None).unwrap();
    if !arrays.is_empty() && !arrays[0].is_empty() {
        w.write(&arrow_array::RecordBatch::try_new(schema, arrays).unwrap())
            .unwrap();
    }
    w.close().unwrap();
}

#[test]
fn parquet_types_nulls_dates_and_empty_files() {
    use arrow_array::{
        Array, ArrayRef, BooleanArray, Date32Array, DictionaryArray, Float32Array, Int64Array, StringArray,
    };
    use arrow_schema::{DataType, Field};
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("types.parquet");
    let dict: DictionaryArray<arrow_array::types::Int32Type> =
        vec![Some("b"), None, Some("a")].into_iter().collect();
    parquet_file(
        &p,
        vec![
            Field::new("i", DataType::Int64, true),
            Field::new("f", DataType::Float32, true),
            Field::new("flag", DataType::Boolean, true),
            Field::new("s", DataType::Utf8, true),
            Field::new("d", dict.data_type().clone(), true),
            Field::new("when", DataType::Date32, true),
        ],
        vec![
            Arc::new(Int64Array::from(vec![Some(1), None, Some(-3)])) as ArrayRef,
            Arc::new(Float32Array::from(vec![Some(0.5), Some(f32::NAN), None])),
            Arc::new(BooleanArray::from(vec![Some(true), Some(false), None])),
            Arc::new(StringArray::from(vec![Some("x"), Some("NA"), None])),
            Arc::new(dict),
            Arc::new(Date32Array::from(vec![Some(1), Some(2), None])),
        ],
    );
    let keep = |cols: &[&str]| ReadOptions {
        keep: Some(cols.iter().map(|s| s.to_string()).collect()),
        ..ReadOptions::default()
    };
    let d = Dataset::open(&p, &keep(&["i", "f", "flag", "s", "d"])).unwrap();
    assert_eq!(d.names(), ["i", "f", "flag", "s", "d", "when"]);
    let v = |c: &str| d.column(c).unwrap().values.clone();
    assert_eq!(v("i")[0], 1.0);
    assert!(v("i")[1].is_nan());
    assert_eq!(v("i")[2], -3.0);
    assert_eq!(v("f")[0], 0.5);
    assert_eq!(v("flag")[..2], [1.0, 0.0]);
    // Nulls are missing, as empty cells; NaN and 'NA' as those tokens.
    let f = d.column("f").unwrap();
    assert!(f.is_missing(1) && f.is_missing(2));
    assert_eq!(
        f.missing_tokens,
        [("NaN".to_string(), 1), ("empty".to_string(), 1)]
    );
    let s = d.column("s").unwrap();
    assert!(!s.is_missing(0) && s.is_missing(1) && s.is_missing(2));
    let (codes, levels) = d.column("d").unwrap().codes().unwrap();
    assert_eq!(levels[codes[0] as usize], "b");
    assert_eq!(codes[1], u32::MAX);
    assert_eq!(levels[codes[2] as usize], "a");
    // The date column is only refused when it is used.
    let e = Dataset::open(&p, &keep(&["when"])).unwrap_err().to_string();
    assert!(
        e.contains("column 'when' holds dates or times (type Date32)"),
        "{e}"
    );
    // Only the header: from the footer.
    assert_eq!(Dataset::open_header(&p, None).unwrap().len(), 6);

    let p = dir.path().join("empty.parquet");
    parquet_file(&p, vec![Field::new("x", DataType::Float64, true)], vec![]);
    let e = open_err(&p);
    assert_eq!(e, format!("{}: the file has columns but no rows", p.display()));
}

#[test]
fn simulate_writes_parquet_with_the_csv_values() {
    let dir = tempfile::tempdir().unwrap();
    let graph = repo("demo-data/study.graph").display().to_string();
    for out in ["s.csv", "s.parquet"] {
        let r = run_in(
            dir.path(),
            &[
                "simulate", "--graph", &graph, "--rows", "5000", "--seed", "7", "--output", out, "--quiet",
            ],
        );
        assert_eq!(r.code, 0, "{}", r.stderr);
    }
    let bytes = std::fs::read(dir.path().join("s.parquet")).unwrap();
    assert!(bytes.starts_with(b"PAR1") && bytes.ends_with(b"PAR1"));
    let csv = open(&dir.path().join("s.csv"));
    let pq = open(&dir.path().join("s.parquet"));
    assert_eq!(csv.names(), pq.names());
    assert_eq!(pq.nrows(), 5000);
    for name in csv.names() {
        let (a, b) = (csv.column(name).unwrap(), pq.column(name).unwrap());
        match (a.codes(), b.codes()) {
            (Some((ca, la)), Some((cb, lb))) => {
                for (x, y) in ca.iter().zip(cb) {
                    assert_eq!(la[*x as usize], lb[*y as usize], "{name}");
                }
            }
            (None, None) => assert!(
                a.values
                    .iter()
                    .zip(&b.values)
                    .all(|(x, y)| x.to_bits() == y.to_bits()),
                "{name}"
            ),
            _ => panic!("{name}: text in one file only"),
        }
    }
}

#[test]
fn stata_missing_codes_are_missing_and_counted() {
    use dta::stata::dta::byte_order::ByteOrder;
    use dta::stata::dta::dta_writer::DtaWriter;
    use dta::stata::dta::header::Header;
    use dta::stata::dta::release::Release;
    use dta::stata::dta::schema::Schema;
    use dta::stata::dta::value::Value as V;
    use dta::stata::dta::variable::Variable;
    use dta::stata::dta::variable_type::VariableType;
    use dta::stata::missing_value::MissingValue;
    use dta::stata::stata_byte::StataByte;
    use dta::stata::stata_double::StataDouble;
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("codes.dta");
    let schema = Schema::builder()
        .add_variable(Variable::builder(VariableType::Double, "x").format("%10.0g"))
        .add_variable(Variable::builder(VariableType::Byte, "g").format("%8.0g"))
        .add_variable(Variable::builder(VariableType::FixedString(8), "s").format("%8s"))
        .build()
        .unwrap();
    let mut w = DtaWriter::new()
        .from_path(&p)
        .unwrap()
        .write_header(Header::builder(Release::V118, ByteOrder::LittleEndian).build())
        .unwrap()
        .write_schema(schema)
        .unwrap()
        .into_record_writer()
        .unwrap();
    let rows = [
        (StataDouble::Present(1.5), StataByte::Present(3), "a"),
        (
            StataDouble::Missing(MissingValue::A),
            StataByte::Missing(MissingValue::System),
            "b",
        ),
        (
            StataDouble::Missing(MissingValue::System),
            StataByte::Missing(MissingValue::Z),
            "",
        ),
        (StataDouble::Present(-2.0), StataByte::Present(-1), "NA"),
    ];
    for (x, g, s) in rows {
        w.write_record(&[V::Double(x), V::Byte(g), V::string(s)]).unwrap();
    }
    w.into_long_string_writer()
        .unwrap()
        .into_value_label_writer()
        .unwrap()
        .finish()
        .unwrap();
    let d = open(&p);
    assert_eq!(d.nrows(), 4);
    let x = d.column("x").unwrap();
    assert_eq!((x.values[0], x.values[3]), (1.5, -2.0));
    assert!(x.is_missing(1) && x.is_missing(2));
    assert_eq!(x.missing_tokens, [(".a".to_string(), 1), (".".to_string(), 1)]);
    let g = d.column("g").unwrap();
    assert_eq!(g.missing_tokens, [(".".to_string(), 1), (".z".to_string(), 1)]);
    assert_eq!((g.values[0], g.values[3]), (3.0, -1.0));
    // Text cells follow the text reader's rules: empty and NA are missing.
    let s = d.column("s").unwrap();
    assert!(!s.is_missing(0) && !s.is_missing(1) && s.is_missing(2) && s.is_missing(3));
}
