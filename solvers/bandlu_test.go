package solvers

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// randomBand fills an n×n band matrix with uniform random entries in [-1, 1]
// and adds shift to the diagonal. With a shift of kl+ku+2 the matrix is
// diagonally dominant; with 0 it is general and partial pivoting does real
// work (random triangular matrices, KL=0 or KU=0, are then badly
// conditioned, so those get a moderate shift of 1.5).
func randomBand(rng *rand.Rand, n, kl, ku int, shift float64) *Band {
	a := NewBand(n, kl, ku)
	for i := range n {
		for j := max(0, i-kl); j <= min(n-1, i+ku); j++ {
			a.Set(i, j, 2*rng.Float64()-1)
		}
		a.Add(i, i, shift)
	}
	return a
}

func bandToDense(a *Band) *mat.Dense {
	d := mat.NewDense(a.N, a.N, nil)
	for i := range a.N {
		for j := range a.N {
			d.Set(i, j, a.At(i, j))
		}
	}
	return d
}

// TestBandLUAgainstDense compares BandLU with gonum's dense LU (source: the
// reference is gonum.org/v1/gonum/mat LU.SolveVecTo, partial pivoting) on
// random band matrices, including the degenerate shapes KL=0, KU=0, N=1 and
// bandwidths wider than the matrix.
func TestBandLUAgainstDense(t *testing.T) {
	cases := []struct{ n, kl, ku int }{
		{1, 0, 0}, {1, 2, 3}, {2, 1, 1}, {5, 0, 0}, {7, 0, 2}, {7, 3, 0},
		{10, 1, 1}, {10, 2, 1}, {13, 1, 4}, {20, 5, 5}, {6, 9, 9}, {50, 3, 2}, {64, 0, 7}, {64, 7, 0},
	}
	rng := rand.New(rand.NewPCG(1, 2))
	var f BandLU // reused across all cases and sizes
	for _, c := range cases {
		for trial := range 4 {
			shift := 0.0
			switch {
			case trial == 0:
				shift = float64(c.kl + c.ku + 2)
			case c.kl == 0 || c.ku == 0:
				shift = 1.5
			}
			a := randomBand(rng, c.n, c.kl, c.ku, shift)
			b := make([]float64, c.n)
			for i := range b {
				b[i] = 2*rng.Float64() - 1
			}
			name := fmt.Sprintf("N=%d KL=%d KU=%d trial=%d", c.n, c.kl, c.ku, trial)
			dense := bandToDense(a)
			var dlu mat.LU
			dlu.Factorize(dense)
			if dlu.Det() == 0 {
				continue // random matrix happened to be singular
			}
			want := mat.NewVecDense(c.n, nil)
			if err := dlu.SolveVecTo(want, false, mat.NewVecDense(c.n, append([]float64(nil), b...))); err != nil {
				t.Logf("%s: gonum reports %v; skipped as ill-conditioned", name, err)
				continue
			}
			saved := append([]float64(nil), a.Data...)
			if err := f.Factorize(a); err != nil {
				t.Fatalf("%s: Factorize: %v", name, err)
			}
			for i := range saved {
				if saved[i] != a.Data[i] {
					t.Fatalf("%s: Factorize modified its input", name)
				}
			}
			x := append([]float64(nil), b...)
			if err := f.Solve(x); err != nil {
				t.Fatalf("%s: Solve: %v", name, err)
			}
			cond := mat.Cond(dense, 1)
			for i := range x {
				if d := math.Abs(x[i] - want.AtVec(i)); d > 1e-13*cond*(1+math.Abs(want.AtVec(i))) {
					t.Errorf("%s: x[%d] = %v, gonum %v (cond %.3g)", name, i, x[i], want.AtVec(i), cond)
				}
			}
			// Residual check independent of gonum: ‖A x − b‖∞ small.
			for i := range c.n {
				s := -b[i]
				for j := range c.n {
					s += a.At(i, j) * x[j]
				}
				if math.Abs(s) > 1e-12*cond {
					t.Errorf("%s: residual[%d] = %g", name, i, s)
				}
			}
		}
	}
}

