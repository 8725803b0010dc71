package notebook

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	"github.com/massline/massline/kernel"
	"github.com/massline/massline/kernel/workspace"
)

// Runner runs the code of one cell against a session that persists from
// cell to cell. *workspace.Workspace is a Runner.
type Runner interface {
	Execute(ctx context.Context, code string, sink kernel.Sink) (kernel.Bundle, error)
}

// Options control Execute. A nil *Options means the zero value.
type Options struct {
	// Dir is the directory against which the cells' included model files
	// and data files are found, normally the notebook's own directory;
	// "" is the current directory.
	Dir string
	// Name, when set, is the notebook's path; diagnostics then name cells
	// as Name[N].
	Name string
	// KeepGoing runs the remaining code cells after a cell fails; by
	// default Execute stops at the first failing cell.
	KeepGoing bool
	// Runner runs the cells. nil means a fresh massline workspace
	// (workspace.New) working in Dir.
	Runner Runner
}

// Failure describes a code cell that failed.
type Failure struct {
	// Cell is the cell's 1-based position in the notebook, counting every
	// cell (markdown too), as a reader counts them down the page.
	Cell int
	// ExecutionCount is the count the cell ran with ("In [n]").
	ExecutionCount int
	// Err is the cell's error, usually a *kernel.CellError.
	Err error
}

// Error implements error: the cell, its count and the error's summary.
func (f *Failure) Error() string {
	return fmt.Sprintf("notebook: cell %d (In [%d]) failed: %v", f.Cell, f.ExecutionCount, f.Err)
}

// Unwrap returns the cell's error.
func (f *Failure) Unwrap() error { return f.Err }

// Summary says what Execute did.
type Summary struct {
	// Executed is the number of code cells that ran (failed ones too).
	Executed int
	// Skipped is the number of non-empty code cells that did not run
	// because an earlier cell failed or the context ended.
	Skipped int
	// Failures lists the cells that failed, in order.
	Failures []*Failure
}

// Execute runs the code cells of nb in order, in place, through one fresh
// session, as a "run all" in Jupyter would. For each code cell that runs
// it replaces the outputs with what the cell produced — streams (adjacent
// writes to the same stream merged), display_data for tables and plots,
// an execute_result for the cell's value and an error output {ename,
// evalue, traceback} if it fails — and sets the execution count (1, 2, …).
// Code cells that are empty or only white space are not run (their count
// is null and their outputs are cleared), as Jupyter does. Execute stops
// at the first failing cell unless opts.KeepGoing; the code cells it does
// not reach have their outputs cleared and their count set to null, so no
// stale output is left beside fresh ones. The notebook's language_info is
// set to massline's, and a kernelspec is added if there is none.
//
// The error is nil when every cell ran; otherwise it is the first
// *Failure, or the context's error when ctx ended before a cell started.
// The Summary is never nil.
func Execute(ctx context.Context, nb *Notebook, opts *Options) (*Summary, error) {
	sum := &Summary{}
	if nb == nil {
		return sum, errors.New("notebook: nil notebook")
	}
	var o Options
	if opts != nil {
		o = *opts
	}
	runner := o.Runner
	if runner == nil {
		ws := workspace.New()
		ws.Dir = o.Dir
		ws.Name = o.Name
		runner = ws
	}
	setLanguage(nb)
	var first error
	stop := false
	n := 0
	for i, c := range nb.Cells {
		if c == nil || c.Type != Code {
			continue
		}
		c.Outputs = nil
		c.ExecutionCount = nil
		if strings.TrimSpace(c.Source) == "" {
			continue
		}
		if !stop {
			if err := ctx.Err(); err != nil {
				stop = true
				if first == nil {
					first = err
				}
			}
		}
		if stop {
			sum.Skipped++
			continue
		}
		n++
		count := n
		c.ExecutionCount = &count
		sum.Executed++
		s := &sink{}
		result, err := runCell(ctx, runner, c.Source, s)
		c.Outputs = s.outs
		if err != nil {
			c.Outputs = append(c.Outputs, errorOutput(err))
			f := &Failure{Cell: i + 1, ExecutionCount: count, Err: err}
			sum.Failures = append(sum.Failures, f)
			if first == nil {
				first = f
			}
			if !o.KeepGoing || ctx.Err() != nil {
				stop = true
			}
			continue
		}
		if len(result) > 0 {
			data, dropped := jsonBundle(result)
			c.Outputs = append(c.Outputs, &Output{Type: ExecuteResult, Data: data, Metadata: map[string]any{}, ExecutionCount: &count})
			for _, d := range dropped {
				c.Outputs = append(c.Outputs, &Output{Type: Stream, Name: "stderr", Text: "massline: " + d + "\n"})
			}
		}
	}
	return sum, first
}

