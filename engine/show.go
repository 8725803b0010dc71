package engine

import (
	"fmt"
	"math"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/report"
)

func parseUnit(s string) (units.Unit, bool) {
	u, err := units.Parse(s)
	return u, err == nil
}

// displayUnit picks a readable unit for a range of values of a
// dimension: times in s, min, h or d; lengths in µm, mm or m.
type displayUnit struct {
	Name  string
	Scale float64 // SI per unit
}

// outputTimeUnit picks the unit for a column of output times: the largest
// of d, h, min, s in which every time is a whole number and the largest
// stays below 10,000; otherwise the unit that suits the largest time.
func outputTimeUnit(times []float64) displayUnit {
	for _, u := range []displayUnit{{"d", 86400}, {"h", 3600}, {"min", 60}, {"s", 1}} {
		whole := true
		for _, t := range times {
			v := t / u.Scale
			if math.Abs(v-math.Round(v)) > 1e-9*math.Max(1, v) || v >= 10000 {
				whole = false
				break
			}
		}
		if whole && len(times) > 1 && times[len(times)-1]/u.Scale >= 1 {
			return u
		}
	}
	// Not whole in any unit (log-spaced times): the largest unit in which
	// the first positive time is at least 0.1.
	first := 0.0
	for _, t := range times {
		if t > 0 {
			first = t
			break
		}
	}
	u := timeUnit(maxOf(times))
	for first > 0 && first/u.Scale < 0.1 && u.Scale > 1 {
		switch u.Scale {
		case 86400:
			u = displayUnit{"h", 3600}
		case 3600:
			u = displayUnit{"min", 60}
		default:
			u = displayUnit{"s", 1}
		}
	}
	return u
}

func timeUnit(maxT float64) displayUnit {
	switch {
	case maxT >= 3*86400:
		return displayUnit{"d", 86400}
	case maxT >= 3*3600:
		return displayUnit{"h", 3600}
	case maxT >= 3*60:
		return displayUnit{"min", 60}
	}
	return displayUnit{"s", 1}
}

func lengthUnit(maxR float64) displayUnit {
	switch {
	case maxR < 1e-3:
		return displayUnit{"µm", 1e-6}
	case maxR < 0.1:
		return displayUnit{"mm", 1e-3}
	}
	return displayUnit{"m", 1}
}

// show renders one show statement.
func show(m *compile.Model, sh *compile.Show, sols map[string]*bodySolution, res *Result) []Output {
	var out []Output
	var series []*compile.Result
	for _, it := range sh.Items {
		switch it.Kind {
		case "profile":
			out = append(out, profileOutputs(m, it, sh.At, sols)...)
		case "map":
			out = append(out, mapOutput(m, it, sols))
		case "time_to", "effectiveness":
			out = append(out, scalarOutput(m, it, sols, res))
		case "ledger":
			out = append(out, ledgerTables(res.Ledger)...)
		default:
			if m.Run.Steady {
				out = append(out, scalarOutput(m, it, sols, res))
			} else {
				series = append(series, it)
			}
		}
	}
	if len(series) > 0 {
		out = append(out, seriesOutputs(m, series, sh.Scale, sols)...)
	}
	return out
}

func speciesLabel(m *compile.Model, r *compile.Result) string {
	name := m.Species[r.Species].Name
	if len(m.Bodies) > 1 {
		name = r.Body + "." + name
	}
	return name
}

var kindLabel = map[string]string{
	"uptake": "uptake fraction", "release": "release fraction", "mean": "mean concentration",
	"centre": "centre concentration", "surface": "surface concentration", "flux": "flux into the body",
	"bath": "bath concentration", "content": "amount in the body",
}

