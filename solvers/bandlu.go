package solvers

import (
	"errors"
	"fmt"
	"math"
)

// BandLU is an LU factorisation with partial (row) pivoting of a square band
// matrix A with KL sub-diagonals and KU super-diagonals,
//
//	P A = L U,
//
// where L is unit lower triangular with at most KL entries below the diagonal
// in each column and U is upper triangular with KL+KU super-diagonals (the
// band of U widens by KL through the row interchanges). This is Gaussian
// elimination with partial pivoting restricted to the band, the algorithm of
// LAPACK's xGBTF2 (Anderson et al., LAPACK Users' Guide, 3rd ed., SIAM 1999,
// sec. 2.4.2 and 5.1.3; Golub & Van Loan, Matrix Computations, 4th ed.,
// sec. 4.3.5 "Band Gaussian elimination with pivoting"), written here for a
// row-wise storage that keeps the inner loops contiguous.
//
// Storage: row i keeps columns i-KL … i+KL+KU in a row of width
// W = 2·KL+KU+1, so the whole factorisation takes N·W numbers. The row
// interchanges are applied to the columns to the right of the pivot only and
// L is kept as the sequence of Gauss transformations, as LAPACK does; Solve
// replays them in order.
//
// Cost: factorisation O(N·KL·(KL+KU)), each solve O(N·(2·KL+KU)). A BandLU
// keeps its storage between calls: factorising another matrix of the same
// size and bandwidths allocates nothing, and Solve never allocates. The zero
// value is ready to use. A BandLU must not be used from several goroutines at
// once.
type BandLU struct {
	n, kl, ku int // order and effective bandwidths
	w         int // row width 2·kl+ku+1
	lu        []float64
	dinv      []float64 // reciprocals of the pivots
	piv       []int
	ext       []int // number of entries of row i of U right of the diagonal
	ok        bool  // holds a valid factorisation
}

// SingularError reports that a band matrix has no LU factorisation with
// partial pivoting because the pivot in column Index is zero or not finite
// (the matrix is singular to working precision, or holds NaN or ±Inf).
type SingularError struct {
	// Index is the zero-based column at which elimination broke down.
	Index int
}

// Error implements the error interface.
func (e *SingularError) Error() string {
	return fmt.Sprintf("solvers: singular band matrix: zero or non-finite pivot in column %d", e.Index)
}

// ErrNotFactorized is returned by BandLU.Solve when no successful
// factorisation is held.
var ErrNotFactorized = errors.New("solvers: band LU used before a successful factorisation")

// ErrBadBand is returned by BandLU.Factorize for a nil band matrix, a
// non-positive order, negative bandwidths or a Data slice that is too short.
var ErrBadBand = errors.New("solvers: malformed band matrix")

// ErrDimension is returned when a vector's length does not match the order of
// the matrix.
var ErrDimension = errors.New("solvers: dimension mismatch")

// N returns the order of the factorised matrix, or zero if none is held.
func (f *BandLU) N() int {
	if !f.ok {
		return 0
	}
	return f.n
}

