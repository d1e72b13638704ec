//! Data drawn from the structural causal model that a graph file writes down,
//! and the true causal effect under that model.
//!
//! Each node gets a structural equation from its parents (Wright 1921,
//! "Correlation and causation", J Agric Res 20:557-585; Pearl 2009,
//! *Causality*, ch. 1.4 and 5), evaluated in topological order:
//!
//! - a continuous node is `intercept + sum(coef * parent) + sd * e` with `e`
//!   standard normal (`sd` 1 unless written); it is then rounded to `round`
//!   decimals and clipped to `[min, max]` when those attributes are written;
//! - a `binary` node is 1 with probability `expit(intercept + sum(coef * parent))`;
//! - a categorical node (`levels(a 0.5, b 0.3, c 0.2)`) must be a root and is
//!   drawn with those probabilities (they must sum to 1 within 1e-9); as a
//!   parent it contributes the coefficient written for its level, its first
//!   level being the reference with coefficient 0, so every other level needs
//!   one (`role -> y (warehouse 2, driver 3.5)`).
//!
//! Every edge into a node must carry a coefficient; a missing one is an error
//! naming the edge unless [`Options::default_coef`] is given. A coefficient
//! written after `a <-> b` applies to both arrows of its latent node. Latent
//! nodes (`a <-> b`, or `name : latent`) are simulated but are not columns of
//! the output.
//!
//! Rounding and clipping make a node's equation non-linear, as does a binary
//! node; when such a node lies on a directed path from the exposure to the
//! outcome, [`true_effect`] computes the truth by Monte Carlo instead of the
//! path rule (see [`true_effect`]).
//!
//! Same seed, same numbers, on every platform: the generator is ChaCha8 with
//! a documented key expansion, normals come from the polar method and the
//! logarithm and exponential are computed in software ([`crate::maths`]).

pub mod csv;
pub mod parquet;
mod rng;
mod truth;

pub use csv::{CsvSink, format_number, write_csv};
pub use parquet::ParquetSink;
pub use truth::{CHUNK, Contrast, MAX_PATHS, Method, PathTerm, Truth, TruthOptions, true_effect};

use crate::graph::{Coef, Graph, Node};
use crate::progress::Reporter;
use crate::resources::{Demand, Machine};
use crate::{Advice, Error, Remedy, Result, Setting};
use rng::Stream;

/// Rows drawn, checked and written at a time by [`Model::write_rows`].
pub const ROW_BLOCK: usize = 4096;

/// Choices that the graph file does not make.
#[derive(Debug, Clone, Default)]
pub struct Options {
    /// Coefficient for every edge written without one (for a categorical
    /// parent: for each of its non-reference levels). `None`: such an edge is
    /// an error.
    pub default_coef: Option<f64>,
}

/// One term of a structural equation.
#[derive(Debug, Clone)]
enum Term {
    /// `coef * parent`.
    Linear(Node, f64),
    /// The coefficient of the parent's level (index 0 is the reference, 0).
    Levels(Node, Vec<f64>),
}

#[derive(Debug, Clone)]
enum Kind {
    Continuous { sd: f64 },
    Binary,
    Categorical { levels: Vec<String>, cum: Vec<f64> },
}

#[derive(Debug, Clone)]
struct Equation {
    kind: Kind,
    intercept: f64,
    terms: Vec<Term>,
    round: Option<u32>,
    min: Option<f64>,
    max: Option<f64>,
}

impl Equation {
    /// Rounding or clipping is written for this node.
    fn post_processed(&self) -> bool {
        self.round.is_some() || self.min.is_some() || self.max.is_some()
    }
}

/// What an intervention does to a node.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Action {
    /// `do(X = value)`.
    Set(f64),
    /// `do(X = X + delta)`: the node's own value, shifted.
    Shift(f64),
}

/// A structural model checked against the rules above, ready to draw from.
#[derive(Debug, Clone)]
pub struct Model {
    graph: Graph,
    order: Vec<Node>,
    eqs: Vec<Equation>,
    defaulted: Vec<String>,
}

