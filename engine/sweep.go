package engine

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/report"
)

// Recheck rebuilds the model with some constant quantities replaced (SI
// values by name). Sweeps need it: a swept value may change the grid, the
// conditions, anything. RunSource and the notebook workspace provide it.
type Recheck func(override map[string]float64) (*compile.Model, error)

// sweepPoint is the run of one value of a sweep.
type sweepPoint struct {
	value float64
	res   *Result
	sols  map[string]*bodySolution
	m     *compile.Model
	err   error
}

// runSweep runs the model once per value of the swept quantity, in
// parallel on all cores, and gathers the inner show and expect statements
// into tables and plots (one row or curve per value, in the sweep's
// order, whatever order the runs finish in).
func runSweep(ctx context.Context, m *compile.Model, sw *compile.Sweep, opts *Options, res *Result) error {
	if opts == nil || opts.Recheck == nil {
		return &Error{Where: sw.Def, Msg: "this sweep cannot be run: the model cannot be rebuilt with other values"}
	}
	points := make([]sweepPoint, len(sw.Values))
	workers := max(1, min(runtime.GOMAXPROCS(0), len(points)))
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				points[i] = runPoint(ctx, sw, opts, sw.Values[i])
			}
		}()
	}
	for i := range points {
		if ctx.Err() != nil {
			break
		}
		next <- i
	}
	close(next)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return interruptErr(err)
	}
	for i, p := range points {
		if p.err != nil {
			return &Error{Where: sw.Def, Msg: fmt.Sprintf("sweep %s = %s: %v", sw.Param, formatValue(sw.Values[i], sw.Unit), p.err), Err: p.err}
		}
	}
	gatherSweep(sw, points, res)
	return nil
}

func formatValue(v float64, unit string) string {
	if u, ok := parseUnit(unit); ok && unit != "" {
		return report.FormatNumber(u.FromSI(v), 5) + " " + unit
	}
	return report.FormatNumber(v, 5)
}

func runPoint(ctx context.Context, sw *compile.Sweep, opts *Options, v float64) (p sweepPoint) {
	p.value = v
	defer func() {
		if r := recover(); r != nil {
			p.err = fmt.Errorf("internal error (%v)", r)
		}
	}()
	over := map[string]float64{}
	for k, x := range opts.overrides {
		over[k] = x
	}
	over[sw.Param] = v
	m, err := opts.Recheck(over)
	if err != nil {
		p.err = err
		return p
	}
	// The sweep's own statements, as checked with the new value (an
	// expected value may depend on the swept quantity).
	inner := *m
	inner.Actions = sw.Actions
	if same := findSweep(m.Actions, sw); same != nil {
		inner.Actions = same.Actions
	}
	sub := *opts
	sub.overrides = over
	res, err := Run(ctx, &inner, &sub)
	p.res, p.m, p.err = res, &inner, err
	return p
}

