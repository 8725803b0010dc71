package fv2

import (
	"github.com/massline/massline/solvers"
)

// Quadrature layout: for species s the quadratures are
//
//	q[QuadPerSpecies*s + QuadSide]     amount that entered through the side r = R
//	q[QuadPerSpecies*s + QuadTop]      amount that entered through the top z = L
//	q[QuadPerSpecies*s + QuadBottom]   amount that entered through the bottom z = 0
//	q[QuadPerSpecies*s + QuadProduced] amount produced by reactions and sources
//	                                   (negative when consumed)
const (
	QuadSide = iota
	QuadTop
	QuadBottom
	QuadProduced
	QuadPerSpecies
)

// evaluator holds the scratch space of one Problem.
type evaluator struct {
	d           *Discretization
	rate, dRate []float64
}

// N returns the number of unknowns, NR·NZ·NSpecies.
func (d *Discretization) N() int { return d.n }

// Cells returns the number of cells, NR·NZ.
func (d *Discretization) Cells() int { return d.nc }

// NSpecies returns the number of species.
func (d *Discretization) NSpecies() int { return d.ns }

// Bandwidths returns the numbers of sub- and super-diagonals of the
// Jacobian: 2·NR·NSpecies each (a flux through a face between rows
// involves two rows on each side; 1·NR·NSpecies when NZ = 2).
func (d *Discretization) Bandwidths() (lower, upper int) { return d.bw, d.bw }

// BathIndex returns −1: a short cylinder has no bath.
func (d *Discretization) BathIndex(s int) int { return -1 }

// EvalError returns nil: the evaluation of a short cylinder cannot fail
// in a way the integrator does not see (there is no store to invert).
func (d *Discretization) EvalError() error { return nil }

// Problem returns the initial-value problem for the solvers: Func, the
// exact banded Jac, and 4·NSpecies quadratures (see QuadSide). Each call
// returns an independent Problem with its own scratch space; one Problem's
// functions must not be called concurrently. Func, Jac, Quad and QuadJac
// do not allocate. With Spec.Kinetics the Problem also has QuadJac, the
// exact derivatives of the quadratures, with which the integrator keeps
// the ledger closed to round-off (see solvers.Problem).
func (d *Discretization) Problem() *solvers.Problem {
	e := &evaluator{d: d, rate: make([]float64, d.ns)}
	if d.kin != nil {
		e.dRate = make([]float64, d.ns*d.ns)
	}
	p := &solvers.Problem{
		N:     d.n,
		Lower: d.bw,
		Upper: d.bw,
		Func:  e.fn,
		Jac:   e.jac,
		NQuad: QuadPerSpecies * d.ns,
		Quad:  e.quad,
	}
	if d.kin != nil {
		p.QuadJac = e.quadJac
	}
	return p
}

// volumeRates puts into e.rate the production rates per unit volume of
// each species in cell c (constant source, linear kinetics, extra source,
// nonlinear kinetics).
func (e *evaluator) volumeRates(t float64, y []float64, c int) {
	d := e.d
	ns := d.ns
	base := c * ns
	r := e.rate
	copy(r, d.src)
	if m := d.rate; m != nil {
		for s := 0; s < ns; s++ {
			acc := 0.0
			row := m[s*ns : s*ns+ns]
			for l, v := range row {
				acc += v * y[base+l]
			}
			r[s] += acc
		}
	}
	i, j := c%d.nr, c/d.nr
	if d.extra != nil {
		for s := 0; s < ns; s++ {
			acc := 0.0
			for p := 0; p < 3; p++ {
				for q := 0; q < 3; q++ {
					acc += d.gwz[3*j+p] * d.gwr[3*i+q] * d.extra(s, t, d.gr[3*i+q], d.gz[3*j+p])
				}
			}
			r[s] += acc
		}
	}
	if d.kin != nil {
		d.kin(t, d.Grid.RCentres[i], d.Grid.ZCentres[j], y[base:base+ns:base+ns], r, nil)
	}
}