/// Simulated data: one column per node of the graph (latent ones included),
/// in the graph's declaration order.
#[derive(Debug, Clone, PartialEq)]
pub struct SimData {
    /// Node names, indexed by node.
    pub names: Vec<String>,
    /// Columns, indexed by node.
    pub columns: Vec<Column>,
    /// The observed nodes, in declaration order: the columns of the CSV.
    pub observed: Vec<Node>,
}

/// One simulated variable.
#[derive(Debug, Clone, PartialEq)]
pub enum Column {
    /// Continuous or binary (0/1) values.
    Numeric(Vec<f64>),
    /// A categorical variable: its levels and each row's level index.
    Categorical {
        /// Level names, the reference level first.
        levels: Vec<String>,
        /// Index into `levels`, one per row.
        codes: Vec<usize>,
    },
}

impl Column {
    /// Number of rows.
    pub fn len(&self) -> usize {
        match self {
            Column::Numeric(v) => v.len(),
            Column::Categorical { codes, .. } => codes.len(),
        }
    }

    /// True when there are no rows.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

impl SimData {
    /// Number of rows.
    pub fn rows(&self) -> usize {
        self.columns.first().map_or(0, Column::len)
    }

    /// The column of the node called `name`.
    pub fn column(&self, name: &str) -> Option<&Column> {
        self.names
            .iter()
            .position(|n| n == name)
            .map(|i| &self.columns[i])
    }

    /// The values of a continuous or binary node called `name`.
    pub fn numeric(&self, name: &str) -> Option<&[f64]> {
        match self.column(name)? {
            Column::Numeric(v) => Some(v),
            Column::Categorical { .. } => None,
        }
    }
}

/// Describes the edge `p -> v` as the user wrote it (`a <-> b` for the arrows
/// of a bidirected edge's latent node).
fn edge_name(g: &Graph, p: Node, v: Node) -> String {
    match g.bidirected_pair(p) {
        Some((a, b)) => format!("'{}' <-> '{}'", g.name(a), g.name(b)),
        None => format!("'{}' -> '{}'", g.name(p), g.name(v)),
    }
}

impl Model {
    /// Checks the graph's coefficients and attributes and builds the model.
    pub fn new(g: &Graph, opts: &Options) -> Result<Model> {
        let order = g.topological_order().map_err(|cycle| {
            Error::input(format!(
                "the graph has a directed cycle: {}",
                g.names_of(&cycle).join(" -> ")
            ))
        })?;
        if let Some(d) = opts.default_coef
            && !d.is_finite()
        {
            return Err(Error::input(format!(
                "the default coefficient must be a finite number, not {d}"
            )));
        }
        let mut eqs = Vec::with_capacity(g.len());
        let mut missing = Vec::new();
        let mut defaulted = Vec::new();
        for v in 0..g.len() {
            eqs.push(Self::equation(g, v, opts, &mut missing, &mut defaulted)?);
        }
        if !missing.is_empty() {
            let n = missing.len();
            let shown: Vec<String> = missing.iter().take(8).cloned().collect();
            let more = if n > 8 {
                format!(" and {} more", n - 8)
            } else {
                String::new()
            };
            return Err(Error::input(format!(
                "{} without a coefficient: {}{more}; write one after the edge's target, as in 'a -> b (0.5)' \
                 (per level for a categorical parent: 'role -> y (warehouse 2, driver 3.5)')",
                if n == 1 { "an edge" } else { "edges" },
                shown.join(", ")
            ))
            .advised(Advice::one(
                Remedy::Give(Setting::DefaultCoef),
                "to set every edge without one",
            )));
        }
        Ok(Model {
            graph: g.clone(),
            order,
            eqs,
            defaulted,
        })
    }

