//! The CSV loader: each class of malformed input gives an input error naming
//! the line (and column where there is one); accepted variants load. The
//! rules are causeway's own (common practice for CSV, no source).

use causeway::Error;
use causeway::data::{Dataset, ReadOptions};
use causeway::estimate::{Problem, Spec};

fn read(text: &[u8]) -> Result<Dataset, Error> {
    Dataset::read(text, "d.csv", &ReadOptions::default())
}

fn input_error(text: &[u8]) -> String {
    match read(text) {
        Err(Error::Input(m)) => m,
        other => panic!("expected an input error for {text:?}, got {other:?}"),
    }
}

#[test]
fn malformed_files_name_line_and_column() {
    let cases: &[(&[u8], &str)] = &[
        (
            b"a,b\n1,2\n3\n",
            "d.csv:3:2: this row has 1 field but the header has 2",
        ),
        (
            b"a,b\n1,2\n3,4,5\n",
            "d.csv:3:3: this row has 3 fields but the header has 2",
        ),
        (
            b"a,b,a\n1,2,3\n",
            "d.csv:1:3: duplicate column name 'a' (also column 1)",
        ),
        (b"", "d.csv:1: the file is empty"),
        (b"a,b\n", "d.csv:2: the file has a header but no data rows"),
        (b"a,,c\n1,2,3\n", "d.csv:1:2: a column has no name"),
    ];
    for (text, want) in cases {
        let m = input_error(text);
        assert!(m.starts_with(want), "{m:?} should start with {want:?}");
    }
}

#[test]
fn text_in_a_numeric_role_names_line_column_and_value() {
    let d = read(b"y,a\n1.5,0\nheavy,1\n2,1\n").unwrap();
    let spec = Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        ..Spec::default()
    };
    match Problem::build(&d, &spec) {
        Err(Error::Input(m)) => {
            assert!(
                m.starts_with("d.csv:3:1: column 'y' holds numbers (2 cells) except in 1 cell")
                    && m.contains("line 3 'heavy'"),
                "{m}"
            )
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn infinite_values_are_refused_where_used() {
    // Two rows in each exposure group: the fewest an estimate accepts.
    let d = read(b"y,a,z\n1,0,inf\n2,1,3\n3,0,1\n4,1,2\n").unwrap();
    let mut spec = Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        ..Spec::default()
    };
    assert!(Problem::build(&d, &spec).is_ok(), "z is not used");
    spec.covariates = vec!["z".into()];
    match Problem::build(&d, &spec) {
        Err(Error::Input(m)) => assert!(
            m.starts_with("d.csv:2:3: column 'z' holds the infinite value 'inf'"),
            "{m}"
        ),
        other => panic!("{other:?}"),
    }
}

#[test]
fn bom_and_crlf_are_accepted() {
    let d = read(b"\xEF\xBB\xBFa,b\r\n1,2\r\n3, 4\r\n").unwrap();
    assert_eq!(d.names(), ["a", "b"]);
    assert_eq!(d.nrows(), 2);
    assert_eq!(d.column("a").unwrap().values, vec![1.0, 3.0]);
    assert_eq!(d.column("b").unwrap().values, vec![2.0, 4.0]);
}

#[test]
fn missing_tokens_drop_rows_and_are_counted_per_column() {
    // Rows 2-4 miss a value; row 4 misses both and counts under each.
    let d = read(b"a,b,c\n1,NA,x\n.,2,y\nNaN,,z\n4,5,\n6,7,w\n").unwrap();
    let s = d.complete_cases(&["a", "b"]).unwrap();
    assert_eq!((s.rows, s.used, s.dropped), (5, 2, 3));
    assert_eq!(s.dropped_by_column.get("a"), Some(&2));
    assert_eq!(s.dropped_by_column.get("b"), Some(&2));
    assert_eq!(s.keep, vec![3, 4]);
    let s = d.complete_cases(&["a", "c"]).unwrap();
    assert_eq!(s.used, 2);
    assert_eq!(s.dropped_by_column.get("c"), Some(&1));
    let json = serde_json::to_value(&s).unwrap();
    assert_eq!(json["dropped_by_column"]["a"], 2);
    assert!(json.get("keep").is_none());
}

#[test]
fn keep_stores_only_the_named_columns() {
    let opts = ReadOptions {
        keep: Some(vec!["b".into()]),
        ..ReadOptions::default()
    };
    let d = Dataset::read(&b"a,b\nfoo,2\nbar,3\n"[..], "d.csv", &opts).unwrap();
    assert!(d.has_column("a") && d.column("a").is_none());
    assert_eq!(d.column("b").unwrap().values, vec![2.0, 3.0]);
}

#[test]
fn text_covariates_become_categorical_with_the_lowest_level_as_reference() {
    let d =
        read(b"y,a,role\n1,0,walker\n2,1,driver\n3,0,rider\n4,1,walker\n5,0,driver\n6,1,rider\n").unwrap();
    let spec = Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        covariates: vec!["role".into()],
        ..Spec::default()
    };
    let p = Problem::build(&d, &spec).unwrap();
    assert_eq!(
        p.propensity.names(),
        ["(intercept)", "role=rider", "role=walker"],
        "driver is the reference (lexical order)"
    );
}

