package engine

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/report"
	"github.com/massline/massline/solvers"
)

// fitLevel is the confidence level of the reported intervals.
const fitLevel = 0.95

// fitColumn is one measured series, matched to a model result.
type fitColumn struct {
	series *compile.FitSeries
	name   string  // column name in the file
	unit   string  // unit text as written in the header ("" when none)
	scale  float64 // SI per column unit
	t, y   []float64
	weight float64 // 1 / range of y
}

// fitData is the content of a fit's data file, in SI.
type fitData struct {
	file     string  // base name, for messages
	timeUnit string  // unit text of the time column
	timeSc   float64 // SI per time-column unit
	cols     []*fitColumn
	times    []float64 // 0 and the distinct data times, ascending
	last     float64   // the last data time
	points   int
}

// readFitData reads and converts the data file of a fit.
func readFitData(f *compile.Fit) (*fitData, error) {
	b, err := os.ReadFile(f.Data)
	if err != nil {
		return nil, fmt.Errorf("cannot read the data file: %v", err)
	}
	return parseFitData(filepath.Base(f.Data), b, f)
}

// columnName splits a header cell "name [unit]" as the checker does.
func columnName(h string) (name, unit string) {
	name, unit, _ = strings.Cut(h, "[")
	return strings.TrimSpace(name), strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(unit), "]"))
}

// parseFitData parses the CSV text b of the file named file.
func parseFitData(file string, b []byte, f *compile.Fit) (*fitData, error) {
	b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")) // a byte-order mark from a spreadsheet export
	cr := csv.NewReader(bytes.NewReader(b))
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err != nil {
		if err == io.EOF {
			return nil, fmt.Errorf("%s is empty: it needs a header line such as \"t [min],F [1]\" and data", file)
		}
		return nil, fmt.Errorf("%s: %v", file, err)
	}
	if len(header) == 1 && strings.Contains(header[0], ";") {
		return nil, fmt.Errorf("%s is not comma-separated (its header uses ';'); save it as CSV with commas", file)
	}
	index := map[string]int{}
	colUnits := map[string]string{}
	var names []string
	for i, h := range header {
		n, u := columnName(h)
		if _, dup := index[n]; !dup {
			index[n], colUnits[n] = i, u
		}
		names = append(names, n)
	}
	d := &fitData{file: file, timeSc: f.Time.Scale}
	ti, ok := index[f.Time.Name]
	if !ok {
		return nil, fmt.Errorf("%s has no column %q (its columns are %s)", file, f.Time.Name, strings.Join(names, ", "))
	}
	d.timeUnit = colUnits[f.Time.Name]
	var idx []int
	for k := range f.Series {
		s := &f.Series[k]
		i, ok := index[s.Column.Name]
		if !ok {
			return nil, fmt.Errorf("%s has no column %q (its columns are %s)", file, s.Column.Name, strings.Join(names, ", "))
		}
		d.cols = append(d.cols, &fitColumn{series: s, name: s.Column.Name, unit: colUnits[s.Column.Name], scale: s.Column.Scale})
		idx = append(idx, i)
	}
	cell := func(rec []string, i, line int, col string) (v float64, present bool, err error) {
		if i >= len(rec) {
			return 0, false, nil
		}
		text := strings.TrimSpace(rec[i])
		if text == "" {
			return 0, false, nil
		}
		v, perr := strconv.ParseFloat(text, 64)
		if perr != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			what := "is not a number"
			if perr == nil {
				what = "is not a finite number"
			}
			return 0, false, fmt.Errorf("%s, line %d, column %d (%q): %q %s", file, line, i+1, col, text, what)
		}
		return v, true, nil
	}
	seen := map[float64]bool{0: true}
	d.times = []float64{0}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %v", file, err)
		}
		line, _ := cr.FieldPos(0)
		blank := true
		for _, c := range rec {
			blank = blank && strings.TrimSpace(c) == ""
		}
		if blank {
			continue
		}
		if len(rec) > len(header) {
			extra := false
			for _, c := range rec[len(header):] {
				extra = extra || strings.TrimSpace(c) != ""
			}
			if extra {
				return nil, fmt.Errorf("%s, line %d: %d cells, but the header names %d columns", file, line, len(rec), len(header))
			}
		}
		tv, ok, err := cell(rec, ti, line, f.Time.Name)
		if err != nil {
			return nil, err
		}
		if !ok {
			return nil, fmt.Errorf("%s, line %d, column %d (%q): the time is missing", file, line, ti+1, f.Time.Name)
		}
		t := tv * f.Time.Scale
		if t < 0 {
			return nil, fmt.Errorf("%s, line %d, column %d (%q): the time %s is negative; times count from the start of the run", file, line, ti+1, f.Time.Name, strings.TrimSpace(rec[ti]))
		}
		some := false
		for k, c := range d.cols {
			v, ok, err := cell(rec, idx[k], line, c.name)
			if err != nil {
				return nil, err
			}
			if ok {
				c.t = append(c.t, t)
				c.y = append(c.y, v*c.scale)
				some = true
				d.points++
			}
		}
		if some && !seen[t] {
			seen[t] = true
			d.times = append(d.times, t)
		}
		d.last = math.Max(d.last, t)
	}
	for _, c := range d.cols {
		if len(c.y) == 0 {
			return nil, fmt.Errorf("%s: column %q holds no values", file, c.name)
		}
		lo, hi, big := c.y[0], c.y[0], 0.0
		for _, v := range c.y {
			lo, hi, big = math.Min(lo, v), math.Max(hi, v), math.Max(big, math.Abs(v))
		}
		spread := hi - lo
		if spread <= 1e-12*big {
			spread = big
		}
		if spread == 0 {
			spread = 1
		}
		c.weight = 1 / spread
	}
	sort.Float64s(d.times)
	return d, nil
}

