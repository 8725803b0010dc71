package engine

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/units"
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

// gatherSweep turns the per-value results into one table (a row per value)
// and plots (a curve per value), and collects the checks.
func gatherSweep(sw *compile.Sweep, points []sweepPoint, res *Result) {
	unit := sw.Unit
	scale := 1.0
	if u, ok := parseUnit(unit); ok && unit != "" {
		scale = u.Scale
	} else {
		unit = ""
	}
	// The table: the swept value, then every scalar output of the first
	// point (time to a fraction, effectiveness…) and the end value of
	// every time series.
	t := &report.Table{Title: "Sweep over " + sw.Param, Columns: []report.Column{{Name: sw.Param, Unit: unit}}}
	first := points[0].res
	type col struct {
		scalar int // index into Scalars, or -1
		series int // index into Series, or -1
	}
	var cols []col
	for i, s := range first.Scalars {
		t.Columns = append(t.Columns, report.Column{Name: s.Name + " " + s.Species, Unit: s.Unit})
		cols = append(cols, col{scalar: i, series: -1})
	}
	for _, p := range points {
		row := []float64{p.value / scale}
		for _, c := range cols {
			v := math.NaN()
			if c.scalar >= 0 && c.scalar < len(p.res.Scalars) {
				v = p.res.Scalars[c.scalar].Value
			}
			row = append(row, v)
		}
		t.Rows = append(t.Rows, row)
		for _, ch := range p.res.Checks {
			ch.Text = fmt.Sprintf("%s (with %s = %s)", ch.Text, sw.Param, formatValue(p.value, sw.Unit))
			res.Checks = append(res.Checks, ch)
		}
	}
	if len(cols) > 0 {
		res.Outputs = append(res.Outputs, Output{Kind: "table", Table: t})
	}
	// Plots: each plot of the first point becomes a family with one curve
	// per value (the first curve of that plot at each value).
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
			fam.Series = append(fam.Series, s)
		}
		res.Outputs = append(res.Outputs, Output{Kind: "plot", Plot: fam})
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
	for _, p := range points {
		res.Scalars = append(res.Scalars, Scalar{Name: "sweep:" + sw.Param, Unit: units.Dimensionless.String(), Value: p.value})
	}
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
