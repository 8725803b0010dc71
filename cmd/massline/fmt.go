package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

func cmdFmt(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("fmt", flag.ContinueOnError)
	fs.SetOutput(stderr)
	write := fs.Bool("w", false, "write the result to the file instead of printing it")
	showDiff := fs.Bool("d", false, "print a diff instead of the formatted text")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() == 0 {
		fmt.Fprintln(stderr, "usage: massline fmt [-w] [-d] FILE...")
		return 2
	}
	status := 0
	for _, path := range fs.Args() {
		if strings.HasSuffix(path, ".ipynb") {
			fmt.Fprintf(stderr, "massline: %s: fmt formats model files (.mln), not notebooks\n", path)
			status = 1
			continue
		}
		src, err := os.ReadFile(path)
		if err != nil {
			fmt.Fprintf(stderr, "massline: %v\n", err)
			status = 1
			continue
		}
		f, diags := dsl.Parse(path, string(src))
		if diags.HasErrors() {
			fmt.Fprint(stderr, diag.Text(diags, diag.Sources{path: string(src)}))
			status = 1
			continue
		}
		out := dsl.Format(f)
		switch {
		case *showDiff:
			if out != string(src) {
				fmt.Fprint(stdout, lineDiff(path, string(src), out))
			}
		case *write:
			if out != string(src) {
				if err := writeAtomic(path, []byte(out)); err != nil {
					fmt.Fprintf(stderr, "massline: %v\n", err)
					status = 1
				}
			}
		default:
			fmt.Fprint(stdout, out)
		}
	}
	return status
}

// lineDiff prints the lines that differ between a and b, marked - and +,
// using a longest-common-subsequence alignment of lines.
func lineDiff(name, a, b string) string {
	x := strings.Split(strings.TrimSuffix(a, "\n"), "\n")
	y := strings.Split(strings.TrimSuffix(b, "\n"), "\n")
	n, m := len(x), len(y)
	lcs := make([][]int, n+1)
	for i := range lcs {
		lcs[i] = make([]int, m+1)
	}
	for i := n - 1; i >= 0; i-- {
		for j := m - 1; j >= 0; j-- {
			if x[i] == y[j] {
				lcs[i][j] = lcs[i+1][j+1] + 1
			} else {
				lcs[i][j] = max(lcs[i+1][j], lcs[i][j+1])
			}
		}
	}
	var out strings.Builder
	fmt.Fprintf(&out, "--- %s\n+++ %s (formatted)\n", name, name)
	i, j := 0, 0
	for i < n || j < m {
		switch {
		case i < n && j < m && x[i] == y[j]:
			i++
			j++
		case j < m && (i == n || lcs[i][j+1] >= lcs[i+1][j]):
			fmt.Fprintf(&out, "%d +%s\n", j+1, y[j])
			j++
		default:
			fmt.Fprintf(&out, "%d -%s\n", i+1, x[i])
			i++
		}
	}
	return out.String()
}
