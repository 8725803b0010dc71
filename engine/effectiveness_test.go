package engine

import (
	"context"
	"fmt"
	"math"
	"testing"

	"github.com/massline/massline/solvers/analytic"
)

// TestEffectivenessDefaultGrid: the effectiveness factor of a sphere with
// first-order consumption, at default settings, over Thiele moduli from 1
// to 31623 — the default grid is refined for the thin reaction layer at
// large moduli. Reference: η = 3/φ² (φ coth φ − 1) (source: R. Aris, The
// Mathematical Theory of Diffusion and Reaction in Permeable Catalysts,
// vol. 1, 1975; H. S. Fogler, Elements of Chemical Reaction Engineering —
// both from memory), as implemented in solvers/analytic.Effectiveness.
func TestEffectivenessDefaultGrid(t *testing.T) {
	for _, k := range []float64{1e-3, 1, 100, 1e4, 1e6} {
		src := fmt.Sprintf(`species A { diffusivity = 1e-9 [m^2/s] }
body p = sphere(radius = 1 [mm])
balance A in p { source = -%g [1/s] * A }
boundary p.centre: symmetry
boundary p.surface: fixed(1 [mol/m^3])
initially p: A = 0 [mol/m^3]
run steady
show effectiveness(A)
`, k)
		res, diags, err := RunSource(context.Background(), "pellet.mln", src, nil)
		if err != nil {
			t.Fatalf("k=%g: %v\n%v", k, err, diags)
		}
		phi := 1e-3 * math.Sqrt(k/1e-9)
		want, _ := analytic.Effectiveness(analytic.Sphere, phi)
		var got float64
		for _, s := range res.Scalars {
			if s.Name == "effectiveness" {
				got = s.Value
			}
		}
		if rel := math.Abs(got-want) / want; rel > 1e-3 {
			t.Errorf("φ = %.4g: η = %.6g, formula %.6g (rel. error %.1e)", phi, got, want, rel)
		}
	}
}
