package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestExamplesCheck: every model file in the repository passes
// `massline check`, and every notebook's code, taken as one model, too.
func TestExamplesCheck(t *testing.T) {
	var files []string
	for _, pat := range []string{"../../testdata/examples/*.mln", "../../testdata/fit/*.mln"} {
		m, _ := filepath.Glob(pat)
		files = append(files, m...)
	}
	if len(files) < 2 {
		t.Fatalf("found only %d example models", len(files))
	}
	code, out, errs := runCLI(t, append([]string{"check"}, files...)...)
	if code != 0 {
		t.Errorf("massline check failed (%d):\n%s%s", code, out, errs)
	}
	nbs, _ := filepath.Glob("../../notebooks/*.ipynb")
	if len(nbs) < 3 {
		t.Fatalf("found %d notebooks, want at least 3", len(nbs))
	}
	code, out, errs = runCLI(t, append([]string{"check"}, nbs...)...)
	if code != 0 {
		t.Errorf("massline check on the notebooks failed (%d):\n%s%s", code, out, errs)
	}
	// A notebook with a mistake in its second cell is caught, and the
	// diagnostic names the cell.
	bad := filepath.Join(t.TempDir(), "bad.ipynb")
	writeFile(t, bad, `{"cells": [{"cell_type": "code", "id": "a", "metadata": {}, "outputs": [], "execution_count": null, "source": "let a = 1 [m]"},
{"cell_type": "code", "id": "b", "metadata": {}, "outputs": [], "execution_count": null, "source": "let b = a + 1 [s]"}],
"metadata": {}, "nbformat": 4, "nbformat_minor": 5}`)
	code, _, errs = runCLI(t, "check", bad)
	if code != 1 || !strings.Contains(errs, "bad.ipynb[2]:1:") {
		t.Errorf("bad notebook: exit %d, stderr:\n%s", code, errs)
	}
}
