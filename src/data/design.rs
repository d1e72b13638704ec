//! Design matrices as lists of terms, filled a block of rows at a time.
//!
//! One builder serves every model: an intercept; binary columns as 0/1;
//! categorical columns as one dummy per non-reference level; continuous
//! columns by [`Shape`] (linear; quadratic, x and x^2; or a restricted cubic
//! spline with 4 knots, see [`super::spline`]); the exposure; and products of
//! the exposure with the linear term of a column or with each of its dummies.
//! Term columns are centred at their sample means (a reparametrization that
//! keeps every prediction and slope; it only moves the intercept, see
//! [`Design::uncenter`]) so that cross-products stay well conditioned.
//!
//! Units: before any term is formed, each numeric column (and a dose set
//! by a [`Setting`]) is divided by the power of two nearest above its
//! largest absolute value, so every column a model sees lies within
//! [-1, 1] whatever the units of the data (a value of 1e150 or 1e-150 is
//! then as easy as 1; a spline's cubes do not overflow). Dividing by a
//! power of two is exact in floating point and commutes with rounding, so
//! every fit, prediction and test statistic is the same, bit for bit, as
//! on the raw values whenever those do not overflow; only a coefficient
//! read on its own changes units, by [`Design::term_scale`].

use super::{BLOCK, Frame, Kind, Rows, Store, rcs_basis, rcs_knots, reduce};
use nalgebra::{DMatrix, DVector};
use rayon::prelude::*;

/// How continuous covariates enter a model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Shape {
    /// x.
    #[default]
    Linear,
    /// x and x^2.
    Quadratic,
    /// Restricted cubic spline with 4 knots (x and two nonlinear terms).
    Spline,
}

/// A function of one frame column.
#[derive(Debug, Clone, PartialEq)]
pub enum Transform {
    /// The value.
    Linear,
    /// The value squared.
    Square,
    /// Nonlinear restricted cubic spline term `j` with these knots.
    Spline {
        /// Knot positions.
        knots: Vec<f64>,
        /// Basis index (0-based).
        j: usize,
    },
    /// 1 when the code equals this level code, else 0.
    Level(f64),
}

/// One factor of a term: a transform of a frame column.
#[derive(Debug, Clone, PartialEq)]
pub struct Factor {
    /// Frame column.
    pub col: usize,
    /// Transform applied.
    pub transform: Transform,
}

/// A design column: the product of its factors (none: the intercept).
#[derive(Debug, Clone, PartialEq)]
pub struct Term {
    /// Readable name, e.g. `age^2`, `role=driver`, `qsmk:smokeintensity`.
    pub name: String,
    /// Factors multiplied together.
    pub factors: Vec<Factor>,
}

impl Term {
    /// The intercept term.
    pub fn intercept() -> Term {
        Term {
            name: "(intercept)".into(),
            factors: Vec::new(),
        }
    }

    /// Is this the intercept?
    pub fn is_intercept(&self) -> bool {
        self.factors.is_empty()
    }

    /// Does the term involve frame column `col`?
    pub fn uses(&self, col: usize) -> bool {
        self.factors.iter().any(|f| f.col == col)
    }
}

/// What value the exposure column takes when rows are filled.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Setting {
    /// As observed.
    Observed,
    /// Set to this value for every row.
    Fixed(f64),
    /// The observed value plus this shift.
    Shift(f64),
}

/// A list of terms with their centring constants.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Design {
    terms: Vec<Term>,
    centers: Vec<f64>,
    exposure: Option<usize>,
    /// Per frame column, the power of two its values are multiplied by
    /// before terms are formed (1 for columns of codes; see the module
    /// note).
    unit: Vec<f64>,
}

/// The power of two that brings values of largest magnitude `largest`
/// into [-1, 1] (between 1/2 and 1 in magnitude): 2^-e with `e` the
/// smallest integer such that `largest <= 2^e`, kept within the range of
/// normal numbers; 1 for zero or a non-finite value.
pub fn unit_scale(largest: f64) -> f64 {
    if !(largest.is_finite() && largest > 0.0) {
        return 1.0;
    }
    let e = largest.log2().ceil().clamp(-1000.0, 1000.0) as i32;
    // log2 may round near a power of two: settle e exactly.
    let e = if 2f64.powi(e) < largest { e + 1 } else { e };
    let e = if 2f64.powi(e - 1) >= largest { e - 1 } else { e };
    2f64.powi(-e)
}

/// The largest finite absolute value of `x` (0 when there is none).
pub fn largest_magnitude(x: &[f64]) -> f64 {
    x.par_chunks(1 << 16)
        .map(|c| {
            c.iter()
                .filter(|v| v.is_finite())
                .fold(0.0f64, |m, v| m.max(v.abs()))
        })
        .reduce(|| 0.0, f64::max)
}