    fn equation(
        g: &Graph,
        v: Node,
        opts: &Options,
        missing: &mut Vec<String>,
        defaulted: &mut Vec<String>,
    ) -> Result<Equation> {
        let spec = g.spec(v);
        let name = g.name(v);
        if let (Some(lo), Some(hi)) = (spec.min, spec.max)
            && lo > hi
        {
            return Err(Error::input(format!("node '{name}': min={lo} is above max={hi}")));
        }
        let kind = if !spec.levels.is_empty() {
            Self::categorical(g, v)?
        } else if spec.binary {
            let mut bad = Vec::new();
            if spec.sd.is_some() {
                bad.push("sd=");
            }
            if spec.round.is_some() {
                bad.push("round=");
            }
            if spec.min.is_some() {
                bad.push("min=");
            }
            if spec.max.is_some() {
                bad.push("max=");
            }
            if !bad.is_empty() {
                return Err(Error::input(format!(
                    "node '{name}' is binary (0/1 from a logistic model): {} does not apply",
                    bad.join(", ")
                )));
            }
            Kind::Binary
        } else {
            Kind::Continuous {
                sd: spec.sd.unwrap_or(1.0),
            }
        };
        let mut terms = Vec::new();
        for &p in g.parents(v) {
            let levels = &g.spec(p).levels;
            let coef = match g.coef(p, v) {
                Some(c) => c.clone(),
                None => match opts.default_coef {
                    Some(d) => {
                        defaulted.push(edge_name(g, p, v));
                        if levels.is_empty() {
                            Coef::Value(d)
                        } else {
                            Coef::Levels(levels[1..].iter().map(|(l, _)| (l.clone(), d)).collect())
                        }
                    }
                    None => {
                        missing.push(edge_name(g, p, v));
                        continue;
                    }
                },
            };
            terms.push(Self::term(g, p, v, coef)?);
        }
        Ok(Equation {
            kind,
            intercept: spec.intercept.unwrap_or(0.0),
            terms,
            round: spec.round,
            min: spec.min,
            max: spec.max,
        })
    }

    fn categorical(g: &Graph, v: Node) -> Result<Kind> {
        let spec = g.spec(v);
        let name = g.name(v);
        if spec.binary {
            return Err(Error::input(format!(
                "node '{name}' is marked both binary and categorical (levels(...)); choose one"
            )));
        }
        if !g.parents(v).is_empty() {
            let parents: Vec<String> = g.parents(v).iter().map(|&p| edge_name(g, p, v)).collect();
            return Err(Error::input(format!(
                "categorical node '{name}' has incoming edges ({}): a node with levels(...) must be a root of the graph",
                parents.join(", ")
            )));
        }
        if spec.intercept.is_some()
            || spec.sd.is_some()
            || spec.round.is_some()
            || spec.min.is_some()
            || spec.max.is_some()
        {
            return Err(Error::input(format!(
                "node '{name}' is categorical (levels(...)): intercept=, sd=, round=, min= and max= do not apply"
            )));
        }
        if spec.levels.len() < 2 {
            return Err(Error::input(format!(
                "categorical node '{name}' needs at least two levels in levels(...)"
            )));
        }
        let mut total = 0.0;
        for (i, (l, p)) in spec.levels.iter().enumerate() {
            if spec.levels[..i].iter().any(|(m, _)| m == l) {
                return Err(Error::input(format!(
                    "categorical node '{name}': level '{l}' is listed twice"
                )));
            }
            if p.is_nan() || *p < 0.0 {
                return Err(Error::input(format!(
                    "categorical node '{name}': level '{l}' has probability {p}; probabilities must be 0 or more"
                )));
            }
            total += p;
        }
        if (total - 1.0).abs() > 1e-9 {
            return Err(Error::input(format!(
                "categorical node '{name}': the level probabilities sum to {total}, not 1"
            )));
        }
        let mut acc = 0.0;
        let mut cum: Vec<f64> = spec
            .levels
            .iter()
            .map(|(_, p)| {
                acc += p;
                acc / total
            })
            .collect();
        if let Some(last) = cum.last_mut() {
            *last = 1.0;
        }
        Ok(Kind::Categorical {
            levels: spec.levels.iter().map(|(l, _)| l.clone()).collect(),
            cum,
        })
    }

