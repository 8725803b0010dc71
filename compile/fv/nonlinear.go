package fv

import (
	"fmt"
	"math"

	"github.com/massline/massline/solvers"
)

// This file holds the nonlinear parts of the operator: stores q(c) whose
// cells carry the amount held as unknown (inverted for c by a scalar
// Newton iteration), diffusivities that depend on the concentrations or the
// position, the chain rule that turns ∂/∂c into ∂/∂q, and the derivatives
// of the ledger quadratures. The mathematics is in the package
// documentation.

var nan = math.NaN()

// NonlinearError reports a store or a diffusivity that could not be used
// at some evaluation: a store that does not increase with the
// concentration (so that the concentration cannot be recovered from the
// amount held), or a diffusivity that is not positive and finite. During
// an integration the evaluation then returns NaN, which makes the
// integrator shorten its step; if the run fails in the end, the first such
// error (Discretization.EvalError) says why.
type NonlinearError struct {
	// Layer and Species locate the failure; R is the position (a cell
	// centre or a face).
	Layer, Species int
	R              float64
	// Msg says what went wrong, in words.
	Msg string
}

// Error implements error.
func (e *NonlinearError) Error() string {
	return fmt.Sprintf("fv: layer %d, species %d, near r = %g: %s", e.Layer, e.Species, e.R, e.Msg)
}

// EvalError returns the first NonlinearError met by any evaluation of this
// discretisation (Func, Jac, the quadratures or the output methods), or
// nil. An error here does not by itself mean that a run failed: the
// integrator recovers from a rejected trial step; consult it when a run
// fails.
func (d *Discretization) EvalError() error {
	if p := d.evalErr.Load(); p != nil {
		return *p
	}
	return nil
}

// fail records the first evaluation error.
func (d *Discretization) fail(err error) {
	if d.evalErr.Load() == nil {
		d.evalErr.CompareAndSwap(nil, &err)
	}
}

// maxStoreIter bounds the Newton iterations of one inversion.
const maxStoreIter = 100

// storeTol is the relative size of the last Newton step of an inversion.
const storeTol = 1e-9

// storeInverse is what an inversion knows about one store: the function,
// its value at c = 0 (NaN when not finite) and a representative slope.
type storeInverse struct {
	f     StoreFunc
	q0    float64
	slope float64
}

// cold returns a starting guess for q(c) = u: the linearisation about 0,
// (u − q(0))/slope, which lies on the side of 0 where the root is.
func (si *storeInverse) cold(u float64) float64 {
	if finite(si.q0) {
		return (u - si.q0) / si.slope
	}
	return u / si.slope
}

