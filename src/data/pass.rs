//! Passes over the rows of a design in fixed blocks, in parallel (rayon),
//! with partial results combined in block order so that results do not
//! depend on the number of threads.
//!
//! A source that keeps its rows in memory ([`Store`](super::Store)) lends
//! each block as it is; any other source fills a buffer that is kept per
//! thread between passes ([`with_buffer`]).

use super::kernel;
use nalgebra::DMatrix;
use rayon::prelude::*;
use std::cell::Cell;

/// Rows per block.
pub const BLOCK: usize = 2048;
/// Blocks summed one after another within a parallel task.
const GROUP: usize = 16;

/// A source of design rows, filled a block at a time.
pub trait Rows: Sync {
    /// Number of rows.
    fn nrows(&self) -> usize;
    /// Number of columns.
    fn ncols(&self) -> usize;
    /// Writes rows `start..start + len` into `out`, column-major with
    /// leading dimension `len` (`out.len() == len * ncols()`).
    fn fill(&self, start: usize, len: usize, out: &mut [f64]);
    /// Rows `start..start + len` as kept in memory, laid out as by
    /// [`Rows::fill`], when the source keeps them (`start` is a multiple of
    /// [`BLOCK`] and `len` that block's length). `None`: call `fill`.
    fn stored(&self, _start: usize, _len: usize) -> Option<&[f64]> {
        None
    }
}

thread_local! {
    static BUFFERS: Cell<Vec<Vec<f64>>> = const { Cell::new(Vec::new()) };
}

/// Runs `f` with a scratch vector taken from the calling thread's spares
/// (or a new one) and returns it there afterwards, so passes over the rows
/// do not allocate and clear a block-sized buffer each time. Re-entrant: a
/// nested call (rayon may run another task while one waits) takes another
/// vector. The contents on entry are unspecified.
pub fn with_buffer<T>(f: impl FnOnce(&mut Vec<f64>) -> T) -> T {
    let mut buf = BUFFERS.with(|b| {
        let mut spare = b.take();
        let v = spare.pop();
        b.set(spare);
        v.unwrap_or_default()
    });
    let out = f(&mut buf);
    BUFFERS.with(|b| {
        let mut spare = b.take();
        if spare.len() < 4 {
            spare.push(buf);
        }
        b.set(spare);
    });
    out
}

/// One block of rows, column-major.
pub struct Block<'a> {
    /// First row.
    pub start: usize,
    /// Number of rows.
    pub len: usize,
    /// Number of columns.
    pub p: usize,
    /// `len * p` values, column `j` at `j*len .. (j+1)*len`.
    pub x: &'a [f64],
}

impl Block<'_> {
    /// Column `j` of the block.
    pub fn col(&self, j: usize) -> &[f64] {
        &self.x[j * self.len..(j + 1) * self.len]
    }

    /// Row range of the block.
    pub fn range(&self) -> std::ops::Range<usize> {
        self.start..self.start + self.len
    }

    /// `out = X b`, the block's rows times `b` (`b.len() == p`,
    /// `out.len() == len`).
    pub fn times(&self, b: &[f64], out: &mut [f64]) {
        assert_eq!(b.len(), self.p, "block product sizes");
        kernel::times(self.x, self.len, b, out);
    }

    /// `acc += X'u`, the block's columns times `u` (`u.len() == len`,
    /// `acc.len() == p`).
    pub fn times_tr_add(&self, u: &[f64], acc: &mut [f64]) {
        assert_eq!(acc.len(), self.p, "block product sizes");
        kernel::times_tr_add(self.x, u, acc);
    }

    /// Rows `keep[k].0` of the block scaled by `keep[k].1`, column-major
    /// with `keep.len()` rows, into `out`.
    pub fn gather_scaled(&self, keep: &[(usize, f64)], out: &mut [f64]) {
        kernel::gather_scaled(self.x, self.len, keep, out);
    }
}