#[test]
fn the_delimiter_is_detected_from_the_header_line() {
    use causeway::data::Delimiter;
    let cases: &[(&[u8], Delimiter)] = &[
        (b"a,b,c\n1,2,3\n", Delimiter::Comma),
        (b"a\tb\tc\n1\t2\t3\n", Delimiter::Tab),
        (b"a;b;c\n1,5;2,5;3\n", Delimiter::Semicolon),
        // Separators inside quotes do not count; nor do later lines.
        (b"\"a,b\";c;d\n1;2;3\n", Delimiter::Semicolon),
        (b"\xEF\xBB\xBF\r\n\r\na\tb\r\n1\t2\r\n", Delimiter::Tab),
        // One column, or a tie: comma.
        (b"a\n1\n", Delimiter::Comma),
        (b"a,b;c\n", Delimiter::Comma),
        (b"", Delimiter::Comma),
    ];
    for (bytes, want) in cases {
        assert_eq!(
            Delimiter::sniff(bytes),
            *want,
            "{:?}",
            String::from_utf8_lossy(bytes)
        );
    }
    assert_eq!(
        Delimiter::from_path(std::path::Path::new("x/d.TSV")),
        Some(Delimiter::Tab)
    );
    assert_eq!(Delimiter::from_path(std::path::Path::new("d.csv")), None);
    assert_eq!(Delimiter::ALL.map(Delimiter::name), ["comma", "tab", "semicolon"]);
}

#[test]
fn tab_and_semicolon_text_reads_like_csv() {
    let want = read(b"a,b\n1,x\n2,\"y,z\"\n").unwrap();
    for bytes in [&b"a\tb\n1\tx\n2\t\"y,z\"\n"[..], &b"a;b\n1;x\n2;\"y,z\"\n"[..]] {
        let d = read(bytes).unwrap();
        assert_eq!(d.names(), want.names());
        assert_eq!(d.column("a").unwrap().values, want.column("a").unwrap().values);
        assert_eq!(d.column("b").unwrap().codes(), want.column("b").unwrap().codes());
    }
    // A header longer than one read ahead (8 KiB): detection reads on to
    // the line's end, and every byte read ahead is read again.
    let names: Vec<String> = (0..3000).map(|i| format!("c{i}")).collect();
    let long = format!("{}\n{}\n", names.join("\t"), vec!["1"; 3000].join("\t"));
    let d = read(long.as_bytes()).unwrap();
    assert_eq!((d.names().len(), d.nrows()), (3000, 1));
}

#[test]
fn a_header_read_with_the_wrong_delimiter_is_named_as_such() {
    use causeway::data::Delimiter;
    let opts = ReadOptions {
        delimiter: Some(Delimiter::Comma),
        ..ReadOptions::default()
    };
    let e = Dataset::read(&b"a\tb\tc\n1\t2\t3\n"[..], "d.txt", &opts).unwrap_err();
    assert_eq!(
        e.to_string(),
        "d.txt:1: read as comma-separated, the header is one field of 5 characters containing tabs \
         (the file looks tab-separated); set the column separator to tab"
    );
    let e = Dataset::read_header(&b"a;b\n"[..], "d.txt", Some(Delimiter::Tab)).unwrap_err();
    assert!(e.to_string().contains("looks semicolon-separated"), "{e}");
    // The advice is a typed value: the setting and the value to give it.
    match e {
        causeway::Error::Advised { error, advice } => {
            assert!(matches!(*error, causeway::Error::Input(_)), "{error:?}");
            assert_eq!(
                advice.remedies,
                [causeway::Remedy::Choose(
                    causeway::Setting::Delimiter,
                    vec!["semicolon".to_string()]
                )]
            );
        }
        other => panic!("{other:?}"),
    }
    // Detected, a one-column file is simply one column.
    assert_eq!(
        Dataset::read_header(&b"a b\n1\n"[..], "d.txt", None).unwrap(),
        ["a b"]
    );
}

#[test]
fn a_missing_column_suggests_the_nearest() {
    let d = read(b"age,role,bmi\n1,a,2\n").unwrap();
    let e = d.require("Age").unwrap_err().to_string();
    assert!(e.ends_with("did you mean 'age'?"), "{e}");
}
