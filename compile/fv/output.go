package fv

import (
	"fmt"
	"math"
)

// Y0 returns a new copy of the initial state: cell averages of Spec.Init
// (of the amount held, q(Init), where the store is nonlinear) and the bath
// starting values.
func (d *Discretization) Y0() []float64 {
	return append([]float64(nil), d.y0...)
}

func (d *Discretization) check(y []float64, s int) error {
	if len(y) != d.n {
		return fmt.Errorf("fv: state has length %d, want %d", len(y), d.n)
	}
	if s < 0 || s >= d.ns {
		return fmt.Errorf("fv: species %d out of range [0, %d)", s, d.ns)
	}
	return nil
}

// Content returns the amount of species s held in the body,
// Σ V_i·Capacity_i·c_i, or Σ V_i·q_i where the store is nonlinear (q_i
// being the unknown): per body for a sphere, per unit length for a
// cylinder, per unit face area for a slab (the half-slab from Inner to the
// outer face).
func (d *Discretization) Content(y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	sum := 0.0
	for i := 0; i < d.nc; i++ {
		k := i*d.ns + s
		sum += d.capV[k] * y[k]
	}
	return sum, nil
}

// CellValues returns the concentration of species s in every cell (the
// cell averages; where the store is nonlinear, the concentration that
// holds the cell's amount).
func (d *Discretization) CellValues(y []float64, s int) ([]float64, error) {
	if err := d.check(y, s); err != nil {
		return nil, err
	}
	c, err := d.concOf(y, nil)
	if err != nil {
		return nil, err
	}
	out := make([]float64, d.nc)
	for i := range out {
		out[i] = c[i*d.ns+s]
	}
	return out, nil
}

// Mean returns the volume average of the concentration of species s,
// Σ V_i c_i / Σ V_i (with a nonlinear store, of the concentration that
// diffuses, not of the amount held).
func (d *Discretization) Mean(y []float64, s int) (float64, error) {
	c, err := d.CellValues(y, s)
	if err != nil {
		return math.NaN(), err
	}
	sum, vol := 0.0, 0.0
	for i := 0; i < d.nc; i++ {
		sum += d.vol[i] * c[i]
		vol += d.vol[i]
	}
	return sum / vol, nil
}

// faceState returns the concentrations near boundary b and the face
// diffusivity.
func (d *Discretization) faceState(t float64, y []float64, b *bnd, inner bool) ([]float64, float64, error) {
	cells := []int{d.nc - 1, d.nc - 2}
	if inner {
		cells = []int{0, 1}
	}
	c, err := d.concOf(y, cells)
	if err != nil {
		return nil, math.NaN(), err
	}
	return c, d.boundaryD(b, t, c), nil
}

// Centre returns the value of species s at the inner end, r = Spec.Inner:
// the centre of a solid body, the inner face of a hollow one. It is
// reconstructed to second order from the two nearest cells and the inner
// condition at time t.
func (d *Discretization) Centre(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	c, D, err := d.faceState(t, y, &d.inner[s], true)
	if err != nil {
		return math.NaN(), err
	}
	return d.inner[s].surface(t, c, D), nil
}

// Surface returns the value of species s just inside the outer face at
// time t, reconstructed to second order consistently with the outer
// condition.
func (d *Discretization) Surface(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	c, D, err := d.faceState(t, y, &d.outer[s], false)
	if err != nil {
		return math.NaN(), err
	}
	return d.outer[s].surface(t, c, D), nil
}

// SurfaceFlux returns the flux density of species s into the body through
// the outer face at time t, mol/(m²·s).
func (d *Discretization) SurfaceFlux(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	c, D, err := d.faceState(t, y, &d.outer[s], false)
	if err != nil {
		return math.NaN(), err
	}
	return d.outer[s].fluxD(t, c, D), nil
}

// InnerFlux returns the flux density of species s into the body through
// the inner face at time t, mol/(m²·s) (zero for Symmetry).
func (d *Discretization) InnerFlux(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	c, D, err := d.faceState(t, y, &d.inner[s], true)
	if err != nil {
		return math.NaN(), err
	}
	return d.inner[s].fluxD(t, c, D), nil
}

// BathValue returns the bath value of species s, or an error when species
// s has no bath.
func (d *Discretization) BathValue(y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	k := d.bathIdx[s]
	if k < 0 {
		return math.NaN(), fmt.Errorf("fv: species %d has no bath", s)
	}
	return y[k], nil
}

