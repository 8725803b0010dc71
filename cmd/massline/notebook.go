package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"

	"github.com/massline/massline/kernel"
	"github.com/massline/massline/kernel/notebook"
)

const notebookUsage = "usage: massline run NOTEBOOK.ipynb [--out DIR] [--html] [-w] [--keep-going]"

// isNotebookRun reports whether the arguments of "massline run" name a
// notebook (a .ipynb file) rather than a model file.
func isNotebookRun(args []string) bool {
	for _, a := range args {
		if !strings.HasPrefix(a, "-") && strings.EqualFold(filepath.Ext(a), ".ipynb") {
			return true
		}
	}
	return false
}

// notebookFlags are the options of "massline run NOTEBOOK.ipynb".
type notebookFlags struct {
	out       string
	html      bool
	inPlace   bool
	keepGoing bool
	path      string
}

// parseNotebookFlags reads flags placed before or after the notebook's
// name (the flag package alone stops at the first name).
func parseNotebookFlags(args []string, stderr io.Writer) (*notebookFlags, bool) {
	nf := &notebookFlags{}
	fs := flag.NewFlagSet("run", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.StringVar(&nf.out, "out", "", "directory for the executed notebook and the HTML report (default: the notebook's directory)")
	fs.BoolVar(&nf.html, "html", false, "also write an HTML report NAME.html")
	fs.BoolVar(&nf.inPlace, "w", false, "write the executed notebook back to the file itself (only when every cell succeeds)")
	fs.BoolVar(&nf.keepGoing, "keep-going", false, "run every code cell even after one fails")
	fs.Usage = func() {
		fmt.Fprintln(stderr, notebookUsage)
		fs.PrintDefaults()
	}
	var names []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, false
		}
		args = fs.Args()
		if len(args) == 0 {
			break
		}
		names = append(names, args[0])
		args = args[1:]
	}
	if len(names) != 1 {
		fmt.Fprintln(stderr, notebookUsage)
		return nil, false
	}
	nf.path = names[0]
	return nf, true
}

// cmdRunNotebook runs a notebook headless: every code cell in order, in a
// fresh workspace whose files are found next to the notebook. It writes
// the executed copy (and with --html a report) and exits 1 if a cell
// failed.
//
// Where things go: without -w the executed notebook is DIR/NAME.ipynb,
// where DIR is --out (default: the notebook's directory); when DIR is
// the notebook's own directory the copy is NAME.out.ipynb instead, so the
// original is never overwritten without -w. With -w the notebook itself
// is rewritten, and only when every cell succeeded. The report is always
// DIR/NAME.html. All files are written atomically (a temporary file, then
// a rename): a failure leaves the earlier file as it was. Without -w the
// executed copy and the report are written even when a cell failed, so
// the error can be seen in place.
func cmdRunNotebook(args []string, stdout, stderr io.Writer) int {
	nf, ok := parseNotebookFlags(args, stderr)
	if !ok {
		return 2
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	return runNotebook(ctx, nf, stdout, stderr)
}

func runNotebook(ctx context.Context, nf *notebookFlags, stdout, stderr io.Writer) int {
	src, err := os.ReadFile(nf.path)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	nb, err := notebook.Parse(src)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %s: %v\n", nf.path, strings.TrimPrefix(err.Error(), "notebook: "))
		return 1
	}
	srcDir := filepath.Dir(nf.path)
	sum, runErr := notebook.Execute(ctx, nb, &notebook.Options{Dir: srcDir, Name: nf.path, KeepGoing: nf.keepGoing})
	for _, f := range sum.Failures {
		reportFailure(stderr, nf.path, f)
	}
	if runErr != nil && len(sum.Failures) == 0 {
		fmt.Fprintf(stderr, "massline: %s: %v\n", nf.path, runErr)
	}
	failed := runErr != nil

	base := strings.TrimSuffix(filepath.Base(nf.path), filepath.Ext(nf.path))
	dir := nf.out
	if dir == "" {
		dir = srcDir
	}
	var targets []string
	var nbTarget string
	switch {
	case nf.inPlace:
		if !failed {
			nbTarget = nf.path
			if real, err := filepath.EvalSymlinks(nf.path); err == nil {
				nbTarget = real // rewrite the file a link points to, not the link
			}
		}
	case sameDir(dir, srcDir):
		nbTarget = filepath.Join(dir, base+".out.ipynb")
	default:
		nbTarget = filepath.Join(dir, base+".ipynb")
	}
	if nbTarget != "" || nf.html {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			fmt.Fprintf(stderr, "massline: %v\n", err)
			return 1
		}
	}
	if nbTarget != "" {
		data, err := notebook.Marshal(nb)
		if err == nil {
			err = writeAtomicFile(nbTarget, data)
		}
		if err != nil {
			fmt.Fprintf(stderr, "massline: writing the executed notebook: %v\n", err)
			return 1
		}
		targets = append(targets, nbTarget)
	}
	if nf.html && (nbTarget != "" || !nf.inPlace) {
		p := filepath.Join(dir, base+".html")
		if err := writeAtomicFile(p, []byte(notebook.HTML(nb, base))); err != nil {
			fmt.Fprintf(stderr, "massline: writing the HTML report: %v\n", err)
			return 1
		}
		targets = append(targets, p)
	}
	fmt.Fprintf(stdout, "%s: ran %d code cell(s)", nf.path, sum.Executed)
	if len(sum.Failures) > 0 {
		fmt.Fprintf(stdout, ", %d failed", len(sum.Failures))
	}
	if sum.Skipped > 0 {
		fmt.Fprintf(stdout, ", %d not run", sum.Skipped)
	}
	fmt.Fprintln(stdout)
	for _, t := range targets {
		fmt.Fprintf(stdout, "wrote %s\n", t)
	}
	if failed {
		if nf.inPlace {
			fmt.Fprintf(stderr, "massline: %s left unchanged because a cell failed\n", nf.path)
		}
		return 1
	}
	return 0
}

// writeAtomicFile is the writer used for notebook outputs; tests replace
// it to simulate a failed write.
var writeAtomicFile = writeAtomic

// reportFailure prints a failed cell: where it is, then its traceback.
func reportFailure(w io.Writer, path string, f *notebook.Failure) {
	var b bytes.Buffer
	fmt.Fprintf(&b, "massline: %s: cell %d (In [%d]) failed", path, f.Cell, f.ExecutionCount)
	var ce *kernel.CellError
	if errors.As(f.Err, &ce) {
		fmt.Fprintf(&b, ": %s: %s\n", ce.Name, ce.Value)
		for _, l := range ce.Traceback {
			if l != ce.Value {
				fmt.Fprintf(&b, "  %s\n", l)
			}
		}
	} else {
		fmt.Fprintf(&b, ": %v\n", f.Err)
	}
	w.Write(b.Bytes())
}

// sameDir reports whether two paths name the same directory.
func sameDir(a, b string) bool {
	sa, errA := os.Stat(a)
	sb, errB := os.Stat(b)
	if errA == nil && errB == nil {
		return os.SameFile(sa, sb)
	}
	aa, errA := filepath.Abs(a)
	ab, errB := filepath.Abs(b)
	return errA == nil && errB == nil && aa == ab
}