// fitter evaluates the model for trial values of the fitted quantities.
type fitter struct {
	ctx    context.Context
	fit    *compile.Fit
	opts   *Options
	data   *fitData
	until  float64 // end of the runs
	bodies []string
}

// solve rechecks the model with values x of the fitted quantities and
// solves the bodies the fit compares, with output times times.
func (f *fitter) solve(x []float64, times []float64) (*compile.Model, map[string]*bodySolution, error) {
	over := map[string]float64{}
	for k, v := range f.opts.overrides {
		over[k] = v
	}
	for j, p := range f.fit.Params {
		over[p.Name] = x[j]
	}
	m, err := f.opts.Recheck(over)
	if err != nil {
		return nil, nil, err
	}
	if m == nil || m.Run == nil {
		return nil, nil, errors.New("the model has no run")
	}
	run := *m.Run
	run.Times = times
	run.Until = math.Max(run.Until, f.until)
	mm := *m
	mm.Run = &run
	mm.Actions = nil
	set := settings(mm.Settings, f.opts.Settings)
	sols := map[string]*bodySolution{}
	for _, name := range f.bodies {
		for _, b := range mm.Bodies {
			if b.Name == name {
				sol, err := solveBody(f.ctx, &mm, b, set)
				if err != nil {
					return nil, nil, err
				}
				sols[name] = sol
			}
		}
		if sols[name] == nil {
			return nil, nil, fmt.Errorf("the model has no body %s", name)
		}
	}
	return &mm, sols, nil
}

// residual fills r with the weighted differences model − data at x.
func (f *fitter) residual(x, r []float64) (err error) {
	defer func() {
		if v := recover(); v != nil {
			err = fmt.Errorf("internal error while solving (%v); please report this model", v)
		}
	}()
	m, sols, err := f.solve(x, f.data.times)
	if err != nil {
		return err
	}
	k := 0
	for _, c := range f.data.cols {
		res := c.series.Result
		s := sols[res.Body]
		for i, t := range c.t {
			v := s.value(res.Kind, res.Species, s.at(t))
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%s(%s) has no value at t = %s (an uptake or release fraction needs an end state that differs from the start)",
					res.Kind, speciesLabel(m, res), timeLabel(t))
			}
			r[k] = (v - c.y[i]) * c.weight
			k++
		}
	}
	return nil
}

// paramUnit is the unit a fitted quantity is shown in: the one the user
// wrote in its let statement, else its SI unit.
type paramUnit struct {
	text string
	unit units.Unit
	dim  units.Dim
}

func fitParamUnit(m *compile.Model, name string) paramUnit {
	for _, q := range m.Quantities {
		if q.Name != name {
			continue
		}
		if q.Unit != "" {
			if u, ok := parseUnit(q.Unit); ok && u.Dim == q.Dim {
				return paramUnit{text: q.Unit, unit: u, dim: q.Dim}
			}
		}
		si := units.Unit{Scale: 1, Dim: q.Dim, Text: unitOf(q.Dim)}
		return paramUnit{text: unitOf(q.Dim), unit: si, dim: q.Dim}
	}
	return paramUnit{text: "", unit: units.One}
}

