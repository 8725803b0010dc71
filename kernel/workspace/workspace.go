package workspace

import (
	"context"
	"fmt"
	"strings"
	"sync"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
	"github.com/massline/massline/engine"
	"github.com/massline/massline/kernel"
)

// Workspace is a notebook session's state. Its methods are safe for
// concurrent use, but cells run one at a time.
type Workspace struct {
	mu    sync.Mutex
	cells []*dsl.File
	n     int
	// Dir is the directory relative to which included files and data
	// files are found ("" is the current directory).
	Dir string
	// Name, when set, names cells in diagnostics as Name[N] (a notebook's
	// path: the same names massline check uses); otherwise cell[N].
	Name string
}

// New returns an empty workspace.
func New() *Workspace { return &Workspace{} }

// Reset clears the workspace.
func (w *Workspace) Reset() {
	w.mu.Lock()
	w.cells = nil
	w.mu.Unlock()
}

// Cells returns the number of cells the workspace holds.
func (w *Workspace) Cells() int {
	w.mu.Lock()
	defer w.mu.Unlock()
	return len(w.cells)
}

// Info describes the language for kernel_info.
func (w *Workspace) Info() kernel.LanguageInfo {
	return kernel.LanguageInfo{
		Name: "massline", Version: fmt.Sprint(compile.LanguageVersion), MIMEType: "text/x-massline",
		FileExtension: ".mln", Banner: "massline " + engine.Version + " — diffusion in porous particles, beads, pellets and slabs",
		ImplVersion: engine.Version,
		HelpLinks:   []kernel.HelpLink{{Text: "massline language reference", URL: "https://github.com/massline/massline#the-language"}},
	}
}

// Execute runs one cell.
func (w *Workspace) Execute(ctx context.Context, code string, sink kernel.Sink) (kernel.Bundle, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	w.n++
	name := fmt.Sprintf("cell[%d]", w.n)
	switch {
	case w.Name != "":
		name = fmt.Sprintf("%s[%d]", w.Name, w.n)
	case w.Dir != "":
		name = w.Dir + "/" + name
	}
	f, diags := dsl.Parse(name, code)
	if diags.HasErrors() {
		return nil, cellError("SyntaxError", diags, code, name)
	}
	needsRun := false
	for _, s := range f.Stmts {
		switch s.(type) {
		case *dsl.Show, *dsl.Expect, *dsl.Sweep, *dsl.Fit:
			needsRun = true
		}
	}
	m, more := compile.Check(f, &compile.Options{Previous: w.cells, Redefine: true, Lenient: !needsRun})
	diags.Append(more)
	if m == nil {
		return nil, cellError("CheckError", diags, code, name)
	}
	for _, d := range diags {
		if d.Severity != diag.Error {
			sink.Stream("stderr", diag.Text(diag.List{d}, diag.Sources{name: code}))
		}
	}
	var res *engine.Result
	var err error
	if needsRun {
		opts := &engine.Options{Recheck: engine.RecheckFunc(f, &compile.Options{Previous: w.cells, Redefine: true})}
		res, err = engine.Run(ctx, m, opts)
	} else {
		res, err = engine.Run(ctx, withoutRun(m), nil)
	}
	if err != nil {
		name := "RunError"
		if strings.Contains(err.Error(), "interrupted") {
			name = "Interrupted"
		}
		return nil, &kernel.CellError{Name: name, Value: err.Error(), Traceback: []string{err.Error()}}
	}
	var result kernel.Bundle
	reset := false
	for _, s := range f.Stmts {
		if _, ok := s.(*dsl.Reset); ok {
			reset = true
		}
	}
	for _, o := range res.Outputs {
		switch o.Kind {
		case "text":
			sink.Stream("stdout", o.Text)
		case "note":
			sink.Stream("stderr", o.Text)
		case "value":
			result = kernel.Bundle{"text/plain": o.Text, "application/json": map[string]any{"value_si": finite([]float64{o.Value})[0], "unit_si": o.Unit}}
		default:
			sink.Display(Bundle(o))
		}
	}
	if needsRun && len(res.Outputs) > 0 {
		sink.Stream("stdout", "Caution: "+res.Caution+"\n")
	}
	if reset {
		w.cells = nil
		sink.Stream("stdout", "workspace cleared\n")
	} else {
		w.cells = append(w.cells, f)
	}
	return result, nil
}

// withoutRun drops the run so that a cell that only declares things does
// not solve the model.
func withoutRun(m *compile.Model) *compile.Model {
	c := *m
	c.Run = nil
	return &c
}

// Bundle turns one output into a MIME bundle: a plot as image/svg+xml, a
// table as text/html (and text/csv), each with a text/plain alternative
// and the numbers as application/json.
func Bundle(o engine.Output) kernel.Bundle {
	switch o.Kind {
	case "plot", "map":
		b := kernel.Bundle{"image/svg+xml": o.SVG(), "text/plain": o.String()}
		if o.Plot != nil {
			b["application/json"] = plotJSON(o)
		}
		return b
	case "table":
		return kernel.Bundle{"text/html": o.HTML(), "text/plain": o.String(), "text/csv": o.Table.CSV(), "application/json": tableJSON(o)}
	}
	return kernel.Bundle{"text/plain": o.String()}
}

func plotJSON(o engine.Output) map[string]any {
	var series []map[string]any
	for _, s := range o.Plot.Series {
		series = append(series, map[string]any{"name": s.Name, "x": finite(s.X), "y": finite(s.Y)})
	}
	return map[string]any{"title": o.Plot.Title, "x_label": o.Plot.X.Label, "x_unit": o.Plot.X.Unit,
		"y_label": o.Plot.Y.Label, "y_unit": o.Plot.Y.Unit, "series": series}
}

func tableJSON(o engine.Output) map[string]any {
	var cols []map[string]string
	for _, c := range o.Table.Columns {
		cols = append(cols, map[string]string{"name": c.Name, "unit": c.Unit})
	}
	var rows [][]any
	for _, r := range o.Table.Rows {
		rows = append(rows, finite(r))
	}
	return map[string]any{"title": o.Table.Title, "columns": cols, "rows": rows, "notes": o.Table.Notes}
}

func finite(v []float64) []any {
	out := make([]any, len(v))
	for i, x := range v {
		if x != x || x > 1e308 || x < -1e308 {
			out[i] = nil
		} else {
			out[i] = x
		}
	}
	return out
}

// cellError renders diagnostics as the error of a cell: the traceback
// shows each message with the offending line of the cell and a caret.
func cellError(name string, diags diag.List, code, file string) error {
	errs := diags.Errors()
	text := diag.Text(errs, diag.Sources{file: code})
	value := ""
	if len(errs) > 0 {
		value = errs[0].Message
		if len(errs) > 1 {
			value += fmt.Sprintf(" (and %d more)", len(errs)-1)
		}
	}
	return &kernel.CellError{Name: name, Value: value, Traceback: strings.Split(strings.TrimRight(text, "\n"), "\n")}
}
