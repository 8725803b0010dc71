package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

func runCLI(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, &out, &errb)
	return code, out.String(), errb.String()
}

// TestRunExample runs the bundled example as the README does and checks
// the table, the plot files and the JSON layout the README documents.
func TestRunExample(t *testing.T) {
	dir := t.TempDir()
	code, out, errs := runCLI(t, "run", "--out", dir, "../../testdata/examples/gel_bead_soak.mln")
	if code != 0 {
		t.Fatalf("exit %d\nstdout:\n%s\nstderr:\n%s", code, out, errs)
	}
	for _, want := range []string{"uptake fraction", "centre concentration", "Caution:", "mass ledger closes"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q", want)
		}
	}
	svgs, _ := filepath.Glob(filepath.Join(dir, "gel_bead_soak-*.svg"))
	if len(svgs) == 0 {
		t.Fatal("no SVG written")
	}
	for _, s := range svgs {
		b, _ := os.ReadFile(s)
		if !bytes.HasPrefix(bytes.TrimSpace(b), []byte("<svg")) {
			t.Errorf("%s does not start with <svg", s)
		}
	}
	b, err := os.ReadFile(filepath.Join(dir, "gel_bead_soak.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Model struct {
			File   string `json:"file"`
			SHA256 string `json:"sha256"`
		} `json:"model"`
		Times  []float64 `json:"times_s"`
		Series []struct {
			Name    string     `json:"name"`
			Species string     `json:"species"`
			Unit    string     `json:"unit"`
			Values  []*float64 `json:"values"`
		} `json:"series"`
		Profiles []struct {
			Time     float64              `json:"time_s"`
			Position []float64            `json:"position_m"`
			Values   map[string][]float64 `json:"values"`
		} `json:"profiles"`
		Solver struct {
			Method   string  `json:"method"`
			Steps    int     `json:"steps"`
			Rejected *int    `json:"rejected_steps"`
			JacEvals *int    `json:"jacobian_evaluations"`
			Wall     float64 `json:"wall_time_s"`
		} `json:"solver"`
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	if !regexp.MustCompile(`^[0-9a-f]{64}$`).MatchString(doc.Model.SHA256) {
		t.Errorf("model.sha256 = %q", doc.Model.SHA256)
	}
	names := map[string]bool{}
	for _, s := range doc.Series {
		names[s.Name] = true
		if len(s.Values) != len(doc.Times) {
			t.Errorf("series %s has %d values for %d times", s.Name, len(s.Values), len(doc.Times))
		}
		if s.Species != "dye" {
			t.Errorf("series %s species %q", s.Name, s.Species)
		}
	}
	for _, n := range []string{"uptake_fraction", "centre", "mean"} {
		if !names[n] {
			t.Errorf("series %s missing", n)
		}
	}
	if len(doc.Profiles) != 5 || len(doc.Profiles[0].Values["dye"]) != len(doc.Profiles[0].Position) {
		t.Errorf("profiles malformed: %d profiles", len(doc.Profiles))
	}
	if doc.Solver.Method == "" || doc.Solver.Steps == 0 || doc.Solver.Rejected == nil || doc.Solver.JacEvals == nil || doc.Solver.Wall <= 0 {
		t.Errorf("solver section incomplete: %+v", doc.Solver)
	}
}

// TestRunMalformed: a malformed model exits 1 with file:line:col and an
// excerpt, never a panic (status 2).
func TestRunMalformed(t *testing.T) {
	dir := t.TempDir()
	cases := map[string]string{
		"syntax.mln":  "massline 1\nlet R = 1.5 [mm\nlet D = 4e-10 [m^2/s]\n",
		"units.mln":   "let R = 1.5 [mmm]\n",
		"garbage.mln": "\x00\x01\x02 }{ [[[ \"",
		"empty.mln":   "",
		"dims.mln":    "let a = 1 [m] + 1 [s]\n",
	}
	for name, src := range cases {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(src), 0o644)
		code, _, errs := runCLI(t, "run", "--out", dir, p)
		if name == "empty.mln" {
			// An empty file is a valid model that asks for nothing.
			if code != 0 {
				t.Errorf("%s: exit %d: %s", name, code, errs)
			}
			continue
		}
		if code != 1 {
			t.Errorf("%s: exit %d, want 1; stderr:\n%s", name, code, errs)
		}
		if !regexp.MustCompile(regexp.QuoteMeta(p) + `:\d+:\d+: error: `).MatchString(errs) {
			t.Errorf("%s: no file:line:col diagnostic in:\n%s", name, errs)
		}
	}
	code, _, _ := runCLI(t, "run", filepath.Join(dir, "does-not-exist.mln"))
	if code != 1 {
		t.Errorf("missing file: exit %d", code)
	}
}

// TestCheckJSON: check --json gives diagnostics with ranges and codes.
func TestCheckJSON(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "m.mln")
	os.WriteFile(p, []byte("let D = 4e-10 [m^2/s]\nlet k = Dx * 2\n"), 0o644)
	code, out, _ := runCLI(t, "check", "--json", p)
	if code != 1 {
		t.Fatalf("exit %d", code)
	}
	var ds []map[string]any
	if err := json.Unmarshal([]byte(out), &ds); err != nil {
		t.Fatalf("%v in %s", err, out)
	}
	if len(ds) != 1 || ds[0]["line"].(float64) != 2 || ds[0]["code"] != "unknown-name" || ds[0]["suggestion"] != "D" {
		t.Errorf("diagnostics: %v", ds)
	}
}

func writeFile(t *testing.T, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}
