package fv

import (
	"context"
	"fmt"
	"math"
	"testing"

	"github.com/massline/massline/solvers"
	"github.com/massline/massline/solvers/analytic"
)

// BenchmarkFuncJac measures one evaluation of Func and Jac (the cost grows
// linearly with the number of cells; no allocation).
func BenchmarkFuncJac(b *testing.B) {
	for _, n := range []int{100, 200, 400, 800, 1600, 3200} {
		b.Run(fmt.Sprintf("cells=%d", n), func(b *testing.B) {
			d, err := Build(&Spec{Geometry: Sphere, NSpecies: 1,
				Layers:  []Layer{{Outer: 1e-3, D: []float64{1e-9}, Cells: n, Rate: [][]float64{{-1e-3}}}},
				OuterBC: []Boundary{{Kind: Film, H: 1e-6, Value: constant(1)}}})
			if err != nil {
				b.Fatal(err)
			}
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
		})
	}
}

// BenchmarkUptake integrates uptake by a sphere with a fixed surface value
// from τ = 0 to 1 with the default solver settings, on the default
// clustered grid and on uniform grids, and reports the worst relative
// error of the uptake fraction over 1e-3 ≤ τ ≤ 1.
//
// source: the series solution for a sphere with a constant surface value,
// J. Crank, The Mathematics of Diffusion, 2nd ed. (1975), eq. 6.20 (from
// memory), as implemented in solvers/analytic.
func BenchmarkUptake(b *testing.B) {
	taus := []float64{1e-3, 3e-3, 0.01, 0.03, 0.1, 0.3, 1}
	an, _ := analytic.NewFixedSurface(analytic.Sphere)
	for _, grid := range []struct {
		name    string
		cells   int
		cluster float64
	}{{"default", 0, 0}, {"uniform-100", 100, 1}, {"uniform-400", 400, 1}} {
		b.Run(grid.name, func(b *testing.B) {
			d, err := Build(&Spec{Geometry: Sphere, NSpecies: 1, Cluster: grid.cluster,
				Layers:  []Layer{{Outer: 1, D: []float64{1}, Cells: grid.cells}},
				OuterBC: []Boundary{{Kind: Fixed, Value: constant(1)}}})
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
			worst := 0.0
			full := 4 * math.Pi / 3
			for i, tau := range taus {
				m, _ := d.Content(res.Y[i], 0)
				want, _ := an.Uptake(tau)
				worst = math.Max(worst, relErr(m/full, want))
			}
			b.ReportMetric(worst, "max-rel-err")
			b.ReportMetric(float64(d.Cells()), "cells")
		})
	}
}

// BenchmarkFuncJacNonlinear measures Func and Jac with a Langmuir store
// (one Newton inversion per cell) and with a concentration-dependent
// diffusivity, 200 cells, no allocation.
func BenchmarkFuncJacNonlinear(b *testing.B) {
	for _, tc := range []struct {
		name  string
		layer Layer
	}{
		{"store", Layer{Outer: 1e-3, D: []float64{1e-9}, Cells: 200, Store: []StoreFunc{langmuir(0.4, 10, 2)}}},
		{"variable-D", Layer{Outer: 1e-3, D: []float64{1e-9}, Cells: 200, Diffusivity: []DiffusivityFunc{expD(1e-9, 1, 0, 0)}}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			d, err := Build(&Spec{Geometry: Sphere, NSpecies: 1, Layers: []Layer{tc.layer},
				OuterBC: []Boundary{{Kind: Film, H: 1e-6, Value: constant(1)}}})
			if err != nil {
				b.Fatal(err)
			}
			p := d.Problem()
			y := make([]float64, p.N)
			for i := range y {
				y[i] = 0.5 + 0.1*math.Sin(float64(i))
			}
			dy := make([]float64, p.N)
			J := solvers.NewBand(p.N, p.Lower, p.Upper)
			b.ReportAllocs()
			b.ResetTimer()
			for k := range b.N {
				y[k%p.N] += 1e-9 // the inversions cannot reuse everything
				p.Func(1, y, dy)
				J.Zero()
				p.Jac(1, y, J)
			}
		})
	}
}
