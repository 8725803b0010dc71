package solvers

import (
	"fmt"
	"math"
	"testing"
)

// TestFDBandJac compares the column-grouped finite-difference Jacobian with
// the analytic Jacobian of a nonlinear banded function
// f_i = Σ_{j=i−KL..i+KU} c_ij·y_j² + sin(y_i), ∂f_i/∂y_j = 2c_ij·y_j + δ_ij cos(y_i)
// (source: elementary calculus), for several bandwidths, and checks that it
// costs KL+KU+1 evaluations of f (Curtis, Powell & Reid 1974).
func TestFDBandJac(t *testing.T) {
	for _, c := range []struct{ n, kl, ku int }{{30, 1, 1}, {30, 2, 1}, {30, 0, 3}, {4, 3, 3}, {1, 0, 0}} {
		t.Run(fmt.Sprintf("N=%d KL=%d KU=%d", c.n, c.kl, c.ku), func(t *testing.T) {
			coef := func(i, j int) float64 { return 1 + 0.1*float64(i) - 0.3*float64(j-i) }
			f := func(_ float64, y, dy []float64) {
				for i := range y {
					s := math.Sin(y[i])
					for j := max(0, i-c.kl); j <= min(c.n-1, i+c.ku); j++ {
						s += coef(i, j) * y[j] * y[j]
					}
					dy[i] = s
				}
			}
			y := make([]float64, c.n)
			for i := range y {
				y[i] = math.Cos(float64(i)) // includes values near zero
			}
			f0 := make([]float64, c.n)
			f(0, y, f0)
			atol := make([]float64, c.n)
			for i := range atol {
				atol[i] = 1e-10
			}
			J := NewBand(c.n, c.kl, c.ku)
			ysave := append([]float64(nil), y...)
			evals := fdBandJac(f, 0, y, f0, 1e-3, 1e-6, atol, make([]float64, c.n), make([]float64, c.n), make([]float64, c.n), J)
			if want := min(c.kl+c.ku+1, c.n); evals != want {
				t.Errorf("%d evaluations, want %d", evals, want)
			}
			for i := range y {
				if y[i] != ysave[i] {
					t.Fatalf("y modified")
				}
			}
			// Forward differences are accurate to about √ε relative to the
			// largest entry of the row (rounding in f over a small increment);
			// Newton needs far less (common practice, no source).
			for i := range c.n {
				jac := func(j int) float64 {
					v := 2 * coef(i, j) * y[j]
					if i == j {
						v += math.Cos(y[i])
					}
					return v
				}
				var rowMax float64
				for j := max(0, i-c.kl); j <= min(c.n-1, i+c.ku); j++ {
					rowMax = max(rowMax, math.Abs(jac(j)))
				}
				for j := max(0, i-c.kl); j <= min(c.n-1, i+c.ku); j++ {
					if got, want := J.At(i, j), jac(j); math.Abs(got-want) > 1e-5*rowMax {
						t.Errorf("J(%d,%d) = %.10g, want %.10g", i, j, got, want)
					}
				}
			}
		})
	}
}
