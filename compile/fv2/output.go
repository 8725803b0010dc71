package fv2

import (
	"errors"
	"fmt"
	"math"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

// ErrNoBath is returned by the bath methods: a short cylinder has no bath.
var ErrNoBath = errors.New("fv2: a short cylinder has no bath")

// Y0 returns a new copy of the initial state: cell averages of Spec.Init.
func (d *Discretization) Y0() []float64 {
	return append([]float64(nil), d.y0...)
}

func (d *Discretization) check(y []float64, s int) error {
	if len(y) != d.n {
		return fmt.Errorf("fv2: state has length %d, want %d", len(y), d.n)
	}
	if s < 0 || s >= d.ns {
		return fmt.Errorf("fv2: species %d out of range [0, %d)", s, d.ns)
	}
	return nil
}

// at returns the value of species s in column i, row j.
func (d *Discretization) at(y []float64, i, j, s int) float64 {
	return y[(j*d.nr+i)*d.ns+s]
}

// Content returns the amount of species s held in the body, mol:
// Σ V·Capacity·c over the cells.
func (d *Discretization) Content(y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	sum := 0.0
	for c, v := range d.Grid.Volumes {
		sum += v * y[c*d.ns+s]
	}
	return d.cap[s] * sum, nil
}

// EquilibriumContent returns the amount of species s (mol) the body holds
// when it is everywhere at the value cs: Capacity·πR²L·cs.
func (d *Discretization) EquilibriumContent(s int, cs float64) (float64, error) {
	if s < 0 || s >= d.ns {
		return math.NaN(), fmt.Errorf("fv2: species %d out of range [0, %d)", s, d.ns)
	}
	R, L := d.Grid.RFaces[d.nr], d.Grid.ZFaces[d.nz]
	return d.cap[s] * math.Pi * R * R * L * cs, nil
}

// CellValues returns the value of species s in every cell (the cell
// averages), indexed like Grid.Volumes: j·NR + i.
func (d *Discretization) CellValues(y []float64, s int) ([]float64, error) {
	if err := d.check(y, s); err != nil {
		return nil, err
	}
	out := make([]float64, d.nc)
	for c := range out {
		out[c] = y[c*d.ns+s]
	}
	return out, nil
}

// CellVolumes returns a copy of the cell volumes, m³, indexed j·NR + i.
func (d *Discretization) CellVolumes() []float64 {
	return append([]float64(nil), d.Grid.Volumes...)
}

// CellCentres returns the centre of every cell, indexed j·NR + i: the
// volume centroid in r of its annulus and the middle of its row in z.
func (d *Discretization) CellCentres() (r, z []float64) {
	r, z = make([]float64, d.nc), make([]float64, d.nc)
	for c := range r {
		r[c] = d.Grid.RCentres[c%d.nr]
		z[c] = d.Grid.ZCentres[c/d.nr]
	}
	return r, z
}

// Mean returns the volume average of species s, Σ V c / Σ V.
func (d *Discretization) Mean(y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	sum, vol := 0.0, 0.0
	for c, v := range d.Grid.Volumes {
		sum += v * y[c*d.ns+s]
		vol += v
	}
	return sum / vol, nil
}

// axisValue returns the value on the axis r = 0 in row j: the symmetry
// closure (zero gradient) applied to the two nearest columns.
func (d *Discretization) axisValue(y []float64, j, s int) float64 {
	return d.axis.b1*d.at(y, 0, j, s) + d.axis.b2*d.at(y, 1, j, s)
}

// midColumn returns the value of column i at mid-height z = L/2,
// interpolated from the rows around it (the polynomial that reproduces
// their averages: a quadratic, or a cubic when L/2 is a face).
func (d *Discretization) midColumn(y []float64, i, s int) float64 {
	v := 0.0
	for m, w := range d.midW {
		v += w * d.at(y, i, d.midFirst+m, s)
	}
	return v
}

// Centre returns the value of species s at the centre of the body, on
// the axis at mid-height (r = 0, z = L/2), reconstructed to second order.
func (d *Discretization) Centre(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	return d.axis.b1*d.midColumn(y, 0, s) + d.axis.b2*d.midColumn(y, 1, s), nil
}

// surfaceSum returns Σ area·f over the segments of the three exterior
// faces, f being the surface value (value) or the inward flux density.
func (d *Discretization) surfaceSum(t float64, y []float64, s int, value bool) float64 {
	nr, nz := d.nr, d.nz
	eval := func(b *bnd, c1, c2 float64) float64 {
		if value {
			return b.surface(t, c1, c2)
		}
		return b.flux(t, c1, c2)
	}
	sum := 0.0
	for j := range nz {
		sum += d.sideA[j] * eval(&d.side[s], d.at(y, nr-1, j, s), d.at(y, nr-2, j, s))
	}
	for i := range nr {
		a := d.Grid.Annuli[i]
		sum += a * eval(&d.top[s], d.at(y, i, nz-1, s), d.at(y, i, nz-2, s))
		sum += a * eval(&d.bottom[s], d.at(y, i, 0, s), d.at(y, i, 1, s))
	}
	return sum
}

// Surface returns the area-weighted mean over the exterior surface (side,
// top and bottom) of the value of species s just inside it at time t,
// each segment's value reconstructed to second order consistently with
// its condition.
func (d *Discretization) Surface(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	return d.surfaceSum(t, y, s, true) / d.totalArea, nil
}

// SurfaceFlux returns the total inward flux of species s through the
// exterior surface at time t divided by its area 2πRL + 2πR²,
// mol/(m²·s).
func (d *Discretization) SurfaceFlux(t float64, y []float64, s int) (float64, error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), err
	}
	return d.surfaceSum(t, y, s, false) / d.totalArea, nil
}

