package main

import (
	"fmt"
	"io"
	"os"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

const usage = `massline — diffusion of solutes in porous particles, beads, pellets and slabs

usage:
  massline run [--out DIR] [--csv] FILE.mln
                                        solve a model; print tables, write plots (SVG), numbers (JSON), tables (CSV)
  massline run NOTEBOOK.ipynb [--out DIR] [--html] [-w] [--keep-going]
                                        run a notebook headless: the executed copy goes to NAME.out.ipynb
                                        (DIR/NAME.ipynb with --out, in place with -w), with --html a report
  massline check [--json] FILE...       check models: syntax, names, units, completeness
  massline fmt [-w] [-d] FILE...        print the canonical layout (-w: rewrite files, -d: show a diff)
  massline kernel install [--user | --prefix DIR | --sys-prefix] [--name NAME]
                                        install the Jupyter kernelspec
  massline kernel list | remove         list or remove installed kernelspecs
  massline kernel -f CONNECTION_FILE    run as a Jupyter kernel (started by Jupyter)
  massline bench [--quick] [--no-scipy] work-precision table against the series solutions, side by side
                                        with a uniform-grid method of lines in scipy (Debian python3-scipy)
  massline version                      print the version
`

// run dispatches a command line and returns the exit status. It never
// panics: an internal failure is reported and gives status 2.
func run(args []string, stdout, stderr io.Writer) (code int) {
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(stderr, "massline: internal error: %v\nplease report this with the input that caused it\n", r)
			code = 2
		}
	}()
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return 2
	}
	switch args[0] {
	case "run":
		return cmdRun(args[1:], stdout, stderr)
	case "check":
		return cmdCheck(args[1:], stdout, stderr)
	case "fmt":
		return cmdFmt(args[1:], stdout, stderr)
	case "bench":
		return cmdBench(args[1:], stdout, stderr)
	case "kernel":
		return cmdKernel(args[1:], stdout, stderr)
	case "version", "--version", "-version":
		fmt.Fprintln(stdout, "massline", versionString())
		return 0
	case "help", "-h", "--help", "-help":
		fmt.Fprint(stdout, usage)
		return 0
	}
	fmt.Fprintf(stderr, "massline: unknown command %q\n\n%s", args[0], usage)
	return 2
}
