package fv2

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

func constant(v float64) func(float64) float64 { return func(float64) float64 { return v } }

// faces returns ns copies of b.
func faces(ns int, b fv.Boundary) []fv.Boundary {
	out := make([]fv.Boundary, ns)
	for i := range out {
		out[i] = b
	}
	return out
}

// sealedFaces returns insulated faces (Flux with a nil Value) for ns
// species.
func sealedFaces(ns int) []fv.Boundary { return faces(ns, fv.Boundary{Kind: fv.Flux}) }

// relErr returns |got − want| / |want|.
func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

// integrate runs the solvers' integrator on d and checks the ledger at
// every output time (closure ≤ 1e-9, relative).
func integrate(t testing.TB, d *Discretization, ts []float64, s *solvers.Settings) *solvers.Result {
	t.Helper()
	y0 := d.Y0()
	res, err := solvers.Integrate(context.Background(), d.Problem(), 0, y0, ts, s)
	if err != nil {
		t.Fatalf("integrate: %v", err)
	}
	if res.Status != solvers.Success {
		t.Fatalf("integrate: status %v", res.Status)
	}
	for i := range ts {
		checkLedger(t, d, y0, res.Y[i], res.Q[i], 1e-9)
	}
	return res
}

// checkLedger asserts that every species' ledger closes within tol.
func checkLedger(t testing.TB, d *Discretization, y0, y, q []float64, tol float64) {
	t.Helper()
	lines, err := d.Ledger(y0, y, q)
	if err != nil {
		t.Fatalf("ledger: %v", err)
	}
	for _, l := range lines {
		if !(math.Abs(l.Closure) <= tol) {
			t.Errorf("species %d: ledger closure %.3g > %.1g (initial %g inflow %g consumed %g final %g)",
				l.Species, l.Closure, tol, l.Initial, l.InflowOuter, l.Consumed, l.Final)
		}
		if l.InflowInner != 0 {
			t.Errorf("species %d: inner inflow %g, want 0", l.Species, l.InflowInner)
		}
	}
}

// order returns log2 of successive error ratios.
func order(errs []float64) []float64 {
	var p []float64
	for i := 1; i < len(errs); i++ {
		p = append(p, math.Log2(errs[i-1]/errs[i]))
	}
	return p
}

func randomState(rng *rand.Rand, n int) []float64 {
	y := make([]float64, n)
	for i := range y {
		y[i] = 0.5 + rng.Float64()
	}
	return y
}
