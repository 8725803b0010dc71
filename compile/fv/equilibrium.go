package fv

import (
	"fmt"
	"math"

	"github.com/massline/massline/solvers"
)

// EquilibriumContent returns the amount of species s the body holds (in
// the units of Content) when it is in equilibrium with the value cs just
// inside its outer face and nothing reacts: the outermost layer is at cs
// everywhere and each layer below holds the value in equilibrium with the
// one above it (the value above divided by the contact Partition). With a
// nonlinear store each cell holds q(c); otherwise Capacity·c.
func (d *Discretization) EquilibriumContent(s int, cs float64) (float64, error) {
	if s < 0 || s >= d.ns {
		return math.NaN(), fmt.Errorf("fv: species %d out of range [0, %d)", s, d.ns)
	}
	m, _, err := d.eqContent(s, cs)
	return m, err
}

// eqContent returns the equilibrium content for the surface value cs and
// its derivative with respect to cs.
func (d *Discretization) eqContent(s int, cs float64) (m, dm float64, err error) {
	nl := len(d.layers)
	// The value in each layer is dv[l]·cs: the layer below holds the
	// value above divided by the partition of their contact.
	val, dv := make([]float64, nl), make([]float64, nl)
	f := 1.0
	for l := nl - 1; l >= 0; l-- {
		dv[l] = f
		val[l] = cs * f
		f /= d.layers[l].partition[s]
	}
	vol := d.layerVolumes()
	for l := range nl {
		ld := &d.layers[l]
		if st := ld.store[s]; st != nil {
			q, slope := st(val[l])
			if !finite(q) || !finite(slope) || !(slope > 0) {
				return math.NaN(), math.NaN(), &NonlinearError{Layer: l, Species: s, R: math.NaN(),
					Msg: fmt.Sprintf("the store at c = %g is %g with slope %g; a store must be finite and increase with the concentration", val[l], q, slope)}
			}
			m += vol[l] * q
			dm += vol[l] * slope * dv[l]
			continue
		}
		m += vol[l] * ld.cap[s] * val[l]
		dm += vol[l] * ld.cap[s] * dv[l]
	}
	return m, dm, nil
}

// EquilibriumWithBath returns the amount of species s the body will hold
// when it has come to equilibrium with its bath, if nothing reacts: the
// total amount in the body and the bath at state y is kept, and the body
// holds EquilibriumContent(s, K·c_b), K being the partition coefficient of
// the outer face and c_b the final bath value, which solves
//
//	EquilibriumContent(s, K·c_b) + V_b·c_b = Content(y, s) + V_b·y_bath.
//
// The left side increases with c_b (stores increase), so the root is
// unique; it is found by Newton's method safeguarded by bisection. It
// returns an error when species s has no bath or the store cannot be
// evaluated.
func (d *Discretization) EquilibriumWithBath(y []float64, s int) (content float64, err error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	kb := d.bathIdx[s]
	if kb < 0 {
		return math.NaN(), fmt.Errorf("fv: species %d has no bath", s)
	}
	b := &d.outer[s]
	held, _ := d.Content(y, s)
	total := held + b.vb*y[kb]
	F := func(cb float64) (float64, float64, error) {
		m, dm, err := d.eqContent(s, b.kp*cb)
		return m + b.vb*cb - total, b.kp*dm + b.vb, err
	}
	// Bracket the root. With a store that holds nothing at zero and a
	// positive total, [0, total/V_b] brackets it; otherwise search
	// outwards from the linear estimate (representative slopes), doubling
	// the step.
	lo, hi := math.NaN(), math.NaN()
	var flo, fhi float64
	if total > 0 {
		f0, _, e0 := F(0)
		f1, _, e1 := F(total / b.vb)
		if e0 == nil && e1 == nil && f0 <= 0 && f1 >= 0 {
			lo, hi, flo, fhi = 0, total/b.vb, f0, f1
		}
	}
	if math.IsNaN(lo) {
		x := total / (d.linearEq(s, b.kp) + b.vb)
		fx, _, err := F(x)
		if err != nil {
			return math.NaN(), err
		}
		step := math.Max(math.Abs(x), 1e-300)
		for range 2100 {
			if fx == 0 {
				m, _, err := d.eqContent(s, b.kp*x)
				return m, err
			}
			nx := x - step
			if fx < 0 {
				nx = x + step
			}
			fn, _, err := F(nx)
			if err != nil || !finite(fn) {
				return math.NaN(), fmt.Errorf("fv: species %d: no equilibrium with the bath found (the store cannot be evaluated at c_bath = %g)", s, nx)
			}
			if (fn > 0) != (fx > 0) || fn == 0 {
				lo, hi, flo, fhi = math.Min(x, nx), math.Max(x, nx), math.Min(fx, fn), math.Max(fx, fn)
				break
			}
			x, fx = nx, fn
			step *= 2
		}
		if math.IsNaN(lo) {
			return math.NaN(), fmt.Errorf("fv: species %d: no equilibrium with the bath found", s)
		}
	}
	// Newton's method kept inside the bracket by bisection.
	x := lo - flo*(hi-lo)/(fhi-flo)
	if !(x >= lo && x <= hi) {
		x = 0.5 * (lo + hi)
	}
	for range 200 {
		f, df, err := F(x)
		if err != nil || !finite(f) {
			return math.NaN(), fmt.Errorf("fv: species %d: the equilibrium with the bath cannot be evaluated at c_bath = %g", s, x)
		}
		if f == 0 {
			break
		}
		if f > 0 {
			hi = x
		} else {
			lo = x
		}
		nx := x - f/df
		if !(df > 0) || !(nx > lo && nx < hi) {
			nx = 0.5 * (lo + hi)
		}
		if math.Abs(nx-x) <= 1e-15*math.Abs(x) || nx == x || hi-lo <= 1e-15*math.Abs(hi) {
			x = nx
			break
		}
		x = nx
	}
	m, _, err := d.eqContent(s, b.kp*x)
	return m, err
}

