package notebook

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/massline/massline/kernel"
)

// A small model that solves in a few milliseconds.
const tinyModel = `species s { diffusivity = 1e-9 [m^2/s] }
body b = sphere(radius = 1 [mm])
balance s in b
boundary b.centre: symmetry
boundary b.surface: fixed(1 [mol/m^3])
initially b: s = 0 [mol/m^3]
run until 10 [min] every 5 [min]
settings { cells = 10 }`

func codeCell(src string) *Cell { return &Cell{Type: Code, Source: src} }

func tinyNotebook() *Notebook {
	return &Notebook{Cells: []*Cell{
		{Type: Markdown, Source: "# Tiny\n\nA test notebook."},
		codeCell("let a = 2 [mm]\nprint \"a is \", a"), // 2: stream
		codeCell(tinyModel),             // 3: declarations only
		codeCell("show uptake(s)"),      // 4: table and plot
		codeCell("a * 3"),               // 5: a value
		codeCell("   \n"),               // 6: empty, not run
		codeCell("let bad = a + 3 [s]"), // 7: fails (units)
		codeCell("print \"after\""),     // 8: not reached
	}}
}

func TestExecuteOutputs(t *testing.T) {
	nb := tinyNotebook()
	// Stale outputs of an earlier run must not survive.
	nb.Cells[7].Outputs = []*Output{{Type: Stream, Name: "stdout", Text: "stale"}}
	stale := 99
	nb.Cells[7].ExecutionCount = &stale

	sum, err := Execute(context.Background(), nb, nil)
	var f *Failure
	if !errors.As(err, &f) {
		t.Fatalf("Execute error = %v, want a *Failure", err)
	}
	if f.Cell != 7 || f.ExecutionCount != 5 {
		t.Errorf("failure at cell %d (In [%d]), want cell 7 (In [5])", f.Cell, f.ExecutionCount)
	}
	if sum.Executed != 5 || sum.Skipped != 1 || len(sum.Failures) != 1 {
		t.Errorf("summary %+v: want 5 executed, 1 skipped, 1 failure", sum)
	}
	counts := []any{nil, 1, 2, 3, 4, nil, 5, nil}
	for i, c := range nb.Cells {
		var got any
		if c.ExecutionCount != nil {
			got = *c.ExecutionCount
		}
		if got != counts[i] {
			t.Errorf("cell %d: execution count %v, want %v", i+1, got, counts[i])
		}
	}

	// Cell 2: one stdout stream.
	if o := nb.Cells[1].Outputs; len(o) != 1 || o[0].Type != Stream || o[0].Name != "stdout" || !strings.Contains(o[0].Text, "a is 2 [mm]") {
		t.Errorf("cell 2 outputs: %s", describe(o))
	}
	// Cell 3: declarations give no output.
	if o := nb.Cells[2].Outputs; len(o) != 0 {
		t.Errorf("cell 3 outputs: %s", describe(o))
	}
	// Cell 4: display_data with a table (text/html) and a plot (SVG).
	var svg, table bool
	for _, o := range nb.Cells[3].Outputs {
		if o.Type != DisplayData {
			continue
		}
		if s, ok := o.Data["image/svg+xml"].(string); ok && strings.HasPrefix(strings.TrimSpace(s), "<svg") {
			svg = true
		}
		if s, ok := o.Data["text/html"].(string); ok && strings.Contains(s, "<table") {
			table = true
		}
		if _, ok := o.Data["text/plain"].(string); !ok {
			t.Errorf("cell 4: a display_data lacks text/plain: %v", mimeTypes(o.Data))
		}
	}
	if !svg || !table {
		t.Errorf("cell 4 should show an SVG plot and an HTML table; outputs: %s", describe(nb.Cells[3].Outputs))
	}
	// Cell 5: the value as execute_result with the cell's count.
	o := nb.Cells[4].Outputs
	if len(o) != 1 || o[0].Type != ExecuteResult || o[0].ExecutionCount == nil || *o[0].ExecutionCount != 4 {
		t.Fatalf("cell 5 outputs: %s", describe(o))
	}
	if s, _ := o[0].Data["text/plain"].(string); !strings.Contains(s, "0.006") {
		t.Errorf("cell 5 value %q, want 6 mm in some unit", s)
	}
	// Cell 6: empty, not run.
	if len(nb.Cells[5].Outputs) != 0 {
		t.Errorf("empty cell has outputs: %s", describe(nb.Cells[5].Outputs))
	}
	// Cell 7: an error output that says what is wrong, with a traceback
	// showing the line.
	o = nb.Cells[6].Outputs
	if len(o) != 1 || o[0].Type != Error {
		t.Fatalf("cell 7 outputs: %s", describe(o))
	}
	if o[0].EName == "" || !strings.Contains(o[0].EValue, "cannot add") || !strings.Contains(strings.Join(o[0].Traceback, "\n"), "let bad = a + 3 [s]") {
		t.Errorf("cell 7 error: %q: %q\n%s", o[0].EName, o[0].EValue, strings.Join(o[0].Traceback, "\n"))
	}
	// Cell 8: not reached, stale output cleared.
	if len(nb.Cells[7].Outputs) != 0 {
		t.Errorf("cell 8 kept outputs: %s", describe(nb.Cells[7].Outputs))
	}
	// The notebook says it ran with massline.
	li, _ := nb.Metadata["language_info"].(map[string]any)
	if li["name"] != "massline" {
		t.Errorf("language_info = %v", nb.Metadata["language_info"])
	}

	// The executed notebook is valid nbformat 4.5.
	path := filepath.Join(t.TempDir(), "tiny.ipynb")
	writeTemp(t, path, string(mustMarshal(t, nb)))
	back, err := Read(mustOpen(t, path))
	if err != nil {
		t.Fatal(err)
	}
	if len(back.Cells[3].Outputs) != len(nb.Cells[3].Outputs) {
		t.Error("outputs lost in writing and reading back")
	}
	nbformatValidate(t, path)
}