// seriesOutputs shows time series: one table with a column per item, and
// one plot per dimension.
func seriesOutputs(m *compile.Model, items []*compile.Result, scale string, sols map[string]*bodySolution) []Output {
	tu := outputTimeUnit(m.Run.Times)
	t := &report.Table{Title: "Results against time", Columns: []report.Column{{Name: "time", Unit: tu.Name}}}
	for _, it := range items {
		t.Columns = append(t.Columns, report.Column{Name: kindLabel[it.Kind] + " " + speciesLabel(m, it), Unit: unitOf(it.Dim)})
	}
	for _, tt := range m.Run.Times {
		row := []float64{tt / tu.Scale}
		for _, it := range items {
			s := sols[it.Body]
			row = append(row, s.value(it.Kind, it.Species, s.at(tt)))
		}
		t.Rows = append(t.Rows, row)
	}
	out := []Output{{Kind: "table", Table: t}}
	// Group items by dimension: one plot each.
	var order []string
	groups := map[string][]*compile.Result{}
	for _, it := range items {
		k := it.Dim.String()
		if _, seen := groups[k]; !seen {
			order = append(order, k)
		}
		groups[k] = append(groups[k], it)
	}
	xs := report.Linear
	switch scale {
	case "log":
		xs = report.Log
	case "sqrt":
		xs = report.Sqrt
	}
	for _, k := range order {
		g := groups[k]
		p := &report.Plot{X: report.Axis{Label: "time", Unit: tu.Name, Scale: xs}}
		label := kindLabel[g[0].Kind]
		sameKind := true
		for _, it := range g {
			sameKind = sameKind && it.Kind == g[0].Kind
		}
		if len(g) > 1 && !sameKind {
			label = "value"
			if g[0].Dim == units.Concentration {
				label = "concentration"
			}
		}
		p.Y = report.Axis{Label: label, Unit: unitOf(g[0].Dim)}
		p.Title = label
		for _, it := range g {
			s := sols[it.Body]
			// Plot every solution time (the output times and the dense
			// ones), so curves are smooth whatever the table's spacing.
			var x, y []float64
			for i, tt := range s.times {
				if xs == report.Log && tt <= 0 {
					continue
				}
				if it.Kind == "flux" && tt == 0 {
					// The flux at the first instant of a sudden change at
					// the surface is unbounded in theory and only a grid
					// artefact in numbers; leave it out of the plot.
					continue
				}
				x = append(x, tt/tu.Scale)
				y = append(y, s.value(it.Kind, it.Species, i))
			}
			p.Series = append(p.Series, report.Series{Name: kindLabel[it.Kind] + " " + speciesLabel(m, it), X: x, Y: y})
		}
		if len(g) == 1 {
			p.Title = kindLabel[g[0].Kind] + " of " + speciesLabel(m, g[0])
		}
		out = append(out, Output{Kind: "plot", Plot: p})
	}
	return out
}

// profileOutputs shows concentration against position at chosen times.
func profileOutputs(m *compile.Model, it *compile.Result, at []float64, sols map[string]*bodySolution) []Output {
	s := sols[it.Body]
	lu := lengthUnit(s.body.Outer)
	name := speciesLabel(m, it)
	if m.Run.Steady {
		r, c := s.disc.Profile(0, s.steady, it.Species)
		p := &report.Plot{Title: "steady profile of " + name, X: report.Axis{Label: posLabel(s.body), Unit: lu.Name}, Y: report.Axis{Label: "concentration", Unit: "mol/m^3"}}
		p.Series = append(p.Series, report.Series{Name: "steady state", X: scaled(r, lu.Scale), Y: c})
		return []Output{{Kind: "plot", Plot: p}}
	}
	// A transient profile is shown as a plot; its numbers travel in the
	// JSON (and in Result.Profiles).
	if len(at) == 0 {
		at = profileTimes(m)
	}
	p := &report.Plot{Title: "profiles of " + name, Ordered: true,
		X: report.Axis{Label: posLabel(s.body), Unit: lu.Name}, Y: report.Axis{Label: "concentration", Unit: "mol/m^3"}}
	for _, tt := range at {
		i := s.at(tt)
		r, c := s.disc.Profile(s.times[i], s.ys[i], it.Species)
		label := "t = " + timeLabel(tt)
		p.Series = append(p.Series, report.Series{Name: label, X: scaled(r, lu.Scale), Y: c})
	}
	return []Output{{Kind: "plot", Plot: p}}
}

func mapOutput(m *compile.Model, it *compile.Result, sols map[string]*bodySolution) Output {
	s := sols[it.Body]
	lu := lengthUnit(s.body.Outer)
	tu := timeUnit(m.Run.Until)
	mp := &report.Map{Title: "concentration of " + speciesLabel(m, it) + " over position and time",
		X: report.Axis{Label: "time", Unit: tu.Name}, Y: report.Axis{Label: posLabel(s.body), Unit: lu.Name},
		ZLabel: "concentration", ZUnit: "mol/m^3"}
	for i, tt := range s.times {
		r, c := s.disc.Profile(tt, s.ys[i], it.Species)
		if mp.YValues == nil {
			mp.YValues = scaled(r, lu.Scale)
		}
		mp.XValues = append(mp.XValues, tt/tu.Scale)
		mp.Z = append(mp.Z, c)
	}
	return Output{Kind: "map", Map: mp}
}