// invert solves q(c) = u for c by a safeguarded Newton iteration from
// guess, and returns c and dq/dc.
//
// Where q(0) is finite, c = 0 bounds the root (from below when u ≥ q(0),
// from above otherwise), every point taken must be consistent with it
// (q(c) > q(0) for c > 0, q(c) < q(0) for c < 0) and with the bracket
// found so far, and steps that leave the bracket fall back to regula falsi
// or bisection. So the iteration stays on the branch of the store that
// contains c = 0: a Newton step from a reasonable start cannot jump over a
// singularity (a Langmuir isotherm has a pole at c = −1/K, beyond which it
// holds every amount a second time). Without a two-sided bracket, steps
// are halved until |q − u| decreases. A point where the store is not
// finite or does not increase is not taken; if no step can be taken the
// inversion fails with an error that says so.
func (si *storeInverse) invert(u, guess float64) (float64, float64, error) {
	if !finite(u) {
		return nan, nan, fmt.Errorf("the amount held is %g", u)
	}
	f := si.f
	q0 := si.q0
	lo, hi := math.Inf(-1), math.Inf(1)
	qlo, qhi := math.Inf(-1), math.Inf(1)
	if finite(q0) {
		if u == q0 {
			_, dq := f(0)
			return 0, dq, nil
		}
		if u > q0 {
			lo, qlo = 0, q0
		} else {
			hi, qhi = 0, q0
		}
	}
	badSlope, badAt := 1.0, 0.0
	// usable tells whether the store may be taken at c with value q and
	// slope dq: finite, increasing, and ordered like c against the bracket.
	usable := func(c, q, dq float64) bool {
		if !finite(q) || !finite(dq) {
			return false
		}
		if dq <= 0 {
			if badSlope > 0 {
				badSlope, badAt = dq, c
			}
			return false
		}
		return (c <= lo) == (q <= qlo) && (c >= hi) == (q >= qhi)
	}
	// Starting point: the guess, the linearisation about 0, or 0.
	c := math.NaN()
	var q, dq float64
	for _, g := range [3]float64{guess, si.cold(u), 0} {
		if !(g >= lo && g <= hi) || g == 0 && !finite(q0) {
			continue
		}
		if gq, gdq := f(g); usable(g, gq, gdq) {
			c, q, dq = g, gq, gdq
			break
		}
	}
	if math.IsNaN(c) {
		if badSlope <= 0 {
			return nan, nan, fmt.Errorf("the store does not increase with the concentration (slope %g at c = %g), so the concentration holding %g cannot be found", badSlope, badAt, u)
		}
		return nan, nan, fmt.Errorf("the store cannot be evaluated near the concentration that holds %g", u)
	}
	for range maxStoreIter {
		r := q - u
		if r == 0 {
			return c, dq, nil
		}
		if r > 0 {
			hi, qhi = c, q
		} else {
			lo, qlo = c, q
		}
		step := r / dq
		cn := c - step
		if math.Abs(step) <= storeTol*math.Abs(c) || math.Abs(step) < 1e-300 {
			// Newton converges quadratically: after a step of relative
			// size δ the error is about (c q''/2q')·δ², far below
			// round-off for δ ≤ 1e-9 and a store of moderate curvature.
			if cn >= lo && cn <= hi {
				return cn, dq, nil
			}
			return c, dq, nil
		}
		bracketed := !math.IsInf(lo, 0) && !math.IsInf(hi, 0)
		if bracketed && !(cn > lo && cn < hi) {
			// Regula falsi, or bisection when it lands at an end.
			cn = lo + (u-qlo)*(hi-lo)/(qhi-qlo)
			if !(cn > lo && cn < hi) {
				cn = 0.5 * (lo + hi)
			}
		}
		// Evaluate, moving back towards c while the point is not usable
		// (or, without a bracket, while |q − u| does not decrease).
		for k := 0; ; k++ {
			qn, dqn := f(cn)
			if usable(cn, qn, dqn) && (bracketed || math.Abs(qn-u) < math.Abs(r)) {
				c, q, dq = cn, qn, dqn
				break
			}
			if k >= 60 || cn == c {
				if math.Abs(r) <= 1e-12*(math.Abs(u)+math.Abs(q)) {
					return c, dq, nil // converged to round-off
				}
				if badSlope <= 0 {
					return nan, nan, fmt.Errorf("the store does not increase with the concentration (slope %g at c = %g), so the concentration holding %g cannot be found", badSlope, badAt, u)
				}
				return nan, nan, fmt.Errorf("no concentration holds the amount %g (the store reaches %g at c = %g and does not get closer)", u, q, c)
			}
			cn = 0.5 * (c + cn)
		}
		if bracketed && hi-lo <= 1e-15*math.Max(math.Abs(lo), math.Abs(hi)) {
			return c, dq, nil // the bracket is exhausted
		}
	}
	return nan, nan, fmt.Errorf("the concentration holding the amount %g was not found in %d iterations", u, maxStoreIter)
}

// conc returns the concentrations of y: y itself without a nonlinear
// store, otherwise e.c with the inverted cells and e.dcdq = 1/q'(c)
// filled in. Each inversion starts from the previous evaluation's
// solution moved along its tangent, c + (q − q_prev)/q'(c), which is
// already a Newton step: when the amounts changed little one evaluation
// of the store per cell suffices.
func (e *evaluator) conc(y []float64) []float64 {
	d := e.d
	if !d.hasStore || e.cspace {
		return y
	}
	c := e.c
	m := d.nc * d.ns
	for k := 0; k < m; k++ {
		st := d.store[k]
		if st == nil {
			c[k] = y[k]
			e.dcdq[k] = 1
			continue
		}
		if e.warm && y[k] == e.u[k] && finite(c[k]) {
			// The same amount as last time (Jac after QuadJac, Quad
			// after Func): the same c and slope, so that the
			// derivatives of one point agree exactly.
			continue
		}
		inv := &d.inv[k]
		g := inv.cold(y[k])
		if e.warm {
			if w := c[k] + (y[k]-e.u[k])*e.dcdq[k]; finite(w) {
				g = w
			}
		}
		v, slope, err := inv.invert(y[k], g)
		if err != nil {
			d.fail(&NonlinearError{Layer: d.Grid.Layer[k/d.ns], Species: k % d.ns, R: d.Grid.Centres[k/d.ns], Msg: err.Error()})
			v, slope = nan, nan
		}
		c[k] = v
		e.u[k] = y[k]
		e.dcdq[k] = 1 / slope
	}
	copy(c[m:], y[m:])
	e.warm = true
	return c
}

