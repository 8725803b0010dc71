package engine

import (
	"math"

	"github.com/massline/massline/compile"
)

// effectiveness returns the effectiveness factor of species si at steady
// state under the final conditions: the actual rate of consumption in the
// body divided by the rate if the whole body were at its surface
// concentration,
//
//	η = Σ_i V_i r(c_i) / (V r(c_s)),
//
// the classical definition for a catalyst pellet (e.g. H. S. Fogler,
// Elements of Chemical Reaction Engineering, ch. on diffusion and reaction
// in porous catalysts — from memory). NaN when the body has no source for
// si or no steady state.
func (s *bodySolution) effectiveness(m *compile.Model, si int) float64 {
	d := s.disc.d
	k := s.disc.k(si)
	if k < 0 {
		return math.NaN()
	}
	y := s.steady
	t := 0.0
	if y == nil {
		var err error
		y, err = d.SteadyState(m.Run.Until, s.ys[len(s.ys)-1], nil)
		if err != nil {
			return math.NaN()
		}
		t = m.Run.Until
	}
	env := compile.Env{C: make([]float64, len(m.Species)), T: t}
	cells := make([][]float64, len(s.disc.species))
	for kk := range s.disc.species {
		v, err := d.CellValues(y, kk)
		if err != nil {
			return math.NaN()
		}
		cells[kk] = v
	}
	actual, vol := 0.0, 0.0
	var surfaceRate float64
	g := s.disc.geom
	for i := range g.vol {
		reg := s.body.Regions[g.layer[i]]
		bal := reg.Balances[si]
		if bal == nil || bal.Source == nil {
			continue
		}
		for kk, sj := range s.disc.species {
			env.C[sj] = cells[kk][i]
		}
		env.R = g.r[i]
		if g.z != nil {
			env.Z = g.z[i]
		}
		actual += g.vol[i] * bal.Source.Eval(&env)
		vol += g.vol[i]
	}
	if vol == 0 {
		return math.NaN()
	}
	// The rate at surface conditions, for the outermost region's source.
	reg := s.body.Regions[len(s.body.Regions)-1]
	bal := reg.Balances[si]
	if bal == nil || bal.Source == nil {
		return math.NaN()
	}
	for kk, sj := range s.disc.species {
		env.C[sj] = nan(d.Surface(t, y, kk))
	}
	env.R = s.body.Outer
	surfaceRate = bal.Source.Eval(&env) * vol
	if surfaceRate == 0 {
		return math.NaN()
	}
	return actual / surfaceRate
}
