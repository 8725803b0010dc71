package engine

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"sort"
	"time"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
	"github.com/massline/massline/solvers"
)

// Version is the version of massline that produced a result.
const Version = "0.1.0"

// Options controls a run. A nil *Options means the defaults.
type Options struct {
	// Settings override the model's solver settings where non-zero.
	Settings compile.Settings
	// Sources, when not nil, receives the text of every file read (the
	// model and its includes), for rendering diagnostics.
	Sources diag.Sources
	// Recheck rebuilds the model with changed quantities, for sweeps;
	// RunSource sets it. Without it a sweep is refused.
	Recheck Recheck

	// Extrapolate solves every body on two grids (N/2 and N cells of the
	// same family) and combines them by Richardson extrapolation,
	// (4·v_N − v_N/2)/3, which cancels the leading h² term of the spatial
	// error (L. F. Richardson, Phil. Trans. R. Soc. A 210 (1911) 307–357).
	Extrapolate bool
	// Estimate adds an estimate of the spatial error (|v_N − v_N/2|/3,
	// the Richardson estimate of the error of v_N) and of the temporal
	// error (the change when rtol is divided by 100) of each series.
	Estimate bool

	overrides map[string]float64 // values fixed by enclosing sweeps
}

// Error is a failure to run a checked model (the solver could not
// converge, a construct has no solver yet). It points at the statement
// concerned.
type Error struct {
	Where diag.Range
	Msg   string
	Err   error
}

// Error implements error.
func (e *Error) Error() string {
	if e.Where.Start.IsValid() {
		return e.Where.String() + ": " + e.Msg
	}
	return e.Msg
}

// Unwrap returns the underlying error.
func (e *Error) Unwrap() error { return e.Err }

// RunFile reads, parses, checks and runs a model file. Diagnostics of
// the parse and check come back in diags; when there are errors, the
// result is nil and err is diags.Err().
func RunFile(ctx context.Context, path string, opts *Options) (*Result, diag.List, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, err
	}
	return RunSource(ctx, path, string(b), opts)
}

// RunSource is RunFile on text already read.
func RunSource(ctx context.Context, name, src string, opts *Options) (*Result, diag.List, error) {
	f, diags := dsl.Parse(name, src)
	var copts *compile.Options
	if opts != nil && opts.Sources != nil {
		copts = &compile.Options{Sources: opts.Sources}
	}
	m, more := compile.Check(f, copts)
	diags.Append(more)
	diags.Sort()
	if diags.HasErrors() {
		return nil, diags, diags.Err()
	}
	o := Options{}
	if opts != nil {
		o = *opts
	}
	if o.Recheck == nil {
		o.Recheck = RecheckFunc(f, nil)
	}
	res, err := Run(ctx, m, &o)
	return res, diags, err
}

// RecheckFunc returns a Recheck that checks f again (with the given
// options, e.g. a notebook's earlier cells) with values overridden.
func RecheckFunc(f *dsl.File, base *compile.Options) Recheck {
	return func(override map[string]float64) (*compile.Model, error) {
		o := compile.Options{}
		if base != nil {
			o = *base
		}
		o.Override = override
		m, diags := compile.Check(f, &o)
		if m == nil {
			return nil, diags.Err()
		}
		return m, nil
	}
}

// CheckSource parses and checks a model text.
func CheckSource(name, src string, copts *compile.Options) (*compile.Model, diag.List) {
	f, diags := dsl.Parse(name, src)
	m, more := compile.Check(f, copts)
	diags.Append(more)
	diags.Sort()
	if diags.HasErrors() {
		return nil, diags
	}
	return m, diags
}