// runCell runs one cell; a panic in the runner becomes the cell's error.
func runCell(ctx context.Context, r Runner, code string, s *sink) (result kernel.Bundle, err error) {
	defer func() {
		if p := recover(); p != nil {
			result = nil
			err = &kernel.CellError{Name: "InternalError", Value: fmt.Sprintf("massline failed on this cell: %v (please report it with the cell)", p)}
		}
	}()
	return r.Execute(ctx, code, s)
}

// errorOutput turns a cell's error into an nbformat error output.
func errorOutput(err error) *Output {
	var ce *kernel.CellError
	if errors.As(err, &ce) {
		tb := ce.Traceback
		if len(tb) == 0 {
			tb = []string{ce.Error()}
		}
		return &Output{Type: Error, EName: ce.Name, EValue: ce.Value, Traceback: append([]string(nil), tb...)}
	}
	name := "Error"
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		name = "Interrupted"
	}
	return &Output{Type: Error, EName: name, EValue: err.Error(), Traceback: strings.Split(err.Error(), "\n")}
}

// sink collects what a cell emits as outputs.
type sink struct {
	outs []*Output
}

// Stream implements kernel.Sink; writes to the same stream in a row
// become one output.
func (s *sink) Stream(name, text string) {
	if text == "" {
		return
	}
	if n := len(s.outs); n > 0 && s.outs[n-1].Type == Stream && s.outs[n-1].Name == name {
		s.outs[n-1].Text += text
		return
	}
	s.outs = append(s.outs, &Output{Type: Stream, Name: name, Text: text})
}

// Display implements kernel.Sink.
func (s *sink) Display(b kernel.Bundle) {
	data, dropped := jsonBundle(b)
	if len(data) > 0 {
		s.outs = append(s.outs, &Output{Type: DisplayData, Data: data, Metadata: map[string]any{}})
	}
	s.noteDropped(dropped)
}

func (s *sink) noteDropped(dropped []string) {
	for _, d := range dropped {
		s.Stream("stderr", "massline: "+d+"\n")
	}
}

// jsonBundle copies a bundle into plain JSON values (strings stay strings;
// other values go through encoding/json, numbers kept as json.Number), so
// the notebook holds exactly what will be written. A value that cannot be
// encoded (a NaN inside a struct, say) is left out and named in dropped.
func jsonBundle(b kernel.Bundle) (kernel.Bundle, []string) {
	out := kernel.Bundle{}
	var dropped []string
	for k, v := range b {
		if s, ok := v.(string); ok {
			out[k] = s
			continue
		}
		data, err := json.Marshal(v)
		if err == nil {
			dec := json.NewDecoder(bytes.NewReader(data))
			dec.UseNumber()
			var x any
			if err = dec.Decode(&x); err == nil {
				out[k] = x
				continue
			}
		}
		dropped = append(dropped, fmt.Sprintf("the %s part of an output was left out: %v", k, err))
	}
	return out, dropped
}

// setLanguage records that the notebook ran with massline.
func setLanguage(nb *Notebook) {
	if nb.Metadata == nil {
		nb.Metadata = map[string]any{}
	}
	info := workspace.New().Info()
	nb.Metadata["language_info"] = map[string]any{
		"name":           info.Name,
		"version":        info.Version,
		"mimetype":       info.MIMEType,
		"file_extension": info.FileExtension,
	}
	if _, ok := nb.Metadata["kernelspec"]; !ok {
		nb.Metadata["kernelspec"] = map[string]any{
			"name":         kernel.DefaultKernelName,
			"display_name": "massline",
			"language":     "massline",
		}
	}
}
