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
// volumes), independent of the discretisation.
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
