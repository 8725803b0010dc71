package fv

import (
	"math"
	"testing"

	"github.com/massline/massline/solvers"
	"github.com/massline/massline/solvers/analytic"
)

// TestSurfaceValueChangesInTime soaks a sphere at surface value 1, then
// rinses it at 0.3 from t1 on (a time-dependent Value with the change
// declared to the solver as a stop). By linearity the exact uptake is
// F(τ) − 0.7·F(τ − τ1), F being the fixed-surface uptake (source: Crank
// (1975) eq. 6.20 and superposition, via package analytic).
func TestSurfaceValueChangesInTime(t *testing.T) {
	for _, g := range shapes {
		t.Run(g.String(), func(t *testing.T) {
			scale := aSize * aSize / dEff
			t1 := 0.05 * scale
			d, err := Build(&Spec{Geometry: g, NSpecies: 1,
				Layers: []Layer{{Outer: aSize, D: []float64{dEff}}},
				OuterBC: []Boundary{{Kind: Fixed, Value: func(t float64) float64 {
					if t < t1 {
						return 1
					}
					return 0.3
				}}}})
			if err != nil {
				t.Fatal(err)
			}
			taus := []float64{0.02, 0.05, 0.052, 0.06, 0.1, 0.3, 1, 10}
			ts := make([]float64, len(taus))
			for i, tau := range taus {
				ts[i] = tau * scale
			}
			res := integrate(t, d, ts, &solvers.Settings{Stops: []float64{t1}})
			an, _ := analytic.NewFixedSurface(analytic.Shape(g))
			vp := bodyVolume(g, aSize)
			for i, tau := range taus {
				want, _ := an.Uptake(tau)
				if tau > 0.05 {
					w2, _ := an.Uptake(tau - 0.05)
					want -= 0.7 * w2
				}
				m, _ := d.Content(res.Y[i], 0)
				if e := math.Abs(m/vp - want); e > 2e-4*want {
					t.Errorf("τ=%g: amount %.8g, exact %.8g (relative error %.2e)", tau, m/vp, want, e/want)
				}
				s, _ := d.Surface(ts[i], res.Y[i], 0)
				wantS := 1.0
				if ts[i] >= t1 {
					wantS = 0.3
				}
				if s != wantS {
					t.Errorf("τ=%g: surface value %g, want %g", tau, s, wantS)
				}
			}
			// At the end the body has settled at the new surface value.
			m, _ := d.Content(res.Y[len(taus)-1], 0)
			if e := relErr(m/vp, 0.3); e > 1e-6 {
				t.Errorf("final amount %.10g, want 0.3", m/vp)
			}
		})
	}
}
