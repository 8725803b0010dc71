package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// cellsJSON writes a minimal nbformat 4.4 notebook of code cells.
func cellsJSON(t *testing.T, sources ...string) []byte {
	t.Helper()
	var cells []map[string]any
	cells = append(cells, map[string]any{"cell_type": "markdown", "metadata": map[string]any{}, "source": "# A test notebook"})
	for _, s := range sources {
		cells = append(cells, map[string]any{"cell_type": "code", "metadata": map[string]any{}, "execution_count": nil, "outputs": []any{}, "source": s})
	}
	b, err := json.Marshal(map[string]any{"nbformat": 4, "nbformat_minor": 4, "metadata": map[string]any{}, "cells": cells})
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func writeNotebook(t *testing.T, dir, name string, data []byte) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// executedCounts reads a written notebook's execution counts (0 for null).
func executedCounts(t *testing.T, path string) []int {
	t.Helper()
	var nb struct {
		Cells []struct {
			Type  string `json:"cell_type"`
			Count *int   `json:"execution_count"`
		} `json:"cells"`
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &nb); err != nil {
		t.Fatal(err)
	}
	var out []int
	for _, c := range nb.Cells {
		if c.Type == "code" {
			n := 0
			if c.Count != nil {
				n = *c.Count
			}
			out = append(out, n)
		}
	}
	return out
}

// TestRunDemoNotebooks runs every demo notebook headless with the flags
// after the file name, as the README shows, and validates what is written.
func TestRunDemoNotebooks(t *testing.T) {
	demos, _ := filepath.Glob("../../notebooks/*.ipynb")
	if len(demos) < 3 {
		t.Fatalf("found %d demo notebooks, want at least 3", len(demos))
	}
	out := t.TempDir()
	var written []string
	for _, nb := range demos {
		before, _ := os.ReadFile(nb)
		code, stdout, stderr := runCLI(t, "run", nb, "--out", out, "--html")
		if code != 0 {
			t.Errorf("%s: exit %d\n%s%s", nb, code, stdout, stderr)
			continue
		}
		base := strings.TrimSuffix(filepath.Base(nb), ".ipynb")
		exec := filepath.Join(out, base+".ipynb")
		for _, p := range []string{exec, filepath.Join(out, base+".html")} {
			if !strings.Contains(stdout, "wrote "+p) {
				t.Errorf("%s: stdout does not report %s:\n%s", nb, p, stdout)
			}
		}
		for i, n := range executedCounts(t, exec) {
			if n != i+1 {
				t.Errorf("%s: code cell %d has count %d", nb, i+1, n)
			}
		}
		page, _ := os.ReadFile(filepath.Join(out, base+".html"))
		if !bytes.Contains(page, []byte("<svg")) || !bytes.Contains(page, []byte("Caution.")) {
			t.Errorf("%s: the report lacks a plot or the caution", nb)
		}
		if after, _ := os.ReadFile(nb); !bytes.Equal(before, after) {
			t.Errorf("%s: the demo notebook itself was changed", nb)
		}
		written = append(written, exec)
	}
	validateNotebooks(t, written...)
}

func TestRunNotebookDefaultOutput(t *testing.T) {
	dir := t.TempDir()
	src := cellsJSON(t, "let a = 2 [mm]", "print \"a = \", a")
	nb := writeNotebook(t, dir, "plain.ipynb", src)
	code, stdout, stderr := runCLI(t, "run", "--html", nb)
	if code != 0 {
		t.Fatalf("exit %d\n%s%s", code, stdout, stderr)
	}
	// Next to the notebook, under a name that leaves the original alone.
	copyPath := filepath.Join(dir, "plain.out.ipynb")
	if got := executedCounts(t, copyPath); len(got) != 2 || got[0] != 1 || got[1] != 2 {
		t.Errorf("executed copy counts %v", got)
	}
	if _, err := os.Stat(filepath.Join(dir, "plain.html")); err != nil {
		t.Error(err)
	}
	if after, _ := os.ReadFile(nb); !bytes.Equal(after, src) {
		t.Error("the original notebook was changed without -w")
	}
	// --out naming the notebook's own directory is the same case.
	if code, _, stderr := runCLI(t, "run", nb, "--out", dir+string(filepath.Separator)+"."); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if after, _ := os.ReadFile(nb); !bytes.Equal(after, src) {
		t.Error("--out with the notebook's directory overwrote the original")
	}
	validateNotebooks(t, copyPath)
}

func TestRunNotebookInPlace(t *testing.T) {
	dir := t.TempDir()
	nb := writeNotebook(t, dir, "w.ipynb", cellsJSON(t, "let a = 2 [mm]", "a * 2"))
	code, stdout, stderr := runCLI(t, "run", "-w", nb)
	if code != 0 {
		t.Fatalf("exit %d\n%s%s", code, stdout, stderr)
	}
	if got := executedCounts(t, nb); len(got) != 2 || got[1] != 2 {
		t.Errorf("counts after -w: %v", got)
	}
	if !strings.Contains(stdout, "wrote "+nb) {
		t.Errorf("stdout: %s", stdout)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("-w left other files behind: %v", names(entries))
	}
	validateNotebooks(t, nb)
}

// TestRunNotebookFailure checks the exit status and message of a failing
// cell and that -w leaves the original untouched.
func TestRunNotebookFailure(t *testing.T) {
	dir := t.TempDir()
	src := cellsJSON(t, "let a = 2 [mm]", "let bad = a + 3 [s]", "print \"after\"")
	nb := writeNotebook(t, dir, "fail.ipynb", src)

	code, stdout, stderr := runCLI(t, "run", "-w", "--html", nb)
	if code != 1 {
		t.Fatalf("exit %d, want 1\n%s%s", code, stdout, stderr)
	}
	for _, want := range []string{"cell 3 (In [2]) failed", "cannot add", "let bad = a + 3 [s]", "left unchanged"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	if after, _ := os.ReadFile(nb); !bytes.Equal(after, src) {
		t.Error("-w changed the notebook although a cell failed")
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("a failed -w run left files behind: %v", names(entries))
	}

	// Without -w the executed copy shows the error; the third cell is
	// not run.
	code, _, _ = runCLI(t, "run", nb, "--out", filepath.Join(dir, "out"))
	if code != 1 {
		t.Errorf("exit %d, want 1", code)
	}
	copyPath := filepath.Join(dir, "out", "fail.ipynb")
	if got := executedCounts(t, copyPath); len(got) != 3 || got[1] != 2 || got[2] != 0 {
		t.Errorf("counts %v, want [1 2 0]", got)
	}
	if b, _ := os.ReadFile(copyPath); !bytes.Contains(b, []byte(`"output_type": "error"`)) {
		t.Error("the executed copy lacks the error output")
	}

	// --keep-going runs the rest and still exits 1.
	code, stdout, _ = runCLI(t, "run", "--keep-going", nb, "--out", filepath.Join(dir, "out"))
	if code != 1 || !strings.Contains(stdout, "ran 3 code cell(s), 1 failed") {
		t.Errorf("--keep-going: exit %d, stdout %q", code, stdout)
	}
	if got := executedCounts(t, copyPath); len(got) != 3 || got[2] != 3 {
		t.Errorf("--keep-going counts %v, want [1 2 3]", got)
	}
	validateNotebooks(t, copyPath)
}

// TestRunNotebookWriteFails simulates a failure while the executed
// notebook is written over the original (-w): the original must be left
// exactly as it was.
func TestRunNotebookWriteFails(t *testing.T) {
	dir := t.TempDir()
	src := cellsJSON(t, "let a = 2 [mm]")
	nb := writeNotebook(t, dir, "x.ipynb", src)
	old := writeAtomicFile
	defer func() { writeAtomicFile = old }()
	var target string
	writeAtomicFile = func(path string, data []byte) error {
		target = path
		// Fail the way a full disk fails in writeAtomic: half the data is
		// in the temporary file when the write errs, the temporary file
		// is removed and the rename never happens.
		tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*")
		if err != nil {
			return err
		}
		tmp.Write(data[:len(data)/2])
		tmp.Close()
		os.Remove(tmp.Name())
		return errors.New("write: no space left on device (simulated)")
	}
	code, _, stderr := runCLI(t, "run", "-w", nb)
	if code != 1 || !strings.Contains(stderr, "writing the executed notebook") {
		t.Errorf("exit %d, stderr %q", code, stderr)
	}
	if target != nb {
		t.Errorf("wrote to %q, want %q", target, nb)
	}
	if after, _ := os.ReadFile(nb); !bytes.Equal(after, src) {
		t.Error("the original changed although the write failed")
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Errorf("files left behind: %v", names(entries))
	}
}

func TestRunNotebookBadInput(t *testing.T) {
	dir := t.TempDir()
	trunc := writeNotebook(t, dir, "trunc.ipynb", []byte(`{"nbformat": 4, "cells": [`))
	v3 := writeNotebook(t, dir, "old.ipynb", []byte(`{"nbformat": 3, "nbformat_minor": 0, "worksheets": []}`))
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"run", trunc}, 1, "truncated"},
		{[]string{"run", v3}, 1, "nbformat 3 is not supported"},
		{[]string{"run", filepath.Join(dir, "missing.ipynb")}, 1, "no such file"},
		{[]string{"run", trunc, v3}, 2, "usage: massline run NOTEBOOK.ipynb"},
		{[]string{"run", "--nope", trunc}, 2, "flag provided but not defined"},
	} {
		code, _, stderr := runCLI(t, tc.args...)
		if code != tc.code || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", tc.args, code, stderr, tc.code, tc.want)
		}
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 2 {
		t.Errorf("bad input left files behind: %v", names(entries))
	}
	if isNotebookRun([]string{"--out", "x", "model.mln"}) || !isNotebookRun([]string{"a.IPYNB"}) {
		t.Error("isNotebookRun tells notebooks from models wrongly")
	}
}

func names(entries []os.DirEntry) []string {
	var out []string
	for _, e := range entries {
		out = append(out, e.Name())
	}
	return out
}

// validateNotebooks checks written notebooks with nbformat's validator
// (system Python); skipped when it is missing unless CI is set.
func validateNotebooks(t *testing.T, files ...string) {
	t.Helper()
	const py = "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import nbformat").Run(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("CI is set but %s cannot import nbformat: %v", py, err)
		}
		t.Skipf("%s with nbformat is not available", py)
	}
	script := `
import sys, json, warnings, nbformat
warnings.simplefilter("error")
bad = 0
for path in sys.argv[1:]:
    try:
        with open(path, encoding="utf-8") as f:
            nbformat.validate(nbformat.from_dict(json.load(f)))
    except Exception as e:
        bad += 1
        print(path + ": " + (str(e).splitlines() or [repr(e)])[0])
sys.exit(1 if bad else 0)
`
	out, err := exec.Command(py, append([]string{"-c", script}, files...)...).CombinedOutput()
	if err != nil {
		t.Errorf("nbformat.validate: %v\n%s", err, out)
	}
}
