package engine

import (
	"math"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

// discretization is what the engine needs of a body's discrete system:
// the 1-D finite volumes of package fv (and, through an adapter, other
// discretisations) provide it. Species are the body's local indices.
type discretization interface {
	Problem() *solvers.Problem
	Y0() []float64
	N() int
	Cells() int
	NSpecies() int
	BathIndex(s int) int
	Content(y []float64, s int) (float64, error)
	Mean(y []float64, s int) (float64, error)
	Centre(t float64, y []float64, s int) (float64, error)
	Surface(t float64, y []float64, s int) (float64, error)
	SurfaceFlux(t float64, y []float64, s int) (float64, error)
	BathValue(y []float64, s int) (float64, error)
	Profile(t float64, y []float64, s int) (r, c []float64, err error)
	Ledger(y0, y, q []float64) ([]fv.LedgerLine, error)
	SteadyState(t float64, y0 []float64, s *solvers.SteadySettings) ([]float64, error)
	EquilibriumWithBath(y []float64, s int) (float64, error)
	CellValues(y []float64, s int) ([]float64, error)
	EvalError() error
}

// cellGeometry gives the volume, position and layer (region index) of
// every cell, for results that integrate over the body (effectiveness).
type cellGeometry struct {
	vol, r, z []float64 // z is nil for 1-D bodies
	layer     []int
}

// fvGeometry reads the cell geometry of a 1-D discretisation.
func fvGeometry(d *fv.Discretization) cellGeometry {
	return cellGeometry{vol: d.Grid.Volumes, r: d.Grid.Centres, layer: d.Grid.Layer}
}

// disc adapts a body's discretisation to the model's species numbering.
// Its methods take model species indices and return NaN for a species
// that is not in the body.
type disc struct {
	d       discretization
	species []int // local → model species index
	geom    cellGeometry
	stops   []float64
	y0      []float64
}

func (s *disc) k(si int) int {
	for k, x := range s.species {
		if x == si {
			return k
		}
	}
	return -1
}

func nan(v float64, err error) float64 {
	if err != nil {
		return math.NaN()
	}
	return v
}

func (s *disc) Content(y []float64, si int) float64 { return nan(s.d.Content(y, s.k(si))) }
func (s *disc) Mean(y []float64, si int) float64    { return nan(s.d.Mean(y, s.k(si))) }
func (s *disc) Centre(t float64, y []float64, si int) float64 {
	return nan(s.d.Centre(t, y, s.k(si)))
}
func (s *disc) Surface(t float64, y []float64, si int) float64 {
	return nan(s.d.Surface(t, y, s.k(si)))
}
func (s *disc) SurfaceFlux(t float64, y []float64, si int) float64 {
	return nan(s.d.SurfaceFlux(t, y, s.k(si)))
}
func (s *disc) BathValue(y []float64, si int) float64 { return nan(s.d.BathValue(y, s.k(si))) }

func (s *disc) Profile(t float64, y []float64, si int) ([]float64, []float64) {
	r, c, err := s.d.Profile(t, y, s.k(si))
	if err != nil {
		return nil, nil
	}
	return r, c
}

// HasBath reports whether any species of the body has a bath.
func (s *disc) HasBath() bool {
	for k := 0; k < s.d.NSpecies(); k++ {
		if s.d.BathIndex(k) >= 0 {
			return true
		}
	}
	return false
}

// ledger returns initial, inflow (both faces) and consumed amounts and the
// final content of species si between y0 and y with quadratures q.
func (s *disc) ledger(y0, y, q []float64, si int) (fv.LedgerLine, bool) {
	lines, err := s.d.Ledger(y0, y, q)
	k := s.k(si)
	if err != nil || k < 0 || k >= len(lines) {
		return fv.LedgerLine{}, false
	}
	return lines[k], true
}
