package main

import (
	"context"
	"math"
	"testing"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/solvers"
)

// TestP3Reference recomputes the P3 reference values of the benchmark
// (p3Reference; their source, fine massline runs cross-checked with an
// independent scipy method of lines, is stated there) from the model text
// through the whole path — check, Lower with the store on dual numbers,
// the discretisation with q as unknown — on 320 and 640 cells,
// extrapolated in space. The result must agree with the stated values to
// 5e-9 (the extrapolation error of these grids), and the ledger must
// close to 1e-9 on both runs.
//
// source: the P3 reference itself is computed (no closed form exists);
// see p3Reference in bench.go for how it was cross-checked with scipy.
func TestP3Reference(t *testing.T) {
	if testing.Short() {
		t.Skip("fine runs skipped in -short mode")
	}
	probs, err := benchProblems()
	if err != nil {
		t.Fatal(err)
	}
	p := probs[2]
	f, pd := dsl.Parse(p.name, p.model)
	m, cd := compile.Check(f, nil)
	if m == nil || pd.HasErrors() || cd.HasErrors() {
		t.Fatalf("P3 model: %v %v", pd, cd)
	}
	b := m.Bodies[0]
	var runs [][]float64
	for _, n := range []int{320, 640} {
		low, err := compile.Lower(m, b, b.Conditions, compile.Settings{RTol: 1e-11, Cells: n})
		if err != nil {
			t.Fatal(err)
		}
		d, err := fv.Build(low.Spec)
		if err != nil {
			t.Fatal(err)
		}
		r, err := solvers.Integrate(context.Background(), d.Problem(), 0, d.Y0(), p.times, &solvers.Settings{RTol: 1e-11, ATol: 1e-14})
		if err != nil {
			t.Fatal(err)
		}
		for i := range p.times {
			lines, err := d.Ledger(d.Y0(), r.Y[i], r.Q[i])
			if err != nil {
				t.Fatal(err)
			}
			if c := lines[0].Closure; !(math.Abs(c) <= 1e-9) {
				t.Errorf("%d cells, t = %g s: ledger closure %.2e", n, p.times[i], c)
			}
		}
		v, err := benchValues(p, d, r)
		if err != nil {
			t.Fatal(err)
		}
		runs = append(runs, v)
	}
	for i, tm := range p.times {
		x := runs[1][i] + (runs[1][i]-runs[0][i])/3
		if e := math.Abs(x-p.ref[i]) / p.ref[i]; e > 5e-9 {
			t.Errorf("t = %g s: extrapolated %.12f, reference %.10f (relative difference %.1e)", tm, x, p.ref[i], e)
		}
	}
}
