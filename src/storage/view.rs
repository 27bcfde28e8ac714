//! The one view every index reads ([`NetView`]) and its implementations.

use std::borrow::Cow;

use ndarray::{ArrayBase, Data, Ix2};

use crate::error::{Error, Result};
use crate::storage::bits::BitMatrix;
use crate::storage::network::{
    check_dense_size, check_shape, pack_csr, pack_dense, weight_problem, Csr, Network, Weight,
};

/// How a view's cells are stored, which decides the kernel an index uses:
/// all kernels give the same value, the layout only decides the cost.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Layout {
    /// A dense table of weights: binary indices pack it into bits.
    Dense,
    /// Compressed rows: indices stay on the lists, never forming an
    /// `m x n` table.
    Sparse,
    /// Bit-packed binary rows (null draws): read in place.
    Bits,
}

/// What every index needs of a network, whatever its storage: shape,
/// degrees, links, compressed rows and columns, bit-packed rows and weights
/// (or the fact that they are all 1).
///
/// Implemented for [`Network`] (its compressed and bit views are built on
/// first use and kept), [`BitMatrix`] (what binary null models draw),
/// [`Csr`] and any two-dimensional `ndarray` array or view (validated when
/// an index first reads it: negative, NaN and infinite weights and a table
/// without a non-zero cell are errors, as for a [`Network`]).
///
/// A weight is any non-negative finite number; a cell is a *link* when its
/// weight is not zero. The trait is object safe: statistics receive
/// `&dyn NetView`.
///
/// # Example
/// ```
/// use ndarray::array;
/// use nidus::{NetView, metrics::{nodf, Order}};
/// let w = array![[3.0, 1.0, 2.0], [1.0, 1.0, 0.0], [4.0, 0.0, 0.0]];
/// let view = w.view();
/// assert_eq!((view.nrows(), view.ncols(), view.links()), (3, 3, 6));
/// assert!(view.is_weighted());
/// assert_eq!(nodf(&view, Order::Sorted).unwrap().total, 100.0);
/// ```
pub trait NetView: Sync {
    /// Number of rows `m`.
    fn nrows(&self) -> usize;
    /// Number of columns `n`.
    fn ncols(&self) -> usize;
    /// Number of links (non-zero cells) of every row.
    fn row_degrees(&self) -> Cow<'_, [usize]>;
    /// Number of links of every column.
    fn col_degrees(&self) -> Cow<'_, [usize]>;
    /// Number of links `L`.
    fn links(&self) -> usize {
        self.row_degrees().iter().sum()
    }
    /// True when some non-zero weight differs from 1 (false for a binary
    /// matrix).
    fn is_weighted(&self) -> bool;
    /// How the cells are stored (decides the kernels, never the values).
    fn layout(&self) -> Layout;
    /// The bit-packed binary view (`1` where the weight is not zero).
    /// Errors: a table above [`crate::storage::DENSE_CELL_LIMIT`] cells,
    /// or invalid weights in an unvalidated table.
    fn bits(&self) -> Result<Cow<'_, BitMatrix>>;
    /// The links compressed by rows, columns ascending, with weights as
    /// `f64` (1 for a binary matrix). Errors: invalid weights in an
    /// unvalidated table.
    fn compressed_rows(&self) -> Result<Cow<'_, Csr<f64>>>;
    /// The links compressed by columns (the transpose of
    /// [`compressed_rows`](Self::compressed_rows)).
    fn compressed_cols(&self) -> Result<Cow<'_, Csr<f64>>> {
        Ok(Cow::Owned(self.compressed_rows()?.transpose()))
    }
}

impl<V: NetView + ?Sized> NetView for &V {
    fn nrows(&self) -> usize {
        (**self).nrows()
    }
    fn ncols(&self) -> usize {
        (**self).ncols()
    }
    fn row_degrees(&self) -> Cow<'_, [usize]> {
        (**self).row_degrees()
    }
    fn col_degrees(&self) -> Cow<'_, [usize]> {
        (**self).col_degrees()
    }
    fn links(&self) -> usize {
        (**self).links()
    }
    fn is_weighted(&self) -> bool {
        (**self).is_weighted()
    }
    fn layout(&self) -> Layout {
        (**self).layout()
    }
    fn bits(&self) -> Result<Cow<'_, BitMatrix>> {
        (**self).bits()
    }
    fn compressed_rows(&self) -> Result<Cow<'_, Csr<f64>>> {
        (**self).compressed_rows()
    }
    fn compressed_cols(&self) -> Result<Cow<'_, Csr<f64>>> {
        (**self).compressed_cols()
    }
}

