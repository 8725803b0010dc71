package engine

import (
	"context"
	"math"
	"testing"

	"github.com/massline/massline/solvers/analytic"
)

// TestSweepTimeToHalf sweeps the radius of a sphere with a fixed surface
// value and checks time_to(50 %) at each radius against the series
// solution: the Fourier number at half uptake, found by bisection on
// Mt/M∞ (source: J. Crank, The Mathematics of Diffusion, 2nd ed., eq.
// 6.20, via package solvers/analytic), times a²/D.
func TestSweepTimeToHalf(t *testing.T) {
	src := `massline 1
let R = 1 [mm]
let D = 1e-9 [m^2/s]
species s { diffusivity = D }
body b = sphere(radius = R)
balance s in b
boundary b.centre: symmetry
boundary b.surface: fixed(1 [mol/m^3])
initially b: s = 0 [mol/m^3]
run until 30 [min] every 1 [min]
sweep R in 0.5 [mm], 1 [mm], 2 [mm] {
  show time_to(s, 50 [%])
}
`
	res, diags, err := RunSource(context.Background(), "sweep.mln", src, nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	ref, _ := analytic.NewFixedSurface(analytic.Sphere)
	lo, hi := 1e-4, 1.0
	for i := 0; i < 60; i++ {
		mid := math.Sqrt(lo * hi)
		if u, _ := ref.Uptake(mid); u < 0.5 {
			lo = mid
		} else {
			hi = mid
		}
	}
	foHalf := lo
	var table [][]float64
	for _, o := range res.Outputs {
		if o.Kind == "table" && o.Table.Title == "Sweep over R" {
			table = o.Table.Rows
		}
	}
	if len(table) != 3 {
		t.Fatalf("sweep table has %d rows", len(table))
	}
	for _, row := range table {
		a := row[0] * 1e-3 // mm
		want := foHalf * a * a / 1e-9
		if rel := math.Abs(row[1]-want) / want; rel > 2e-4 {
			t.Errorf("R = %g mm: time to 50%% = %g s, series %g s (rel. error %.1e)", row[0], row[1], want, rel)
		}
	}
}

// TestNestedSweepGrid: nested sweeps give one row per combination, and
// the time to a fraction scales as R²/D (the diffusion equation depends
// on D·t/R² only — the Fourier number; source: J. Crank, The Mathematics
// of Diffusion, 2nd ed., ch. 6, dimensionless form).
func TestNestedSweepGrid(t *testing.T) {
	src := `massline 1
let R = 1 [mm]
let D = 1e-9 [m^2/s]
species s { diffusivity = D }
body b = sphere(radius = R)
balance s in b
boundary b.centre: symmetry
boundary b.surface: fixed(1 [mol/m^3])
initially b: s = 0 [mol/m^3]
run until 2 [h] every 10 [min]
sweep D in 1e-9 [m^2/s], 4e-9 [m^2/s] {
  sweep R in 0.5 [mm], 1 [mm] { show time_to(s, 90 [%]) }
}
`
	res, diags, err := RunSource(context.Background(), "nested.mln", src, nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	if len(res.Sweeps) == 0 {
		t.Fatal("no sweep table")
	}
	g := res.Sweeps[len(res.Sweeps)-1]
	if len(g.Rows) != 4 || len(g.Columns) != 3 {
		t.Fatalf("grid %v × %d rows", g.Columns, len(g.Rows))
	}
	base := g.Rows[0][2] * g.Rows[0][0] / (g.Rows[0][1] * g.Rows[0][1])
	for _, row := range g.Rows {
		fo := row[2] * row[0] / (row[1] * row[1])
		if math.Abs(fo-base)/base > 1e-4 {
			t.Errorf("D=%g R=%g: Fourier number at 90%% = %g, first row %g", row[0], row[1], fo, base)
		}
	}
}