func scalarOutput(m *compile.Model, it *compile.Result, sols map[string]*bodySolution, res *Result) Output {
	v := scalarResult(m, it, m.Run.Until, sols)
	name := it.Kind
	unit := unitOf(it.Dim)
	shown := v
	if it.Kind == "time_to" {
		word := "uptake"
		if s := sols[it.Body]; s != nil && s.final[it.Species] < s.disc.Content(s.ys[0], it.Species) {
			word = "release"
		}
		name = fmt.Sprintf("time to %s %% %s", report.FormatNumber(it.Fraction*100, 4), word)
		tu := timeUnit(v)
		if math.IsNaN(v) {
			tu = timeUnit(m.Run.Until)
		}
		unit, shown = tu.Name, v/tu.Scale
	}
	res.Scalars = append(res.Scalars, Scalar{Name: it.Kind, Body: it.Body, Species: m.Species[it.Species].Name, Unit: unitOf(it.Dim), Value: v,
		Fraction: it.Fraction, Label: name + " of " + speciesLabel(m, it), shown: true})
	t := &report.Table{Title: name + " of " + speciesLabel(m, it), Columns: []report.Column{{Name: name, Unit: unit}}, Rows: [][]float64{{shown}}}
	if math.IsNaN(v) && it.Kind == "time_to" {
		t.Notes = append(t.Notes, "not reached within the run")
	}
	return Output{Kind: "table", Table: t}
}

// ledgerTables shows the mass ledger, one table per species and body.
func ledgerTables(ls []Ledger) []Output {
	var out []Output
	for _, l := range ls {
		t := &report.Table{Title: fmt.Sprintf("Mass ledger of %s in %s: initial + inflow − consumed = final", l.Species, l.Body),
			Columns: []report.Column{{Name: "initial", Unit: l.Unit}, {Name: "inflow", Unit: l.Unit}, {Name: "consumed", Unit: l.Unit},
				{Name: "final", Unit: l.Unit}, {Name: "closure (relative)"}}}
		t.Rows = append(t.Rows, []float64{l.Initial, l.Inflow, l.Consumed, l.Final, l.Closure})
		out = append(out, Output{Kind: "table", Table: t})
	}
	return out
}

// posLabel names the diffusion coordinate of a body.
func posLabel(b *compile.Body) string {
	switch b.Shape {
	case compile.Slab:
		return "distance from mid-plane x"
	case compile.ShortCylinder:
		return "position r at mid-height"
	}
	return "position r"
}

func scaled(v []float64, s float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = x / s
	}
	return out
}

func maxOf(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// timeLabel writes a time in the unit that reads best for it alone: the
// largest unit in which it is a whole number, else one that suits its size.
func timeLabel(t float64) string {
	for _, u := range []displayUnit{{"d", 86400}, {"h", 3600}, {"min", 60}} {
		if v := t / u.Scale; v >= 1 && math.Abs(v-math.Round(v)) < 1e-9*v {
			return report.FormatNumber(v, 4) + " " + u.Name
		}
	}
	var u displayUnit
	switch {
	case t < 120:
		u = displayUnit{"s", 1}
	case t < 2*3600:
		u = displayUnit{"min", 60}
	case t < 2*86400:
		u = displayUnit{"h", 3600}
	default:
		u = displayUnit{"d", 86400}
	}
	return report.FormatNumber(t/u.Scale, 4) + " " + u.Name
}

// estimatesTable shows the error estimates: the largest over the run of
// each series, in its SI unit.
func estimatesTable(es []Estimate) *report.Table {
	t := &report.Table{Title: "Estimated errors (largest over the run)",
		Columns: []report.Column{{Name: "spatial"}, {Name: "temporal"}}}
	for _, e := range es {
		t.Rows = append(t.Rows, []float64{e.Spatial, e.Temporal})
		where := ""
		if e.Case != "" {
			where = " (" + e.Case + ")"
		}
		t.Notes = append(t.Notes, fmt.Sprintf("row %d: %s of %s in %s [%s]%s", len(t.Rows), e.Series, e.Species, e.Body, e.Unit, where))
	}
	t.Notes = append(t.Notes, "spatial: |v(N) − v(N/2)|/3, the Richardson estimate of the grid error of v(N); temporal: the change when rtol is divided by 100")
	if len(es) > 0 && es[0].Extrapolated {
		t.Notes = append(t.Notes, "the results shown are Richardson-extrapolated; their remaining spatial error is smaller than this estimate")
	}
	return t
}