impl<T: Weight> NetView for Network<T> {
    fn nrows(&self) -> usize {
        Network::nrows(self)
    }
    fn ncols(&self) -> usize {
        Network::ncols(self)
    }
    fn row_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Borrowed(Network::row_degrees(self))
    }
    fn col_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Borrowed(Network::col_degrees(self))
    }
    fn links(&self) -> usize {
        Network::links(self)
    }
    fn is_weighted(&self) -> bool {
        Network::is_weighted(self)
    }
    fn layout(&self) -> Layout {
        if self.is_sparse() {
            Layout::Sparse
        } else {
            Layout::Dense
        }
    }
    fn bits(&self) -> Result<Cow<'_, BitMatrix>> {
        Ok(Cow::Borrowed(self.cached_bits()?))
    }
    fn compressed_rows(&self) -> Result<Cow<'_, Csr<f64>>> {
        Ok(Cow::Borrowed(self.cached_rows()))
    }
    fn compressed_cols(&self) -> Result<Cow<'_, Csr<f64>>> {
        Ok(Cow::Borrowed(self.cached_cols()))
    }
}

/// Compressed rows of a bit matrix, weights 1.
fn bits_to_rows(b: &BitMatrix) -> Csr<f64> {
    let mut entries = Vec::with_capacity(b.count_ones());
    for i in 0..b.nrows() {
        entries.extend(b.row_ones(i).map(|j| (i as u32, j as u32, 1.0)));
    }
    Csr::from_triplets(b.nrows(), b.ncols(), entries)
}

impl NetView for BitMatrix {
    fn nrows(&self) -> usize {
        BitMatrix::nrows(self)
    }
    fn ncols(&self) -> usize {
        BitMatrix::ncols(self)
    }
    fn row_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Owned(BitMatrix::row_degrees(self))
    }
    fn col_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Owned(BitMatrix::col_degrees(self))
    }
    fn links(&self) -> usize {
        self.count_ones()
    }
    fn is_weighted(&self) -> bool {
        false
    }
    fn layout(&self) -> Layout {
        Layout::Bits
    }
    fn bits(&self) -> Result<Cow<'_, BitMatrix>> {
        Ok(Cow::Borrowed(self))
    }
    fn compressed_rows(&self) -> Result<Cow<'_, Csr<f64>>> {
        Ok(Cow::Owned(bits_to_rows(self)))
    }
}

impl<T: Weight> NetView for Csr<T> {
    fn nrows(&self) -> usize {
        Csr::nrows(self)
    }
    fn ncols(&self) -> usize {
        Csr::ncols(self)
    }
    fn row_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Owned(self.indptr().windows(2).map(|w| w[1] - w[0]).collect())
    }
    fn col_degrees(&self) -> Cow<'_, [usize]> {
        let mut d = vec![0usize; Csr::ncols(self)];
        for &j in self.indices() {
            d[j as usize] += 1;
        }
        Cow::Owned(d)
    }
    fn links(&self) -> usize {
        self.nnz()
    }
    fn is_weighted(&self) -> bool {
        self.values()
            .iter()
            .any(|x| !x.is_zero() && x.as_f64() != 1.0)
    }
    fn layout(&self) -> Layout {
        Layout::Sparse
    }
    fn bits(&self) -> Result<Cow<'_, BitMatrix>> {
        check_dense_size("the bit-packed binary view", self.nrows(), self.ncols(), 0)?;
        Ok(Cow::Owned(pack_csr(self)))
    }
    fn compressed_rows(&self) -> Result<Cow<'_, Csr<f64>>> {
        Ok(self.as_f64())
    }
}

/// Checks an unvalidated table as [`Network::from_array`] would (labels
/// `R1..Rm`, `C1..Cn` in messages).
fn check_table<S, T>(w: &ArrayBase<S, Ix2>) -> Result<()>
where
    S: Data<Elem = T>,
    T: Weight,
{
    let (m, n) = w.dim();
    check_shape(m, n)?;
    let mut any = false;
    for ((i, j), &x) in w.indexed_iter() {
        if let Some(problem) = weight_problem(x) {
            return Err(Error::BadWeight {
                row: format!("R{}", i + 1),
                col: format!("C{}", j + 1),
                value: x.to_string(),
                problem,
            });
        }
        any |= !x.is_zero();
    }
    if !any {
        return Err(Error::EmptyNetwork("no cell holds a non-zero weight"));
    }
    Ok(())
}