// TestBandLUSingular checks that an exactly singular matrix is reported with
// the column where elimination breaks down and that Solve then refuses to run.
// source: exact rank deficiency constructed in the test; the breakdown column
// follows from the elimination order (Golub & Van Loan, 4th ed., sec. 3.4).
func TestBandLUSingular(t *testing.T) {
	cases := []struct {
		name  string
		build func() *Band
		index int
	}{
		{"zero column 2", func() *Band {
			a := NewBand(5, 1, 1)
			for i := range 5 {
				for j := max(0, i-1); j <= min(4, i+1); j++ {
					if j != 2 {
						a.Set(i, j, float64(1+i+2*j))
					}
				}
			}
			return a
		}, 2},
		{"1x1 zero", func() *Band { return NewBand(1, 0, 0) }, 0},
		{"equal rows", func() *Band {
			// rows 0 and 1 equal in a 3x3 full band: rank 2; after pivoting on
			// row 2 the two equal rows reduce identically, so the last pivot is 0.
			a := NewBand(3, 2, 2)
			for j := range 3 {
				a.Set(0, j, float64(j+1))
				a.Set(1, j, float64(j+1))
				a.Set(2, j, float64(j*j+3))
			}
			return a
		}, 2},
		{"NaN pivot", func() *Band {
			a := NewBand(2, 0, 1)
			a.Set(0, 0, math.NaN())
			a.Set(1, 1, 1)
			return a
		}, 0},
	}
	for _, c := range cases {
		var f BandLU
		err := f.Factorize(c.build())
		var se *SingularError
		if !errors.As(err, &se) {
			t.Errorf("%s: got %v, want *SingularError", c.name, err)
			continue
		}
		if se.Index != c.index {
			t.Errorf("%s: singular at %d, want %d", c.name, se.Index, c.index)
		}
		if err := f.Solve(make([]float64, 1)); !errors.Is(err, ErrNotFactorized) {
			t.Errorf("%s: Solve after failure: %v", c.name, err)
		}
	}
}

// TestBandLUBadInput checks errors instead of panics on malformed input.
// source: the error contract documented on BandLU (no reference values).
func TestBandLUBadInput(t *testing.T) {
	var f BandLU
	bad := []*Band{nil, {N: 0}, {N: 3, KL: -1}, {N: 3, KL: 1, KU: 1, Data: make([]float64, 5)}}
	for i, a := range bad {
		if err := f.Factorize(a); !errors.Is(err, ErrBadBand) {
			t.Errorf("case %d: got %v, want ErrBadBand", i, err)
		}
	}
	if err := f.Solve([]float64{1}); !errors.Is(err, ErrNotFactorized) {
		t.Errorf("Solve on zero value: %v", err)
	}
	a := NewBand(3, 1, 1)
	for i := range 3 {
		a.Set(i, i, 2)
	}
	if err := f.Factorize(a); err != nil {
		t.Fatal(err)
	}
	if err := f.Solve(make([]float64, 4)); !errors.Is(err, ErrDimension) {
		t.Errorf("Solve with wrong length: %v", err)
	}
}

// TestBandLUNoAllocs checks that refactorisation of the same shape and the
// solves allocate nothing.
// source: the allocation contract documented on BandLU (no reference values).
func TestBandLUNoAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	a := randomBand(rng, 200, 2, 3, 0)
	b := make([]float64, 200)
	var f BandLU
	if err := f.Factorize(a); err != nil {
		t.Fatal(err)
	}
	allocs := testing.AllocsPerRun(20, func() {
		_ = f.Factorize(a)
		_ = f.Solve(b)
	})
	if allocs != 0 {
		t.Errorf("allocs per factorise+solve = %v, want 0", allocs)
	}
}

// BenchmarkBandLU reports the cost of one factorisation and one solve of a
// tridiagonal-plus matrix (KL=KU=2); ns/op should grow linearly with N and
// allocs/op must be 0.
// source: cost O(N·KL·(KL+KU)), Golub & Van Loan, 4th ed., sec. 4.3.5.
func BenchmarkBandLU(b *testing.B) {
	for _, n := range []int{100, 1000, 10000, 100000} {
		b.Run(fmt.Sprintf("N=%d", n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(5, 6))
			a := randomBand(rng, n, 2, 2, 0)
			x := make([]float64, n)
			var f BandLU
			if err := f.Factorize(a); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := f.Factorize(a); err != nil {
					b.Fatal(err)
				}
				if err := f.Solve(x); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/row")
		})
	}
}
