package workspace

import (
	"context"
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/massline/massline/kernel"
)

type sink struct {
	streams  map[string]string
	displays []kernel.Bundle
}

func newSink() *sink { return &sink{streams: map[string]string{}} }

func (s *sink) Stream(name, text string) { s.streams[name] += text }
func (s *sink) Display(b kernel.Bundle)  { s.displays = append(s.displays, b) }

func exec(t *testing.T, w *Workspace, code string) (*sink, kernel.Bundle, error) {
	t.Helper()
	s := newSink()
	b, err := w.Execute(context.Background(), code, s)
	return s, b, err
}

const model = `species dye { diffusivity = 4e-10 [m^2/s] }
body bead = sphere(radius = 1 [mm])
balance dye in bead
boundary bead.centre: symmetry
boundary bead.surface: fixed(1 [mol/m^3])
initially bead: dye = 0 [mol/m^3]
run until 1 [h] every 10 [min]`

func TestCellsBuildAModel(t *testing.T) {
	w := New()
	if _, _, err := exec(t, w, "let R = 1.5 [mm]"); err != nil {
		t.Fatal(err)
	}
	_, b, err := exec(t, w, "R")
	if err != nil || b["text/plain"] != "1.5 [mm]" {
		t.Fatalf("R shows %v (%v)", b, err)
	}
	if _, _, err := exec(t, w, model); err != nil {
		t.Fatal(err)
	}
	s, _, err := exec(t, w, "show uptake(dye)")
	if err != nil {
		t.Fatal(err)
	}
	var svg, html bool
	for _, d := range s.displays {
		_, svg1 := d["image/svg+xml"]
		_, html1 := d["text/html"]
		if svg1 && html1 {
			t.Error("a plot and a table share one bundle")
		}
		if _, ok := d["application/json"]; !ok {
			t.Error("a bundle lacks application/json")
		}
		svg, html = svg || svg1, html || html1
	}
	if !svg || !html {
		t.Errorf("want a plot and a table, got %d displays", len(s.displays))
	}
	if !strings.Contains(s.streams["stdout"], "Caution:") {
		t.Error("no caution after results")
	}
}

// TestFailedCellChangesNothing: a cell with an error leaves the workspace
// exactly as it was, even if part of it was fine.
func TestFailedCellChangesNothing(t *testing.T) {
	w := New()
	exec(t, w, "let a = 2 [m]")
	n := w.Cells()
	_, _, err := exec(t, w, "let a = 3 [m]\nlet b = a + 1 [s]")
	var ce *kernel.CellError
	if !errors.As(err, &ce) || ce.Name != "CheckError" {
		t.Fatalf("want a CheckError, got %v", err)
	}
	if !strings.Contains(strings.Join(ce.Traceback, "\n"), "^") {
		t.Errorf("traceback shows no caret: %q", ce.Traceback)
	}
	if w.Cells() != n {
		t.Errorf("cells %d → %d after a failed cell", n, w.Cells())
	}
	_, b, _ := exec(t, w, "a")
	if b["text/plain"] != "2 [m]" {
		t.Errorf("a = %v after the failed cell, want 2 [m]", b["text/plain"])
	}
}

func TestRedefinitionReportedAndReset(t *testing.T) {
	w := New()
	exec(t, w, "let a = 2 [m]")
	s, _, err := exec(t, w, "let a = 5 [m]")
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(s.streams["stderr"], "redefined") {
		t.Errorf("no redefinition note: %q", s.streams)
	}
	_, b, _ := exec(t, w, "a")
	if b["text/plain"] != "5 [m]" {
		t.Errorf("a = %v", b["text/plain"])
	}
	exec(t, w, "reset")
	if w.Cells() != 0 {
		t.Errorf("reset left %d cells", w.Cells())
	}
	if _, _, err := exec(t, w, "a"); err == nil {
		t.Error("a still defined after reset")
	}
}

// TestInterrupt: cancelling a long solve returns an "interrupted" error
// quickly and the workspace still works.
func TestInterrupt(t *testing.T) {
	w := New()
	long := strings.Replace(model, "run until 1 [h] every 10 [min]", "run until 1000 [h] every 1 [min]\nsettings { cells = 20000, rtol = 1e-12 }", 1)
	if _, _, err := exec(t, w, long); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() {
		_, err := w.Execute(ctx, "show uptake(dye)", newSink())
		done <- err
	}()
	time.Sleep(300 * time.Millisecond)
	start := time.Now()
	cancel()
	select {
	case err := <-done:
		took := time.Since(start)
		t.Logf("interrupted after %v", took)
		var ce *kernel.CellError
		if !errors.As(err, &ce) || ce.Name != "Interrupted" {
			t.Errorf("want an Interrupted cell error, got %v", err)
		}
		if took > time.Second {
			t.Errorf("interrupt took %v", took)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("the solve did not stop")
	}
	if _, _, err := exec(t, w, "let zz = 1"); err != nil {
		t.Errorf("workspace unusable after interrupt: %v", err)
	}
}

func TestCompleteInspectIsComplete(t *testing.T) {
	w := New()
	exec(t, w, "let radius = 1 [mm]\nspecies dye { diffusivity = 1e-9 [m^2/s] }\nbody bead = sphere(radius = radius)")
	c := w.Complete("let x = rad", 11)
	if !contains(c.Matches, "radius") || c.CursorStart != 8 || c.CursorEnd != 11 {
		t.Errorf("complete: %+v", c)
	}
	c = w.Complete("boundary bead.su", 16)
	if !contains(c.Matches, "bead.surface") {
		t.Errorf("complete boundary: %+v", c)
	}
	c = w.Complete("let x = 1 [µ", 12)
	if !contains(c.Matches, "µm") {
		t.Errorf("complete unit: %+v", c)
	}
	b, ok := w.Inspect("radius", 2, 0)
	if !ok || !strings.Contains(b["text/plain"].(string), "1 [mm]") {
		t.Errorf("inspect radius: %v", b)
	}
	b, ok = w.Inspect("boundary", 3, 0)
	if !ok || !strings.Contains(b["text/plain"].(string), "Example") {
		t.Errorf("inspect keyword: %v", b)
	}
	for code, want := range map[string]string{
		"let a = 1 [m]":     "complete",
		"species dye {":     "incomplete",
		"let a = 1 [m] +":   "incomplete",
		"let = = 2":         "invalid",
		"species dye { } }": "invalid",
		"let u = 1 [mm":     "incomplete",
		"print \"hello\"":   "complete",
	} {
		if got, _ := w.IsComplete(code); got != want {
			t.Errorf("IsComplete(%q) = %s, want %s", code, got, want)
		}
	}
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}

func TestCompleteInContext(t *testing.T) {
	w := New()
	cases := []struct {
		code, want string
	}{
		{"boundary b.surface: film(co", "coefficient"},
		{"body b = sphere(ra", "radius"},
		{"boundary b.surface: bath(volume = 1 [mL], st", "start"},
		{"species dye {\n  diff", "diffusivity"},
		{"settings { rt", "rtol"},
		{"balance dye in bead { so", "source"},
	}
	for _, c := range cases {
		got := w.Complete(c.code, len([]rune(c.code)))
		if !contains(got.Matches, c.want) {
			t.Errorf("Complete(%q) = %v, want %q among them", c.code, got.Matches, c.want)
		}
		for _, m := range got.Matches {
			if m == "species" || m == "let" {
				t.Errorf("Complete(%q) offers the keyword %q inside a call or block", c.code, m)
			}
		}
	}
}