// Profile returns positions and values of species s at time t: the inner
// end (Centre), every cell centre with its cell average, and the outer face
// (Surface); with a nonlinear store, of the concentration that diffuses.
// Values on either side of a layer interface with a partition
// coefficient differ; the profile shows the cell averages only there.
func (d *Discretization) Profile(t float64, y []float64, s int) (r, c []float64, err error) {
	if err := d.check(y, s); err != nil {
		return nil, nil, err
	}
	cv, err := d.concOf(y, nil)
	if err != nil {
		return nil, nil, err
	}
	r = make([]float64, 0, d.nc+2)
	c = make([]float64, 0, d.nc+2)
	r = append(r, d.Grid.Faces[0])
	c = append(c, d.inner[s].surface(t, cv, d.boundaryD(&d.inner[s], t, cv)))
	for i := 0; i < d.nc; i++ {
		r = append(r, d.Grid.Centres[i])
		c = append(c, cv[i*d.ns+s])
	}
	r = append(r, d.Grid.Faces[d.nc])
	c = append(c, d.outer[s].surface(t, cv, d.boundaryD(&d.outer[s], t, cv)))
	return r, c, nil
}

// LedgerLine is the mass balance of one species between two states:
//
//	Initial + InflowInner + InflowOuter − Consumed = Final,
//
// all amounts in mol (per body, per unit length or per unit face area, see
// Geometry), and, with a bath, BathInitial − BathFinal = InflowOuter.
type LedgerLine struct {
	Species int
	// Initial and Final are the amounts held in the body.
	Initial, Final float64
	// InflowInner and InflowOuter are the amounts that entered through the
	// inner and outer faces (negative when they left).
	InflowInner, InflowOuter float64
	// Consumed is the amount removed by reactions and sinks (negative when
	// produced).
	Consumed float64
	// Closure is (Initial + InflowInner + InflowOuter − Consumed − Final)
	// divided by the largest magnitude among the terms (or 1 if all are
	// zero).
	Closure float64
	// HasBath tells whether the species has a bath; then BathInitial and
	// BathFinal are the amounts in the bath, and BathClosure is
	// (BathInitial − BathFinal − InflowOuter) relative to the largest of
	// those magnitudes.
	HasBath                             bool
	BathInitial, BathFinal, BathClosure float64
}

// Ledger returns one line per species for the run from y0 to y, where q
// holds the quadratures (see Problem) integrated from the time of y0 to
// the time of y.
func (d *Discretization) Ledger(y0, y, q []float64) ([]LedgerLine, error) {
	if len(y0) != d.n || len(y) != d.n {
		return nil, fmt.Errorf("fv: states must have length %d, got %d and %d", d.n, len(y0), len(y))
	}
	if len(q) != QuadPerSpecies*d.ns {
		return nil, fmt.Errorf("fv: quadratures must have length %d, got %d", QuadPerSpecies*d.ns, len(q))
	}
	out := make([]LedgerLine, d.ns)
	for s := 0; s < d.ns; s++ {
		l := &out[s]
		l.Species = s
		l.Initial, _ = d.Content(y0, s)
		l.Final, _ = d.Content(y, s)
		l.InflowInner = q[QuadPerSpecies*s+QuadInner]
		l.InflowOuter = q[QuadPerSpecies*s+QuadOuter]
		l.Consumed = -q[QuadPerSpecies*s+QuadProduced]
		l.Closure = relative(l.Initial+l.InflowInner+l.InflowOuter-l.Consumed-l.Final,
			l.Initial, l.Final, l.InflowInner, l.InflowOuter, l.Consumed)
		if k := d.bathIdx[s]; k >= 0 {
			vb := d.outer[s].vb
			l.HasBath = true
			l.BathInitial = vb * y0[k]
			l.BathFinal = vb * y[k]
			l.BathClosure = relative(l.BathInitial-l.BathFinal-l.InflowOuter, l.BathInitial, l.BathFinal, l.InflowOuter)
		}
	}
	return out, nil
}

// relative divides e by the largest magnitude among the terms, or by 1 if
// they are all zero.
func relative(e float64, terms ...float64) float64 {
	m := 0.0
	for _, t := range terms {
		m = math.Max(m, math.Abs(t))
	}
	if m == 0 {
		return e
	}
	return e / m
}
