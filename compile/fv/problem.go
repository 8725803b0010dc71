package fv

import (
	"github.com/massline/massline/solvers"
)

// Quadrature layout: for species s the quadratures are
//
//	q[QuadPerSpecies*s + QuadInner]    amount that entered through the inner face
//	q[QuadPerSpecies*s + QuadOuter]    amount that entered through the outer face
//	q[QuadPerSpecies*s + QuadProduced] amount produced by reactions and sources
//	                                   (negative when consumed)
const (
	QuadInner = iota
	QuadOuter
	QuadProduced
	QuadPerSpecies
)

// evaluator holds the scratch space of one Problem.
type evaluator struct {
	d           *Discretization
	jIn, jOut   []float64
	rate, dRate []float64
	// With a nonlinear store: the concentrations of the last evaluation
	// (the warm start of the next inversion) and dc/dq per cell unknown.
	c, dcdq, u []float64
	warm       bool
	// cspace makes the concentrations the unknowns of every cell (the
	// store left out): the steady-state problem of SteadyState.
	cspace bool
	// With a variable diffusivity: scratch for the face values.
	work *faceWork
}

// N returns the number of unknowns.
func (d *Discretization) N() int { return d.n }

// Cells returns the number of cells.
func (d *Discretization) Cells() int { return d.nc }

// NSpecies returns the number of species.
func (d *Discretization) NSpecies() int { return d.ns }

// Bandwidths returns the numbers of sub- and super-diagonals of the
// Jacobian: 2·NSpecies each (a face flux involves two cells on each side).
func (d *Discretization) Bandwidths() (lower, upper int) { return d.lower, d.upper }

// BathIndex returns the index of the bath unknown of species s in y, or −1
// when species s has no bath (or s is out of range).
func (d *Discretization) BathIndex(s int) int {
	if s < 0 || s >= d.ns {
		return -1
	}
	return d.bathIdx[s]
}

// Problem returns the initial-value problem for the solvers: Func, the
// exact banded Jac, and 3·NSpecies quadratures (see QuadInner). Each call
// returns an independent Problem with its own scratch space; one Problem's
// functions must not be called concurrently. Func, Jac, Quad and QuadJac
// do not allocate.
//
// When the system is nonlinear (a nonlinear store, a variable diffusivity
// or Spec.Kinetics) the Problem also has QuadJac, the exact derivatives of
// the quadratures, with which the integrator keeps the ledger closed to
// round-off (see solvers.Problem).
func (d *Discretization) Problem() *solvers.Problem {
	return d.problem(false)
}

func (d *Discretization) problem(cspace bool) *solvers.Problem {
	e := &evaluator{
		cspace: cspace,
		d:      d,
		jIn:    make([]float64, d.ns),
		jOut:   make([]float64, d.ns),
		rate:   make([]float64, d.ns),
	}
	if d.kin != nil {
		e.dRate = make([]float64, d.ns*d.ns)
	}
	if d.hasStore {
		e.c = make([]float64, d.n)
		e.dcdq = make([]float64, d.nc*d.ns)
		e.u = make([]float64, d.nc*d.ns)
	}
	if d.varD {
		e.work = newFaceWork(d.ns)
	}
	p := &solvers.Problem{
		N:     d.n,
		Lower: d.lower,
		Upper: d.upper,
		Func:  e.fn,
		Jac:   e.jac,
		NQuad: QuadPerSpecies * d.ns,
		Quad:  e.quad,
	}
	if d.nonlinear {
		p.QuadJac = e.quadJac
	}
	return p
}

// boundaryFluxes fills the inward flux densities at both faces; c holds
// concentrations.
func (e *evaluator) boundaryFluxes(t float64, c []float64) {
	d := e.d
	for s := 0; s < d.ns; s++ {
		e.jIn[s] = e.faceFlux(&d.inner[s], t, c)
		e.jOut[s] = e.faceFlux(&d.outer[s], t, c)
	}
}

// faceFlux returns the inward flux density through a boundary face.
func (e *evaluator) faceFlux(b *bnd, t float64, c []float64) float64 {
	if !b.variable() {
		return b.flux(t, c)
	}
	D, ok := e.d.bndD(b, t, c, e.work, false)
	if !ok {
		return nan
	}
	return b.fluxD(t, c, D)
}

// volumeRates adds, for cell i, the production rates per unit volume of
// each species (linear kinetics, sources, extra source, nonlinear kinetics)
// into e.rate, which it zeroes first; c holds concentrations.
func (e *evaluator) volumeRates(t float64, c []float64, i int) {
	d := e.d
	ns := d.ns
	base := i * ns
	r := e.rate
	for s := 0; s < ns; s++ {
		r[s] = d.src[base+s]
	}
	if m := d.rates[d.Grid.Layer[i]]; m != nil {
		for s := 0; s < ns; s++ {
			acc := 0.0
			row := m[s*ns : s*ns+ns]
			for j, v := range row {
				acc += v * c[base+j]
			}
			r[s] += acc
		}
	}
	if d.extra != nil {
		for s := 0; s < ns; s++ {
			acc := 0.0
			for q := 0; q < 3; q++ {
				acc += d.gw[3*i+q] * d.extra(s, t, d.gr[3*i+q])
			}
			r[s] += acc
		}
	}
	if d.kin != nil {
		d.kin(t, d.Grid.Centres[i], d.Grid.Layer[i], c[base:base+ns:base+ns], r, nil)
	}
}