/// The terms of one covariate column under `shape`.
pub fn covariate_terms(frame: &Frame, col: usize, shape: Shape) -> Vec<Term> {
    let name = frame.name(col);
    let one = |name: String, t: Transform| Term {
        name,
        factors: vec![Factor { col, transform: t }],
    };
    match frame.kind(col) {
        Kind::Binary { low, high } => {
            let label = if low == "0" && high == "1" {
                name.to_string()
            } else {
                format!("{name}={high}")
            };
            vec![one(label, Transform::Linear)]
        }
        Kind::Categorical { levels } => (1..levels.len())
            .map(|k| one(format!("{name}={}", levels[k]), Transform::Level(k as f64)))
            .collect(),
        Kind::Numeric => {
            let mut t = vec![one(name.to_string(), Transform::Linear)];
            match shape {
                Shape::Linear => {}
                Shape::Quadratic => t.push(one(format!("{name}^2"), Transform::Square)),
                Shape::Spline => {
                    let knots = rcs_knots(frame.col(col));
                    for j in 0..knots.len().saturating_sub(2) {
                        let primes = "'".repeat(j + 1);
                        let tr = Transform::Spline {
                            knots: knots.clone(),
                            j,
                        };
                        t.push(one(format!("{name}{primes}"), tr));
                    }
                }
            }
            t
        }
    }
}

impl Design {
    /// A design: intercept, then the exposure's terms (if any), then the
    /// terms of each covariate, then exposure products with each `interact`
    /// column (its linear term, or each of its dummies); centred over
    /// `frame`. The exposure enters as one 0/1 term when binary, one dummy
    /// per non-reference level when categorical, and by `shape` when
    /// numeric (a dose); products use each of its dummies, or its linear
    /// term.
    pub fn build(
        frame: &Frame,
        exposure: Option<usize>,
        covariates: &[usize],
        shape: Shape,
        interact: &[usize],
    ) -> Design {
        let mut terms = vec![Term::intercept()];
        let own = exposure.map_or_else(Vec::new, |a| match frame.kind(a) {
            Kind::Binary { .. } => vec![Term {
                name: frame.name(a).to_string(),
                factors: vec![Factor {
                    col: a,
                    transform: Transform::Linear,
                }],
            }],
            _ => covariate_terms(frame, a, shape),
        });
        terms.extend(own.iter().cloned());
        for &c in covariates {
            terms.extend(covariate_terms(frame, c, shape));
        }
        let multiplied: Vec<&Term> = own
            .iter()
            .filter(|t| {
                !matches!(
                    t.factors[0].transform,
                    Transform::Square | Transform::Spline { .. }
                )
            })
            .collect();
        for e in &multiplied {
            for &c in interact {
                for t in covariate_terms(frame, c, Shape::Linear) {
                    let mut factors = e.factors.clone();
                    factors.extend(t.factors);
                    terms.push(Term {
                        name: format!("{}:{}", e.name, t.name),
                        factors,
                    });
                }
            }
        }
        Design::from_terms(frame, terms, exposure)
    }

    /// A design from explicit terms, centred over `frame`.
    pub fn from_terms(frame: &Frame, terms: Vec<Term>, exposure: Option<usize>) -> Design {
        let mut unit = vec![1.0; frame.ncols()];
        for t in &terms {
            for f in &t.factors {
                let numeric = frame.kind(f.col) == &Kind::Numeric;
                if numeric && !matches!(f.transform, Transform::Level(_)) && unit[f.col] == 1.0 {
                    unit[f.col] = unit_scale(largest_magnitude(frame.col(f.col)));
                }
            }
        }
        let mut d = Design {
            centers: vec![0.0; terms.len()],
            terms,
            exposure,
            unit,
        };
        d.recenter(frame);
        d
    }

    /// The factor `g` by which term `j`'s column (before centring) is the
    /// raw term's: its coefficient on the raw values is `g` times the one
    /// fitted here (and so its standard error); 1 for terms of codes.
    pub fn term_scale(&self, j: usize) -> f64 {
        self.terms[j]
            .factors
            .iter()
            .map(|f| {
                let u = self.unit_of(f.col);
                match f.transform {
                    Transform::Linear | Transform::Spline { .. } => u,
                    Transform::Square => u * u,
                    Transform::Level(_) => 1.0,
                }
            })
            .product()
    }

    fn unit_of(&self, col: usize) -> f64 {
        self.unit.get(col).copied().unwrap_or(1.0)
    }

