package fv

import (
	"fmt"
	"math"
	"testing"

	"github.com/massline/massline/solvers/analytic"
)

// TestShellSteadyFlux compares the steady rate through the wall of a
// hollow sphere and a hollow cylinder (and a slab wall) held at fixed
// values on both faces with the exact result (source: J. Crank, The
// Mathematics of Diffusion, 2nd ed. (1975), §5.2, §6.2, from memory; via
// analytic.Shell): on the default grid, after integrating to steady state
// with the default solver (relative error ≤ 2e-4: the 1/r and ln r
// profiles are strongly curved near the inner face), and as the observed
// order on refined grids.
func TestShellSteadyFlux(t *testing.T) {
	const (
		r1, r2 = 0.4e-3, 1e-3
		D      = 1e-9
		c1, c2 = 2.0, 0.5
		kIn    = 1.25 // value inside = K × outside value
	)
	for _, g := range shapes {
		t.Run(g.String(), func(t *testing.T) {
			an, err := analytic.NewShell(analytic.Shape(g), D, r1, r2, c1, c2)
			if err != nil {
				t.Fatal(err)
			}
			spec := func(cells int) *Spec {
				return &Spec{Geometry: g, Inner: r1, NSpecies: 1,
					Layers:  []Layer{{Outer: r2, D: []float64{D}, Cells: cells, Capacity: []float64{0.3}}},
					InnerBC: []Boundary{{Kind: Fixed, Value: constant(c1 / kIn), Partition: kIn}},
					OuterBC: []Boundary{{Kind: Fixed, Value: constant(c2)}}}
			}
			// Default grid, integrated in time from empty to steady state.
			d, err := Build(spec(0))
			if err != nil {
				t.Fatal(err)
			}
			tEnd := 40 * 0.3 * (r2 - r1) * (r2 - r1) / D
			res := integrate(t, d, []float64{tEnd}, nil)
			y := res.Y[0]
			jin, _ := d.InnerFlux(tEnd, y, 0)
			jout, _ := d.SurfaceFlux(tEnd, y, 0)
			rateIn := jin * d.Grid.Areas[0]
			rateOut := -jout * d.Grid.Areas[d.Cells()]
			if e := relErr(rateIn, an.Rate()); e > 2e-4 {
				t.Errorf("rate in at the inner face %.10g, exact %.10g (relative error %.2e)", rateIn, an.Rate(), e)
			}
			if e := relErr(rateOut, an.Rate()); e > 2e-4 {
				t.Errorf("rate out at the outer face %.10g, exact %.10g (relative error %.2e)", rateOut, an.Rate(), e)
			}
			for i, r := range d.Grid.Centres {
				want, _ := an.Value(r)
				if math.Abs(y[i]-want) > 1e-4*c1 {
					t.Errorf("r=%g: value %g, exact steady profile %g", r, y[i], want)
				}
			}
			// Observed order of the rate on refined grids (steady state by a
			// direct solve).
			var errs []float64
			for _, n := range []int{10, 20, 40} {
				d, err := Build(spec(n))
				if err != nil {
					t.Fatal(err)
				}
				y := steadyState(t, d, 0)
				jin, _ := d.InnerFlux(0, y, 0)
				errs = append(errs, relErr(jin*d.Grid.Areas[0], an.Rate()))
			}
			if g == Slab {
				// A linear profile is reproduced exactly.
				for _, e := range errs {
					if e > 1e-12 {
						t.Errorf("slab wall: rate error %g, want round-off", e)
					}
				}
				return
			}
			checkOrder(t, fmt.Sprintf("%v wall rate", g), errs)
		})
	}
}