func TestExecuteKeepGoing(t *testing.T) {
	nb := tinyNotebook()
	nb.Cells = append(nb.Cells, codeCell("let c = nosuchname"))
	sum, err := Execute(context.Background(), nb, &Options{KeepGoing: true})
	if err == nil || len(sum.Failures) != 2 || sum.Skipped != 0 || sum.Executed != 7 {
		t.Fatalf("err %v, summary %+v: want 7 executed, 2 failures", err, sum)
	}
	if sum.Failures[0].Cell != 7 || sum.Failures[1].Cell != 9 {
		t.Errorf("failures at cells %d and %d, want 7 and 9", sum.Failures[0].Cell, sum.Failures[1].Cell)
	}
	var f *Failure
	if !errors.As(err, &f) || f != sum.Failures[0] {
		t.Errorf("the error is not the first failure: %v", err)
	}
	if o := nb.Cells[7].Outputs; len(o) != 1 || !strings.Contains(o[0].Text, "after") {
		t.Errorf("cell 8 after the failure did not run: %s", describe(o))
	}
	if c := nb.Cells[8].ExecutionCount; c == nil || *c != 7 {
		t.Errorf("last cell count %v, want 7", c)
	}
}

// fakeRunner replays canned behaviour to test Execute's bookkeeping.
type fakeRunner struct{ calls int }

func (r *fakeRunner) Execute(ctx context.Context, code string, sink kernel.Sink) (kernel.Bundle, error) {
	r.calls++
	switch code {
	case "streams":
		sink.Stream("stdout", "a")
		sink.Stream("stdout", "b\n")
		sink.Stream("stderr", "warn\n")
		sink.Stream("stdout", "c\n")
		sink.Stream("stdout", "")
	case "nan":
		sink.Display(kernel.Bundle{"text/plain": "x", "application/json": map[string]float64{"v": math.NaN()}})
		return kernel.Bundle{"text/plain": "1", "application/json": []any{1, 2}}, nil
	case "panic":
		panic("boom")
	case "plain error":
		return nil, errors.New("line one\nline two")
	case "cancel":
		return nil, context.Canceled
	}
	return nil, nil
}

