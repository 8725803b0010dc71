package fv

import (
	"math"
	"testing"
)

// TestLedgerExactInTime integrates the linear systems of the operator test
// cases with constant forcing exactly in time (matrix exponential, which
// also carries the quadratures) and checks that the ledger closes and the
// bath balance holds: the discrete balance itself is exact.
func TestLedgerExactInTime(t *testing.T) {
	for _, tc := range operatorCases()[:4] {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			ts := []float64{10, 300, 3000}
			ys, qs := exactInTime(d, ts)
			for i := range ts {
				checkLedger(t, d, d.Y0(), ys[i], qs[i], 1e-10)
			}
		})
	}
}

// TestTimeErrorSmall compares the default solver with exact integration in
// time on the default grid: the error left by the integrator (RTol 1e-6) is
// well below the space error quoted in the package documentation.
func TestTimeErrorSmall(t *testing.T) {
	for _, g := range shapes {
		d, err := Build(&Spec{Geometry: g, NSpecies: 1,
			Layers:  []Layer{{Outer: 1, D: []float64{1}}},
			OuterBC: []Boundary{{Kind: Film, H: 5, Value: constant(1)}}})
		if err != nil {
			t.Fatal(err)
		}
		ts := []float64{1e-3, 0.01, 0.1, 1}
		ys, _ := exactInTime(d, ts)
		res := integrate(t, d, ts, nil)
		for i := range ts {
			a, _ := d.Content(ys[i], 0)
			b, _ := d.Content(res.Y[i], 0)
			if e := math.Abs(a-b) / a; e > 2e-5 {
				t.Errorf("%v τ=%g: default solver differs from exact time integration by %.2e", g, ts[i], e)
			}
		}
	}
}