/// Block `b` of `rows`, lent by the source or filled into `buf`.
fn fill_block<'a, R: Rows + ?Sized>(rows: &'a R, b: usize, buf: &'a mut Vec<f64>) -> Block<'a> {
    let n = rows.nrows();
    let p = rows.ncols();
    let start = b * BLOCK;
    let len = BLOCK.min(n - start);
    let x = match rows.stored(start, len) {
        Some(x) => x,
        None => {
            if buf.len() < len * p {
                buf.resize(len * p, 0.0);
            }
            rows.fill(start, len, &mut buf[..len * p]);
            &buf[..len * p]
        }
    };
    Block { start, len, p, x }
}

/// Folds every block into a `T`: `step` runs on consecutive blocks of a
/// group, groups run in parallel, and `merge` joins the groups in order.
pub fn reduce<R, T, I, S, M>(rows: &R, init: I, step: S, merge: M) -> T
where
    R: Rows + ?Sized,
    T: Send,
    I: Fn() -> T + Sync,
    S: Fn(&mut T, &Block) + Sync,
    M: FnMut(&mut T, T),
{
    let nblocks = rows.nrows().div_ceil(BLOCK);
    let parts: Vec<T> = (0..nblocks.div_ceil(GROUP))
        .into_par_iter()
        .map(|g| {
            with_buffer(|buf| {
                let mut acc = init();
                for b in g * GROUP..((g + 1) * GROUP).min(nblocks) {
                    step(&mut acc, &fill_block(rows, b, buf));
                }
                acc
            })
        })
        .collect();
    join(parts, init, merge)
}

/// As [`reduce`], with each block's slice of `out` (`out.len() ==
/// rows.nrows()`) handed to `step` to write one value per row.
pub fn reduce_into<R, T, I, S, M>(rows: &R, out: &mut [f64], init: I, step: S, merge: M) -> T
where
    R: Rows + ?Sized,
    T: Send,
    I: Fn() -> T + Sync,
    S: Fn(&mut T, &Block, &mut [f64]) + Sync,
    M: FnMut(&mut T, T),
{
    assert_eq!(out.len(), rows.nrows(), "output length");
    let parts: Vec<T> = out
        .par_chunks_mut(GROUP * BLOCK)
        .enumerate()
        .map(|(g, chunk)| {
            with_buffer(|buf| {
                let mut acc = init();
                for (k, o) in chunk.chunks_mut(BLOCK).enumerate() {
                    step(&mut acc, &fill_block(rows, g * GROUP + k, buf), o);
                }
                acc
            })
        })
        .collect();
    join(parts, init, merge)
}

/// The groups' results merged in order.
fn join<T>(parts: Vec<T>, init: impl Fn() -> T, mut merge: impl FnMut(&mut T, T)) -> T {
    let mut it = parts.into_iter();
    let mut total = it.next().unwrap_or_else(&init);
    for part in it {
        merge(&mut total, part);
    }
    total
}

/// Calls `f` on every block with the matching slice of `out`
/// (`out.len() == rows.nrows()`), in parallel.
pub fn map_rows<R, F>(rows: &R, out: &mut [f64], f: F)
where
    R: Rows + ?Sized,
    F: Fn(&Block, &mut [f64]) + Sync,
{
    reduce_into(rows, out, || (), |_, b, o| f(b, o), |_, _| ());
}

/// Rows of a stored matrix (for tests and small problems).
pub struct DenseRows(pub DMatrix<f64>);

impl Rows for DenseRows {
    fn nrows(&self) -> usize {
        self.0.nrows()
    }
    fn ncols(&self) -> usize {
        self.0.ncols()
    }
    fn fill(&self, start: usize, len: usize, out: &mut [f64]) {
        for j in 0..self.0.ncols() {
            for i in 0..len {
                out[j * len + i] = self.0[(start + i, j)];
            }
        }
    }
}