// concOf returns a copy of y in which the unknowns of the listed cells
// (all species; every cell when cells is nil) hold concentrations. It
// serves the output methods.
func (d *Discretization) concOf(y []float64, cells []int) ([]float64, error) {
	c := append([]float64(nil), y...)
	if !d.hasStore {
		return c, nil
	}
	one := func(i int) error {
		for s := 0; s < d.ns; s++ {
			k := i*d.ns + s
			st := d.store[k]
			if st == nil {
				continue
			}
			inv := &d.inv[k]
			v, _, err := inv.invert(y[k], inv.cold(y[k]))
			if err != nil {
				e := &NonlinearError{Layer: d.Grid.Layer[i], Species: s, R: d.Grid.Centres[i], Msg: err.Error()}
				d.fail(e)
				return e
			}
			c[k] = v
		}
		return nil
	}
	if cells == nil {
		for i := 0; i < d.nc; i++ {
			if err := one(i); err != nil {
				return nil, err
			}
		}
		return c, nil
	}
	for _, i := range cells {
		if err := one(i); err != nil {
			return nil, err
		}
	}
	return c, nil
}

// faceWork is the scratch space for diffusivities at faces.
type faceWork struct {
	ch, g1, g2 []float64 // per species
	gb         []float64 // ns+2: ∂D/∂(nearest cell's species…, next cell, bath)
	// Contacts: gradients over the local unknowns c_{f−2,s},
	// c_{f−1,0…ns−1}, c_{f,0…ns−1}, c_{f+1,s}.
	dP, dL1, dR1, dF1, dL, dR, dG []float64
}

func newFaceWork(ns int) *faceWork {
	m := 2*ns + 2
	v := make([]float64, 3*ns+(ns+2)+7*m)
	take := func(k int) []float64 { x := v[:k:k]; v = v[k:]; return x }
	w := &faceWork{ch: take(ns), g1: take(ns), g2: take(ns), gb: take(ns + 2)}
	w.dP, w.dL1, w.dR1, w.dF1, w.dL, w.dR, w.dG = take(m), take(m), take(m), take(m), take(m), take(m), take(m)
	return w
}

// evalD evaluates a variable diffusivity at position r and the
// concentrations vals, with ∂D/∂vals into g when it is not nil. ok is false
// (and D NaN) when D is not positive and finite; the error is recorded
// against the cell and the species.
func (d *Discretization) evalD(df DiffusivityFunc, r float64, vals, g []float64, cell, species int) (float64, bool) {
	if g != nil {
		clear(g)
	}
	D := df(r, vals, g)
	if !(D > 0) || math.IsInf(D, 0) {
		d.failD(cell, species, r, D)
		return nan, false
	}
	return D, true
}

func (d *Discretization) failD(cell, species int, r, D float64) {
	if d.evalErr.Load() != nil {
		return
	}
	d.fail(&NonlinearError{Layer: d.Grid.Layer[cell], Species: species, R: r,
		Msg: fmt.Sprintf("the diffusivity is %g; it must be positive and finite", D)})
}