// fn evaluates dy = f(t, y).
func (e *evaluator) fn(t float64, y, dy []float64) {
	d := e.d
	ns, nc := d.ns, d.nc
	c := e.conc(y)
	e.boundaryFluxes(t, c)
	a0, an := d.Grid.Areas[0], d.Grid.Areas[nc]
	// Fluxes through faces: each cell receives the flux through its inner
	// face and loses that through its outer face.
	for s := 0; s < ns; s++ {
		dy[s] = a0 * e.jIn[s]
	}
	for f := 1; f < nc; f++ {
		edge := f < 2 || f+1 >= nc
		for s := 0; s < ns; s++ {
			k := f*ns + s
			var g float64
			if d.varD && d.fvar[k] != faceStatic {
				g = e.varFlux(f, s, c)
			} else if edge {
				w := d.fw[4*k : 4*k+4 : 4*k+4]
				for j := range 4 {
					if cc := f - 2 + j; cc >= 0 && cc < nc {
						g += w[j] * c[cc*ns+s]
					}
				}
			} else {
				w := d.fw[4*k : 4*k+4 : 4*k+4]
				b := k - 2*ns
				g = w[0]*c[b] + w[1]*c[b+ns] + w[2]*c[b+2*ns] + w[3]*c[b+3*ns]
			}
			dy[k-ns] -= g
			dy[k] = g
		}
	}
	last := (nc - 1) * ns
	for s := 0; s < ns; s++ {
		dy[last+s] += an * e.jOut[s]
	}
	for i := 0; i < nc; i++ {
		e.volumeRates(t, c, i)
		v := d.vol[i]
		for s := 0; s < ns; s++ {
			k := i*ns + s
			dy[k] = (dy[k] + v*e.rate[s]) / d.capV[k]
		}
	}
	for s := 0; s < ns; s++ {
		if k := d.bathIdx[s]; k >= 0 {
			dy[k] = -an * e.jOut[s] / d.outer[s].vb
		}
	}
}

// quad evaluates the ledger rates: inflow through each face and production.
func (e *evaluator) quad(t float64, y, dq []float64) {
	d := e.d
	ns, nc := d.ns, d.nc
	c := e.conc(y)
	e.boundaryFluxes(t, c)
	a0, an := d.Grid.Areas[0], d.Grid.Areas[nc]
	for s := 0; s < ns; s++ {
		dq[QuadPerSpecies*s+QuadInner] = a0 * e.jIn[s]
		dq[QuadPerSpecies*s+QuadOuter] = an * e.jOut[s]
		dq[QuadPerSpecies*s+QuadProduced] = 0
	}
	for i := 0; i < nc; i++ {
		e.volumeRates(t, c, i)
		v := d.vol[i]
		for s := 0; s < ns; s++ {
			dq[QuadPerSpecies*s+QuadProduced] += v * e.rate[s]
		}
	}
}

// jac fills J with ∂f/∂y: the precomputed linear part plus the derivatives
// of Spec.Kinetics and of the variable diffusivities, all with respect to
// the concentrations, then the chain rule dc/dq for the cells whose
// unknown is the amount held.
func (e *evaluator) jac(t float64, y []float64, J *solvers.Band) {
	d := e.d
	if J.N == d.n && J.KL == d.lower && J.KU == d.upper && len(J.Data) == len(d.jac) {
		copy(J.Data, d.jac)
	} else {
		w := d.lower + d.upper + 1
		for i := 0; i < d.n; i++ {
			for off := -d.lower; off <= d.upper; off++ {
				j := i + off
				if j < 0 || j >= d.n || off < -J.KL || off > J.KU {
					continue
				}
				if v := d.jac[i*w+off+d.lower]; v != 0 {
					J.Add(i, j, v)
				}
			}
		}
	}
	if !d.nonlinear {
		return
	}
	c := e.conc(y)
	if d.kin != nil {
		ns := d.ns
		for i := 0; i < d.nc; i++ {
			base := i * ns
			clear(e.rate)
			clear(e.dRate)
			d.kin(t, d.Grid.Centres[i], d.Grid.Layer[i], c[base:base+ns:base+ns], e.rate, e.dRate)
			for s := 0; s < ns; s++ {
				cp := 1 / d.cap[base+s]
				for j := 0; j < ns; j++ {
					if v := e.dRate[s*ns+j]; v != 0 {
						J.Add(base+s, base+j, v*cp)
					}
				}
			}
		}
	}
	if d.varD {
		e.varJacobian(t, c, J)
	}
	if d.hasStore && !e.cspace {
		e.scaleColumns(J)
	}
}
