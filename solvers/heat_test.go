package solvers

import (
	"context"
	"fmt"
	"math"
	"testing"
)

// TestHeatEigen integrates the method-of-lines heat equation (N = 50) from a
// discontinuous profile and compares y at 200 output times (dense output)
// with the exact solution of the discrete system, y(t) = V exp(Λt) Vᵀ y0,
// computed with gonum's mat.EigenSym (source: the exact solution of a linear
// constant-coefficient system; the eigenvalues are also checked against the
// closed form −4/Δx²·sin²(kπ/(2(N+1))), source: e.g. R. J. LeVeque, Finite
// Difference Methods for ODEs and PDEs, SIAM 2007, sec. 2.10).
func TestHeatEigen(t *testing.T) {
	const n = 50
	y0 := heatY0(n)
	_, a := heat1D(n, true)
	ex, ok := newExactLinear(a, y0)
	if !ok {
		t.Fatal("EigenSym failed")
	}
	dx := 1 / float64(n+1)
	for k := range n { // EigenSym returns ascending values
		s := math.Sin(float64(n-k) * math.Pi / (2 * (n + 1)))
		if want := -4 / (dx * dx) * s * s; math.Abs(ex.vals[k]-want) > 1e-10*math.Abs(want) {
			t.Fatalf("eigenvalue %d = %.15g, closed form %.15g", k, ex.vals[k], want)
		}
	}
	tout := outputGrid(0, 0.5, 200)
	exact := make([]float64, n)
	cases := []struct {
		rtol, maxRel float64
		jac, ndf     bool
	}{
		{1e-6, 1e-5, true, false}, {1e-6, 1e-5, false, false}, {1e-10, 1e-8, true, false},
		{1e-10, 1e-8, false, false}, {1e-6, 1e-5, true, true}, {1e-10, 1e-8, true, true},
	}
	for _, c := range cases {
		t.Run(fmt.Sprintf("rtol=%g/jac=%v/ndf=%v", c.rtol, c.jac, c.ndf), func(t *testing.T) {
			p, _ := heat1D(n, c.jac)
			r := mustIntegrate(t, p, 0, y0, tout, &Settings{RTol: c.rtol, ATol: c.rtol * 1e-4, NDF: c.ndf})
			worst := 0.0
			for i, ti := range tout {
				ex.at(ti, exact)
				var emax, ymax float64
				for k := range n {
					emax = max(emax, math.Abs(r.Y[i][k]-exact[k]))
					ymax = max(ymax, math.Abs(exact[k]))
				}
				worst = max(worst, emax/ymax)
			}
			if worst > c.maxRel {
				t.Errorf("worst error relative to max|y| = %.3g > %.3g", worst, c.maxRel)
			}
			t.Logf("worst %.3g %+v", worst, r.Stats)
		})
	}
}

// heatBench integrates the heat equation on n nodes to t = 0.1 with a reused
// Integrator.
func heatBench(b *testing.B, n int) {
	p, _ := heat1D(n, true)
	y0 := make([]float64, n)
	for i := range y0 {
		x := float64(i+1) / float64(n+1)
		y0[i] = math.Sin(math.Pi*x) + 0.5*math.Sin(3*math.Pi*x)
	}
	tout := outputGrid(0, 0.1, 11)
	s := &Settings{RTol: 1e-6, ATol: 1e-10}
	var it Integrator
	ctx := context.Background()
	var steps int
	b.ReportAllocs()
	for b.Loop() {
		r, err := it.Integrate(ctx, p, 0, y0, tout, s)
		if err != nil {
			b.Fatal(err)
		}
		steps = r.Stats.Steps
	}
	ns := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	b.ReportMetric(float64(steps), "steps/op")
	b.ReportMetric(ns/float64(steps), "ns/step")
	b.ReportMetric(ns/float64(steps)/float64(n), "ns/step/cell")
}

// BenchmarkHeat reports the cost of integrating the 1-D heat equation with
// 100 … 3200 cells. allocs/op counts only the result (it does not grow with
// the number of steps), and ns/step/cell should stay roughly constant: the
// cost per step is linear in N.
// source: per-step cost O(N·(KL+KU)) of banded Newton (Hairer & Wanner,
// Solving ODEs II, 2nd ed., sec. IV.8).
func BenchmarkHeat(b *testing.B) {
	for _, n := range []int{100, 200, 400, 800, 1600, 3200} {
		b.Run(fmt.Sprintf("N=%d", n), func(b *testing.B) { heatBench(b, n) })
	}
}