// bndD returns the diffusivity at a boundary face with a variable
// diffusivity (c holds concentrations). It is evaluated at the face value
// of the species and the nearest cell's values of the others. The face
// value is the imposed one for Fixed (K·value) and for a bath without
// film (K·c_bath); otherwise it is the face value the closure gives with
// the diffusivity of the nearest cell (one fixed-point step, second-order
// accurate since the half-cell drop is O(h)). With grad, w.gb receives
// ∂D/∂ the nearest cell's values (ns entries), the next cell's value of
// the species and the bath value.
func (d *Discretization) bndD(b *bnd, t float64, c []float64, w *faceWork, grad bool) (float64, bool) {
	ns := d.ns
	own := b.k1 - b.base
	cell := c[b.base : b.base+ns : b.base+ns]
	ci := b.base / ns
	copy(w.ch, cell)
	var g1, g2 []float64
	if grad {
		g1, g2 = w.g1, w.g2
		clear(w.gb)
	}
	var s float64
	// ∂s/∂(cell…), ∂s/∂c2, ∂s/∂c_bath are accumulated into gb, to be
	// multiplied by ∂D/∂s below.
	switch {
	case b.kind == Fixed:
		if b.value != nil {
			s = b.kp * b.value(t)
		}
	case b.kind == Bath && b.h == 0:
		s = b.kp * c[b.kb]
		if grad {
			w.gb[ns+1] = b.kp
		}
	case b.kind == Film || b.kind == Bath:
		D1, ok := d.evalD(b.df, b.rb, cell, g1, ci, own)
		if !ok {
			return nan, false
		}
		e1 := b.eff(D1)
		P := b.drive(t, c)
		cext := 0.0
		if b.kind == Bath {
			cext = c[b.kb]
		} else if b.value != nil {
			cext = b.value(t)
		}
		s = b.kp*cext - e1*P/b.h
		if grad {
			e1p := b.effSlope(D1)
			for j := range ns {
				w.gb[j] = -P / b.h * e1p * g1[j]
			}
			w.gb[own] -= e1 / b.h * b.a1
			w.gb[ns] = -e1 / b.h * b.a2
			if b.kind == Bath {
				w.gb[ns+1] = b.kp - e1/b.h*b.sigma*b.kp
			}
		}
	default: // Flux, Symmetry: the flux is given (outputs only)
		D1, ok := d.evalD(b.df, b.rb, cell, nil, ci, own)
		if !ok {
			return nan, false
		}
		s = b.b1*c[b.k1] + b.b2*c[b.k2] + b.b3*b.fluxD(t, c, D1)/D1
	}
	w.ch[own] = s
	D, ok := d.evalD(b.df, b.rb, w.ch, g2, ci, own)
	if !ok {
		return nan, false
	}
	if grad {
		ds := g2[own]
		for j := range ns + 2 {
			w.gb[j] *= ds
		}
		for j := range ns {
			if j != own {
				w.gb[j] += g2[j]
			}
		}
	}
	return D, true
}

// boundaryD returns the diffusivity at a boundary face for the output
// methods: the layer's constant, or bndD.
func (d *Discretization) boundaryD(b *bnd, t float64, c []float64) float64 {
	if b.df == nil {
		return b.d
	}
	D, _ := d.bndD(b, t, c, newFaceWork(d.ns), false)
	return D
}

// faceD evaluates the diffusivity of species s at the same-layer face f
// at the concentrations interpolated linearly between the centroids of
// the two cells that share it (c_f = θ c_{f−1} + (1 − θ) c_f), with
// ∂D/∂c_f into dD when it is not nil.
func (e *evaluator) faceD(f, s int, c, dD []float64) (float64, bool) {
	d := e.d
	ns := d.ns
	th := d.theta[f]
	l, r := c[(f-1)*ns:f*ns], c[f*ns:(f+1)*ns]
	ch := e.work.ch
	for j := range ns {
		ch[j] = th*l[j] + (1-th)*r[j]
	}
	return d.evalD(d.layers[d.Grid.Layer[f]].df[s], d.Grid.Faces[f], ch, dD, f, s)
}

// varP returns Σ_j fwg_j c_{f−2+j} for species s at a variable same-layer
// face (the flux is D_f times it).
func (d *Discretization) varP(f, s int, c []float64) float64 {
	ns, nc := d.ns, d.nc
	k := f*ns + s
	w := d.fwg[4*k : 4*k+4 : 4*k+4]
	p := 0.0
	for j := range 4 {
		if cc := f - 2 + j; cc >= 0 && cc < nc {
			p += w[j] * c[cc*ns+s]
		}
	}
	return p
}

