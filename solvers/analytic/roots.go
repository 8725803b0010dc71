package analytic

import (
	"fmt"
	"math"
	"sync"
)

// fn returns a function value and its derivative.
type fn func(x float64) (f, df float64)

// bracketRoot finds the root of f in [lo, hi], where f(lo) and f(hi) have
// opposite signs (a sign may be supplied for an end where f vanishes
// trivially), by Newton steps safeguarded with bisection: a Newton step that
// leaves the current bracket, or does not halve the bracket's width over
// two iterations, is replaced by a bisection. The result is accurate to a
// few ulps of the root.
func bracketRoot(f fn, lo, hi float64, sLo float64) (float64, error) {
	if !(lo < hi) {
		return math.NaN(), fmt.Errorf("analytic: empty bracket [%g, %g]", lo, hi)
	}
	fhi, _ := f(hi)
	if sLo == 0 {
		sLo, _ = f(lo)
	}
	if sLo == 0 {
		return lo, nil
	}
	if fhi == 0 {
		return hi, nil
	}
	if math.Signbit(sLo) == math.Signbit(fhi) {
		return math.NaN(), fmt.Errorf("analytic: no sign change in [%g, %g]", lo, hi)
	}
	negLo := sLo < 0
	x := 0.5 * (lo + hi)
	width := hi - lo
	for it := 0; it < 300; it++ {
		fx, dfx := f(x)
		if fx == 0 {
			return x, nil
		}
		if (fx < 0) == negLo {
			lo = x
		} else {
			hi = x
		}
		tol := 2 * math.Nextafter(math.Abs(x), math.Inf(1)) * 0x1p-52
		if hi-lo <= 2*tol {
			return 0.5 * (lo + hi), nil
		}
		next := x - fx/dfx
		if dfx == 0 || math.IsNaN(next) || next <= lo || next >= hi || hi-lo > 0.5*width {
			next = 0.5 * (lo + hi)
			width = hi - lo
		}
		if math.Abs(next-x) <= tol {
			return next, nil
		}
		x = next
	}
	return x, nil
}

// family is a lazily grown, cached list of the positive roots β1 < β2 < ...
// of an eigenvalue equation; root(n) computes the n-th one (n ≥ 1).
type family struct {
	mu    sync.Mutex
	roots []float64
	root  func(n int) (float64, error)
}

// upTo returns the roots in ascending order, with at least every root
// ≤ bmax and at least one root larger than bmax, or ErrFourierTooSmall when
// that needs more than MaxTerms roots. The returned slice is never modified
// afterwards (the cache only appends).
func (f *family) upTo(bmax float64) ([]float64, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	for len(f.roots) == 0 || f.roots[len(f.roots)-1] <= bmax {
		if len(f.roots) >= MaxTerms {
			return nil, ErrFourierTooSmall
		}
		b, err := f.root(len(f.roots) + 1)
		if err != nil {
			return nil, err
		}
		f.roots = append(f.roots, b)
	}
	return f.roots, nil
}

// first returns the first n roots.
func (f *family) first(n int) ([]float64, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if n > MaxTerms {
		return nil, ErrFourierTooSmall
	}
	for len(f.roots) < n {
		b, err := f.root(len(f.roots) + 1)
		if err != nil {
			return nil, err
		}
		f.roots = append(f.roots, b)
	}
	return f.roots[:n:n], nil
}

// expCut is the value of β²τ beyond which exp(−β²τ) < 1e-26: terms past it
// cannot change a sum of order one at the precision of float64, whatever
// algebraic growth their coefficients have over the range used here.
const expCut = 60.0

// sum returns Σ_n c(β_n)·exp(−β_n²τ) over the roots of f, truncated after
// the terms whose exponent falls below −expCut. tau must be > 0.
func (f *family) sum(tau float64, c func(b float64) float64) (float64, error) {
	roots, err := f.upTo(math.Sqrt(expCut / tau))
	if err != nil {
		return math.NaN(), err
	}
	// Sum from the smallest terms to the largest to limit round-off.
	n := len(roots)
	for n > 1 && roots[n-2]*roots[n-2]*tau > expCut {
		n--
	}
	s := 0.0
	for i := n - 1; i >= 0; i-- {
		b := roots[i]
		s += c(b) * math.Exp(-b*b*tau)
	}
	return s, nil
}

// besselZero returns the n-th positive zero of J0 (order 0) or J1
// (order 1), n ≥ 1. The zeros of J0 lie in ((n−½)π, nπ) and those of J1 in
// (nπ, (n+½)π), one in each, from the large-argument form
// Jν(x) ≈ √(2/πx) cos(x − νπ/2 − π/4) and the interlacing of the zeros
// (source: Abramowitz & Stegun, Handbook of Mathematical Functions (1964),
// §9.5, from memory).
func besselZero(order, n int) (float64, error) {
	if order == 0 {
		f := func(x float64) (float64, float64) { return math.J0(x), -math.J1(x) }
		return bracketRoot(f, (float64(n)-0.5)*math.Pi, float64(n)*math.Pi, 0)
	}
	f := func(x float64) (float64, float64) {
		j1 := math.J1(x)
		return j1, math.J0(x) - j1/x
	}
	return bracketRoot(f, float64(n)*math.Pi, (float64(n)+0.5)*math.Pi, 0)
}

var (
	j0Zeros = &family{root: func(n int) (float64, error) { return besselZero(0, n) }}
	j1Zeros = &family{root: func(n int) (float64, error) { return besselZero(1, n) }}
)

// besselZeroCached returns the n-th zero of J0 or J1 from a shared cache;
// the 0-th zero of J1 is 0.
func besselZeroCached(order, n int) (float64, error) {
	if n == 0 && order == 1 {
		return 0, nil
	}
	fam := j0Zeros
	if order == 1 {
		fam = j1Zeros
	}
	z, err := fam.first(n)
	if err != nil {
		return math.NaN(), err
	}
	return z[n-1], nil
}

// BesselJ0Zeros returns the first n positive zeros of the Bessel function J0.
func BesselJ0Zeros(n int) ([]float64, error) {
	if n < 0 {
		return nil, fmt.Errorf("analytic: negative count %d", n)
	}
	z, err := j0Zeros.first(n)
	if err != nil {
		return nil, err
	}
	return append([]float64(nil), z...), nil
}