// gatherSweep turns the per-value results into one table (a row per value,
// or per combination of values when sweeps are nested) and plots (a
// curve per value), and collects the checks.
func gatherSweep(sw *compile.Sweep, points []sweepPoint, res *Result) {
	unit := sw.Unit
	scale := 1.0
	if u, ok := parseUnit(unit); ok && unit != "" {
		scale = u.Scale
	} else {
		unit = ""
	}
	first := points[0].res
	// The grid: this sweep's value, then either the rows of the inner
	// sweep or the scalar results each point was asked to show.
	g := SweepTable{Title: "Sweep over " + sw.Param, Columns: []string{sw.Param}, Units: []string{unitOrSI(unit, points[0].m, sw.Param)}}
	tcols := []report.Column{{Name: sw.Param, Unit: unit}}
	if len(first.Sweeps) > 0 {
		inner := first.Sweeps[len(first.Sweeps)-1]
		g.Title = "Sweep over " + sw.Param + " and " + strings.TrimPrefix(inner.Title, "Sweep over ")
		g.Columns = append(g.Columns, inner.Columns...)
		g.Units = append(g.Units, inner.Units...)
		for i, c := range inner.Columns {
			tcols = append(tcols, report.Column{Name: c, Unit: inner.Units[i]})
		}
		for _, p := range points {
			if len(p.res.Sweeps) == 0 {
				continue
			}
			for _, row := range p.res.Sweeps[len(p.res.Sweeps)-1].Rows {
				g.Rows = append(g.Rows, append([]float64{p.value}, row...))
			}
		}
	} else {
		var shown []int
		for i, sc := range first.Scalars {
			if sc.shown {
				shown = append(shown, i)
				g.Columns = append(g.Columns, sc.Label)
				g.Units = append(g.Units, sc.Unit)
				tcols = append(tcols, report.Column{Name: sc.Label, Unit: sc.Unit})
			}
		}
		for _, p := range points {
			row := []float64{p.value}
			for _, i := range shown {
				v := math.NaN()
				if i < len(p.res.Scalars) {
					v = p.res.Scalars[i].Value
				}
				row = append(row, v)
			}
			g.Rows = append(g.Rows, row)
		}
	}
	res.Sweeps = append(res.Sweeps, g)
	if len(g.Columns) > 1 {
		t := &report.Table{Title: g.Title, Columns: tcols}
		for _, row := range g.Rows {
			r := append([]float64(nil), row...)
			r[0] /= scale
			t.Rows = append(t.Rows, r)
		}
		res.Outputs = append(res.Outputs, Output{Kind: "table", Table: t})
	}
	for _, p := range points {
		for _, ch := range p.res.Checks {
			ch.Text = fmt.Sprintf("%s (with %s = %s)", ch.Text, sw.Param, formatValue(p.value, sw.Unit))
			res.Checks = append(res.Checks, ch)
		}
	}
	// Plots: each plot of the first point becomes a family with one curve
	// per value (the last curve of that plot at each value).
	for k, o := range first.Outputs {
		if o.Kind != "plot" {
			continue
		}
		fam := &report.Plot{Title: o.Plot.Title + " — sweep over " + sw.Param, X: o.Plot.X, Y: o.Plot.Y, Ordered: true}
		for _, p := range points {
			if k >= len(p.res.Outputs) || p.res.Outputs[k].Plot == nil || len(p.res.Outputs[k].Plot.Series) == 0 {
				continue
			}
			s := p.res.Outputs[k].Plot.Series[len(p.res.Outputs[k].Plot.Series)-1]
			s.Name = sw.Param + " = " + formatValue(p.value, sw.Unit)
			if len(p.res.Outputs[k].Plot.Series) > 1 {
				s.Name += ", " + p.res.Outputs[k].Plot.Series[len(p.res.Outputs[k].Plot.Series)-1].Name
			}
			fam.Series = append(fam.Series, s)
		}
		res.Outputs = append(res.Outputs, Output{Kind: "plot", Plot: fam})
	}
	// Error estimates of each swept case, labelled by its values.
	for _, p := range points {
		for _, e := range p.res.Estimates {
			label := sw.Param + " = " + formatValue(p.value, sw.Unit)
			if e.Case != "" {
				label += ", " + e.Case
			}
			e.Case = label
			res.Estimates = append(res.Estimates, e)
		}
	}
	// Printed text and values, in order, labelled by value.
	for _, p := range points {
		for _, o := range p.res.Outputs {
			if o.Kind == "text" || o.Kind == "value" {
				res.Outputs = append(res.Outputs, Output{Kind: "text", Text: fmt.Sprintf("[%s = %s] %s", sw.Param, formatValue(p.value, sw.Unit), o.Text)})
			}
		}
		addStatsInfo(&res.Solver, p.res.Solver)
	}
}

// unitOrSI is the SI unit of a swept quantity for the JSON.
func unitOrSI(unit string, m *compile.Model, name string) string {
	if m != nil {
		for _, q := range m.Quantities {
			if q.Name == name {
				return unitOf(q.Dim)
			}
		}
	}
	if u, ok := parseUnit(unit); ok && unit != "" {
		return unitOf(u.Dim)
	}
	return "1"
}

func addStatsInfo(dst *SolverInfo, s SolverInfo) {
	dst.Steps += s.Steps
	dst.Rejected += s.Rejected
	dst.FuncEvals += s.FuncEvals
	dst.JacEvals += s.JacEvals
	dst.Factorizations += s.Factorizations
}

// findSweep finds, among actions (and nested sweeps), the sweep at the
// same place in the source as sw.
func findSweep(actions []compile.Action, sw *compile.Sweep) *compile.Sweep {
	for _, a := range actions {
		if s, ok := a.(*compile.Sweep); ok {
			if s.Def == sw.Def {
				return s
			}
			if f := findSweep(s.Actions, sw); f != nil {
				return f
			}
		}
	}
	return nil
}