// contactFlux returns the amount G of species s crossing the contact face
// f per unit time (in +r) when a side has a variable diffusivity, and with
// grad ∂G/∂ the local unknowns in w.dG (c_{f−2,s}, the species of cells
// f−1 and f, c_{f+1,s}).
//
// With P the combination of the cell values fixed by the two one-sided
// closures, G = A·P/den, den = 1/(D_R σ_R) + K/(D_L σ_L) + R_c. Each side's
// diffusivity is taken at that side's face value (the species) and its
// nearest cell's values (the others). The face values come from the
// closures with the diffusivities of the nearest cells (one fixed-point
// step): with F₁ = P/den(D_L¹, D_R¹),
//
//	a_L = (−F₁/D_L¹ − a1_L c_{f−1} − a2_L c_{f−2})/σ_L,
//	b_R = ( F₁/D_R¹ − a1_R c_f − a2_R c_{f+1})/σ_R.
func (e *evaluator) contactFlux(f, s int, c []float64, grad bool) (float64, bool) {
	return e.d.contactFluxW(f, s, c, e.work, grad)
}

func (d *Discretization) contactFluxW(f, s int, c []float64, w *faceWork, grad bool) (float64, bool) {
	ns := d.ns
	m := 2*ns + 2
	cf := d.contact[f]
	L, R := &cf.left, &cf.right
	kp, rc := cf.kp[s], cf.rc[s]
	A := d.Grid.Areas[f]
	rf := d.Grid.Faces[f]
	iL2, iL1, iR1, iR2 := 0, 1+s, 1+ns+s, 2*ns+1
	cL2, cL1, cR1, cR2 := c[(f-2)*ns+s], c[(f-1)*ns+s], c[f*ns+s], c[(f+1)*ns+s]
	P := -kp*(L.a2*cL2+L.a1*cL1)/L.sigma + (R.a1*cR1+R.a2*cR2)/R.sigma
	lyL, lyR := &d.layers[d.Grid.Layer[f-1]], &d.layers[d.Grid.Layer[f]]
	dfL, dfR := lyL.df[s], lyR.df[s]
	cellL, cellR := c[(f-1)*ns:f*ns:f*ns], c[f*ns:(f+1)*ns:(f+1)*ns]
	if grad {
		for _, v := range [][]float64{w.dP, w.dL1, w.dR1, w.dF1, w.dL, w.dR, w.dG} {
			clear(v)
		}
		w.dP[iL2] = -kp * L.a2 / L.sigma
		w.dP[iL1] = -kp * L.a1 / L.sigma
		w.dP[iR1] = R.a1 / R.sigma
		w.dP[iR2] = R.a2 / R.sigma
	}
	// Step 1: nearest-cell diffusivities and the flux they give.
	var g1 []float64
	if grad {
		g1 = w.g1
	}
	DL1, DR1 := lyL.d[s], lyR.d[s]
	if dfL != nil {
		var ok bool
		if DL1, ok = d.evalD(dfL, rf, cellL, g1, f-1, s); !ok {
			return nan, false
		}
		if grad {
			copy(w.dL1[1:1+ns], g1)
		}
	}
	if dfR != nil {
		var ok bool
		if DR1, ok = d.evalD(dfR, rf, cellR, g1, f, s); !ok {
			return nan, false
		}
		if grad {
			copy(w.dR1[1+ns:1+2*ns], g1)
		}
	}
	den1 := 1/(DR1*R.sigma) + kp/(DL1*L.sigma) + rc
	F1 := P / den1
	if grad {
		pL := kp / (DL1 * DL1 * L.sigma) // −∂den/∂D_L
		pR := 1 / (DR1 * DR1 * R.sigma)  // −∂den/∂D_R
		for i := range m {
			w.dF1[i] = w.dP[i]/den1 + P/(den1*den1)*(pL*w.dL1[i]+pR*w.dR1[i])
		}
	}
	// Step 2: each variable side at its face value.
	DL, DR := DL1, DR1
	if dfL != nil {
		aL := (-F1/DL1 - L.a1*cL1 - L.a2*cL2) / L.sigma
		copy(w.ch, cellL)
		w.ch[s] = aL
		var g2 []float64
		if grad {
			g2 = w.g2
		}
		var ok bool
		if DL, ok = d.evalD(dfL, rf, w.ch, g2, f-1, s); !ok {
			return nan, false
		}
		if grad {
			for i := range m {
				da := (-w.dF1[i]/DL1 + F1/(DL1*DL1)*w.dL1[i]) / L.sigma
				w.dL[i] = g2[s] * da
			}
			w.dL[iL1] -= g2[s] * L.a1 / L.sigma
			w.dL[iL2] -= g2[s] * L.a2 / L.sigma
			for j := range ns {
				if j != s {
					w.dL[1+j] += g2[j]
				}
			}
		}
	}
	if dfR != nil {
		bR := (F1/DR1 - R.a1*cR1 - R.a2*cR2) / R.sigma
		copy(w.ch, cellR)
		w.ch[s] = bR
		var g2 []float64
		if grad {
			g2 = w.g2
		}
		var ok bool
		if DR, ok = d.evalD(dfR, rf, w.ch, g2, f, s); !ok {
			return nan, false
		}
		if grad {
			for i := range m {
				db := (w.dF1[i]/DR1 - F1/(DR1*DR1)*w.dR1[i]) / R.sigma
				w.dR[i] = g2[s] * db
			}
			w.dR[iR1] -= g2[s] * R.a1 / R.sigma
			w.dR[iR2] -= g2[s] * R.a2 / R.sigma
			for j := range ns {
				if j != s {
					w.dR[1+ns+j] += g2[j]
				}
			}
		}
	}
	den := 1/(DR*R.sigma) + kp/(DL*L.sigma) + rc
	G := A * P / den
	if grad {
		pL := kp / (DL * DL * L.sigma)
		pR := 1 / (DR * DR * R.sigma)
		for i := range m {
			w.dG[i] = A*w.dP[i]/den + A*P/(den*den)*(pL*w.dL[i]+pR*w.dR[i])
		}
	}
	return G, true
}

