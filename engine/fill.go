package engine

import (
	"math"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/units"
)

// value computes one result kind for a species at output index i,
// Richardson-extrapolated when a coarse companion solution is present.
func (s *bodySolution) value(kind string, si, i int) float64 {
	v := s.rawValue(kind, si, i)
	if s.coarse != nil && i < len(s.coarse.times) && s.coarse.times[i] == s.times[i] {
		return (4*v - s.coarse.rawValue(kind, si, i)) / 3
	}
	return v
}

// rawValue computes one result kind on this grid alone.
func (s *bodySolution) rawValue(kind string, si, i int) float64 {
	y := s.ys[i]
	d := s.disc
	t := s.times[i]
	switch kind {
	case "uptake", "release":
		m0 := d.Content(s.ys[0], si)
		mf := s.final[si]
		den := mf - m0
		if kind == "release" {
			den = m0 - mf
		}
		// No fraction exists when the body ends where it started (e.g. it
		// fills and empties again): the change must stand out from the
		// largest amount the body held during the run.
		if den == 0 || math.IsNaN(den) || math.Abs(den) < 1e-9*s.peakContent(si) {
			return math.NaN()
		}
		if kind == "release" {
			return (m0 - d.Content(y, si)) / den
		}
		return (d.Content(y, si) - m0) / den
	case "mean":
		return d.Mean(y, si)
	case "centre":
		return d.Centre(t, y, si)
	case "surface":
		return d.Surface(t, y, si)
	case "flux":
		return d.SurfaceFlux(t, y, si)
	case "bath":
		return d.BathValue(y, si)
	case "content":
		return d.Content(y, si)
	}
	return math.NaN()
}

// seriesName maps a result kind to the name of its series in the JSON.
var seriesName = map[string]string{
	"uptake": "uptake_fraction", "release": "release_fraction", "mean": "mean", "centre": "centre",
	"surface": "surface", "flux": "surface_flux", "bath": "bath", "content": "content",
}

// seriesUnit gives the SI unit of each series.
var seriesUnit = map[string]string{
	"uptake": "1", "release": "1", "mean": "mol/m^3", "centre": "mol/m^3", "surface": "mol/m^3",
	"flux": "mol/(m^2·s)", "bath": "mol/m^3",
}

// fill adds this body's standard series and profiles to the result.
func (s *bodySolution) fill(m *compile.Model, res *Result) {
	if !m.Run.Steady {
		// A steady state has no history to balance: no ledger.
		res.Ledger = append(res.Ledger, s.ledger(m)...)
	}
	if m.Run.Steady {
		for _, si := range s.body.Species {
			r, c := s.disc.Profile(0, s.steady, si)
			res.Profiles = append(res.Profiles, Profile{Time: math.Inf(1), Body: s.body.Name, Position: r,
				Values: map[string][]float64{m.Species[si].Name: c}})
			for _, kind := range []string{"mean", "centre", "surface", "flux"} {
				res.Scalars = append(res.Scalars, Scalar{Name: "steady_" + seriesName[kind], Body: s.body.Name,
					Species: m.Species[si].Name, Unit: seriesUnit[kind], Value: s.value(kind, si, 0)})
			}
		}
		return
	}
	kinds := []string{"uptake", "centre", "mean", "surface", "flux"}
	if s.disc.HasBath() {
		kinds = append(kinds, "bath")
	}
	for _, si := range s.body.Species {
		for _, kind := range kinds {
			vals := make([]float64, len(m.Run.Times))
			for j, t := range m.Run.Times {
				vals[j] = s.value(kind, si, s.at(t))
			}
			res.Series = append(res.Series, Series{Name: seriesName[kind], Body: s.body.Name,
				Species: m.Species[si].Name, Unit: seriesUnit[kind], Values: vals})
		}
	}
	for _, t := range profileTimes(m) {
		i := s.at(t)
		p := Profile{Time: s.times[i], Body: s.body.Name, Values: map[string][]float64{}}
		for _, si := range s.body.Species {
			r, c := s.disc.Profile(s.times[i], s.ys[i], si)
			p.Position = r
			p.Values[m.Species[si].Name] = c
		}
		res.Profiles = append(res.Profiles, p)
	}
}

// profileTimes are the times of the profiles in the JSON: those any show
// statement asks for, or else up to six spread over the run.
func profileTimes(m *compile.Model) []float64 {
	var ts []float64
	for _, a := range m.Actions {
		if sh, ok := a.(*compile.Show); ok {
			for _, it := range sh.Items {
				if it.Kind == "profile" || it.Kind == "map" {
					ts = append(ts, sh.At...)
				}
			}
		}
	}
	if len(ts) > 0 {
		return ts
	}
	n := len(m.Run.Times)
	for k := 1; k <= 5; k++ {
		ts = append(ts, m.Run.Times[(n-1)*k/5])
	}
	return append([]float64{m.Run.Times[0]}, ts...)
}

