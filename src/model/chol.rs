//! Cholesky factorization of a cross-product that skips aliased columns
//! (a left-looking Cholesky in column order; a column whose pivot is at most
//! `tol` times its diagonal is linearly dependent on the columns before it,
//! to that tolerance, and is dropped; common practice, no source).

use nalgebra::{DMatrix, DVector};

/// The factor `L` (lower triangular) of the kept columns of `A = L L'`.
#[derive(Debug, Clone)]
pub struct Chol {
    l: DMatrix<f64>,
    kept: Vec<bool>,
}

impl Chol {
    /// Factors the symmetric positive semi-definite `a`.
    pub fn new(a: &DMatrix<f64>, tol: f64) -> Chol {
        let p = a.nrows();
        let mut l = DMatrix::<f64>::zeros(p, p);
        let mut kept = vec![false; p];
        for j in 0..p {
            let ajj = a[(j, j)];
            let d = ajj - (0..j).map(|k| l[(j, k)] * l[(j, k)]).sum::<f64>();
            // NaN pivots count as aliased too.
            if ajj.is_nan() || d.is_nan() || ajj <= 0.0 || d <= tol * ajj {
                continue;
            }
            kept[j] = true;
            let ljj = d.sqrt();
            l[(j, j)] = ljj;
            for i in j + 1..p {
                let s = a[(i, j)] - (0..j).map(|k| l[(i, k)] * l[(j, k)]).sum::<f64>();
                l[(i, j)] = s / ljj;
            }
        }
        Chol { l, kept }
    }

    /// Indices of the aliased (dropped) columns.
    pub fn aliased(&self) -> Vec<usize> {
        (0..self.kept.len()).filter(|&j| !self.kept[j]).collect()
    }

    /// Number of kept columns.
    pub fn rank(&self) -> usize {
        self.kept.iter().filter(|&&k| k).count()
    }

    /// Solves `A x = b` over the kept columns; aliased entries are 0.
    pub fn solve(&self, b: &DVector<f64>) -> DVector<f64> {
        let p = b.len();
        let mut z = DVector::zeros(p);
        for i in 0..p {
            if self.kept[i] {
                let s = b[i] - (0..i).map(|k| self.l[(i, k)] * z[k]).sum::<f64>();
                z[i] = s / self.l[(i, i)];
            }
        }
        let mut x = DVector::zeros(p);
        for i in (0..p).rev() {
            if self.kept[i] {
                let s = z[i] - (i + 1..p).map(|k| self.l[(k, i)] * x[k]).sum::<f64>();
                x[i] = s / self.l[(i, i)];
            }
        }
        x
    }

    /// The inverse over the kept columns (rows and columns of aliased
    /// columns are 0).
    pub fn inverse(&self) -> DMatrix<f64> {
        let p = self.kept.len();
        let mut inv = DMatrix::zeros(p, p);
        for j in 0..p {
            if self.kept[j] {
                let mut e = DVector::zeros(p);
                e[j] = 1.0;
                inv.set_column(j, &self.solve(&e));
            }
        }
        inv
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solves_and_drops_a_copied_column() {
        // Columns: 1, x, 2x (aliased), z. Exact arithmetic on small integers.
        let x = [1.0, 2.0, 3.0, 5.0];
        let z = [0.0, 1.0, 0.0, 1.0];
        let m = DMatrix::from_fn(4, 4, |i, j| match j {
            0 => 1.0,
            1 => x[i],
            2 => 2.0 * x[i],
            _ => z[i],
        });
        let a = m.transpose() * &m;
        let c = Chol::new(&a, 1e-10);
        assert_eq!(c.aliased(), vec![2]);
        let b = DVector::from_vec(vec![1.0, 2.0, 4.0, 3.0]);
        let x = c.solve(&b);
        assert_eq!(x[2], 0.0);
        // Check A x = b on the kept rows (closed form, 1e-10).
        let r = &a * &x - &b;
        for i in [0, 1, 3] {
            assert!(r[i].abs() < 1e-10);
        }
        let inv = c.inverse();
        let keep = [0usize, 1, 3];
        for &i in &keep {
            for &j in &keep {
                let s: f64 = keep.iter().map(|&k| a[(i, k)] * inv[(k, j)]).sum();
                assert!((s - f64::from(u8::from(i == j))).abs() < 1e-10);
            }
        }
    }
}
