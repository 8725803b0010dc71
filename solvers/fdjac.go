package solvers

import "math"

// fdBandJac fills the band matrix J with a forward-difference approximation
// of ∂f/∂y at (t, y), given f0 = f(t, y). Columns that cannot share a row
// inside the band, j, j+w, j+2w, … with w = KL+KU+1, are perturbed together,
// so the whole Jacobian costs w evaluations of f instead of N (A. R. Curtis,
// M. J. D. Powell and J. K. Reid, On the estimation of sparse Jacobian
// matrices, J. Inst. Math. Appl. 13:117–119, 1974; Hairer & Wanner, Solving
// ODEs II, 2nd ed., sec. IV.8).
//
// The increment of y_j is √ε·max(|y_j|, |h·f0_j|, atol_j/rtol, 10⁻³‖y‖∞):
// relative to y_j, but not smaller than the change of one step, than the
// size below which the error test stops caring about y_j, or than a small
// fraction of the largest component (common practice, no source).
// The increment actually applied, (y_j + δ) − y_j, is used as divisor. y is
// read but not modified; ypert, fpert and del are scratch of length N. It
// returns the number of evaluations of f.
func fdBandJac(f func(t float64, y, dy []float64), t float64, y, f0 []float64, h, rtol float64, atol, ypert, fpert, del []float64, J *Band) int {
	n := J.N
	kl, ku := min(J.KL, n-1), min(J.KU, n-1)
	stride := J.KL + J.KU + 1
	w := min(kl+ku+1, n)
	sq := math.Sqrt(epsilon)
	var ymax float64
	for _, v := range y {
		ymax = max(ymax, math.Abs(v))
	}
	floor := 1e-3 * ymax
	copy(ypert, y)
	for grp := range w {
		for j := grp; j < n; j += w {
			d := sq * max(math.Abs(y[j]), math.Abs(h*f0[j]), atol[j]/rtol, floor)
			ypert[j] = y[j] + d
			del[j] = ypert[j] - y[j]
		}
		f(t, ypert, fpert)
		for j := grp; j < n; j += w {
			ypert[j] = y[j]
			inv := 1 / del[j]
			for i := max(0, j-ku); i <= min(n-1, j+kl); i++ {
				J.Data[i*stride+j-i+J.KL] = (fpert[i] - f0[i]) * inv
			}
		}
	}
	return w
}
