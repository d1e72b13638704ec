//! The `check` result laid out as a [`Doc`]: the claims sorted by adjusted
//! p-value with the rejected ones marked, a verdict line, the pairs the data
//! cannot test, warnings, and how to read the result. Only lays out a
//! [`CheckReport`]; the statistics are computed in [`crate::check`].

use super::doc::{Align, Block, Doc, Table};
use crate::check::{
    Adjustment, CheckReport, TestedImplication, fisher_z, logistic_lr, multinomial_lr, nested_f,
};
use crate::graph::{Names, quote, set_text};

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

fn yes_no(b: Option<bool>) -> &'static str {
    match b {
        Some(true) => "yes",
        Some(false) => "no",
        None => "-",
    }
}

/// A claim in words: `a and b given {s}`.
fn claim_text(i: &TestedImplication) -> String {
    let given = set_text(&i.given, Names::Quoted, "nothing");
    format!("{} and {} given {given}", quote(&i.a), quote(&i.b))
}

/// The claims in the order of the table: when they were judged against a
/// set, rejected claims bearing on it first, then other rejected claims,
/// then the rest; within each group by adjusted p-value.
fn ordered(r: &CheckReport) -> Vec<&TestedImplication> {
    let mut order: Vec<&TestedImplication> = r.implications.iter().collect();
    let group = |i: &TestedImplication| match (i.rejected, i.bears_on_adjustment) {
        (true, Some(true)) => 0,
        (true, _) => 1,
        (false, Some(true)) => 2,
        _ => 3,
    };
    order.sort_by(|a, b| {
        group(a)
            .cmp(&group(b))
            .then(a.p_adjusted.total_cmp(&b.p_adjusted))
            .then(a.p_value.total_cmp(&b.p_value))
    });
    order
}

/// The set the claims were judged against, in words.
fn judged_set(a: &Adjustment) -> String {
    match (&a.adjustment_set, &a.frontdoor_set) {
        (Some(s), _) => format!("the adjustment set {}", set_text(s, Names::Quoted, "{}")),
        (None, Some(s)) => format!("the front-door set {}", set_text(s, Names::Quoted, "{}")),
        (None, None) => "no set (the effect is not identified under the graph)".to_string(),
    }
}

