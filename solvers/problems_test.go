package solvers

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Test problems with known answers.

// robertson is the chemical kinetics problem of H. H. Robertson (1966),
// source: Hairer & Wanner, Solving ODEs II, 2nd ed., sec. IV.1, eq. (1.4):
//
//	y1' = -0.04 y1 + 1e4 y2 y3
//	y2' =  0.04 y1 - 1e4 y2 y3 - 3e7 y2²
//	y3' =  3e7 y2²,           y(0) = (1, 0, 0).
func robertson(withJac bool) *Problem {
	const k1, k2, k3 = 0.04, 3e7, 1e4
	p := &Problem{N: 3, Lower: 2, Upper: 2,
		Func: func(t float64, y, dy []float64) {
			dy[0] = -k1*y[0] + k3*y[1]*y[2]
			dy[1] = k1*y[0] - k3*y[1]*y[2] - k2*y[1]*y[1]
			dy[2] = k2 * y[1] * y[1]
		},
	}
	if withJac {
		p.Jac = func(t float64, y []float64, J *Band) {
			J.Set(0, 0, -k1)
			J.Set(0, 1, k3*y[2])
			J.Set(0, 2, k3*y[1])
			J.Set(1, 0, k1)
			J.Set(1, 1, -k3*y[2]-2*k2*y[1])
			J.Set(1, 2, -k3*y[1])
			J.Set(2, 1, 2*k2*y[1])
		}
	}
	return p
}

// vanDerPol is the stiff van der Pol oscillator in the scaled form
// y1' = y2, y2' = ((1 − y1²) y2 − y1)/ε, ε = 1e-6 (μ = 1000 after rescaling
// time and y2), source: Hairer & Wanner, Solving ODEs II, 2nd ed., sec. IV.1,
// eq. (1.5') and sec. IV.10 (problem VDPOL, y(0) = (2, 0), x_end = 2).
func vanDerPol(eps float64) *Problem {
	return &Problem{N: 2, Lower: 1, Upper: 1,
		Func: func(t float64, y, dy []float64) {
			dy[0] = y[1]
			dy[1] = ((1-y[0]*y[0])*y[1] - y[0]) / eps
		},
		Jac: func(t float64, y []float64, J *Band) {
			J.Set(0, 1, 1)
			J.Set(1, 0, (-2*y[0]*y[1]-1)/eps)
			J.Set(1, 1, (1-y[0]*y[0])/eps)
		},
	}
}

// protheroRobinson is y' = λ(y − cos t) − sin t with exact solution cos t
// for y(0) = 1, source: A. Prothero and A. Robinson, On the stability and
// accuracy of one-step methods for solving stiff systems of ordinary
// differential equations, Math. Comp. 28:145–162, 1974 (with g(t) = cos t).
func protheroRobinson(lambda float64) *Problem {
	return &Problem{N: 1,
		Func: func(t float64, y, dy []float64) { dy[0] = lambda*(y[0]-math.Cos(t)) - math.Sin(t) },
		Jac:  func(t float64, y []float64, J *Band) { J.Set(0, 0, lambda) },
	}
}

// heat1D is u_t = u_xx on (0, 1) with u = 0 at both ends, discretised by
// second-order central differences on n interior nodes (the method of
// lines). It returns the problem and its matrix A (y' = A y).
func heat1D(n int, exactJac bool) (*Problem, *mat.SymDense) {
	dx := 1 / float64(n+1)
	c := 1 / (dx * dx)
	p := &Problem{N: n, Lower: 1, Upper: 1,
		Func: func(t float64, y, dy []float64) {
			for i := range y {
				s := -2 * y[i]
				if i > 0 {
					s += y[i-1]
				}
				if i < len(y)-1 {
					s += y[i+1]
				}
				dy[i] = c * s
			}
		},
	}
	if exactJac {
		p.Jac = func(t float64, y []float64, J *Band) {
			for i := range y {
				J.Set(i, i, -2*c)
				if i > 0 {
					J.Set(i, i-1, c)
				}
				if i < len(y)-1 {
					J.Set(i, i+1, c)
				}
			}
		}
	}
	a := mat.NewSymDense(n, nil)
	for i := range n {
		a.SetSym(i, i, -2*c)
		if i+1 < n {
			a.SetSym(i, i+1, c)
		}
	}
	return p, a
}