// fn evaluates dy = f(t, y): for each cell the net inflow through its
// faces per unit volume plus its production, divided by the capacity.
func (e *evaluator) fn(t float64, y, dy []float64) {
	d := e.d
	ns, nr, nz := d.ns, d.nr, d.nz
	row := nr * ns
	clear(dy)
	// Faces between columns, row by row: G is the amount per unit height
	// and time crossing the face outward.
	for j := 0; j < nz; j++ {
		yr := y[j*row : (j+1)*row : (j+1)*row]
		dr := dy[j*row : (j+1)*row : (j+1)*row]
		for f := 1; f < nr; f++ {
			ix := &d.rIdx[f]
			a, b := d.invVr[f-1], d.invVr[f]
			o0, o1, o2, o3 := ix[0]*ns, ix[1]*ns, ix[2]*ns, ix[3]*ns
			for s := 0; s < ns; s++ {
				w := d.rW[4*(f*ns+s) : 4*(f*ns+s)+4 : 4*(f*ns+s)+4]
				c1 := yr[o1+s]
				g := w[0]*(yr[o0+s]-c1) + w[2]*(yr[o2+s]-c1) + w[3]*(yr[o3+s]-c1)
				dr[(f-1)*ns+s] -= g * a
				dr[f*ns+s] += g * b
			}
		}
	}
	// Faces between rows, column by column: g is the flux density upward.
	for f := 1; f < nz; f++ {
		ix := &d.zIdx[f]
		y0 := y[ix[0]*row : ix[0]*row+row : ix[0]*row+row]
		y1 := y[ix[1]*row : ix[1]*row+row : ix[1]*row+row]
		y2 := y[ix[2]*row : ix[2]*row+row : ix[2]*row+row]
		y3 := y[ix[3]*row : ix[3]*row+row : ix[3]*row+row]
		dl := dy[(f-1)*row : f*row : f*row]
		du := dy[f*row : (f+1)*row : (f+1)*row]
		a, b := d.invDz[f-1], d.invDz[f]
		wf := d.zW[4*f*ns : 4*(f+1)*ns : 4*(f+1)*ns]
		for i := 0; i < nr; i++ {
			for s := 0; s < ns; s++ {
				k := i*ns + s
				w := wf[4*s : 4*s+4 : 4*s+4]
				c1 := y1[k]
				g := w[0]*(y0[k]-c1) + w[2]*(y2[k]-c1) + w[3]*(y3[k]-c1)
				dl[k] -= g * a
				du[k] += g * b
			}
		}
	}
	// Exterior faces.
	for s := 0; s < ns; s++ {
		j0, k1, k2 := d.side[s].drive(t)
		for j := 0; j < nz; j++ {
			c1 := j*row + (nr-1)*ns + s
			dy[c1] += d.sideF * (j0 + k1*y[c1] + k2*y[c1-ns])
		}
		j0, k1, k2 = d.top[s].drive(t)
		ft := d.invDz[nz-1]
		for i := 0; i < nr; i++ {
			c1 := (nz-1)*row + i*ns + s
			dy[c1] += ft * (j0 + k1*y[c1] + k2*y[c1-row])
		}
		j0, k1, k2 = d.bottom[s].drive(t)
		fb := d.invDz[0]
		for i := 0; i < nr; i++ {
			c1 := i*ns + s
			dy[c1] += fb * (j0 + k1*y[c1] + k2*y[c1+row])
		}
	}
	// Production, and the capacity.
	for c := 0; c < d.nc; c++ {
		e.volumeRates(t, y, c)
		for s := 0; s < ns; s++ {
			k := c*ns + s
			dy[k] = (dy[k] + e.rate[s]) * d.invCap[s]
		}
	}
}

// quad evaluates the ledger rates: inflow through each face family and
// production.
func (e *evaluator) quad(t float64, y, dq []float64) {
	d := e.d
	ns, nr, nz := d.ns, d.nr, d.nz
	row := nr * ns
	for s := 0; s < ns; s++ {
		q := dq[QuadPerSpecies*s : QuadPerSpecies*(s+1)]
		j0, k1, k2 := d.side[s].drive(t)
		acc := 0.0
		for j := 0; j < nz; j++ {
			c1 := j*row + (nr-1)*ns + s
			acc += d.sideA[j] * (j0 + k1*y[c1] + k2*y[c1-ns])
		}
		q[QuadSide] = acc
		j0, k1, k2 = d.top[s].drive(t)
		acc = 0
		for i := 0; i < nr; i++ {
			c1 := (nz-1)*row + i*ns + s
			acc += d.Grid.Annuli[i] * (j0 + k1*y[c1] + k2*y[c1-row])
		}
		q[QuadTop] = acc
		j0, k1, k2 = d.bottom[s].drive(t)
		acc = 0
		for i := 0; i < nr; i++ {
			c1 := i*ns + s
			acc += d.Grid.Annuli[i] * (j0 + k1*y[c1] + k2*y[c1+row])
		}
		q[QuadBottom] = acc
		q[QuadProduced] = 0
	}
	for c := 0; c < d.nc; c++ {
		e.volumeRates(t, y, c)
		v := d.Grid.Volumes[c]
		for s := 0; s < ns; s++ {
			dq[QuadPerSpecies*s+QuadProduced] += v * e.rate[s]
		}
	}
}

