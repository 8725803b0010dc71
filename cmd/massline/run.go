package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
	"github.com/massline/massline/engine"
	"github.com/massline/massline/kernel/notebook"
)

func versionString() string { return engine.Version }

func cmdRun(args []string, stdout, stderr io.Writer) int {
	if isNotebookRun(args) {
		return cmdRunNotebook(args, stdout, stderr)
	}
	fs := flag.NewFlagSet("run", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("out", "", "directory for the plots (SVG) and numbers (JSON); default: next to the model")
	csv := fs.Bool("csv", false, "also write every table as CSV (BASE-table-N.csv)")
	if err := parseInterleaved(fs, args); err != nil {
		return 2
	}
	if fs.NArg() != 1 {
		fmt.Fprintln(stderr, "usage: massline run [--out DIR] [--csv] FILE.mln   (or a notebook: massline run NOTEBOOK.ipynb [--out DIR] [--html] [-w] [--keep-going])")
		return 2
	}
	path := fs.Arg(0)
	src, err := os.ReadFile(path)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	dir := *out
	if dir == "" {
		dir = filepath.Dir(path)
	}
	// Make sure the results can be written before spending time solving.
	if err := os.MkdirAll(dir, 0o755); err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	if probe, err := os.CreateTemp(dir, ".massline-write-test-*"); err != nil {
		fmt.Fprintf(stderr, "massline: cannot write results to %s: %v\n", dir, err)
		return 1
	} else {
		probe.Close()
		os.Remove(probe.Name())
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	sources := diag.Sources{path: string(src)}
	res, diags, err := engine.RunSource(ctx, path, string(src), &engine.Options{Sources: sources})
	if len(diags) > 0 {
		fmt.Fprint(stderr, diag.Text(diags, sources))
	}
	if err != nil {
		var ee *engine.Error
		switch {
		case errors.As(err, &ee) && ee.Where.Start.IsValid():
			// A failure while solving, shown like a check-time diagnostic.
			d := &diag.Diagnostic{Severity: diag.Error, Code: "run", Subject: ee.Where, Message: ee.Msg}
			fmt.Fprint(stderr, diag.Text(diag.List{d}, sources))
		case !diags.HasErrors():
			fmt.Fprintf(stderr, "massline: %v\n", err)
		}
		return 1
	}
	fmt.Fprint(stdout, res.String())
	base := strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	written, err := writeOutputs(dir, base, res, *csv)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	for _, w := range written {
		fmt.Fprintf(stdout, "wrote %s\n", w)
	}
	if !res.Passed() {
		var failed diag.List
		for _, c := range res.Checks {
			if !c.Passed {
				failed = append(failed, &diag.Diagnostic{Severity: diag.Error, Code: "expect", Subject: c.Where,
					Message: fmt.Sprintf("expectation not met: computed %s, expected %s within %s", fmtCheck(c.Got, c.Unit), fmtCheck(c.Want, c.Unit), fmtTol(c))})
			}
		}
		fmt.Fprint(stderr, diag.Text(failed, sources))
		return 1
	}
	return 0
}

// writeOutputs writes BASE.json, one BASE-N.svg per plot and, when asked,
// one BASE-table-N.csv per table.
func writeOutputs(dir, base string, res *engine.Result, csv bool) ([]string, error) {
	var written []string
	js, err := res.JSON()
	if err != nil {
		return nil, err
	}
	p := filepath.Join(dir, base+".json")
	if err := writeAtomic(p, append(js, '\n')); err != nil {
		return nil, err
	}
	written = append(written, p)
	for i, svg := range res.Plots() {
		p := filepath.Join(dir, fmt.Sprintf("%s-%d.svg", base, i+1))
		if err := writeAtomic(p, []byte(svg)); err != nil {
			return nil, err
		}
		written = append(written, p)
	}
	if csv {
		n := 0
		for _, o := range res.Outputs {
			if o.Kind != "table" {
				continue
			}
			n++
			p := filepath.Join(dir, fmt.Sprintf("%s-table-%d.csv", base, n))
			if err := writeAtomic(p, []byte(o.Table.CSV())); err != nil {
				return nil, err
			}
			written = append(written, p)
		}
	}
	return written, nil
}

// writeAtomic writes a file through a temporary file and a rename, so a
// failure never leaves a half-written file behind.
func writeAtomic(path string, data []byte) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*")
	if err != nil {
		return err
	}
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		return err
	}
	if err := tmp.Close(); err != nil {
		os.Remove(tmp.Name())
		return err
	}
	mode := os.FileMode(0o644)
	if st, err := os.Stat(path); err == nil {
		mode = st.Mode().Perm()
	}
	if err := os.Chmod(tmp.Name(), mode); err != nil {
		os.Remove(tmp.Name())
		return err
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		os.Remove(tmp.Name())
		return err
	}
	return nil
}

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("check", flag.ContinueOnError)
	fs.SetOutput(stderr)
	asJSON := fs.Bool("json", false, "print diagnostics as JSON")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() == 0 {
		fmt.Fprintln(stderr, "usage: massline check [--json] FILE...")
		return 2
	}
	var all diag.List
	sources := diag.Sources{}
	failed := false
	for _, path := range fs.Args() {
		src, err := os.ReadFile(path)
		if err != nil {
			all = append(all, &diag.Diagnostic{Severity: diag.Error, Code: "io", Message: err.Error(), Subject: diag.Range{File: path}})
			failed = true
			continue
		}
		if strings.HasSuffix(path, ".ipynb") {
			diags, srcs, err := checkNotebook(path, src)
			if err != nil {
				all = append(all, &diag.Diagnostic{Severity: diag.Error, Code: "notebook", Message: err.Error(), Subject: diag.Range{File: path}})
				failed = true
				continue
			}
			for k, v := range srcs {
				sources[k] = v
			}
			failed = failed || diags.HasErrors()
			all = append(all, diags...)
			continue
		}
		sources[path] = string(src)
		_, diags := engine.CheckSource(path, string(src), &compile.Options{Sources: sources})
		if diags.HasErrors() {
			failed = true
		}
		all = append(all, diags...)
	}
	if *asJSON {
		b, err := diag.JSON(all)
		if err != nil {
			fmt.Fprintf(stderr, "massline: %v\n", err)
			return 2
		}
		fmt.Fprintln(stdout, string(b))
	} else {
		fmt.Fprint(stderr, diag.Text(all, sources))
		if !failed {
			fmt.Fprintf(stdout, "%d file(s) checked: no errors\n", fs.NArg())
		}
	}
	if failed {
		return 1
	}
	return 0
}

