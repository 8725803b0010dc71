package engine

import (
	"math"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/fv"
)

// disc adapts a body's finite-volume discretisation to the model's species
// numbering. Its methods take model species indices and return NaN for a
// species that is not in the body.
type disc struct {
	d   *fv.Discretization
	low *compile.Lowered
	y0  []float64
}

func (s *disc) k(si int) int { return s.low.Local(si) }

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
