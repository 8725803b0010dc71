package fv2

import (
	"context"
	"math"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
	"github.com/massline/massline/solvers/analytic"
)

// bench40 is a 40 × 40 short cylinder (L = R) with films on every face
// and first-order consumption.
func bench40(b *testing.B) *Discretization {
	bc := faces(1, fv.Boundary{Kind: fv.Film, H: 1e-6, Value: constant(1)})
	d, err := Build(&Spec{Radius: 1e-3, Length: 1e-3, NR: 40, NZ: 40, NSpecies: 1, D: []float64{1e-9},
		Rate: [][]float64{{-1e-3}}, Side: bc, Top: bc, Bottom: bc})
	if err != nil {
		b.Fatal(err)
	}
	return d
}

// BenchmarkFuncJac measures one evaluation of Func and Jac on 40 × 40
// cells (no allocation).
func BenchmarkFuncJac(b *testing.B) {
	d := bench40(b)
	p := d.Problem()
	y := make([]float64, p.N)
	for i := range y {
		y[i] = 0.5 + 0.1*math.Sin(float64(i))
	}
	dy := make([]float64, p.N)
	J := solvers.NewBand(p.N, p.Lower, p.Upper)
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		p.Func(1, y, dy)
		p.Jac(1, y, J)
	}
}

// BenchmarkIntegrate integrates uptake by a 40 × 40 short cylinder
// (L = 2R, fixed surface value on every face) from τ = 0 to 0.5 with the
// default solver settings and reports the worst relative error of the
// uptake against the product rule over 0.01 ≤ τ ≤ 0.5.
func BenchmarkIntegrate(b *testing.B) {
	const (
		R = 1.0
		L = 2.0
	)
	taus := []float64{0.01, 0.03, 0.1, 0.3, 0.5}
	bc := faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(1)})
	d, err := Build(&Spec{Radius: R, Length: L, NR: 40, NZ: 40, NSpecies: 1, D: []float64{1},
		Side: bc, Top: bc, Bottom: bc})
	if err != nil {
		b.Fatal(err)
	}
	var it solvers.Integrator
	p := d.Problem()
	var res *solvers.Result
	b.ResetTimer()
	for range b.N {
		res, err = it.Integrate(context.Background(), p, 0, d.Y0(), taus, nil)
		if err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	// source: the product rule 1 − (1 − U_cyl)(1 − U_slab) (H. S. Carslaw
	// and J. C. Jaeger, Conduction of Heat in Solids, 2nd ed., §1.15 — from
	// memory) with the series of solvers/analytic.
	cyl, _ := analytic.NewFixedSurface(analytic.Cylinder)
	slab, _ := analytic.NewFixedSurface(analytic.Slab)
	worst := 0.0
	for i, tau := range taus {
		uc, _ := cyl.Uptake(tau)
		us, _ := slab.Uptake(tau * 4 * R * R / (L * L))
		want := 1 - (1-uc)*(1-us)
		m, _ := d.Content(res.Y[i], 0)
		worst = math.Max(worst, relErr(m/(math.Pi*R*R*L), want))
	}
	b.ReportMetric(worst, "max-rel-err")
	b.ReportMetric(float64(res.Stats.Steps), "steps")
	b.ReportMetric(float64(res.Stats.Factorizations), "LUs")
}