// heatY0 is a discontinuous initial profile (1 on the middle half) that
// excites every mode of the discrete heat equation.
func heatY0(n int) []float64 {
	y := make([]float64, n)
	for i := range y {
		x := float64(i+1) / float64(n+1)
		if x > 0.25 && x < 0.75 {
			y[i] = 1
		}
	}
	return y
}

// exactLinear returns y(t) = V exp(Λt) Vᵀ y0 for y' = A y with symmetric A,
// using gonum's symmetric eigendecomposition.
type exactLinear struct {
	vals []float64
	vecs *mat.Dense
	c0   []float64 // Vᵀ y0
}

func newExactLinear(a *mat.SymDense, y0 []float64) (*exactLinear, bool) {
	var es mat.EigenSym
	if !es.Factorize(a, true) {
		return nil, false
	}
	e := &exactLinear{vals: es.Values(nil), vecs: new(mat.Dense)}
	es.VectorsTo(e.vecs)
	c := mat.NewVecDense(len(y0), nil)
	c.MulVec(e.vecs.T(), mat.NewVecDense(len(y0), y0))
	e.c0 = c.RawVector().Data
	return e, true
}

func (e *exactLinear) at(t float64, dst []float64) {
	n := len(dst)
	clear(dst)
	for k := range n {
		w := e.c0[k] * math.Exp(e.vals[k]*t)
		for i := range n {
			dst[i] += e.vecs.At(i, k) * w
		}
	}
}

// ledgerProblem is a conservative finite-volume diffusion–reaction model on
// n cells of width dx: inflow J(t) through the left face, a closed right
// face, and consumption r(y) per unit volume, first order r = k·y or, with
// nonlinear, saturable r = k·y/(0.5 + y). With w = (dx, …, dx),
// w·f(t, y) = J(t) − Σ dx·r(y_i) exactly in real arithmetic, and the
// quadratures are q1' = J(t) (inflow) and q2' = Σ dx·r(y_i) (consumed), so
// Σ dx·y(t) − q1(t) + q2(t) is constant. The inflow jumps from 1 to
// 3 + sin 5t at t = 1 (a stop). Jac and QuadJac are exact.
func ledgerProblem(n int, nonlinear bool) (*Problem, float64) {
	const diff, k, km = 0.5, 0.3, 0.5
	dx := 1 / float64(n)
	inflow := func(t float64) float64 {
		if t >= 1 {
			return 3 + math.Sin(5*t)
		}
		return 1
	}
	rate := func(y float64) (r, dr float64) {
		if nonlinear {
			return k * y / (km + y), k * km / ((km + y) * (km + y))
		}
		return k * y, k
	}
	p := &Problem{N: n, Lower: 1, Upper: 1, NQuad: 2,
		Func: func(t float64, y, dy []float64) {
			for i := range y {
				var fin, fout float64 // fluxes through the left and right faces
				if i == 0 {
					fin = inflow(t)
				} else {
					fin = -diff * (y[i] - y[i-1]) / dx
				}
				if i < n-1 {
					fout = -diff * (y[i+1] - y[i]) / dx
				}
				r, _ := rate(y[i])
				dy[i] = (fin-fout)/dx - r
			}
		},
		Jac: func(t float64, y []float64, J *Band) {
			a := diff / (dx * dx)
			for i := range y {
				_, dr := rate(y[i])
				d := -dr
				if i > 0 {
					J.Set(i, i-1, a)
					d -= a
				}
				if i < n-1 {
					J.Set(i, i+1, a)
					d -= a
				}
				J.Set(i, i, d)
			}
		},
		Quad: func(t float64, y, dq []float64) {
			var s float64
			for _, v := range y {
				r, _ := rate(v)
				s += r
			}
			dq[0] = inflow(t)
			dq[1] = dx * s
		},
		QuadJac: func(t float64, y []float64, G []float64) {
			for j, v := range y {
				_, dr := rate(v)
				G[n+j] = dx * dr // row 1; row 0 (inflow) does not depend on y
			}
		},
	}
	return p, dx
}
