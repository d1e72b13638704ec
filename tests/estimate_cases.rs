//! Edge cases of problem preparation and the methods: design terms and
//! their names, aliased terms, separation, continuous exposures, refusals.
//! Rules are causeway's own (common practice, no source) unless named.

use crate::estimate_sim::{dataset, normal, rng};
use causeway::Error;
use causeway::data::Shape;
use causeway::error::Setting;
use causeway::estimate::{Estimand, Problem, Scale, Spec, applicable, method};
use rand::RngExt;

fn base(n: usize, seed: u64) -> Vec<(&'static str, Vec<f64>)> {
    let mut r = rng(seed);
    let (mut a, mut y, mut x, mut g) = (vec![], vec![], vec![], vec![]);
    for i in 0..n {
        let xv = normal(&mut r);
        let av = f64::from(u8::from(r.random::<f64>() < 1.0 / (1.0 + (-xv).exp())));
        let gv = (i % 3) as f64 + 1.0;
        a.push(av);
        x.push(xv);
        g.push(gv);
        y.push(1.0 + av + xv + 0.3 * gv + normal(&mut r));
    }
    vec![("a", a), ("y", y), ("x", x), ("g", g)]
}

fn spec(cov: &[&str]) -> Spec {
    Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        covariates: cov.iter().map(|s| s.to_string()).collect(),
        categorical: vec!["g".into()],
        ..Spec::default()
    }
}

#[test]
fn term_names_for_each_shape_and_products() {
    let d = dataset(base(300, 1));
    let mut s = spec(&["x", "g"]);
    s.shape = Shape::Spline;
    s.interact = vec!["g".into(), "x".into()];
    let p = Problem::build(&d, &s).unwrap();
    assert_eq!(
        p.propensity.names(),
        ["(intercept)", "x", "x'", "x''", "g=2", "g=3"]
    );
    assert_eq!(
        p.outcome_design.names(),
        [
            "(intercept)",
            "a",
            "x",
            "x'",
            "x''",
            "g=2",
            "g=3",
            "a:g=2",
            "a:g=3",
            "a:x"
        ]
    );
    assert_eq!(
        p.adjusted.names(),
        ["(intercept)", "a", "x", "x'", "x''", "g=2", "g=3"]
    );
    s.shape = Shape::Quadratic;
    let p = Problem::build(&d, &s).unwrap();
    assert_eq!(p.propensity.names(), ["(intercept)", "x", "x^2", "g=2", "g=3"]);
    let e = method("regression").unwrap().estimate(&p).unwrap();
    assert!(e.notes[0].contains("a:g=2, a:g=3, a:x"), "{:?}", e.notes);
}

#[test]
fn collinear_and_constant_terms_are_dropped_with_a_warning() {
    let mut cols = base(200, 2);
    let x2: Vec<f64> = cols[2].1.iter().map(|v| 2.0 * v + 1.0).collect();
    cols.push(("x2", x2));
    cols.push(("k", vec![5.0; 200]));
    let d = dataset(cols);
    let p = Problem::build(&d, &spec(&["x", "x2", "k"])).unwrap();
    assert_eq!(p.propensity.names(), ["(intercept)", "x"]);
    assert_eq!(p.outcome_design.names(), ["(intercept)", "a", "x"]);
    let w = p
        .warnings
        .iter()
        .find(|w| w.contains("dropped as constant or collinear"))
        .unwrap();
    assert!(w.contains("x2") && w.contains('k'), "{w}");
    // An exposure that copies a covariate cannot be separated from it.
    let mut cols = base(50, 3);
    let a = cols[0].1.clone();
    cols.push(("a_copy", a));
    let d = dataset(cols);
    assert!(matches!(
        Problem::build(&d, &spec(&["a_copy"])),
        Err(Error::Input(_))
    ));
}

#[test]
fn separated_exposure_makes_weighting_refuse_while_regression_runs() {
    // a = 1 exactly when x > 0: complete separation of the propensity model
    // (Albert & Anderson 1984).
    let mut cols = base(200, 4);
    let a: Vec<f64> = cols[2].1.iter().map(|&x| f64::from(u8::from(x > 0.0))).collect();
    cols[0].1 = a;
    let d = dataset(cols);
    let p = Problem::build(&d, &spec(&["x"])).unwrap();
    for m in ["ipw", "aipw"] {
        match method(m).unwrap().estimate(&p) {
            Err(Error::Separation(msg)) => assert!(msg.contains("complete separation"), "{msg}"),
            other => panic!("{m}: {other:?}"),
        }
    }
    assert!(method("regression").unwrap().estimate(&p).is_ok());
    assert!(method("ipw").unwrap().fits(&p).propensity().is_err());
}

#[test]
fn separated_binary_outcome_gives_a_warning_from_regression() {
    let mut cols = base(200, 5);
    let y: Vec<f64> = cols[2].1.iter().map(|&x| f64::from(u8::from(x > 0.3))).collect();
    cols[1].1 = y;
    let d = dataset(cols);
    let p = Problem::build(&d, &spec(&["x"])).unwrap();
    assert!(p.binary_outcome());
    let e = method("regression").unwrap().estimate(&p).unwrap();
    assert!(
        e.warnings.iter().any(|w| w.contains("separation")),
        "{:?}",
        e.warnings
    );
}

