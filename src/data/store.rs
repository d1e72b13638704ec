//! A design's rows kept in memory, so that the many passes of a model fit
//! (and of every bootstrap replicate) read them instead of computing every
//! term again.
//!
//! The rows are laid out block by block, each block as [`Rows::fill`]
//! writes it (column-major, leading dimension the block's length), so a pass
//! borrows each block in place. A design larger than [`Store::MAX_VALUES`]
//! values is not kept: its passes fill blocks on demand, as before, and
//! memory stays bounded for files of any length.

use super::pass::{BLOCK, Rows};
use rayon::prelude::*;

/// The rows of a design, computed once.
#[derive(Debug, Clone)]
pub struct Store {
    n: usize,
    p: usize,
    data: Vec<f64>,
}

impl Store {
    /// Most values (rows x columns) kept: 2^24, 128 MiB per design (for
    /// 32 columns, about 500,000 rows). Above it passes fill blocks on
    /// demand and memory stays within a small multiple of the data's.
    pub const MAX_VALUES: usize = 1 << 24;

    /// The rows of `rows`, or `None` when they exceed [`Store::MAX_VALUES`].
    pub fn of<R: Rows + ?Sized>(rows: &R) -> Option<Store> {
        let (n, p) = (rows.nrows(), rows.ncols());
        if n.checked_mul(p)? > Store::MAX_VALUES {
            return None;
        }
        let mut data = vec![0.0; n * p];
        if p > 0 {
            data.par_chunks_mut(BLOCK * p).enumerate().for_each(|(b, chunk)| {
                rows.fill(b * BLOCK, chunk.len() / p, chunk);
            });
        }
        Some(Store { n, p, data })
    }

    /// Rows `start..start + len`, laid out as by [`Rows::fill`]: exact for
    /// a whole block (`start` a multiple of [`BLOCK`], `len` the block's
    /// length), `None` for any other range.
    pub fn block(&self, start: usize, len: usize) -> Option<&[f64]> {
        let whole = start.is_multiple_of(BLOCK) && start < self.n && len == BLOCK.min(self.n - start);
        whole.then(|| &self.data[start * self.p..(start + len) * self.p])
    }

    /// Number of rows.
    pub fn nrows(&self) -> usize {
        self.n
    }

    /// Number of columns.
    pub fn ncols(&self) -> usize {
        self.p
    }
}

impl Rows for Store {
    fn nrows(&self) -> usize {
        self.n
    }

    fn ncols(&self) -> usize {
        self.p
    }

    fn fill(&self, start: usize, len: usize, out: &mut [f64]) {
        match self.block(start, len) {
            Some(x) => out.copy_from_slice(x),
            None => {
                // Any range: gather each row from the blocks that hold it.
                for i in 0..len {
                    let r = start + i;
                    let b0 = r / BLOCK * BLOCK;
                    let blen = BLOCK.min(self.n - b0);
                    let base = b0 * self.p;
                    for j in 0..self.p {
                        out[j * len + i] = self.data[base + j * blen + (r - b0)];
                    }
                }
            }
        }
    }

    fn stored(&self, start: usize, len: usize) -> Option<&[f64]> {
        self.block(start, len)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::DenseRows;
    use nalgebra::DMatrix;

    #[test]
    fn stored_rows_match_the_source_for_any_range() {
        // 2.5 blocks of 3 columns; values encode (row, column).
        let n = BLOCK * 2 + BLOCK / 2;
        let dense = DenseRows(DMatrix::from_fn(n, 3, |i, j| (i * 10 + j) as f64));
        let s = Store::of(&dense).expect("small");
        for (start, len) in [(0, BLOCK), (BLOCK * 2, BLOCK / 2), (5, 7), (BLOCK - 2, 4)] {
            let mut a = vec![0.0; len * 3];
            let mut b = vec![0.0; len * 3];
            dense.fill(start, len, &mut a);
            s.fill(start, len, &mut b);
            assert_eq!(a, b, "rows {start}..+{len}");
        }
        assert!(s.stored(BLOCK, BLOCK).is_some());
        assert!(s.stored(5, 7).is_none());
    }
}