func TestExecuteBookkeeping(t *testing.T) {
	nb := &Notebook{Cells: []*Cell{codeCell("streams"), codeCell("nan"), codeCell("panic"), codeCell("plain error"), nil, {Type: Raw, Source: "raw"}}}
	r := &fakeRunner{}
	sum, err := Execute(context.Background(), nb, &Options{Runner: r, KeepGoing: true})
	if err == nil || len(sum.Failures) != 2 {
		t.Fatalf("err %v, %d failures; want the panic and the plain error", err, len(sum.Failures))
	}
	// Adjacent writes to one stream are merged, as a notebook shows them.
	o := nb.Cells[0].Outputs
	if len(o) != 3 || o[0].Text != "ab\n" || o[1].Name != "stderr" || o[2].Text != "c\n" {
		t.Errorf("streams: %s", describe(o))
	}
	// A value that cannot be JSON is left out, with a note on stderr.
	o = nb.Cells[1].Outputs
	if len(o) != 3 || o[0].Type != DisplayData || o[0].Data["application/json"] != nil || o[0].Data["text/plain"] != "x" ||
		o[1].Type != Stream || !strings.Contains(o[1].Text, "application/json") || o[2].Type != ExecuteResult {
		t.Errorf("NaN display: %s", describe(o))
	}
	nb.Cells = append(nb.Cells[:4], nb.Cells[5:]...) // Marshal refuses nil cells
	if _, err := Marshal(nb); err != nil {
		t.Errorf("the executed notebook does not encode: %v", err)
	}
	// A panic in the runner is the cell's error, not the program's end.
	o = nb.Cells[2].Outputs
	if len(o) != 1 || o[0].Type != Error || o[0].EName != "InternalError" || !strings.Contains(o[0].EValue, "boom") {
		t.Errorf("panic: %s", describe(o))
	}
	o = nb.Cells[3].Outputs
	if len(o) != 1 || o[0].EName != "Error" || len(o[0].Traceback) != 2 {
		t.Errorf("plain error: %s", describe(o))
	}

	// A cancelled context stops at once: the cell that saw it fails and
	// the rest are not run, even with KeepGoing.
	nb = &Notebook{Cells: []*Cell{codeCell("cancel"), codeCell("streams"), codeCell("streams")}}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	r = &fakeRunner{}
	sum, err = Execute(ctx, nb, &Options{Runner: r, KeepGoing: true})
	if !errors.Is(err, context.Canceled) || r.calls != 0 || sum.Skipped != 3 {
		t.Errorf("cancelled before start: err %v, %d calls, summary %+v", err, r.calls, sum)
	}
	sum, err = Execute(context.Background(), nb, &Options{Runner: r})
	if !errors.Is(err, context.Canceled) || sum.Executed != 1 || sum.Skipped != 2 || nb.Cells[0].Outputs[0].EName != "Interrupted" {
		t.Errorf("cancelled in a cell: err %v, summary %+v, outputs %s", err, sum, describe(nb.Cells[0].Outputs))
	}

	if _, err := Execute(context.Background(), nil, nil); err == nil {
		t.Error("Execute(nil): no error")
	}
}

// TestExecuteDemos runs every demo notebook: each must run without a
// failing cell, say that its numbers are invented, and end with the
// safety caution.
func TestExecuteDemos(t *testing.T) {
	for _, path := range demoNotebooks(t) {
		t.Run(filepath.Base(path), func(t *testing.T) {
			nb, err := Read(mustOpen(t, path))
			if err != nil {
				t.Fatal(err)
			}
			sum, err := Execute(context.Background(), nb, &Options{Dir: filepath.Dir(path)})
			if err != nil {
				t.Fatalf("%v\n%s", err, describeErr(nb))
			}
			if sum.Executed < 3 {
				t.Errorf("only %d code cells ran", sum.Executed)
			}
			var prose strings.Builder
			for _, c := range nb.Cells {
				if c.Type == Markdown {
					prose.WriteString(c.Source + "\n")
				}
			}
			p := strings.Join(strings.Fields(prose.String()), " ")
			if !strings.Contains(p, "invented") && !strings.Contains(p, "made up") && !strings.Contains(p, "made-up") {
				t.Error("the notebook does not say its numbers are invented")
			}
			last := nb.Cells[len(nb.Cells)-1]
			caution := "Model results are estimates that depend on the inputs; validate them against measurements. Local regulations and licensed practice decide."
			if last.Type != Markdown || !strings.Contains(strings.Join(strings.Fields(last.Source), " "), caution) {
				t.Error("the notebook does not end with the safety caution")
			}
			page := HTML(nb, "demo")
			if strings.Count(page, "<svg") < 1 || !strings.Contains(page, "<table") {
				t.Error("the report shows no plot or no table")
			}
		})
	}
}

func mustOpen(t *testing.T, path string) *os.File {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

func describe(outs []*Output) string {
	var b strings.Builder
	for _, o := range outs {
		b.WriteString("\n  " + string(o.Type))
		switch o.Type {
		case Stream:
			b.WriteString(" " + o.Name + ": " + strings.TrimSpace(o.Text))
		case Error:
			b.WriteString(" " + o.EName + ": " + o.EValue)
		default:
			b.WriteString(" " + strings.Join(mimeTypes(o.Data), ","))
		}
	}
	if b.Len() == 0 {
		return "(none)"
	}
	return b.String()
}

func describeErr(nb *Notebook) string {
	var b strings.Builder
	for _, c := range nb.Cells {
		for _, o := range c.Outputs {
			if o.Type == Error {
				b.WriteString(strings.Join(o.Traceback, "\n") + "\n")
			}
		}
	}
	return b.String()
}