// Run solves a checked model and evaluates its output statements.
func Run(ctx context.Context, m *compile.Model, opts *Options) (res *Result, err error) {
	defer func() {
		if r := recover(); r != nil {
			res, err = nil, &Error{Msg: fmt.Sprintf("internal error while solving (%v); please report this model", r)}
		}
	}()
	if opts == nil {
		opts = &Options{}
	}
	res = &Result{
		Model:   ModelInfo{File: m.Name, SHA256: m.Hash, Version: Version},
		Caution: Caution,
	}
	if m.Run == nil {
		// A model without a run statement still prints and evaluates.
		err = runActions(ctx, m, nil, res, opts)
		return res, err
	}
	set := settings(m.Settings, opts.Settings)
	res.Solver = SolverInfo{Method: set.Method, RTol: set.RTol, ATol: set.ATol}
	sols := map[string]*bodySolution{}
	extrapolate := opts.Extrapolate || m.Settings.Extrapolate
	estimate := opts.Estimate || m.Settings.Estimate
	for _, b := range m.Bodies {
		sol, err := solveBody(ctx, m, b, set)
		if err != nil {
			return nil, err
		}
		addStats(&res.Solver, sol)
		if extrapolate || estimate {
			coarse := sol.set
			coarse.Cells = max(3, sol.cells/2)
			if b.Shape == compile.ShortCylinder {
				coarse.Cells = max(16, sol.cells/4) // half the cells in each direction
			}
			c, err := solveBody(ctx, m, b, coarse)
			if err != nil {
				return nil, err
			}
			addStats(&res.Solver, c)
			var tight *bodySolution
			if estimate {
				ts := sol.set
				ts.RTol = set.RTol / 100
				ts.Cells = sol.cells
				if tight, err = solveBody(ctx, m, b, ts); err != nil {
					return nil, err
				}
				addStats(&res.Solver, tight)
			}
			res.Estimates = append(res.Estimates, estimates(m, sol, c, tight, extrapolate)...)
			if extrapolate {
				sol.coarse = c
				res.Solver.Method += " + Richardson extrapolation in space"
			}
		}
		sols[b.Name] = sol
	}
	res.Solver.WallSeconds = res.Solver.wall.Seconds()
	for _, b := range m.Bodies {
		for _, n := range sols[b.Name].notes {
			res.Notes = append(res.Notes, n)
			res.Outputs = append(res.Outputs, Output{Kind: "note", Text: "Note: " + n + "\n"})
		}
	}
	if !m.Run.Steady {
		res.Times = append([]float64(nil), m.Run.Times...)
	}
	for _, b := range m.Bodies {
		sols[b.Name].fill(m, res)
	}
	err = runActions(ctx, m, sols, res, opts)
	if len(res.Estimates) > 0 {
		res.Outputs = append(res.Outputs, Output{Kind: "table", Table: estimatesTable(res.Estimates)})
	}
	// Every table and plot carries the footer: model hash, massline
	// version, solver settings and the mass-ledger closure.
	footer := res.Footer()
	for _, o := range res.Outputs {
		switch o.Kind {
		case "table":
			o.Table.Notes = append(o.Table.Notes, footer)
		case "plot":
			o.Plot.Notes = append(o.Plot.Notes, footer)
		case "map":
			o.Map.Notes = append(o.Map.Notes, footer)
		}
	}
	return res, err
}

func settings(model, over compile.Settings) compile.Settings {
	s := model
	if over.RTol > 0 {
		s.RTol = over.RTol
	}
	if over.ATol > 0 {
		s.ATol = over.ATol
	}
	if over.Cells > 0 {
		s.Cells = over.Cells
	}
	if over.Method != "" {
		s.Method = over.Method
	}
	if over.Cluster > 0 {
		s.Cluster = over.Cluster
	}
	if s.RTol == 0 {
		s.RTol = DefaultRTol
	}
	if s.ATol == 0 {
		s.ATol = 0 // chosen per body from the concentration scale
	}
	if s.Method == "" {
		s.Method = "bdf"
	}
	return s
}

// DefaultRTol is the relative tolerance used when a model sets none.
const DefaultRTol = 1e-6

func addStats(si *SolverInfo, s *bodySolution) {
	si.Steps += s.stats.Steps
	si.Rejected += s.stats.Rejected
	si.FuncEvals += s.stats.FuncEvals
	si.JacEvals += s.stats.JacEvals
	si.Factorizations += s.stats.Factorizations
	si.wall += s.stats.Wall
	si.Cells = max(si.Cells, s.cells)
	if s.atol > si.ATol {
		si.ATol = s.atol
	}
	if s.stats.Method != "" {
		si.Method = s.stats.Method
	}
}

// interruptErr turns a cancelled context into a clear error.
func interruptErr(err error) error {
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return &Error{Msg: "interrupted", Err: err}
	}
	return err
}

// unitOf returns the SI unit text of a dimension for tables and JSON.
func unitOf(d units.Dim) string {
	if d.IsZero() {
		return "1"
	}
	return d.String()
}

var _ = time.Second
var _ = math.Pi
var _ = sort.Ints
var _ solvers.Status
