package solvers

import (
	"fmt"
	"math"
)

// SteadySettings controls Steady. A nil *SteadySettings means the
// defaults.
type SteadySettings struct {
	// Tol is the convergence test on the Newton step, relative to the
	// size of the solution: ‖δ‖∞ ≤ Tol·(‖y‖∞ + ATol). Zero means 1e-12.
	Tol float64
	// ATol is an absolute floor for the test above. Zero means 1e-30.
	ATol float64
	// MaxIter bounds the Newton iterations. Zero means 50.
	MaxIter int
}

// SteadyError reports a failed steady-state solve.
type SteadyError struct {
	Iter int
	Msg  string
}

// Error implements error.
func (e *SteadyError) Error() string {
	return fmt.Sprintf("solvers: steady state: %s (after %d Newton iterations)", e.Msg, e.Iter)
}

// Steady solves f(t, y) = 0 for y by Newton's method with the problem's
// banded Jacobian (finite differences when Problem.Jac is nil), starting
// from y0, with a step-halving line search on ‖f‖. It returns a new slice.
//
// For a linear problem (diffusion with linear sources) Newton converges in
// one iteration up to round-off; the loop exists for nonlinear sources.
// A conserved system with no fixed boundary value has a singular Jacobian
// and no isolated steady state; Steady then returns a *SteadyError.
//
// Reference: C. T. Kelley, Solving Nonlinear Equations with Newton's
// Method, SIAM (2003), ch. 1–2 (Newton with a line search).
func Steady(p *Problem, y0 []float64, t float64, s *SteadySettings) ([]float64, error) {
	if p == nil || p.Func == nil || len(y0) != p.N {
		return nil, &SteadyError{Msg: "bad problem or starting vector"}
	}
	tol, atol, maxIter := 1e-12, 1e-30, 50
	if s != nil {
		if s.Tol > 0 {
			tol = s.Tol
		}
		if s.ATol > 0 {
			atol = s.ATol
		}
		if s.MaxIter > 0 {
			maxIter = s.MaxIter
		}
	}
	n := p.N
	y := append([]float64(nil), y0...)
	f := make([]float64, n)
	trial := make([]float64, n)
	ft := make([]float64, n)
	J := NewBand(n, p.Lower, p.Upper)
	var lu BandLU
	norm := func(v []float64) float64 {
		m := 0.0
		for _, x := range v {
			m = math.Max(m, math.Abs(x))
		}
		return m
	}
	p.Func(t, y, f)
	for it := 1; it <= maxIter; it++ {
		J.Zero()
		if p.Jac != nil {
			p.Jac(t, y, J)
		} else {
			fdBand(p, t, y, f, J)
		}
		if err := lu.Factorize(J); err != nil {
			return nil, &SteadyError{Iter: it, Msg: "the Jacobian is singular: the system has no isolated steady state (is every boundary closed?)"}
		}
		delta := make([]float64, n)
		for i := range delta {
			delta[i] = -f[i]
		}
		if err := lu.Solve(delta); err != nil {
			return nil, &SteadyError{Iter: it, Msg: err.Error()}
		}
		f0 := norm(f)
		lambda := 1.0
		for {
			for i := range y {
				trial[i] = y[i] + lambda*delta[i]
			}
			p.Func(t, trial, ft)
			if norm(ft) <= (1-1e-4*lambda)*f0 || lambda < 1e-6 || f0 == 0 {
				break
			}
			lambda /= 2
		}
		copy(y, trial)
		copy(f, ft)
		step := lambda * norm(delta)
		if math.IsNaN(step) || math.IsInf(step, 0) {
			return nil, &SteadyError{Iter: it, Msg: "a value became infinite or NaN"}
		}
		if step <= tol*(norm(y)+atol) {
			return y, nil
		}
	}
	return nil, &SteadyError{Iter: maxIter, Msg: "Newton's method did not converge"}
}

// fdBand forms a banded finite-difference Jacobian by column grouping.
func fdBand(p *Problem, t float64, y, f []float64, J *Band) {
	n := p.N
	w := p.Lower + p.Upper + 1
	yp := append([]float64(nil), y...)
	fp := make([]float64, n)
	for g := 0; g < w && g < n; g++ {
		for j := g; j < n; j += w {
			yp[j] = y[j] + math.Sqrt(2.2e-16)*math.Max(math.Abs(y[j]), 1e-8)
		}
		p.Func(t, yp, fp)
		for j := g; j < n; j += w {
			h := yp[j] - y[j]
			for i := max(0, j-p.Upper); i <= min(n-1, j+p.Lower); i++ {
				J.Set(i, j, (fp[i]-f[i])/h)
			}
			yp[j] = y[j]
		}
	}
}