/// The section that says which rejected claims matter for the set used,
/// placed before the table.
fn bearing_blocks(r: &CheckReport) -> Vec<Block> {
    let rejected: Vec<&TestedImplication> = ordered(r).into_iter().filter(|i| i.rejected).collect();
    let Some(a) = &r.adjustment else {
        if rejected.is_empty() {
            return Vec::new();
        }
        return vec![Block::Para(
            "Whether a rejected claim bears on the adjustment set cannot be judged here: no \
             exposure and outcome were named. Name them to see which rejections could change \
             the set an estimate uses and which concern only variables that leave it as it is."
                .to_string(),
        )];
    };
    let count = match (rejected.len(), a.rejected_bearing) {
        (0, _) => "no claim is rejected".to_string(),
        (1, 1) => "the one rejected claim bears on it".to_string(),
        (1, _) => "the one rejected claim does not bear on it".to_string(),
        (n, 0) => format!("none of the {n} rejected claims bears on it"),
        (n, k) => format!("{k} of the {n} rejected claims bear on it"),
    };
    let mut blocks = vec![Block::Para(format!(
        "Judged against the effect of {} on {}, estimated with {}: {count}.",
        quote(&a.exposure),
        quote(&a.outcome),
        judged_set(a),
    ))];
    let (bear, other): (Vec<_>, Vec<_>) = rejected
        .into_iter()
        .partition(|i| i.bears_on_adjustment == Some(true));
    let item = |i: &&TestedImplication| {
        format!(
            "{} (adjusted p {}): {}.",
            claim_text(i),
            p_text(i.p_adjusted),
            i.bearing.as_deref().unwrap_or("not judged")
        )
    };
    if !bear.is_empty() {
        blocks.push(Block::Heading("Rejected claims that bear on the set".into()));
        blocks.push(Block::List(bear.iter().map(item).collect()));
    }
    if !other.is_empty() {
        blocks.push(Block::Heading(
            "Rejected claims that leave the set as it is".into(),
        ));
        blocks.push(Block::Para(
            "The graph is probably wrong about these pairs too, but a link between the two \
             variables, either way or through a shared unobserved cause, would leave the set \
             valid and chosen again, so the estimate does not rest on them."
                .to_string(),
        ));
        blocks.push(Block::List(
            other
                .iter()
                .map(|i| format!("{} (adjusted p {}).", claim_text(i), p_text(i.p_adjusted)))
                .collect(),
        ));
    }
    blocks
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
    blocks.extend(bearing_blocks(r));
    if !r.implications.is_empty() {
        let judged = r.adjustment.is_some();
        blocks.push(Block::Heading(
            if judged {
                "Claims, those bearing on the set first, then by adjusted p-value"
            } else {
                "Claims, by adjusted p-value"
            }
            .into(),
        ));
        let mut headers = vec![
            "independent",
            "test",
            "n",
            "statistic",
            "p",
            "adjusted p",
            "verdict",
        ];
        if judged {
            headers.push("bears on set");
        }
        headers.push("given");
        let last = headers.len() - 1;
        let mut t = Table::new("", &headers)
            .align(1, Align::Left)
            .align(6, Align::Left)
            .align(last, Align::Left);
        if judged {
            t = t.align(7, Align::Left);
        }
        for i in ordered(r) {
            let given = if i.given.is_empty() {
                "(nothing)".to_string()
            } else {
                names(&i.given)
            };
            let mut row = vec![
                format!("{}, {}", quote(&i.a), quote(&i.b)),
                short_test(&i.test).to_string(),
                i.n.to_string(),
                statistic_text(i),
                p_text(i.p_value),
                p_text(i.p_adjusted),
                if i.rejected { "REJECTED" } else { "not rejected" }.to_string(),
            ];
            if judged {
                row.push(yes_no(i.bears_on_adjustment).to_string());
            }
            row.push(given);
            t.row(row);
        }
        t.notes.push(format!(
            "REJECTED: adjusted p-value at most alpha = {}. n: rows with a value for every \
             variable of the claim. given: the set the two variables are independent given.",
            r.alpha
        ));
        if judged {
            t.notes.push(
                "bears on set: yes when the claim involves the exposure, the outcome or a \
                 variable on a causal path between them, or when linking the two variables \
                 would change the set used or make it invalid."
                    .to_string(),
            );
        }
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
                set_text(&p.given, Names::Quoted, "nothing"),
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
            note: None,
            bears_on_adjustment: None,
            bearing: None,
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
            adjustment: None,
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

    // Judged against a set: the rejected claim that bears on it leads, with
    // its reason, before a rejected claim with a smaller p-value that does
    // not; without a set the text says relevance cannot be judged.
    #[test]
    fn bearing_claims_lead() {
        let mut near = claim("x", "c1", 0.001, 0.01, true);
        near.bears_on_adjustment = Some(true);
        near.bearing = Some("it involves the exposure".into());
        let mut far = claim("c1", "c2", 0.00001, 0.00002, true);
        far.bears_on_adjustment = Some(false);
        far.bearing = Some("linking them leaves the set".into());
        let mut r = report(vec![far.clone(), near.clone()]);
        let text = Text.render(&report_doc(&r));
        assert!(text.contains("cannot be judged here"), "{text}");
        assert!(!text.contains("bears on set"), "{text}");
        r.adjustment = Some(Adjustment {
            exposure: "x".into(),
            outcome: "y".into(),
            strategy: crate::identify::Strategy::Backdoor,
            directed_path: true,
            adjustment_set: Some(vec!["c1".into(), "c2".into()]),
            frontdoor_set: None,
            bearing: 1,
            rejected_bearing: 1,
        });
        let text = Text.render(&report_doc(&r));
        let words = text.split_whitespace().collect::<Vec<_>>().join(" ");
        assert!(
            words.contains(
                "estimated with the adjustment set {c1, c2}: 1 of the 2 rejected claims bear on it."
            ),
            "{words}"
        );
        assert!(words.contains("x and c1 given {s} (adjusted p 0.0100): it involves the exposure."));
        let lead = text.find("REJECTED CLAIMS THAT BEAR ON THE SET").unwrap();
        let rest = text.find("REJECTED CLAIMS THAT LEAVE THE SET AS IT IS").unwrap();
        assert!(lead < rest, "{text}");
        let row_near = text.find("\n  x, c1 ").unwrap();
        let row_far = text.find("\n  c1, c2 ").unwrap();
        assert!(row_near < row_far, "{text}");
        assert!(!text.contains("cannot be judged"), "{text}");
    }
}