// Factorize computes the LU factorisation with partial pivoting of a, which
// is not modified. Storage is reused when the order and bandwidths are the
// same as in the previous call, so refactorisation allocates nothing. Bands
// wider than the matrix are treated as full. If a pivot is zero or not finite
// Factorize returns a *SingularError and f holds no factorisation.
func (f *BandLU) Factorize(a *Band) error {
	f.ok = false
	if a == nil || a.N <= 0 || a.KL < 0 || a.KU < 0 {
		return ErrBadBand
	}
	n := a.N
	sw := a.KL + a.KU + 1 // stride of the source storage
	if len(a.Data) < n*sw {
		return ErrBadBand
	}
	kl, ku := min(a.KL, n-1), min(a.KU, n-1)
	w := 2*kl + ku + 1
	if f.n != n || f.kl != kl || f.ku != ku || len(f.lu) != n*w {
		f.n, f.kl, f.ku, f.w = n, kl, ku, w
		f.lu = make([]float64, n*w)
		f.dinv = make([]float64, n)
		f.piv = make([]int, n)
		f.ext = make([]int, n)
	}
	lu := f.lu
	// Copy the band; row i column j sits at lu[i*w + j-i+kl]. The fill-in
	// part (offsets kl+ku+1 … w-1) and columns outside 0…n-1 start at zero.
	for i := range n {
		row := lu[i*w : (i+1)*w]
		clear(row)
		jlo, jhi := max(0, i-kl), min(n-1, i+ku)
		src := a.Data[i*sw : (i+1)*sw]
		for j := jlo; j <= jhi; j++ {
			row[j-i+kl] = src[j-i+a.KL]
		}
	}
	// ju is the last column that row interchanges can have filled so far
	// (LAPACK's JU): without interchanges U keeps the KU super-diagonals of
	// A and the fill-in columns are never touched.
	ju := 0
	for k := range n {
		// Pivot search in column k, rows k … k+kl.
		ilast := min(n-1, k+kl)
		p := k
		big := math.Abs(lu[k*w+kl])
		for i := k + 1; i <= ilast; i++ {
			if v := math.Abs(lu[i*w+k-i+kl]); v > big {
				big, p = v, i
			}
		}
		f.piv[k] = p
		if !(big > 0) || math.IsInf(big, 0) {
			return &SingularError{Index: k}
		}
		ju = max(ju, min(n-1, p+ku))
		jlast := ju
		f.ext[k] = jlast - k
		rk := lu[k*w+kl : k*w+kl+jlast-k+1] // row k, columns k … jlast
		if p != k {
			rp := lu[p*w+k-p+kl : p*w+k-p+kl+jlast-k+1] // row p, same columns
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
		}
		inv := 1 / rk[0]
		f.dinv[k] = inv
		for i := k + 1; i <= ilast; i++ {
			off := i*w + k - i + kl
			l := lu[off] * inv
			lu[off] = l
			if l == 0 {
				continue
			}
			ri := lu[off+1 : off+len(rk)] // row i, columns k+1 … jlast
			for j, u := range rk[1:] {
				ri[j] -= l * u
			}
		}
	}
	f.ok = true
	return nil
}

// Solve overwrites b with the solution x of A x = b, using the factorisation
// held by f. It allocates nothing. It returns ErrNotFactorized if f holds no
// factorisation and ErrDimension if len(b) differs from the order of A.
func (f *BandLU) Solve(b []float64) error {
	if !f.ok {
		return ErrNotFactorized
	}
	n, kl, w := f.n, f.kl, f.w
	if len(b) != n {
		return ErrDimension
	}
	lu, dinv, piv := f.lu, f.dinv[:n], f.piv[:n]
	// Forward: apply the interchanges and Gauss transformations in order.
	// l(i,k) is stored at lu[i*(w-1) + k + kl].
	if kl > 0 {
		for k := range n - 1 {
			p := piv[k]
			bk := b[p]
			if p != k {
				b[p] = b[k]
				b[k] = bk
			}
			if bk == 0 {
				continue
			}
			ilast := min(n-1, k+kl)
			idx := (k+1)*(w-1) + k + kl
			for i := k + 1; i <= ilast; i++ {
				b[i] -= lu[idx] * bk
				idx += w - 1
			}
		}
	}
	// Back substitution with U (row i holds columns i … i+ext[i], at most
	// i+kl+ku).
	ext := f.ext[:n]
	for i := n - 1; i >= 0; i-- {
		l := ext[i]
		base := i*w + kl + 1
		row := lu[base : base+l]
		xs := b[i+1 : i+1+l]
		xs = xs[:len(row)]
		s := b[i]
		for j, u := range row {
			s -= u * xs[j]
		}
		b[i] = s * dinv[i]
	}
	return nil
}
