//! The `check` result laid out as a [`Doc`]: the claims sorted by adjusted
//! p-value with the rejected ones marked, a verdict line, the pairs the data
//! cannot test, warnings, and how to read the result. Only lays out a
//! [`CheckReport`]; the statistics are computed in [`crate::check`].

use super::doc::{Align, Block, Doc, Table};
use crate::check::{CheckReport, TestedImplication, fisher_z, logistic_lr, multinomial_lr, nested_f};
use crate::graph::quote;

/// A list of names, quoted as in a graph file when needed.
fn names(set: &[String]) -> String {
    set.iter().map(|s| quote(s)).collect::<Vec<_>>().join(", ")
}

/// A p-value with four decimals, or `<0.0001`.
fn p_text(p: f64) -> String {
    if p < 1e-4 {
        "<0.0001".to_string()
    } else {
        format!("{p:.4}")
    }
}

/// The short name of a test for the table.
fn short_test(test: &str) -> &str {
    match test {
        fisher_z::NAME => "Fisher z",
        logistic_lr::NAME => "logistic LR",
        nested_f::NAME => "nested F",
        multinomial_lr::NAME => "multinomial LR",
        other => other,
    }
}

/// The statistic with its reference distribution.
fn statistic_text(t: &TestedImplication) -> String {
    match (t.df, t.df_denominator) {
        (Some(d1), Some(d2)) => format!("F({d1}, {d2}) = {:.2}", t.statistic),
        (Some(d), None) => format!("chi2({d}) = {:.2}", t.statistic),
        _ => format!("z = {:.2}", t.statistic),
    }
}

fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// The one-line verdict.
pub fn verdict(r: &CheckReport) -> String {
    let adj = format!("{} adjustment", r.correction.label());
    if r.tested == 0 {
        return "The graph implies no conditional independence that these data can test.".to_string();
    }
    let lead = match (r.tested, r.rejected) {
        (1, 0) => "The data do not contradict the one testable claim".to_string(),
        (1, _) => "The data contradict the one testable claim".to_string(),
        (n, 0) => format!("The data contradict none of the {n} testable claims"),
        (n, k) => format!("The data contradict {k} of the {n} testable claims"),
    };
    format!("{lead} at alpha {} after {adj}.", r.alpha)
}