    fn recenter(&mut self, frame: &Frame) {
        let n = frame.nrows().max(1) as f64;
        let p = self.terms.len();
        let rows = self.rows(frame, Setting::Observed);
        let sums = reduce(
            &rows,
            || vec![0.0; p],
            |acc, b| {
                for (j, a) in acc.iter_mut().enumerate() {
                    *a += b.col(j).iter().sum::<f64>();
                }
            },
            |a, b| a.iter_mut().zip(b).for_each(|(x, y)| *x += y),
        );
        self.centers = sums
            .iter()
            .zip(&self.terms)
            .map(|(s, t)| if t.is_intercept() { 0.0 } else { s / n })
            .collect();
    }

    /// The terms.
    pub fn terms(&self) -> &[Term] {
        &self.terms
    }

    /// Term names.
    pub fn names(&self) -> Vec<String> {
        self.terms.iter().map(|t| t.name.clone()).collect()
    }

    /// Number of columns.
    pub fn ncols(&self) -> usize {
        self.terms.len()
    }

    /// Index of the term called `name`.
    pub fn position(&self, name: &str) -> Option<usize> {
        self.terms.iter().position(|t| t.name == name)
    }

    /// Index of the exposure's own term (not its products).
    pub fn exposure_term(&self) -> Option<usize> {
        let a = self.exposure?;
        self.terms
            .iter()
            .position(|t| t.factors.len() == 1 && t.factors[0].col == a)
    }

    /// Indices of the exposure's own terms (one for a binary exposure, one
    /// per non-reference level, one per shape term of a dose).
    pub fn exposure_terms(&self) -> Vec<usize> {
        let Some(a) = self.exposure else {
            return Vec::new();
        };
        (0..self.terms.len())
            .filter(|&j| self.terms[j].factors.len() == 1 && self.terms[j].factors[0].col == a)
            .collect()
    }

    /// The frame column of the exposure, if the design has one.
    pub fn exposure_col(&self) -> Option<usize> {
        self.exposure
    }

    /// The centring constant of each term (0 for the intercept).
    pub fn centers(&self) -> &[f64] {
        &self.centers
    }

    /// A copy without the terms at `drop` (indices), same centring.
    pub fn without(&self, drop: &[usize]) -> Design {
        let keep = |j: &usize| !drop.contains(j);
        Design {
            terms: (0..self.terms.len())
                .filter(keep)
                .map(|j| self.terms[j].clone())
                .collect(),
            centers: (0..self.terms.len())
                .filter(keep)
                .map(|j| self.centers[j])
                .collect(),
            exposure: self.exposure,
            unit: self.unit.clone(),
        }
    }

    /// A copy without the terms that involve the exposure and without the
    /// exposure itself (the adjustment terms only), same centring.
    pub fn without_exposure(&self) -> Design {
        let Some(a) = self.exposure else {
            return self.clone();
        };
        let drop: Vec<usize> = (0..self.terms.len()).filter(|&j| self.terms[j].uses(a)).collect();
        let mut d = self.without(&drop);
        d.exposure = None;
        d
    }

    /// A copy without the exposure products (terms of two or more factors
    /// one of which is the exposure), same centring.
    pub fn without_products(&self) -> Design {
        let Some(a) = self.exposure else {
            return self.clone();
        };
        let drop: Vec<usize> = (0..self.terms.len())
            .filter(|&j| self.terms[j].uses(a) && self.terms[j].factors.len() > 1)
            .collect();
        self.without(&drop)
    }

    /// Starting coefficients for a logistic fit: the intercept at the logit
    /// of the weighted mean of `y`, the rest 0. With centred columns this
    /// is the intercept-only maximum-likelihood fit.
    pub fn logit_start(&self, y: &[f64], w: Option<&[f64]>) -> DVector<f64> {
        let (s, t) = (0..y.len()).fold((0.0, 0.0), |(s, t), i| {
            let wi = w.map_or(1.0, |w| w[i]);
            (s + wi * y[i], t + wi)
        });
        let m = (s / t).clamp(1e-6, 1.0 - 1e-6);
        let mut b = DVector::zeros(self.terms.len());
        if let Some(i0) = self.terms.iter().position(Term::is_intercept) {
            b[i0] = (m / (1.0 - m)).ln();
        }
        b
    }

    /// Rows of this design over `frame`, with the exposure set by `setting`.
    pub fn rows<'a>(&'a self, frame: &'a Frame, setting: Setting) -> DesignRows<'a> {
        DesignRows {
            design: self,
            frame,
            setting,
            store: None,
        }
    }