// checkNotebook checks a notebook's code cells in order, as the kernel
// would run them: each cell against the declarations of the cells before
// it (which it may redefine), completeness only where a cell asks for
// results. Diagnostics name the cell as NOTEBOOK.ipynb[N].
func checkNotebook(path string, data []byte) (diag.List, diag.Sources, error) {
	nb, err := notebook.Parse(data)
	if err != nil {
		return nil, nil, err
	}
	var all diag.List
	srcs := diag.Sources{}
	var prev []*dsl.File
	n := 0
	for _, c := range nb.Cells {
		if c.Type != notebook.Code || strings.TrimSpace(c.Source) == "" {
			continue
		}
		n++
		name := fmt.Sprintf("%s[%d]", path, n)
		srcs[name] = c.Source
		f, diags := dsl.Parse(name, c.Source)
		needsRun := false
		for _, s := range f.Stmts {
			switch s.(type) {
			case *dsl.Show, *dsl.Expect, *dsl.Sweep, *dsl.Fit:
				needsRun = true
			case *dsl.Reset:
				prev = nil
			}
		}
		_, more := compile.Check(f, &compile.Options{Previous: prev, Redefine: true, Lenient: !needsRun})
		diags.Append(more)
		for _, d := range diags {
			if d.Severity != diag.Note {
				all = append(all, d)
			}
		}
		if !diags.HasErrors() {
			prev = append(prev, f)
		}
	}
	return all, srcs, nil
}

// parseInterleaved parses flags that may come before or after the
// positional arguments (massline run model.mln --out dir).
func parseInterleaved(fs *flag.FlagSet, args []string) error {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return err
		}
		if fs.NArg() == 0 {
			break
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
	return fs.Parse(append([]string{"--"}, pos...))
}

func fmtCheck(v float64, unit string) string {
	s := strconv.FormatFloat(v, 'g', 6, 64)
	if unit != "" && unit != "1" {
		s += " " + unit
	}
	return s
}

func fmtTol(c engine.Check) string {
	if c.Relative {
		return strconv.FormatFloat(c.Tol*100, 'g', 4, 64) + " %"
	}
	return fmtCheck(c.Tol, c.Unit)
}