// FaceInflows returns the rates (mol/s) at which species s enters through
// the side, the top and the bottom at time t.
func (d *Discretization) FaceInflows(t float64, y []float64, s int) (side, top, bottom float64, err error) {
	if err := d.check(y, s); err != nil {
		return math.NaN(), math.NaN(), math.NaN(), err
	}
	nr, nz := d.nr, d.nz
	for j := range nz {
		side += d.sideA[j] * d.side[s].flux(t, d.at(y, nr-1, j, s), d.at(y, nr-2, j, s))
	}
	for i := range nr {
		a := d.Grid.Annuli[i]
		top += a * d.top[s].flux(t, d.at(y, i, nz-1, s), d.at(y, i, nz-2, s))
		bottom += a * d.bottom[s].flux(t, d.at(y, i, 0, s), d.at(y, i, 1, s))
	}
	return side, top, bottom, nil
}

// BathValue returns ErrNoBath.
func (d *Discretization) BathValue(y []float64, s int) (float64, error) {
	return math.NaN(), ErrNoBath
}

// EquilibriumWithBath returns ErrNoBath.
func (d *Discretization) EquilibriumWithBath(y []float64, s int) (float64, error) {
	return math.NaN(), ErrNoBath
}

// Profile returns the radial profile of species s at mid-height
// z = L/2 at time t: the axis value (r = 0), the value of every column
// interpolated to mid-height at its centroid, and the value just inside
// the side (r = R) from the side's condition.
func (d *Discretization) Profile(t float64, y []float64, s int) (r, c []float64, err error) {
	if err := d.check(y, s); err != nil {
		return nil, nil, err
	}
	nr := d.nr
	mid := make([]float64, nr)
	for i := range mid {
		mid[i] = d.midColumn(y, i, s)
	}
	r = make([]float64, 0, nr+2)
	c = make([]float64, 0, nr+2)
	r = append(r, 0)
	c = append(c, d.axis.b1*mid[0]+d.axis.b2*mid[1])
	r = append(r, d.Grid.RCentres...)
	c = append(c, mid...)
	r = append(r, d.Grid.RFaces[nr])
	c = append(c, d.side[s].surface(t, mid[nr-1], mid[nr-2]))
	return r, c, nil
}