/// The document for a check.
pub fn report_doc(r: &CheckReport) -> Doc {
    let mut blocks = Vec::new();
    let implied = r.tested + r.not_tested.len();
    blocks.push(Block::Para(format!(
        "The graph implies {} among the {} observed variables: two variables the graph does \
         not join are independent given a set of observed variables that separates them. Each \
         claim is tested on the rows complete for its own variables ({} in the file); the \
         p-values are adjusted for the number of tests by the {} method.",
        plural(
            implied,
            "testable conditional independence",
            "testable conditional independencies"
        ),
        r.observed.len(),
        r.rows,
        r.correction.label()
    )));
    if !r.implications.is_empty() {
        blocks.push(Block::Heading("Claims, by adjusted p-value".into()));
        let mut t = Table::new(
            "",
            &[
                "independent",
                "test",
                "n",
                "statistic",
                "p",
                "adjusted p",
                "verdict",
                "given",
            ],
        )
        .align(1, Align::Left)
        .align(6, Align::Left)
        .align(7, Align::Left);
        let mut order: Vec<&TestedImplication> = r.implications.iter().collect();
        order.sort_by(|a, b| {
            a.p_adjusted
                .total_cmp(&b.p_adjusted)
                .then(a.p_value.total_cmp(&b.p_value))
        });
        for i in order {
            let given = if i.given.is_empty() {
                "(nothing)".to_string()
            } else {
                names(&i.given)
            };
            t.row(vec![
                format!("{}, {}", quote(&i.a), quote(&i.b)),
                short_test(&i.test).to_string(),
                i.n.to_string(),
                statistic_text(i),
                p_text(i.p_value),
                p_text(i.p_adjusted),
                if i.rejected { "REJECTED" } else { "not rejected" }.to_string(),
                given,
            ]);
        }
        t.notes.push(format!(
            "REJECTED: adjusted p-value at most alpha = {}. n: rows with a value for every \
             variable of the claim. given: the set the two variables are independent given.",
            r.alpha
        ));
        t.notes.push(
            "Tests: Fisher z, partial correlation of two continuous variables with Fisher's z; \
             logistic LR, likelihood ratio between nested logistic regressions of the binary \
             variable; nested F, F test between nested least-squares regressions of the \
             continuous variable on the conditioning set with and without the categorical \
             one's dummies; multinomial LR, likelihood ratio between nested multinomial \
             logistic regressions. Conditioning variables enter linearly, categorical ones as \
             dummies."
                .to_string(),
        );
        blocks.push(Block::Table(t));
        let fewer: Vec<&TestedImplication> = r.implications.iter().filter(|i| i.n < r.rows).collect();
        if !fewer.is_empty() {
            let missing: Vec<String> = r
                .missing_by_column
                .iter()
                .map(|(c, k)| format!("{} ({k})", quote(c)))
                .collect();
            blocks.push(Block::Para(format!(
                "Missing values: {} left out rows with a missing value in their own variables \
                 (rows missing each variable: {}). No other rows were dropped.",
                plural(fewer.len(), "test", "tests"),
                missing.join(", ")
            )));
        }
    }

    blocks.push(Block::Heading("Verdict".into()));
    blocks.push(Block::Para(verdict(r)));

    if !r.untestable.is_empty() || !r.not_tested.is_empty() {
        blocks.push(Block::Heading("Pairs not tested".into()));
        let mut items = Vec::new();
        for p in &r.untestable {
            items.push(format!(
                "{} and {}: no set of observed variables separates them (an unobserved variable \
                 links them), so the graph makes no testable claim about this pair.",
                quote(&p.a),
                quote(&p.b)
            ));
        }
        for p in &r.not_tested {
            items.push(format!(
                "{} and {} given {}: the data cannot test this claim: {}.",
                quote(&p.a),
                quote(&p.b),
                if p.given.is_empty() {
                    "nothing".to_string()
                } else {
                    format!("{{{}}}", names(&p.given))
                },
                p.reason
            ));
        }
        blocks.push(Block::List(items));
    }

    for w in &r.warnings {
        blocks.push(Block::Warning(w.clone()));
    }

    blocks.push(Block::Heading("Reading".into()));
    blocks.push(Block::Para(
        "A rejected claim means the data disagree with the graph about that pair: some edge or \
         unobserved common cause the graph leaves out probably links them, or the test's model \
         does not fit (conditioning variables enter linearly). Claims that are not rejected are \
         consistent with the data but do not confirm the graph: a test may lack power, and \
         graphs that imply the same independencies cannot be told apart this way. With many \
         rows, tiny departures are rejected; look at their size (the partial correlation for \
         continuous pairs, in the JSON output)."
            .to_string(),
    ));
    Doc {
        title: "Testing the graph's implications against the data".to_string(),
        blocks,
        stamp: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::{Correction, Pair};
    use crate::report::Exporter;
    use crate::report::text::Text;
    use std::collections::BTreeMap;

    fn claim(a: &str, b: &str, p: f64, q: f64, rejected: bool) -> TestedImplication {
        TestedImplication {
            a: a.into(),
            b: b.into(),
            given: vec!["s".into()],
            test: fisher_z::NAME.into(),
            statistic: 1.5,
            p_value: p,
            p_adjusted: q,
            rejected,
            n: 100,
            df: None,
            df_denominator: None,
            response: None,
            partial_correlation: Some(0.1),
        }
    }

    fn report(claims: Vec<TestedImplication>) -> CheckReport {
        CheckReport {
            alpha: 0.05,
            correction: Correction::Holm,
            tested: claims.len(),
            rejected: claims.iter().filter(|c| c.rejected).count(),
            implications: claims,
            untestable: vec![Pair {
                a: "u v".into(),
                b: "w".into(),
            }],
            not_tested: Vec::new(),
            rows: 100,
            missing_by_column: BTreeMap::new(),
            observed: vec!["a".into(), "b".into()],
            latent: Vec::new(),
            warnings: vec!["a caveat".into()],
        }
    }

    #[test]
    fn verdict_counts_and_names_the_adjustment() {
        assert_eq!(
            verdict(&report(vec![
                claim("a", "b", 0.3, 0.6, false),
                claim("c", "d", 0.001, 0.002, true)
            ])),
            "The data contradict 1 of the 2 testable claims at alpha 0.05 after Holm adjustment."
        );
        assert_eq!(
            verdict(&report(vec![claim("a", "b", 0.3, 0.3, false)])),
            "The data do not contradict the one testable claim at alpha 0.05 after Holm adjustment."
        );
        let mut r = report(vec![
            claim("a", "b", 0.3, 0.6, false),
            claim("c", "d", 0.2, 0.6, false),
        ]);
        r.correction = Correction::Bh;
        assert!(verdict(&r).starts_with("The data contradict none of the 2"));
        assert!(verdict(&r).ends_with("after Benjamini-Hochberg adjustment."));
        assert!(verdict(&report(Vec::new())).contains("no conditional independence"));
    }

    #[test]
    fn rows_sorted_by_adjusted_p_with_rejections_marked() {
        let r = report(vec![
            claim("a", "b", 0.3, 0.6, false),
            claim("c", "d", 0.00001, 0.00002, true),
        ]);
        let text = Text.render(&report_doc(&r));
        let first = text.find("c, d").unwrap();
        let second = text.find("a, b").unwrap();
        assert!(first < second, "{text}");
        let line = text.lines().find(|l| l.contains("c, d")).unwrap();
        assert!(
            line.contains("REJECTED") && line.contains("<0.0001") && line.contains("z = 1.50"),
            "{line}"
        );
        let line = text.lines().find(|l| l.contains("a, b")).unwrap();
        assert!(line.contains("not rejected") && line.contains("0.6000"), "{line}");
        assert!(
            text.contains("\"u v\" and w: no set of observed variables"),
            "{text}"
        );
        assert!(text.contains("! a caveat"));
        assert!(text.contains(crate::report::doc::CAUTION.split_whitespace().next().unwrap()));
    }
}