    /// Coefficients and covariance of the uncentred parametrization (raw
    /// term values) from those of the centred, scaled one: b_j = g_j b_jc
    /// with g_j the [`Design::term_scale`], and the intercept b0 = b0c -
    /// sum_j c_j b_jc.
    pub fn uncenter(&self, beta: &DVector<f64>, cov: &DMatrix<f64>) -> (DVector<f64>, DMatrix<f64>) {
        let p = self.terms.len();
        let mut t = DMatrix::<f64>::from_diagonal(&DVector::from_fn(p, |j, _| self.term_scale(j)));
        if let Some(i0) = self.terms.iter().position(Term::is_intercept) {
            for j in 0..p {
                if j != i0 {
                    t[(i0, j)] = -self.centers[j];
                }
            }
        }
        let b = &t * beta;
        let v = &t * cov * t.transpose();
        (b, v)
    }
}

/// The rows of a [`Design`] over a [`Frame`], implementing [`Rows`].
pub struct DesignRows<'a> {
    design: &'a Design,
    frame: &'a Frame,
    setting: Setting,
    store: Option<&'a Store>,
}

impl<'a> DesignRows<'a> {
    /// Term `j` over rows `start..start + col.len()`, into `col`.
    fn fill_term(&self, j: usize, start: usize, col: &mut [f64]) {
        let term = &self.design.terms[j];
        if term.factors.is_empty() {
            col.fill(1.0);
            return;
        }
        for (k, f) in term.factors.iter().enumerate() {
            self.factor(f, start, col, k > 0);
        }
        let c = self.design.centers[j];
        if c != 0.0 {
            col.iter_mut().for_each(|v| *v -= c);
        }
    }

    /// Design column `j` over every row, the values [`Rows::fill`] gives
    /// (copied from the store when there is one, else only that term
    /// computed).
    pub fn column(&self, j: usize) -> Vec<f64> {
        let n = self.nrows();
        let mut out = vec![0.0; n];
        out.par_chunks_mut(BLOCK).enumerate().for_each(|(b, chunk)| {
            let start = b * BLOCK;
            match self.stored(start, chunk.len()) {
                Some(x) => chunk.copy_from_slice(&x[j * chunk.len()..(j + 1) * chunk.len()]),
                None => self.fill_term(j, start, chunk),
            }
        });
        out
    }

    /// The same rows read from `store`, which must hold exactly these rows
    /// (see [`Store::of`]); `None` keeps filling them on demand.
    pub fn with_store(self, store: Option<&'a Store>) -> DesignRows<'a> {
        if let Some(s) = store {
            assert!(
                s.nrows() == self.nrows() && s.ncols() == self.ncols(),
                "store of another design"
            );
        }
        DesignRows { store, ..self }
    }

    fn factor(&self, f: &Factor, start: usize, out: &mut [f64], multiply: bool) {
        let src = &self.frame.col(f.col)[start..start + out.len()];
        // The exposure's value as a*x + b: observed (1, 0), fixed (0, v),
        // shifted (1, d).
        let (a, b) = match (self.design.exposure == Some(f.col), self.setting) {
            (true, Setting::Fixed(v)) => (0.0, v),
            (true, Setting::Shift(d)) => (1.0, d),
            _ => (1.0, 0.0),
        };
        // In the column's unit (exact: a power of two), see the module note.
        let u = self.design.unit_of(f.col);
        let (a, b) = (a * u, b * u);
        match &f.transform {
            Transform::Linear => apply(src, out, multiply, |x| a * x + b),
            Transform::Square => apply(src, out, multiply, |x| (a * x + b) * (a * x + b)),
            Transform::Spline { knots, j } => {
                let knots: Vec<f64> = knots.iter().map(|k| k * u).collect();
                apply(src, out, multiply, |x| rcs_basis(a * x + b, &knots, *j));
            }
            Transform::Level(c) => apply(src, out, multiply, |x| f64::from(u8::from(a * x + b == *c))),
        }
    }
}

fn apply(src: &[f64], out: &mut [f64], multiply: bool, g: impl Fn(f64) -> f64) {
    if multiply {
        out.iter_mut().zip(src).for_each(|(o, &x)| *o *= g(x));
    } else {
        out.iter_mut().zip(src).for_each(|(o, &x)| *o = g(x));
    }
}

impl Rows for DesignRows<'_> {
    fn nrows(&self) -> usize {
        self.frame.nrows()
    }

    fn ncols(&self) -> usize {
        self.design.terms.len()
    }

    fn stored(&self, start: usize, len: usize) -> Option<&[f64]> {
        self.store.and_then(|s| s.block(start, len))
    }

    fn fill(&self, start: usize, len: usize, out: &mut [f64]) {
        if let Some(x) = self.stored(start, len) {
            out.copy_from_slice(x);
            return;
        }
        for j in 0..self.design.terms.len() {
            self.fill_term(j, start, &mut out[j * len..(j + 1) * len]);
        }
    }
}