// linearEq returns the equilibrium content per unit bath value with the
// representative slopes (Capacity) in place of the stores: a starting
// point for EquilibriumWithBath.
func (d *Discretization) linearEq(s int, kp float64) float64 {
	vol := d.layerVolumes()
	f := kp
	sum := 0.0
	for l := len(vol) - 1; l >= 0; l-- {
		sum += vol[l] * d.layers[l].cap[s] * f
		f /= d.layers[l].partition[s]
	}
	return sum
}

// layerVolumes returns the volume of each layer (sum of its cells).
func (d *Discretization) layerVolumes() []float64 {
	vol := make([]float64, len(d.layers))
	for i := 0; i < d.nc; i++ {
		vol[d.Grid.Layer[i]] += d.vol[i]
	}
	return vol
}

// SteadyState solves for the steady state at time t (Func = 0) by
// solvers.Steady, starting from the state y0, and returns it as a state of
// this discretisation. With a nonlinear store it solves for the
// concentrations, where the store plays no part (at steady state nothing
// accumulates): Newton's method on the amounts held would see the
// curvature of the inverse store on top of the problem's own and, from a
// distant start, overshoot (a step δc taken as q'(c)·δc in q can land far
// beyond c + δc where the store flattens). The concentrations found are
// then converted back to amounts, q(c). s may be nil (defaults).
func (d *Discretization) SteadyState(t float64, y0 []float64, s *solvers.SteadySettings) ([]float64, error) {
	if len(y0) != d.n {
		return nil, fmt.Errorf("fv: state has length %d, want %d", len(y0), d.n)
	}
	if !d.hasStore {
		return solvers.Steady(d.Problem(), y0, t, s)
	}
	c0, err := d.concOf(y0, nil)
	if err != nil {
		return nil, err
	}
	c, err := solvers.Steady(d.problem(true), c0, t, s)
	if err != nil {
		return nil, err
	}
	for k := 0; k < d.nc*d.ns; k++ {
		if st := d.store[k]; st != nil {
			q, dq := st(c[k])
			if !finite(q) || !(dq > 0) {
				return nil, &NonlinearError{Layer: d.Grid.Layer[k/d.ns], Species: k % d.ns, R: d.Grid.Centres[k/d.ns],
					Msg: fmt.Sprintf("at the steady state the store at c = %g is %g with slope %g", c[k], q, dq)}
			}
			c[k] = q
		}
	}
	return c, nil
}
