package engine

import (
	"context"
	"math"
	"os"
	"testing"

	"github.com/massline/massline/solvers/analytic"
)

// TestShortCylinderProductRule: uptake by a short cylinder (radius R,
// length L = 2R) with a fixed surface value on every face, through the
// language with Richardson extrapolation, against the product of the
// infinite-cylinder and plane-sheet solutions,
// 1 − U = (1 − U_cyl(Dt/R²))·(1 − U_slab(Dt/(L/2)²)).
// source: the product rule for a body that is the intersection of two
// bodies (H. S. Carslaw and J. C. Jaeger, Conduction of Heat in Solids,
// 2nd ed., 1959, §1.15 — from memory), with the series of J. Crank, The
// Mathematics of Diffusion, 2nd ed., eqs. 4.18 and 5.23 via
// solvers/analytic.
func TestShortCylinderProductRule(t *testing.T) {
	src, err := os.ReadFile("testdata/short_cylinder.mln")
	if err != nil {
		t.Fatal(err)
	}
	res, diags, err := RunSource(context.Background(), "short_cylinder.mln", string(src), &Options{Extrapolate: true})
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	cyl, _ := analytic.NewFixedSurface(analytic.Cylinder)
	slab, _ := analytic.NewFixedSurface(analytic.Slab)
	up := res.Find("uptake_fraction", "tab", "s")
	D, R, half := 1e-9, 2e-3, 2e-3
	for i, tt := range res.Times {
		if tt == 0 {
			continue
		}
		uc, _ := cyl.Uptake(D * tt / (R * R))
		us, _ := slab.Uptake(D * tt / (half * half))
		want := 1 - (1-uc)*(1-us)
		if rel := math.Abs(up.Values[i]-want) / want; rel > 2e-4 {
			t.Errorf("t = %g s: uptake %.7f, product rule %.7f (rel. error %.1e)", tt, up.Values[i], want, rel)
		}
	}
	for _, l := range res.Ledger {
		if l.Closure > 1e-9 {
			t.Errorf("ledger closes to %.1e", l.Closure)
		}
	}
}