#[test]
fn continuous_exposure_by_regression_only() {
    // y = 1 + 0.7 t + x + e: the one-unit effect is 0.7, and setting t to 3
    // rather than 1 gives 1.4 (linear model: exact in expectation; within 4
    // standard errors of the simulation).
    let mut r = rng(6);
    let n = 500;
    let (mut t, mut y, mut x) = (vec![], vec![], vec![]);
    for _ in 0..n {
        let xv = normal(&mut r);
        let tv = 0.5 * xv + normal(&mut r);
        t.push(tv);
        x.push(xv);
        y.push(1.0 + 0.7 * tv + xv + normal(&mut r));
    }
    let d = dataset(vec![("a", t), ("y", y), ("x", x)]);
    let p = Problem::build(&d, &spec(&["x"])).unwrap();
    assert!(!p.binary_exposure());
    let names: Vec<&str> = applicable(&p, causeway::identify::Strategy::Backdoor)
        .iter()
        .map(|e| e.about().name)
        .collect();
    assert_eq!(names, ["regression", "ipw"]);
    let e = method("regression").unwrap().estimate(&p).unwrap();
    assert!((e.estimate - 0.7).abs() < 4.0 * e.std_error, "{}", e.estimate);
    let mut s = spec(&["x"]);
    s.contrast = Some((1.0, 3.0));
    let p2 = Problem::build(&d, &s).unwrap();
    let e2 = method("regression").unwrap().estimate(&p2).unwrap();
    assert!(
        (e2.estimate - 2.0 * e.estimate).abs() < 1e-9,
        "linear: twice the unit effect"
    );
    // A continuous exposure: the weighted dose-response model compares
    // fixed doses (no one-unit shift from the observed values); the
    // Horvitz-Thompson and doubly robust forms do not serve it.
    assert!(method("ipw").unwrap().estimate(&p2).is_ok());
    for m in ["ipw-ht", "aipw"] {
        match method(m).unwrap().estimate(&p) {
            Err(Error::Option {
                setting: Setting::Method,
                message,
            }) => {
                assert!(message.contains("continuous exposure"), "{message}")
            }
            other => panic!("{m}: {other:?}"),
        }
    }
    let mut s = spec(&["x"]);
    s.estimand = Estimand::Att;
    assert!(matches!(
        Problem::build(&d, &s),
        Err(Error::Option {
            setting: Setting::Estimand,
            ..
        })
    ));
}

#[test]
fn bad_specifications_are_input_errors() {
    let d = dataset(base(60, 7));
    let mut s = spec(&["x"]);
    s.scale = Scale::Ratio;
    assert!(
        matches!(Problem::build(&d, &s), Err(Error::Option { setting: Setting::Scale, message }) if message.contains("needs a binary outcome"))
    );
    let mut s = spec(&["x"]);
    s.interact = vec!["g".into()];
    assert!(
        matches!(Problem::build(&d, &s), Err(Error::Option { setting: Setting::Interact, message }) if message.starts_with("'g'"))
    );
    let mut s = spec(&["x"]);
    s.trim = Some(0.7);
    assert!(matches!(
        Problem::build(&d, &s),
        Err(Error::Option {
            setting: Setting::Trim,
            ..
        })
    ));
    let s = spec(&["nope"]);
    assert!(matches!(Problem::build(&d, &s), Err(Error::Input(m)) if m.contains("no column 'nope'")));
    let mut s = spec(&["x"]);
    s.estimand = Estimand::Att;
    let p = Problem::build(&d, &s).unwrap();
    assert!(
        matches!(method("aipw").unwrap().estimate(&p), Err(Error::Option { setting: Setting::Method, message }) if message.contains("ATE only"))
    );
    assert!(method("bogus").is_err());
}

// Methods that share one resample's fits (one `Fits` for all, as the
// bootstrap does) give exactly the estimates they give when each fits its
// own models (the fits are the same computation; equality is exact).
#[test]
fn shared_resample_fits_give_the_same_estimates() {
    use causeway::estimate::{contrast, needs};
    use causeway::infer::bootstrap::resample_weights;
    use causeway::learn::Fits;
    let d = dataset(base(300, 5));
    let p = Problem::build(&d, &spec(&["x", "g"])).unwrap();
    let names = ["regression", "ipw", "aipw"];
    let methods: Vec<_> = names.iter().map(|n| method(n).unwrap()).collect();
    let all: Vec<_> = methods.iter().map(|m| m.0).collect();
    let full = Fits::fit(&p, None, None, needs(&all));
    let c = p.contrasts().remove(0);
    for rep in 0..5 {
        let w = resample_weights(p.n(), 11, rep);
        let shared = Fits::fit(&p, Some(&w), Some(&full), needs(&all));
        for m in &methods {
            let alone = m.point(&p, Some(&w), Some(&full)).unwrap();
            let points = m.0.point(&p, &shared, Some(&w)).unwrap();
            let together = contrast::point(&points, &c, p.spec.scale);
            assert_eq!(alone.to_bits(), together.to_bits(), "{}", m.0.about().name);
        }
    }
}