func (u paramUnit) show(v float64) float64 { return u.unit.FromSI(v) }

func (u paramUnit) format(v float64) string {
	s := report.FormatNumber(u.show(v), 5)
	if u.text != "" && u.text != "1" {
		s += " " + u.text
	}
	return s
}

// runFit adjusts the quantities of a fit statement to its data and adds
// the fitted values with their confidence intervals, the correlations,
// the residuals and a plot per series to res.
//
// The data file is CSV: a header line naming the columns with their units
// in brackets ("t [min],F [1]"), then one line per time. Lines starting
// with # are comments, blank lines are skipped, an empty cell is a missing
// measurement (that series has no value at that time), and any other cell
// must be a finite number. Values are converted to SI with the column's
// unit.
//
// For each trial vector of the fitted quantities the model is checked
// again with those values (Options.Recheck, as a sweep does) and solved
// with the data times as its output times (the run is extended to the last
// data time when it ends earlier and has no stages). The residual of a
// data point is (model − measured)/range, where range is the spread
// (max − min) of that series' measured values (their largest magnitude if
// they are all equal, 1 if they are all zero): series of different units
// and sizes then weigh comparably, and within a series every point counts
// the same — the implicit assumption is that the measurement error of a
// series is of similar size at every time and scales with its range. The
// sum of squares is minimised by solvers.LevenbergMarquardt within the
// bounds of the fit statement, from the values the quantities have in the
// model.
//
// Confidence intervals are the linearised ones: covariance s²(JᵀJ)⁻¹ at
// the solution, s² the residual variance with m − n degrees of freedom,
// limits x ∓ t·√C_jj with Student's t at 97.5 %. They hold for small,
// independent measurement errors of equal size within a series and a model
// that is right; they say nothing about a wrong model. Like every result,
// fitted values are estimates to be checked against further measurements.
func runFit(ctx context.Context, m *compile.Model, a *compile.Fit, opts *Options, res *Result) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = &Error{Where: a.Def, Msg: fmt.Sprintf("internal error while fitting (%v); please report this model", r)}
		}
	}()
	fail := func(format string, args ...any) error {
		return &Error{Where: a.Def, Msg: fmt.Sprintf(format, args...)}
	}
	if opts == nil || opts.Recheck == nil {
		return fail("this fit cannot be run: the model cannot be rebuilt with other values")
	}
	if m.Run == nil || m.Run.Steady {
		return fail("a fit compares results against time; it needs a run until … statement, not a steady run")
	}
	data, err := readFitData(a)
	if err != nil {
		return fail("%v", err)
	}
	n := len(a.Params)
	if data.points < n {
		return fail("%s holds %d values, fewer than the %d quantities to fit", data.file, data.points, n)
	}
	f := &fitter{ctx: ctx, fit: a, opts: opts, data: data, until: m.Run.Until}
	if data.last > m.Run.Until*(1+1e-12) {
		if len(m.Stages) > 0 {
			return fail("the data run to %s but the stages end at %s; the model cannot be compared beyond its last stage", timeLabel(data.last), timeLabel(m.Run.Until))
		}
		f.until = data.last
	}
	for _, c := range data.cols {
		if !containsString(f.bodies, c.series.Result.Body) {
			f.bodies = append(f.bodies, c.series.Result.Body)
		}
	}
	pu := make([]paramUnit, n)
	x0 := make([]float64, n)
	lo, hi := make([]float64, n), make([]float64, n)
	for j, p := range a.Params {
		pu[j] = fitParamUnit(m, p.Name)
		lo[j], hi[j] = p.Low, p.High
		x0[j] = math.NaN()
		for _, q := range m.Quantities {
			if q.Name == p.Name {
				x0[j] = q.Value
			}
		}
		x0[j] = math.Min(hi[j], math.Max(lo[j], x0[j]))
	}
	set := settings(m.Settings, opts.Settings)
	problem := &solvers.LSProblem{M: data.points, N: n, Residual: f.residual, Lower: lo, Upper: hi, Independent: true}
	lms := &solvers.LSSettings{
		MaxIterations: 50,
		// The model is solved to a relative tolerance rtol, so its values
		// carry noise of that size: difference increments of about √rtol
		// balance that noise against truncation (common practice, no
		// source), and tests finer than the noise cannot pass.
		FDStep:  math.Min(1e-2, math.Max(1e-6, math.Sqrt(set.RTol))),
		StepTol: 1e-6,
		CostTol: 1e-9,
		GradTol: 1e-8,
	}
	fitRes, lmErr := solvers.LevenbergMarquardt(ctx, problem, x0, lms)
	if ctx.Err() != nil {
		return interruptErr(ctx.Err())
	}
	if lmErr != nil {
		var re *solvers.ResidualError
		if errors.As(lmErr, &re) && len(re.X) == n {
			var vals []string
			for j, p := range a.Params {
				vals = append(vals, p.Name+" = "+pu[j].format(re.X[j]))
			}
			return &Error{Where: a.Def, Msg: fmt.Sprintf("the fit stopped: the model cannot be solved with %s: %v", strings.Join(vals, ", "), re.Err), Err: lmErr}
		}
		return &Error{Where: a.Def, Msg: "the fit stopped: " + lmErr.Error(), Err: lmErr}
	}
	x := fitRes.X
	ciLo, ciHi := fitRes.ConfidenceIntervals(fitLevel)
	se := fitRes.StdErr()
	for j, p := range a.Params {
		unit := unitOf(pu[j].dim)
		res.Scalars = append(res.Scalars,
			Scalar{Name: "fit:" + p.Name, Unit: unit, Value: x[j]},
			Scalar{Name: "fit_ci95_low:" + p.Name, Unit: unit, Value: ciLo[j]},
			Scalar{Name: "fit_ci95_high:" + p.Name, Unit: unit, Value: ciHi[j]})
	}

	// The table of fitted values.
	pt := &report.Table{Title: "Fitted values against " + data.file}
	rows := make([][]float64, 4)
	for j, p := range a.Params {
		pt.Columns = append(pt.Columns, report.Column{Name: p.Name, Unit: pu[j].text})
		rows[0] = append(rows[0], pu[j].show(x[j]))
		rows[1] = append(rows[1], pu[j].show(ciLo[j]))
		rows[2] = append(rows[2], pu[j].show(ciHi[j]))
		rows[3] = append(rows[3], se[j]/pu[j].unit.Scale)
	}
	pt.Rows = rows
	dof := data.points - n
	pt.Notes = append(pt.Notes, "Rows: 1 fitted value; 2 and 3 lower and upper limits of the 95 % confidence interval; 4 standard error.")
	for j, p := range a.Params {
		line := fmt.Sprintf("%s = %s", p.Name, pu[j].format(x[j]))
		if !math.IsNaN(se[j]) {
			line += fmt.Sprintf(", 95 %% confidence interval %s to %s (± %s %%)",
				report.FormatNumber(pu[j].show(ciLo[j]), 5), pu[j].format(ciHi[j]),
				report.FormatNumber(100*(ciHi[j]-x[j])/math.Abs(x[j]), 3))
		}
		switch {
		case fitRes.AtBound != nil && fitRes.AtBound[j]:
			line += fmt.Sprintf(" — at its bound (%s to %s): the data call for a value beyond it; widen the bounds or review the model; its interval does not apply",
				report.FormatNumber(pu[j].show(p.Low), 5), pu[j].format(p.High))
		case !math.IsNaN(se[j]) && (ciLo[j] < p.Low || ciHi[j] > p.High):
			line += " — the interval reaches beyond the bounds: the data determine " + p.Name + " only weakly, and the linearised interval is a rough guide"
		}
		pt.Notes = append(pt.Notes, line)
	}
	// A quantity the data hardly depend on at the fitted value (a full
	// change of it moves the model by less than 0.1 % of the data's range)
	// is not determined by the fit; say so, since the optimiser then stops
	// where it started.
	if J := fitRes.Jacobian; J != nil && fitRes.M > 0 {
		for j, p := range a.Params {
			norm := 0.0
			for i := 0; i < fitRes.M; i++ {
				v := J[i*n+j] * x[j]
				norm += v * v
			}
			if math.Sqrt(norm) < 1e-3 {
				pt.Notes = append(pt.Notes, fmt.Sprintf("WARNING: near %s the model hardly responds to %s (the results at the data times barely change with it); the fit cannot determine it from there — try another starting value", pu[j].format(x[j]), p.Name))
			}
		}
	}
	if fitRes.Covariance == nil {
		pt.Notes = append(pt.Notes, "No confidence intervals: these data cannot tell the fitted quantities apart (the sensitivity matrix has not full rank), or there are no more values than quantities.")
	}
	quantities := "quantities"
	if n == 1 {
		quantities = "quantity"
	}
	pt.Notes = append(pt.Notes, fmt.Sprintf("%d measured values, %d fitted %s, %d degrees of freedom, Student t = %s. Intervals from the model linearised at the solution; each series weighted by 1/(range of its data).",
		data.points, n, quantities, dof, report.FormatNumber(solvers.StudentTQuantile(1-(1-fitLevel)/2, float64(dof)), 4)))
	status := "converged"
	switch fitRes.Status {
	case solvers.LSStepConvergence:
		status = "converged (steps below tolerance)"
	case solvers.LSCostConvergence:
		status = "converged (sum of squares no longer decreasing)"
	case solvers.LSGradientConvergence:
		status = "converged (gradient zero)"
	case solvers.LSIterationLimit, solvers.LSEvaluationLimit:
		status = "NOT converged (" + fitRes.Status.String() + "): the values are the best found so far; try other starting values or bounds"
	}
	pt.Notes = append(pt.Notes, fmt.Sprintf("Levenberg–Marquardt %s after %d iterations and %d model runs.", status, fitRes.Stats.Iterations, fitRes.Stats.Evaluations))
	res.Outputs = append(res.Outputs, Output{Kind: "table", Table: pt})

	// Correlations between the fitted quantities.
	if n > 1 && fitRes.Covariance != nil {
		ct := &report.Table{Title: "Correlation between the fitted values"}
		corr := fitRes.Correlation()
		for j, p := range a.Params {
			ct.Columns = append(ct.Columns, report.Column{Name: p.Name})
			ct.Rows = append(ct.Rows, corr[j*n:(j+1)*n])
		}
		var order []string
		for _, p := range a.Params {
			order = append(order, p.Name)
		}
		ct.Notes = append(ct.Notes, "Rows in the order of the columns: "+strings.Join(order, ", ")+". Values near ±1 mean the data constrain a combination of the two rather than each.")
		res.Outputs = append(res.Outputs, Output{Kind: "table", Table: ct})
	}

	// Residuals per series, in the units of the data.
	rt := &report.Table{Title: "Residuals of the fit (model − measured)"}
	var rrow []float64
	k := 0
	total := 0.0
	for _, c := range data.cols {
		ss := 0.0
		for range c.y {
			v := fitRes.Residuals[k] / c.weight
			ss += v * v
			total += fitRes.Residuals[k] * fitRes.Residuals[k]
			k++
		}
		rt.Columns = append(rt.Columns, report.Column{Name: "RMS " + c.name, Unit: c.unit})
		rrow = append(rrow, math.Sqrt(ss/float64(len(c.y)))/c.scale)
	}
	rt.Columns = append(rt.Columns, report.Column{Name: "RMS relative to data range"})
	rrow = append(rrow, math.Sqrt(total/float64(data.points)))
	rt.Rows = [][]float64{rrow}
	res.Outputs = append(res.Outputs, Output{Kind: "table", Table: rt})

	// A plot per series: the data and the model at the fitted values.
	times := append([]float64(nil), m.Run.Times...)
	if f.until > m.Run.Until {
		times = append(times, f.until)
	}
	fm, sols, err := f.solve(x, times)
	if err != nil {
		if ctx.Err() != nil {
			return interruptErr(ctx.Err())
		}
		return fail("the model cannot be solved at the fitted values: %v", err)
	}
	tu := displayUnit{Name: data.timeUnit, Scale: data.timeSc}
	if tu.Name == "" || tu.Scale <= 0 {
		tu = timeUnit(f.until)
	}
	for _, c := range data.cols {
		r := c.series.Result
		s := sols[r.Body]
		label := kindLabel[r.Kind] + " " + speciesLabel(fm, r)
		p := &report.Plot{Title: "fit of " + label + " to " + data.file + " (" + c.name + ")",
			X: report.Axis{Label: "time", Unit: tu.Name}, Y: report.Axis{Label: kindLabel[r.Kind], Unit: c.unit}}
		meas := report.Series{Name: "measured " + c.name, Points: true}
		for i := range c.t {
			meas.X = append(meas.X, c.t[i]/tu.Scale)
			meas.Y = append(meas.Y, c.y[i]/c.scale)
		}
		model := report.Series{Name: "model at the fitted values"}
		for i, t := range s.times {
			model.X = append(model.X, t/tu.Scale)
			model.Y = append(model.Y, s.value(r.Kind, r.Species, i)/c.scale)
		}
		p.Series = []report.Series{meas, model}
		res.Outputs = append(res.Outputs, Output{Kind: "plot", Plot: p})
	}
	return nil
}

func containsString(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}