    fn term(g: &Graph, p: Node, v: Node, coef: Coef) -> Result<Term> {
        let levels = &g.spec(p).levels;
        let edge = edge_name(g, p, v);
        match coef {
            Coef::Value(c) if levels.is_empty() => Ok(Term::Linear(p, c)),
            Coef::Value(_) => Err(Error::input(format!(
                "edge {edge}: '{}' is categorical, so the coefficient needs one number per level other than \
                 its reference level '{}', as in ({})",
                g.name(p),
                levels[0].0,
                levels[1..]
                    .iter()
                    .enumerate()
                    .map(|(i, (l, _))| format!("{l} {}", i + 1))
                    .collect::<Vec<_>>()
                    .join(", ")
            ))),
            Coef::Levels(_) if levels.is_empty() => Err(Error::input(format!(
                "edge {edge}: per-level coefficients need a categorical parent, but '{}' has no levels(...)",
                g.name(p)
            ))),
            Coef::Levels(pairs) => {
                let mut by_level: Vec<Option<f64>> = vec![None; levels.len()];
                by_level[0] = Some(0.0);
                for (l, c) in pairs {
                    match levels.iter().position(|(m, _)| *m == l) {
                        None => {
                            return Err(Error::input(format!(
                                "edge {edge}: '{l}' is not a level of '{}' (its levels: {})",
                                g.name(p),
                                levels
                                    .iter()
                                    .map(|(m, _)| m.as_str())
                                    .collect::<Vec<_>>()
                                    .join(", ")
                            )));
                        }
                        Some(0) => {
                            return Err(Error::input(format!(
                                "edge {edge}: '{l}' is the reference level of '{}' (its coefficient is 0 by definition)",
                                g.name(p)
                            )));
                        }
                        Some(i) if by_level[i].is_some() => {
                            return Err(Error::input(format!("edge {edge}: level '{l}' is given twice")));
                        }
                        Some(i) => by_level[i] = Some(c),
                    }
                }
                let absent: Vec<&str> = levels
                    .iter()
                    .zip(&by_level)
                    .filter(|(_, c)| c.is_none())
                    .map(|((l, _), _)| l.as_str())
                    .collect();
                if !absent.is_empty() {
                    return Err(Error::input(format!(
                        "edge {edge}: no coefficient for level(s) {} of '{}' (every level but the reference '{}' needs one)",
                        absent.join(", "),
                        g.name(p),
                        levels[0].0
                    )));
                }
                Ok(Term::Levels(
                    p,
                    by_level.into_iter().map(|c| c.unwrap_or(0.0)).collect(),
                ))
            }
        }
    }

    /// The graph the model was built from.
    pub fn graph(&self) -> &Graph {
        &self.graph
    }

    /// Edges that took the default coefficient, as `'a' -> 'b'`.
    pub fn defaulted_edges(&self) -> &[String] {
        &self.defaulted
    }

    /// Is node `v` categorical?
    pub fn is_categorical(&self, v: Node) -> bool {
        matches!(self.eqs[v].kind, Kind::Categorical { .. })
    }

    /// Is node `v` binary?
    pub fn is_binary(&self, v: Node) -> bool {
        matches!(self.eqs[v].kind, Kind::Binary)
    }

    /// Draws one row's noise: a standard normal for a continuous node, a
    /// uniform for a binary or categorical one, in topological order. The
    /// amount drawn does not depend on any intervention, so two worlds
    /// evaluated from the same noise share their random numbers.
    fn draw_noise(&self, s: &mut Stream, noise: &mut [f64]) {
        for &v in &self.order {
            noise[v] = match self.eqs[v].kind {
                Kind::Continuous { .. } => s.normal(),
                _ => s.uniform(),
            };
        }
    }

    /// Evaluates every node from a row's noise, with an optional intervention.
    fn evaluate(&self, noise: &[f64], action: Option<(Node, Action)>, vals: &mut [f64]) {
        for &v in &self.order {
            let eq = &self.eqs[v];
            let natural = match &eq.kind {
                Kind::Categorical { cum, .. } => {
                    cum.iter().position(|&c| noise[v] < c).unwrap_or(cum.len() - 1) as f64
                }
                kind => {
                    let mut eta = eq.intercept;
                    for t in &eq.terms {
                        eta += match t {
                            Term::Linear(p, c) => c * vals[*p],
                            Term::Levels(p, by) => by[vals[*p] as usize],
                        };
                    }
                    match kind {
                        Kind::Continuous { sd } => post_process(eq, eta + sd * noise[v]),
                        _ => f64::from(u8::from(noise[v] < crate::maths::expit(eta))),
                    }
                }
            };
            vals[v] = match action {
                Some((x, Action::Set(a))) if x == v => a,
                Some((x, Action::Shift(d))) if x == v => natural + d,
                _ => natural,
            };
        }
    }

