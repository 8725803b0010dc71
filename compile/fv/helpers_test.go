package fv

import (
	"context"
	"math"
	"testing"

	"github.com/massline/massline/solvers"
	"gonum.org/v1/gonum/mat"
)

// linearParts returns A, b, C, e with f(t, y) = A y + b and the
// quadratures g(t, y) = C y + e at time tm, for a discretisation without
// Kinetics. A is read from the analytic Jacobian (checked against finite
// differences in TestJacobianMatchesFiniteDifferences); b, C and e are
// probed from Func and Quad. (A helper, not a reference check: no outside
// source: applies.)
func linearParts(d *Discretization, tm float64) (A *mat.Dense, b []float64, C *mat.Dense, e []float64) {
	p := d.Problem()
	n, nq := p.N, p.NQuad
	J := solvers.NewBand(n, p.Lower, p.Upper)
	p.Jac(tm, make([]float64, n), J)
	A = mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for j := max(0, i-p.Lower); j <= min(n-1, i+p.Upper); j++ {
			A.Set(i, j, J.At(i, j))
		}
	}
	zero := make([]float64, n)
	b = make([]float64, n)
	p.Func(tm, zero, b)
	e = make([]float64, nq)
	p.Quad(tm, zero, e)
	C = mat.NewDense(nq, n, nil)
	dq := make([]float64, nq)
	for j := 0; j < n; j++ {
		zero[j] = 1
		p.Quad(tm, zero, dq)
		zero[j] = 0
		for i := 0; i < nq; i++ {
			C.Set(i, j, dq[i]-e[i])
		}
	}
	return A, b, C, e
}

// exactInTime integrates a linear system with constant forcing exactly in
// time (matrix exponential of the augmented system [y; q; 1]), so that the
// only error left is that of the space discretisation.
func exactInTime(d *Discretization, ts []float64) (ys, qs [][]float64) {
	A, b, C, e := linearParts(d, 0)
	n, nq := len(b), len(e)
	m := n + nq + 1
	M := mat.NewDense(m, m, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			M.Set(i, j, A.At(i, j))
		}
		M.Set(i, m-1, b[i])
	}
	for i := 0; i < nq; i++ {
		for j := 0; j < n; j++ {
			M.Set(n+i, j, C.At(i, j))
		}
		M.Set(n+i, m-1, e[i])
	}
	z := make([]float64, m)
	copy(z, d.Y0())
	z[m-1] = 1
	for _, t := range ts {
		var Mt, E mat.Dense
		Mt.Scale(t, M)
		E.Exp(&Mt)
		r := mat.NewVecDense(m, nil)
		r.MulVec(&E, mat.NewVecDense(m, z))
		y := make([]float64, n)
		q := make([]float64, nq)
		for i := range y {
			y[i] = r.AtVec(i)
		}
		for i := range q {
			q[i] = r.AtVec(n + i)
		}
		ys = append(ys, y)
		qs = append(qs, q)
	}
	return ys, qs
}

// steadyState solves A y + b = 0 densely at time tm.
func steadyState(t *testing.T, d *Discretization, tm float64) []float64 {
	t.Helper()
	A, b, _, _ := linearParts(d, tm)
	n := len(b)
	rhs := mat.NewVecDense(n, nil)
	for i := range b {
		rhs.SetVec(i, -b[i])
	}
	var y mat.VecDense
	if err := y.SolveVec(A, rhs); err != nil {
		t.Fatalf("steady solve: %v", err)
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = y.AtVec(i)
	}
	return out
}

// integrate runs the solvers' integrator on d and checks the ledger at
// every output time.
func integrate(t *testing.T, d *Discretization, ts []float64, s *solvers.Settings) *solvers.Result {
	t.Helper()
	y0 := d.Y0()
	res, err := solvers.Integrate(context.Background(), d.Problem(), 0, y0, ts, s)
	if err != nil {
		t.Fatalf("integrate: %v", err)
	}
	if res.Status != solvers.Success {
		t.Fatalf("integrate: status %v", res.Status)
	}
	for i := range ts {
		checkLedger(t, d, y0, res.Y[i], res.Q[i], 1e-9)
	}
	return res
}

// checkLedger asserts that every species' ledger closes within tol
// (relative), and that the bath's loss equals the outer inflow.
func checkLedger(t *testing.T, d *Discretization, y0, y, q []float64, tol float64) {
	t.Helper()
	lines, err := d.Ledger(y0, y, q)
	if err != nil {
		t.Fatalf("ledger: %v", err)
	}
	for _, l := range lines {
		if !(math.Abs(l.Closure) <= tol) {
			t.Errorf("species %d: ledger closure %.3g > %.1g (initial %g inflow %g+%g consumed %g final %g)",
				l.Species, l.Closure, tol, l.Initial, l.InflowInner, l.InflowOuter, l.Consumed, l.Final)
		}
		if l.HasBath && !(math.Abs(l.BathClosure) <= tol) {
			t.Errorf("species %d: bath closure %.3g > %.1g", l.Species, l.BathClosure, tol)
		}
	}
}

// bodyVolume returns the volume of a solid body of radius (half-thickness)
// a in the units of Content: per unit area, per unit length, per body.
func bodyVolume(g Geometry, a float64) float64 {
	switch g {
	case Cylinder:
		return math.Pi * a * a
	case Sphere:
		return 4 * math.Pi / 3 * a * a * a
	}
	return a
}

func constant(v float64) func(float64) float64 { return func(float64) float64 { return v } }

// relErr returns |got − want| / |want|.
func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

// order returns log2 of successive error ratios.
func order(errs []float64) []float64 {
	var p []float64
	for i := 1; i < len(errs); i++ {
		p = append(p, math.Log2(errs[i-1]/errs[i]))
	}
	return p
}