// ledger reports initial + inflow − consumed = final for each species.
func (s *bodySolution) ledger(m *compile.Model) []Ledger {
	var out []Ledger
	last := len(s.ys) - 1
	unit := "mol"
	switch s.body.Shape {
	case compile.Slab:
		unit = "mol/m^2"
	case compile.Cylinder, compile.HollowCylinder:
		unit = "mol/m"
	}
	for _, si := range s.body.Species {
		line, ok := s.disc.ledger(s.ys[0], s.ys[last], s.qs[last], si)
		if !ok {
			continue
		}
		l := Ledger{Body: s.body.Name, Species: m.Species[si].Name, Unit: unit,
			Initial: line.Initial, Inflow: line.InflowInner + line.InflowOuter, Consumed: line.Consumed,
			Final: line.Final}
		// The closure is measured against the largest amount in play: the
		// terms of the balance and the most the body held during the run
		// (a body that fills and empties again ends near zero).
		scale := math.Max(math.Max(math.Abs(l.Initial), math.Abs(l.Final)), math.Max(math.Abs(l.Inflow), math.Abs(l.Consumed)))
		scale = math.Max(scale, s.peakContent(si))
		if scale > 0 {
			l.Closure = math.Abs(l.Initial+l.Inflow-l.Consumed-l.Final) / scale
		}
		if m.Run.Steady {
			l.Closure = 0
		}
		out = append(out, l)
	}
	return out
}

// timeTo finds the first time the uptake (or release) fraction reaches f:
// it brackets the crossing among the dense output times, then solves for
// it on the cubic through the four nearest values, in log time where the
// times are positive (uptake grows like a power of time early on), by
// bisection; NaN when the fraction is not reached in the run.
func (s *bodySolution) timeTo(si int, f float64, kind string) float64 {
	n := len(s.times)
	vals := make([]float64, n)
	for i := range vals {
		vals[i] = s.value(kind, si, i)
	}
	for i := 1; i < n; i++ {
		if !(vals[i] >= f && vals[i-1] < f) {
			continue
		}
		t0, t1 := s.times[i-1], s.times[i]
		// Four points around the bracket, inside the range.
		lo := max(0, min(i-2, n-4))
		hi := min(n, lo+4)
		useLog := s.times[lo] > 0
		x := func(t float64) float64 {
			if useLog {
				return math.Log(t)
			}
			return t
		}
		xs := make([]float64, 0, 4)
		ys := make([]float64, 0, 4)
		for j := lo; j < hi; j++ {
			xs = append(xs, x(s.times[j]))
			ys = append(ys, vals[j])
		}
		poly := func(xx float64) float64 {
			sum := 0.0
			for a := range xs {
				l := 1.0
				for b := range xs {
					if a != b {
						l *= (xx - xs[b]) / (xs[a] - xs[b])
					}
				}
				sum += ys[a] * l
			}
			return sum
		}
		a, b := x(t0), x(t1)
		if len(xs) < 4 || poly(a) >= f || poly(b) < f {
			// Too few points or a non-monotone cubic: linear in x.
			w := (f - vals[i-1]) / (vals[i] - vals[i-1])
			xr := a + w*(b-a)
			if useLog {
				return math.Exp(xr)
			}
			return xr
		}
		for it := 0; it < 100 && b-a > 1e-15*math.Max(1, math.Abs(b)); it++ {
			mid := (a + b) / 2
			if poly(mid) < f {
				a = mid
			} else {
				b = mid
			}
		}
		xr := (a + b) / 2
		if useLog {
			return math.Exp(xr)
		}
		return xr
	}
	return math.NaN()
}

var _ = units.Time

// estimates compares a solution with the same on half the cells (and,
// when tight is not nil, with a tighter time tolerance).
func estimates(m *compile.Model, fine, coarse, tight *bodySolution, extrapolated bool) []Estimate {
	var out []Estimate
	kinds := []string{"uptake", "mean", "centre", "surface", "flux"}
	if fine.disc.HasBath() {
		kinds = append(kinds, "bath")
	}
	for _, si := range fine.body.Species {
		for _, kind := range kinds {
			e := Estimate{Body: fine.body.Name, Species: m.Species[si].Name, Series: seriesName[kind], Unit: seriesUnit[kind], Extrapolated: extrapolated}
			for i := range fine.times {
				if i >= len(coarse.times) || coarse.times[i] != fine.times[i] {
					continue
				}
				vf := fine.rawValue(kind, si, i)
				if d := math.Abs(vf-coarse.rawValue(kind, si, i)) / 3; d > e.Spatial {
					e.Spatial = d
				}
				if tight != nil && i < len(tight.times) && tight.times[i] == fine.times[i] {
					if d := math.Abs(vf - tight.rawValue(kind, si, i)); d > e.Temporal {
						e.Temporal = d
					}
				}
			}
			out = append(out, e)
		}
	}
	return out
}

// peakContent is the largest amount of species si the body held at any
// output time.
func (s *bodySolution) peakContent(si int) float64 {
	if v, ok := s.peak[si]; ok {
		return v
	}
	p := 0.0
	for _, y := range s.ys {
		p = math.Max(p, math.Abs(s.disc.Content(y, si)))
	}
	if s.peak == nil {
		s.peak = map[int]float64{}
	}
	s.peak[si] = p
	return p
}