    /// Draws `rows` rows from stream 0 of the generator keyed by `seed`, in
    /// blocks of [`ROW_BLOCK`] rows: each block, every node's values row by
    /// row, goes to `sink` with its number of rows once all its values are
    /// finite.
    fn draw_blocks(
        &self,
        rows: u64,
        seed: u64,
        mut sink: impl FnMut(&[f64], usize) -> Result<()>,
    ) -> Result<()> {
        let n = self.graph.len();
        let mut s = Stream::new(seed, 0);
        let mut noise = vec![0.0; n];
        let mut block = Vec::with_capacity(ROW_BLOCK.saturating_mul(n));
        let mut left = rows;
        while left > 0 {
            let k = left.min(ROW_BLOCK as u64) as usize;
            block.clear();
            for _ in 0..k {
                self.draw_noise(&mut s, &mut noise);
                let start = block.len();
                block.resize(start + n, 0.0);
                self.evaluate(&noise, None, &mut block[start..]);
            }
            if let Some(i) = block.iter().position(|x| !x.is_finite()) {
                return Err(Error::Numerical(format!(
                    "simulated values of '{}' overflowed (coefficients too large?)",
                    self.graph.name(i % n)
                )));
            }
            sink(&block, k)?;
            left -= k as u64;
        }
        Ok(())
    }

    /// Draws `rows` rows from stream 0 of the generator keyed by `seed`,
    /// held in memory: refused (naming the setting) when they would not fit.
    pub fn simulate(&self, rows: usize, seed: u64) -> Result<SimData> {
        let n = self.graph.len();
        Machine::now().check(&Demand {
            setting: Setting::Rows,
            count: rows as u64,
            unit: "rows",
            per_unit: 2 * 8 * n as u64,
            fixed: 0,
            least: 1,
        })?;
        let mut cols: Vec<Vec<f64>> = vec![Vec::with_capacity(rows); n];
        self.draw_blocks(rows as u64, seed, |block, _| {
            for row in block.chunks_exact(n.max(1)) {
                for (c, &x) in cols.iter_mut().zip(row) {
                    c.push(x);
                }
            }
            Ok(())
        })?;
        let columns = cols
            .into_iter()
            .enumerate()
            .map(|(v, col)| match &self.eqs[v].kind {
                Kind::Categorical { levels, .. } => Column::Categorical {
                    levels: levels.clone(),
                    codes: col.iter().map(|&c| c as usize).collect(),
                },
                _ => Column::Numeric(col),
            })
            .collect();
        Ok(SimData {
            names: (0..n).map(|v| self.graph.name(v).to_string()).collect(),
            columns,
            observed: self.graph.observed(),
        })
    }

    /// Draws `rows` rows as [`Model::simulate`] does and writes the observed
    /// columns as CSV to `out` as they are drawn, in bounded memory: the
    /// same bytes as [`write_csv`] of the simulated data. A write that fails
    /// is an [`Error::Io`] on `name`; `progress` hears of each block.
    pub fn write_rows<W: std::io::Write>(
        &self,
        rows: u64,
        seed: u64,
        out: W,
        name: &str,
        progress: &Reporter,
    ) -> Result<()> {
        self.write_to(rows, seed, &mut csv::CsvSink::new(out), name, progress)
    }

