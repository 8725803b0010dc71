package engine

import (
	"context"
	"math"
	"os"
	"testing"
)

// TestLayeredBathEquilibrium: a two-layer sphere with a contact partition
// in a bath of limited volume tends to the equilibrium fixed by the
// conservation of amount (bath plus body) and the partitions: the coat
// holds K_bath·c_b and the core K_bath·c_b/K_contact. The long-time
// solution must reach that bath value, and the uptake fraction 1. The
// reference value is derived in the test from the geometry (exact
// volumes), independent of the discretisation. source: conservation of
// amount and the partition equilibrium (a derivation; no outside value).
func TestLayeredBathEquilibrium(t *testing.T) {
	src, err := os.ReadFile("testdata/layered_bath.mln")
	if err != nil {
		t.Fatal(err)
	}
	res, diags, err := RunSource(context.Background(), "layered_bath.mln", string(src), nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	vCore := 4.0 / 3.0 * math.Pi * math.Pow(1.5e-3, 3)
	vCoat := 4.0/3.0*math.Pi*math.Pow(2e-3, 3) - vCore
	vBath := 0.1e-6
	kBath, kContact := 2.0, 0.5
	cb := 1.0 * vBath / (vBath + kBath*vCoat + kBath/kContact*vCore)
	bath := res.Find("bath", "tab", "s")
	up := res.Find("uptake_fraction", "tab", "s")
	last := len(res.Times) - 1
	if math.Abs(bath.Values[last]-cb)/cb > 1e-6 {
		t.Errorf("final bath value %.8f, equilibrium %.8f", bath.Values[last], cb)
	}
	if math.Abs(up.Values[last]-1) > 1e-6 {
		t.Errorf("final uptake fraction %.8f, want 1", up.Values[last])
	}
	for _, l := range res.Ledger {
		if l.Closure > 1e-9 {
			t.Errorf("ledger closes to %.1e", l.Closure)
		}
	}
}

// TestLangmuirBathEquilibrium: beads with a Langmuir store in a bath shared
// by 1000 beads reach the equilibrium fixed by conservation of amount,
// V_b·c + V_p·q(c) = V_b·c₀ with q(c) = 0.4c + 20c/(1 + 2c) (c in
// mol/m^3), solved here by bisection; the uptake fraction tends to 1.
// source: conservation of amount (a derivation; no outside value).
func TestLangmuirBathEquilibrium(t *testing.T) {
	src, err := os.ReadFile("testdata/langmuir_bath.mln")
	if err != nil {
		t.Fatal(err)
	}
	res, diags, err := RunSource(context.Background(), "langmuir_bath.mln", string(src), nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	vp := 4.0 / 3.0 * math.Pi * 1e-9
	vb := 20e-6 / 1000
	q := func(c float64) float64 { return 0.4*c + 20*c/(1+2*c) }
	lo, hi := 0.0, 1.0
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if vb*mid+vp*q(mid) < vb*1 {
			lo = mid
		} else {
			hi = mid
		}
	}
	bath := res.Find("bath", "b", "s")
	up := res.Find("uptake_fraction", "b", "s")
	last := len(res.Times) - 1
	if math.Abs(bath.Values[last]-lo)/lo > 1e-6 {
		t.Errorf("final bath value %.8f, equilibrium %.8f", bath.Values[last], lo)
	}
	if math.Abs(up.Values[last]-1) > 1e-6 {
		t.Errorf("final uptake fraction %.8f, want 1", up.Values[last])
	}
	for _, l := range res.Ledger {
		if l.Closure > 1e-9 {
			t.Errorf("ledger closes to %.1e", l.Closure)
		}
	}
}
