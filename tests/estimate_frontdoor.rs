//! The front-door estimator against Pearl's formula (Pearl, Biometrika
//! 1995; Causality 2009, Thm. 3.3.4) on a published table, and against the
//! product of path coefficients (Wright 1934) in a linear model with a
//! latent confounder.

use crate::estimate_sim::{dataset, ij_se, normal, rng};
use causeway::data::Dataset;
use causeway::estimate::{Problem, Scale, Spec, method};

/// Pearl, Glymour & Jewell, *Causal Inference in Statistics: A Primer*,
/// 2016, Table 3.1 (counts from memory): 400 exposed, 380 of them with the
/// mediator (outcome rate 15%) and 20 without (10%); 400 unexposed, 20 with
/// the mediator (95%) and 380 without (90%). 800 rows.
fn primer_table() -> Dataset {
    let cells = [
        (1.0, 1.0, 380, 57),
        (1.0, 0.0, 20, 2),
        (0.0, 1.0, 20, 19),
        (0.0, 0.0, 380, 342),
    ];
    let (mut x, mut m, mut y) = (Vec::new(), Vec::new(), Vec::new());
    for (xv, mv, n, events) in cells {
        for k in 0..n {
            x.push(xv);
            m.push(mv);
            y.push(if k < events { 1.0 } else { 0.0 });
        }
    }
    dataset(vec![("x", x), ("m", m), ("y", y)])
}

fn spec(scale: Scale) -> Spec {
    Spec {
        exposure: "x".into(),
        outcome: "y".into(),
        mediators: vec!["m".into()],
        scale,
        ..Spec::default()
    }
}

#[test]
fn primer_table_3_1_reproduces_the_front_door_formula_exactly() {
    // P(Y=1|do(X=1)) = 0.5475, P(Y=1|do(X=0)) = 0.5025, difference 0.045
    // (from memory; the arithmetic is exact, so 1e-12).
    let p = Problem::build(&primer_table(), &spec(Scale::Difference)).unwrap();
    let e = method("frontdoor").unwrap().estimate(&p).unwrap();
    let means = e.means.unwrap();
    assert!((means.exposed - 0.5475).abs() < 1e-12, "{}", means.exposed);
    assert!((means.unexposed - 0.5025).abs() < 1e-12, "{}", means.unexposed);
    assert!((e.estimate - 0.045).abs() < 1e-12, "{}", e.estimate);
    // Delta-method SE equals the infinitesimal jackknife (Efron 1982) of the
    // same plug-in, by finite differences in the weights (1e-6 relative).
    let ij = ij_se(&p, "frontdoor");
    assert!((e.std_error - ij).abs() < 1e-6 * ij, "{} vs {ij}", e.std_error);
    let r = Problem::build(&primer_table(), &spec(Scale::Ratio)).unwrap();
    let er = method("frontdoor").unwrap().estimate(&r).unwrap();
    assert!((er.estimate - 0.5475 / 0.5025).abs() < 1e-12);
    assert!(er.ci[0] < er.estimate && er.estimate < er.ci[1]);
}

#[test]
fn linear_front_door_recovers_the_product_of_path_coefficients() {
    // U latent: X = U + e, M = 0.8 X + e, Y = 0.5 M + 1.5 U + e. The effect
    // of X on Y is 0.8 x 0.5 = 0.4 (Wright 1934: sum over directed paths of
    // products of coefficients). Seeded; within 4 standard errors.
    let mut r = rng(11);
    let n = 4000;
    let (mut x, mut m, mut y) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..n {
        let u = normal(&mut r);
        let xv = u + normal(&mut r);
        let mv = 0.8 * xv + normal(&mut r);
        x.push(xv);
        m.push(mv);
        y.push(0.5 * mv + 1.5 * u + normal(&mut r));
    }
    let d = dataset(vec![("x", x), ("m", m), ("y", y)]);
    let p = Problem::build(&d, &spec(Scale::Difference)).unwrap();
    let e = method("frontdoor").unwrap().estimate(&p).unwrap();
    assert!(
        (e.estimate - 0.4).abs() < 4.0 * e.std_error,
        "{} se {}",
        e.estimate,
        e.std_error
    );
    assert!(e.std_error > 0.0 && e.std_error < 0.05);
    // The confounded regression of Y on X alone is far from 0.4 (0.4 + 0.75).
    // Delta-method SE equals the infinitesimal jackknife on a 300-row subset
    // (1e-6 relative: finite differences of an exact least-squares plug-in).
    let small = dataset(vec![
        ("x", p.a()[..300].to_vec()),
        ("m", p.frame.col(p.mediators[0])[..300].to_vec()),
        ("y", p.y()[..300].to_vec()),
    ]);
    let ps = Problem::build(&small, &spec(Scale::Difference)).unwrap();
    let es = method("frontdoor").unwrap().estimate(&ps).unwrap();
    let ij = ij_se(&ps, "frontdoor");
    assert!((es.std_error - ij).abs() < 1e-6 * ij, "{} vs {ij}", es.std_error);
    let naive = Problem::build(
        &d,
        &Spec {
            mediators: vec![],
            ..spec(Scale::Difference)
        },
    )
    .unwrap();
    let b = method("regression").unwrap().estimate(&naive).unwrap();
    assert!((b.estimate - 1.15).abs() < 0.1, "{}", b.estimate);
}