// ProfileZ returns the axial profile of species s on the axis r = 0 at
// time t: the value at the bottom (z = 0), the axis value of every row at
// its middle, and the value at the top (z = L), the end values from the
// conditions of the bottom and the top.
func (d *Discretization) ProfileZ(t float64, y []float64, s int) (z, c []float64, err error) {
	if err := d.check(y, s); err != nil {
		return nil, nil, err
	}
	nz := d.nz
	ax := make([]float64, nz)
	for j := range ax {
		ax[j] = d.axisValue(y, j, s)
	}
	z = make([]float64, 0, nz+2)
	c = make([]float64, 0, nz+2)
	z = append(z, 0)
	c = append(c, d.bottom[s].surface(t, ax[0], ax[1]))
	z = append(z, d.Grid.ZCentres...)
	c = append(c, ax...)
	z = append(z, d.Grid.ZFaces[nz])
	c = append(c, d.top[s].surface(t, ax[nz-1], ax[nz-2]))
	return z, c, nil
}

// Field returns the cell values of species s for a map: r (NR column
// centroids), z (NZ row middles) and c[j][i], the value in row j and
// column i.
func (d *Discretization) Field(y []float64, s int) (r, z []float64, c [][]float64, err error) {
	if err := d.check(y, s); err != nil {
		return nil, nil, nil, err
	}
	r = append([]float64(nil), d.Grid.RCentres...)
	z = append([]float64(nil), d.Grid.ZCentres...)
	c = make([][]float64, d.nz)
	flat := make([]float64, d.nc)
	for j := range c {
		c[j] = flat[j*d.nr : (j+1)*d.nr : (j+1)*d.nr]
		for i := range c[j] {
			c[j][i] = d.at(y, i, j, s)
		}
	}
	return r, z, c, nil
}

// Ledger returns one line per species for the run from y0 to y, where q
// holds the quadratures (see Problem) integrated from the time of y0 to
// the time of y. InflowOuter is the inflow through the whole exterior
// surface (side, top and bottom; see FaceInflows and the quadratures for
// the split) and InflowInner is 0.
func (d *Discretization) Ledger(y0, y, q []float64) ([]fv.LedgerLine, error) {
	if len(y0) != d.n || len(y) != d.n {
		return nil, fmt.Errorf("fv2: states must have length %d, got %d and %d", d.n, len(y0), len(y))
	}
	if len(q) != QuadPerSpecies*d.ns {
		return nil, fmt.Errorf("fv2: quadratures must have length %d, got %d", QuadPerSpecies*d.ns, len(q))
	}
	out := make([]fv.LedgerLine, d.ns)
	for s := range out {
		l := &out[s]
		l.Species = s
		l.Initial, _ = d.Content(y0, s)
		l.Final, _ = d.Content(y, s)
		qs := q[QuadPerSpecies*s : QuadPerSpecies*(s+1)]
		l.InflowOuter = qs[QuadSide] + qs[QuadTop] + qs[QuadBottom]
		l.Consumed = -qs[QuadProduced]
		l.Closure = relative(l.Initial+l.InflowOuter-l.Consumed-l.Final,
			l.Initial, l.Final, qs[QuadSide], qs[QuadTop], qs[QuadBottom], l.Consumed)
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

// SteadyState solves for the steady state at time t (Func = 0) by
// solvers.Steady, starting from y0. s may be nil (defaults).
//
// A species whose three faces all impose a flux (or are sealed) and that
// no linear reaction consumes or produces (a zero row of Spec.Rate, no
// Kinetics) has a content that only the imposed fluxes change: it has no
// isolated steady state (the Jacobian is singular, which the banded LU
// may not notice in floating point), and SteadyState says so.
func (d *Discretization) SteadyState(t float64, y0 []float64, s *solvers.SteadySettings) ([]float64, error) {
	if len(y0) != d.n {
		return nil, fmt.Errorf("fv2: state has length %d, want %d", len(y0), d.n)
	}
	if d.kin == nil {
		for sp := range d.ns {
			if d.side[sp].kind != fv.Flux || d.top[sp].kind != fv.Flux || d.bottom[sp].kind != fv.Flux {
				continue
			}
			reacts := false
			for l := 0; d.rate != nil && l < d.ns; l++ {
				reacts = reacts || d.rate[sp*d.ns+l] != 0
			}
			if !reacts {
				return nil, &solvers.SteadyError{Msg: fmt.Sprintf("species %d: no face fixes a value and nothing reacts, so its content is set only by the imposed fluxes: the system has no isolated steady state (is every boundary closed?)", sp)}
			}
		}
	}
	return solvers.Steady(d.Problem(), y0, t, s)
}
