package solvers

// Problem is a stiff initial-value problem
//
//	y'(t) = f(t, y),  y(t0) = y0,
//
// whose Jacobian ∂f/∂y is banded with Lower sub-diagonals and Upper
// super-diagonals, together with optional quadrature components
//
//	q'(t) = g(t, y),  q(t0) = 0,
//
// that are integrated with the same formula as y but take no part in the
// Newton iteration (they are used for mass ledgers: boundary inflow and
// amount consumed by reaction).
type Problem struct {
	// N is the number of unknowns in y.
	N int
	// Lower and Upper are the numbers of sub- and super-diagonals of the
	// Jacobian. Entries outside the band must be zero.
	Lower, Upper int
	// Func evaluates dy = f(t, y). It must not retain y or dy.
	Func func(t float64, y, dy []float64)
	// Jac fills J with ∂f/∂y at (t, y). J arrives zeroed. If Jac is nil
	// the integrator forms a banded finite-difference Jacobian.
	Jac func(t float64, y []float64, J *Band)
	// NQuad is the number of quadrature components; zero means none.
	NQuad int
	// Quad evaluates dq = g(t, y); used only when NQuad > 0.
	Quad func(t float64, y, dq []float64)
	// QuadJac, optional, fills G with ∂g/∂y at (t, y), row-major NQuad×N
	// (G[i*N+j] = ∂g_i/∂y_j); G arrives zeroed. It is evaluated together
	// with Jac, at the same point. When the quadratures are a conservation
	// ledger (w·f = g for a fixed w) and Jac and QuadJac are exact, the
	// integrator uses them to keep the ledger closed to round-off even for
	// a nonlinear f. It should be given only together with Jac.
	QuadJac func(t float64, y []float64, G []float64)
}