// varFlux returns the amount crossing face f (in +r, per unit time) of
// species s when the face has a variable diffusivity.
func (e *evaluator) varFlux(f, s int, c []float64) float64 {
	d := e.d
	if d.fvar[f*d.ns+s] == faceVar {
		D, ok := e.faceD(f, s, c, nil)
		if !ok {
			return nan
		}
		return D * d.varP(f, s, c)
	}
	G, ok := e.contactFlux(f, s, c, false)
	if !ok {
		return nan
	}
	return G
}

// varJacobian adds to J the derivatives, with respect to the
// concentrations, of every flux with a variable diffusivity (each row
// divided by its W, like the static part).
func (e *evaluator) varJacobian(t float64, c []float64, J *solvers.Band) {
	d := e.d
	ns, nc := d.ns, d.nc
	// add puts ∂G/∂c_col = v into the rows of the two cells of face f.
	add := func(f, s, col int, v float64) {
		if v == 0 {
			return
		}
		L, R := (f-1)*ns+s, f*ns+s
		J.Add(L, col, -v/d.rowW[L])
		J.Add(R, col, v/d.rowW[R])
	}
	dD := e.work.g2
	for f := 1; f < nc; f++ {
		for s := 0; s < ns; s++ {
			k := f*ns + s
			switch d.fvar[k] {
			case faceVar:
				D, _ := e.faceD(f, s, c, dD)
				P := d.varP(f, s, c)
				w := d.fwg[4*k : 4*k+4 : 4*k+4]
				for j := range 4 {
					if cc := f - 2 + j; cc >= 0 && cc < nc {
						add(f, s, cc*ns+s, D*w[j])
					}
				}
				th := d.theta[f]
				for j := range ns {
					add(f, s, (f-1)*ns+j, P*th*dD[j])
					add(f, s, f*ns+j, P*(1-th)*dD[j])
				}
			case faceContact:
				e.contactFlux(f, s, c, true)
				g := e.work.dG
				add(f, s, (f-2)*ns+s, g[0])
				for j := range ns {
					add(f, s, (f-1)*ns+j, g[1+j])
					add(f, s, f*ns+j, g[1+ns+j])
				}
				add(f, s, (f+1)*ns+s, g[2*ns+1])
			}
		}
	}
	for s := 0; s < ns; s++ {
		for side, b := range []*bnd{&d.inner[s], &d.outer[s]} {
			if !b.variable() {
				continue
			}
			// The cell gains A·J; a bath loses it.
			e.boundaryDerivatives(t, b, c, func(col int, v float64) {
				J.Add(b.k1, col, v/d.rowW[b.k1])
				if side == 1 && b.kb >= 0 {
					J.Add(b.kb, col, -v/d.rowW[b.kb])
				}
			})
		}
	}
}