// jac fills J with ∂f/∂y: the precomputed linear part plus the
// derivatives of Spec.Kinetics. J may be wider than the declared band.
func (e *evaluator) jac(t float64, y []float64, J *solvers.Band) {
	d := e.d
	if J.N == d.n && J.KL == d.bw && J.KU == d.bw && len(J.Data) == len(d.jac) {
		copy(J.Data, d.jac)
	} else {
		w := 2*d.bw + 1
		for i := 0; i < d.n; i++ {
			for off := -d.bw; off <= d.bw; off++ {
				j := i + off
				if j < 0 || j >= d.n || off < -J.KL || off > J.KU {
					continue
				}
				if v := d.jac[i*w+off+d.bw]; v != 0 {
					J.Add(i, j, v)
				}
			}
		}
	}
	if d.kin == nil {
		return
	}
	ns := d.ns
	for c := 0; c < d.nc; c++ {
		base := c * ns
		clear(e.rate)
		clear(e.dRate)
		d.kin(t, d.Grid.RCentres[c%d.nr], d.Grid.ZCentres[c/d.nr], y[base:base+ns:base+ns], e.rate, e.dRate)
		for s := 0; s < ns; s++ {
			for l := 0; l < ns; l++ {
				if v := e.dRate[s*ns+l]; v != 0 {
					J.Add(base+s, base+l, v*d.invCap[s])
				}
			}
		}
	}
}

// quadJac fills G (row-major NQuad×N, zeroed) with the derivatives of the
// quadratures.
func (e *evaluator) quadJac(t float64, y []float64, G []float64) {
	d := e.d
	ns, nr, nz, n := d.ns, d.nr, d.nz, d.n
	row := nr * ns
	for s := 0; s < ns; s++ {
		gs := G[(QuadPerSpecies*s+QuadSide)*n : (QuadPerSpecies*s+QuadSide+1)*n]
		if k1, k2 := d.side[s].slopes(); k1 != 0 || k2 != 0 {
			for j := 0; j < nz; j++ {
				c1 := j*row + (nr-1)*ns + s
				gs[c1] += d.sideA[j] * k1
				gs[c1-ns] += d.sideA[j] * k2
			}
		}
		gt := G[(QuadPerSpecies*s+QuadTop)*n : (QuadPerSpecies*s+QuadTop+1)*n]
		if k1, k2 := d.top[s].slopes(); k1 != 0 || k2 != 0 {
			for i := 0; i < nr; i++ {
				c1 := (nz-1)*row + i*ns + s
				gt[c1] += d.Grid.Annuli[i] * k1
				gt[c1-row] += d.Grid.Annuli[i] * k2
			}
		}
		gb := G[(QuadPerSpecies*s+QuadBottom)*n : (QuadPerSpecies*s+QuadBottom+1)*n]
		if k1, k2 := d.bottom[s].slopes(); k1 != 0 || k2 != 0 {
			for i := 0; i < nr; i++ {
				c1 := i*ns + s
				gb[c1] += d.Grid.Annuli[i] * k1
				gb[c1+row] += d.Grid.Annuli[i] * k2
			}
		}
	}
	for c := 0; c < d.nc; c++ {
		base := c * ns
		v := d.Grid.Volumes[c]
		clear(e.rate)
		clear(e.dRate)
		d.kin(t, d.Grid.RCentres[c%nr], d.Grid.ZCentres[c/nr], y[base:base+ns:base+ns], e.rate, e.dRate)
		for s := 0; s < ns; s++ {
			gp := G[(QuadPerSpecies*s+QuadProduced)*n:]
			for l := 0; l < ns; l++ {
				dr := e.dRate[s*ns+l]
				if d.rate != nil {
					dr += d.rate[s*ns+l]
				}
				gp[base+l] += v * dr
			}
		}
	}
}