    /// Draws `rows` rows as [`Model::simulate`] does and hands the observed
    /// columns to `sink` a block of [`ROW_BLOCK`] rows at a time, in
    /// bounded memory. A write that fails is an [`Error::Io`] on `name`;
    /// `progress` hears of each block.
    pub fn write_to(
        &self,
        rows: u64,
        seed: u64,
        sink: &mut dyn RowSink,
        name: &str,
        progress: &Reporter,
    ) -> Result<()> {
        let n = self.graph.len();
        let observed = self.graph.observed();
        let io = |e: std::io::Error| Error::io(name, e);
        let columns: Vec<(&str, Option<&[String]>)> = observed
            .iter()
            .map(|&v| {
                let levels = match &self.eqs[v].kind {
                    Kind::Categorical { levels, .. } => Some(levels.as_slice()),
                    _ => None,
                };
                (self.graph.name(v), levels)
            })
            .collect();
        sink.start(&columns).map_err(io)?;
        progress.start("simulating rows", rows);
        let mut out = Vec::with_capacity(ROW_BLOCK.saturating_mul(observed.len()));
        let drawn = self.draw_blocks(rows, seed, |block, _| {
            out.clear();
            for row in block.chunks_exact(n.max(1)) {
                out.extend(observed.iter().map(|&v| row[v]));
            }
            sink.block(&out).map_err(io)?;
            progress.advance((block.len() / n.max(1)) as u64);
            Ok(())
        });
        progress.finish();
        drawn?;
        sink.finish().map_err(io)
    }
}

/// Where [`Model::write_to`] puts simulated rows, a block at a time (CSV,
/// [`csv::CsvSink`]; Parquet, [`parquet::ParquetSink`]).
pub trait RowSink {
    /// Starts the output: the observed columns in order, each with its
    /// level names when categorical (its cells then hold level indices).
    fn start(&mut self, columns: &[(&str, Option<&[String]>)]) -> std::io::Result<()>;
    /// A block of rows, row by row over the columns given to `start`.
    fn block(&mut self, rows: &[f64]) -> std::io::Result<()>;
    /// Ends the output (the Parquet footer; a flush).
    fn finish(&mut self) -> std::io::Result<()>;
}

/// Rounds to the node's decimals, then clips to its range.
fn post_process(eq: &Equation, mut x: f64) -> f64 {
    if let Some(d) = eq.round {
        // 10^d is exact for d <= 22 (the parser allows at most 12).
        let f = (0..d).fold(1.0, |f, _| f * 10.0);
        x = (x * f).round() / f;
    }
    if let Some(lo) = eq.min {
        x = x.max(lo);
    }
    if let Some(hi) = eq.max {
        x = x.min(hi);
    }
    x
}

/// Draws `rows` rows from the model the graph writes down, with `seed`
/// (every edge must carry a coefficient; see [`Model::new`] for defaults).
pub fn simulate(g: &Graph, rows: usize, seed: u64) -> Result<SimData> {
    Model::new(g, &Options::default())?.simulate(rows, seed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::graph::parse;

    fn model_err(text: &str) -> String {
        let g = parse(text, "g.txt").unwrap().graph;
        Model::new(&g, &Options::default()).unwrap_err().to_string()
    }

    #[test]
    fn invalid_models_are_errors_naming_the_place() {
        let e = model_err("a -> b\nb -> c (1)\n");
        assert!(
            e.contains("'a' -> 'b'")
                && e.ends_with("; give the default edge coefficient to set every edge without one"),
            "{e}"
        );
        let g = parse("a -> b\n", "g.txt").unwrap().graph;
        match Model::new(&g, &Options::default()) {
            Err(Error::Advised { error, advice }) => {
                assert!(matches!(*error, Error::Input(_)), "{error:?}");
                assert_eq!(advice.remedies, [Remedy::Give(Setting::DefaultCoef)]);
            }
            other => panic!("{other:?}"),
        }
        let e = model_err("a <-> b\n");
        assert!(e.contains("'a' <-> 'b'"), "{e}");
        let e = model_err("x -> r\nr : levels(p 0.5, q 0.5)\n");
        assert!(e.contains("must be a root"), "{e}");
        let e = model_err("r : levels(p 0.5, q 0.4)\n");
        assert!(e.contains("sum to 0.9"), "{e}");
        let e = model_err("r : levels(p 0.5, q 0.5)\nr -> y (p 1, q 2)\n");
        assert!(e.contains("reference level"), "{e}");
        let e = model_err("r : levels(p 0.5, q 0.5)\nr -> y (z 1)\n");
        assert!(e.contains("'z' is not a level"), "{e}");
        let e = model_err("r : levels(p 0.3, q 0.3, s 0.4)\nr -> y (q 1)\n");
        assert!(e.contains("no coefficient for level(s) s"), "{e}");
        let e = model_err("r : levels(p 0.5, q 0.5)\nr -> y (1)\n");
        assert!(e.contains("one number per level"), "{e}");
        let e = model_err("a -> y (p 1)\n");
        assert!(e.contains("categorical parent"), "{e}");
        let e = model_err("x : binary sd=2\n");
        assert!(e.contains("sd= does not apply"), "{e}");
        let e = model_err("x : min=3 max=1\n");
        assert!(e.contains("above max"), "{e}");
        let e = model_err("r : binary levels(p 0.5, q 0.5)\n");
        assert!(e.contains("both binary and categorical"), "{e}");
    }

    #[test]
    fn default_coefficient_fills_missing_edges() {
        let g = parse("r : levels(p 0.5, q 0.5)\nr -> y\na -> y\n", "g.txt")
            .unwrap()
            .graph;
        let m = Model::new(
            &g,
            &Options {
                default_coef: Some(2.0),
            },
        )
        .unwrap();
        assert_eq!(m.defaulted_edges(), ["'r' -> 'y'", "'a' -> 'y'"]);
        let y = g.node("y").unwrap();
        assert!(matches!(&m.eqs[y].terms[0], Term::Levels(_, by) if by == &[0.0, 2.0]));
    }

    #[test]
    fn rounding_then_clipping() {
        let g = parse("x : round=1 min=0.5 max=2\n", "g.txt").unwrap().graph;
        let m = Model::new(&g, &Options::default()).unwrap();
        let eq = &m.eqs[0];
        assert_eq!(post_process(eq, 1.26), 1.3);
        assert_eq!(post_process(eq, 0.04), 0.5);
        assert_eq!(post_process(eq, 7.0), 2.0);
    }

    /// Rows written as they are drawn are the bytes of the rows held in
    /// memory, across block boundaries; rows that cannot be held are
    /// refused naming the setting, before anything is allocated.
    #[test]
    fn streamed_rows_equal_held_rows() {
        let text = "r : levels(a 0.5, b 0.5)\nz : binary\nr -> y (b 1)\nz -> x (0.4) -> y (2)\nu : latent\nu -> x (1)\n";
        let g = parse(text, "g.txt").unwrap().graph;
        let m = Model::new(&g, &Options::default()).unwrap();
        let rows = 2 * ROW_BLOCK + 17;
        let mut held = Vec::new();
        write_csv(&m.simulate(rows, 5).unwrap(), &mut held).unwrap();
        let mut streamed = Vec::new();
        m.write_rows(rows as u64, 5, &mut streamed, "out", &Reporter::none())
            .unwrap();
        assert_eq!(held, streamed);
        let e = m.simulate(usize::MAX, 5).unwrap_err();
        assert!(
            matches!(
                e,
                Error::Option {
                    setting: Setting::Rows,
                    ..
                }
            ),
            "{e}"
        );
    }

    #[test]
    fn interventions_share_random_numbers() {
        // Under do(x = 1) and do(x = 0) from the same noise, y differs by
        // exactly the coefficient (linear model, common random numbers).
        let g = parse("x : binary\nx -> y (1.5)\nc -> x (1)\nc -> y (2)\n", "g.txt")
            .unwrap()
            .graph;
        let m = Model::new(&g, &Options::default()).unwrap();
        let (x, y) = (g.node("x").unwrap(), g.node("y").unwrap());
        let mut s = Stream::new(3, 0);
        let mut noise = vec![0.0; 3];
        let (mut a, mut b) = (vec![0.0; 3], vec![0.0; 3]);
        for _ in 0..100 {
            m.draw_noise(&mut s, &mut noise);
            m.evaluate(&noise, Some((x, Action::Set(1.0))), &mut a);
            m.evaluate(&noise, Some((x, Action::Set(0.0))), &mut b);
            assert!((a[y] - b[y] - 1.5).abs() < 1e-12);
        }
    }
}