// boundaryDerivatives calls put(col, ∂(A·J)/∂c_col) for the inward flux
// A·J through a Fixed, Film or Bath face, the face diffusivity being
// variable or not.
func (e *evaluator) boundaryDerivatives(t float64, b *bnd, c []float64, put func(col int, v float64)) {
	if b.kind != Fixed && b.kind != Film && b.kind != Bath {
		return
	}
	d := e.d
	D := b.d
	if b.variable() {
		D, _ = d.bndD(b, t, c, e.work, true)
	}
	ef := b.eff(D)
	A := b.area
	put(b.k1, A*ef*b.a1)
	put(b.k2, A*ef*b.a2)
	if b.kind == Bath {
		put(b.kb, A*ef*b.sigma*b.kp)
	}
	if b.variable() {
		P := b.drive(t, c)
		v := A * P * b.effSlope(D)
		gb := e.work.gb
		for j := range d.ns {
			if gb[j] != 0 {
				put(b.base+j, v*gb[j])
			}
		}
		if gb[d.ns] != 0 {
			put(b.k2, v*gb[d.ns])
		}
		if b.kb >= 0 && gb[d.ns+1] != 0 {
			put(b.kb, v*gb[d.ns+1])
		}
	}
}

// scaleColumns multiplies the columns of the cells whose unknown is the
// amount held by dc/dq = 1/q'(c) (the chain rule).
func (e *evaluator) scaleColumns(J *solvers.Band) {
	d := e.d
	w := J.KL + J.KU + 1
	n := J.N
	for k := 0; k < d.nc*d.ns; k++ {
		if d.store[k] == nil {
			continue
		}
		sc := e.dcdq[k]
		for i := max(0, k-J.KU); i <= min(n-1, k+J.KL); i++ {
			J.Data[i*w+k-i+J.KL] *= sc
		}
	}
}

// quadJac fills G (row-major NQuad×N, arriving zeroed) with the exact
// derivatives of the quadratures with respect to the unknowns, evaluated
// at the same point as Jac: Σ_k W_k ∂f_k/∂y = Σ ∂g/∂y, so the integrator
// can keep the ledger closed for a nonlinear system.
func (e *evaluator) quadJac(t float64, y []float64, G []float64) {
	d := e.d
	ns, nc, n := d.ns, d.nc, d.n
	c := e.conc(y)
	for s := 0; s < ns; s++ {
		in := G[(QuadPerSpecies*s+QuadInner)*n : (QuadPerSpecies*s+QuadInner+1)*n]
		out := G[(QuadPerSpecies*s+QuadOuter)*n : (QuadPerSpecies*s+QuadOuter+1)*n]
		prod := G[(QuadPerSpecies*s+QuadProduced)*n : (QuadPerSpecies*s+QuadProduced+1)*n]
		e.boundaryDerivatives(t, &d.inner[s], c, func(col int, v float64) { in[col] += v })
		e.boundaryDerivatives(t, &d.outer[s], c, func(col int, v float64) { out[col] += v })
		for i := 0; i < nc; i++ {
			if m := d.rates[d.Grid.Layer[i]]; m != nil {
				for j := 0; j < ns; j++ {
					prod[i*ns+j] += d.vol[i] * m[s*ns+j]
				}
			}
		}
	}
	if d.kin != nil {
		for i := 0; i < nc; i++ {
			base := i * ns
			clear(e.rate)
			clear(e.dRate)
			d.kin(t, d.Grid.Centres[i], d.Grid.Layer[i], c[base:base+ns:base+ns], e.rate, e.dRate)
			for s := 0; s < ns; s++ {
				prod := G[(QuadPerSpecies*s+QuadProduced)*n : (QuadPerSpecies*s+QuadProduced+1)*n]
				for j := 0; j < ns; j++ {
					prod[base+j] += d.vol[i] * e.dRate[s*ns+j]
				}
			}
		}
	}
	if d.hasStore && !e.cspace {
		for k := 0; k < nc*ns; k++ {
			if d.store[k] == nil {
				continue
			}
			for r := 0; r < QuadPerSpecies*ns; r++ {
				G[r*n+k] *= e.dcdq[k]
			}
		}
	}
}