impl<S, T> NetView for ArrayBase<S, Ix2>
where
    S: Data<Elem = T> + Sync,
    T: Weight,
{
    fn nrows(&self) -> usize {
        self.dim().0
    }
    fn ncols(&self) -> usize {
        self.dim().1
    }
    fn row_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Owned(
            self.rows()
                .into_iter()
                .map(|r| r.iter().filter(|x| !x.is_zero()).count())
                .collect(),
        )
    }
    fn col_degrees(&self) -> Cow<'_, [usize]> {
        Cow::Owned(
            self.columns()
                .into_iter()
                .map(|c| c.iter().filter(|x| !x.is_zero()).count())
                .collect(),
        )
    }
    fn is_weighted(&self) -> bool {
        self.iter().any(|x| !x.is_zero() && x.as_f64() != 1.0)
    }
    fn layout(&self) -> Layout {
        Layout::Dense
    }
    fn bits(&self) -> Result<Cow<'_, BitMatrix>> {
        check_table(self)?;
        check_dense_size("the bit-packed binary view", self.nrows(), self.ncols(), 0)?;
        Ok(Cow::Owned(pack_dense(self.view())))
    }
    fn compressed_rows(&self) -> Result<Cow<'_, Csr<f64>>> {
        check_table(self)?;
        Ok(Cow::Owned(Csr::from_dense(self.view()).to_f64()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    /// Every implementation reports the same shape, degrees, links, bits
    /// and compressed rows as the validated network (definitions of
    /// METHODS.md §0: a link is a non-zero cell).
    #[test]
    fn views_agree() {
        let w = array![[3u32, 0, 1, 0], [0, 0, 2, 0], [1, 1, 1, 5]];
        let net = Network::from_array(w.clone()).unwrap();
        let csr = Csr::from_dense(w.view());
        let bits = net.binary().unwrap();
        let view = w.view();
        let all: [&dyn NetView; 4] = [&net, &csr, &view, &bits];
        for v in all {
            assert_eq!((v.nrows(), v.ncols(), v.links()), (3, 4, 7));
            assert_eq!(&*v.row_degrees(), &[2, 1, 4]);
            assert_eq!(&*v.col_degrees(), &[2, 1, 3, 1]);
            assert_eq!(*v.bits().unwrap(), bits);
            let rows = v.compressed_rows().unwrap();
            assert_eq!(rows.indices(), csr.indices());
            assert_eq!(rows.indptr(), csr.indptr());
            let cols = v.compressed_cols().unwrap();
            assert_eq!(cols.indices(), csr.transpose().indices());
        }
        assert!(net.is_weighted() && view.is_weighted() && NetView::is_weighted(&csr));
        assert!(!NetView::is_weighted(&bits));
    }

    /// A network builds its views once: later calls borrow the same ones.
    #[test]
    fn network_views_are_cached() {
        let net = Network::from_array(array![[1.0, 2.0], [0.0, 1.0]]).unwrap();
        let (a, b) = (net.bits().unwrap(), net.bits().unwrap());
        assert!(matches!((&a, &b), (Cow::Borrowed(x), Cow::Borrowed(y)) if std::ptr::eq(*x, *y)));
        let (a, b) = (
            net.compressed_rows().unwrap(),
            net.compressed_rows().unwrap(),
        );
        assert!(matches!((&a, &b), (Cow::Borrowed(x), Cow::Borrowed(y)) if std::ptr::eq(*x, *y)));
        assert!(matches!(net.compressed_cols().unwrap(), Cow::Borrowed(_)));
    }

    /// An unvalidated table is checked as a network would be.
    #[test]
    fn array_views_are_validated() {
        let bad = array![[1.0, -1.0]];
        let e = bad.view().bits().unwrap_err();
        assert!(e.to_string().contains("'R1', column 'C2'"), "{e}");
        assert!(array![[0.0, 0.0]].view().compressed_rows().is_err());
        assert!(array![[1.0, f64::NAN]].view().bits().is_err());
    }
}
