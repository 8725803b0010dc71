package engine

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/dsl"
)

// The tests of fitting synthesize their data with the engine itself: a
// sphere with a liquid film, D = 3.2e-10 m²/s and kf = 2e-5 m/s (an
// invented case), solved at a tight tolerance, then fit the same model
// from other starting values.

const (
	trueD  = 3.2e-10
	trueKf = 2e-5
)

// fitModel is the sphere-with-film model with D and kf as given and the
// tail (run, settings, fit or show statements) appended.
func fitModel(d, kf float64, tail string) string {
	return fmt.Sprintf(`massline 1
let R  = 0.3 [mm]
let D  = %g [m^2/s]
let kf = %g [m/s]
species dye { diffusivity = D }
body bead = sphere(radius = R)
balance dye in bead
boundary bead.centre: symmetry
boundary bead.surface: film(coefficient = kf, bulk = 1 [mol/m^3])
initially bead: dye = 0 [mol/m^3]
%s`, d, kf, tail)
}

// dataMinutes are the 12 measurement times, in minutes.
var dataMinutes = []float64{0.25, 0.5, 0.75, 1, 1.5, 2, 3, 4, 5, 6, 8, 10}

// synthUptake solves the model with the true values at the data times at
// a tight tolerance and returns the uptake fraction there.
func synthUptake(t *testing.T, cells int) []float64 {
	t.Helper()
	var at []string
	for _, m := range dataMinutes {
		at = append(at, fmt.Sprintf("%g [min]", m))
	}
	src := fitModel(trueD, trueKf, fmt.Sprintf("run until 10 [min] at %s\nsettings { rtol = 1e-10, cells = %d }\n", strings.Join(at, ", "), cells))
	res, diags, err := RunSource(context.Background(), "synth.mln", src, nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	s := res.Find("uptake_fraction", "bead", "dye")
	if s == nil {
		t.Fatal("no uptake series")
	}
	out := make([]float64, len(dataMinutes))
	for i, m := range dataMinutes {
		for j, tt := range res.Times {
			if math.Abs(tt-60*m) < 1e-9 {
				out[i] = s.Values[j]
			}
		}
	}
	return out
}

// writeFit writes the data (time in minutes) and a model that fits D and
// kf from start values, in a temporary directory, and returns the model path.
func writeFit(t *testing.T, f []float64, d0, kf0 float64, cells int) string {
	t.Helper()
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("# synthetic uptake data (test)\nt [min],F [1]\n")
	for i, m := range dataMinutes {
		fmt.Fprintf(&b, "%g,%.12g\n", m, f[i])
	}
	if err := os.WriteFile(filepath.Join(dir, "uptake.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	tail := fmt.Sprintf(`run until 10 [min] every 1 [min]
settings { cells = %d }
fit D from 1e-11 [m^2/s] to 1e-8 [m^2/s], kf from 1e-6 [m/s] to 1e-3 [m/s] against "uptake.csv" { time = "t"  uptake(dye) = "F" }
`, cells)
	path := filepath.Join(dir, "fit.mln")
	if err := os.WriteFile(path, []byte(fitModel(d0, kf0, tail)), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// fitted returns the fitted value and interval of a parameter.
func fitted(t *testing.T, res *Result, name string) (v, lo, hi float64) {
	t.Helper()
	v, lo, hi = math.NaN(), math.NaN(), math.NaN()
	for _, s := range res.Scalars {
		switch s.Name {
		case "fit:" + name:
			v = s.Value
		case "fit_ci95_low:" + name:
			lo = s.Value
		case "fit_ci95_high:" + name:
			hi = s.Value
		}
	}
	if math.IsNaN(v) {
		t.Fatalf("no scalar fit:%s in %+v", name, res.Scalars)
	}
	return v, lo, hi
}

// TestFitRecoversParameters fits exact synthetic data from starting
// values far from the truth: both parameters come back within 1 % and
// within their confidence intervals.
func TestFitRecoversParameters(t *testing.T) {
	const cells = 24
	f := synthUptake(t, cells)
	path := writeFit(t, f, 1e-9, 1e-4, cells)
	start := time.Now()
	res, diags, err := RunFile(context.Background(), path, nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	t.Logf("fit took %v", time.Since(start))
	for _, c := range []struct {
		name  string
		truth float64
	}{{"D", trueD}, {"kf", trueKf}} {
		v, lo, hi := fitted(t, res, c.name)
		t.Logf("%s = %.6g (95 %% CI %.6g to %.6g), truth %g", c.name, v, lo, hi, c.truth)
		if math.Abs(v-c.truth) > 0.01*c.truth {
			t.Errorf("%s = %g, truth %g: off by more than 1 %%", c.name, v, c.truth)
		}
		if !(lo <= c.truth && c.truth <= hi) {
			t.Errorf("%s: interval [%g, %g] misses the truth %g", c.name, lo, hi, c.truth)
		}
	}
	var plots, tables int
	for _, o := range res.Outputs {
		switch o.Kind {
		case "plot":
			plots++
			if len(o.Plot.Series) != 2 || !o.Plot.Series[0].Points || len(o.Plot.Series[0].X) != len(dataMinutes) {
				t.Errorf("plot %q: want data points and a model line", o.Plot.Title)
			}
			if !strings.Contains(o.Plot.SVG(), "<svg") {
				t.Errorf("plot does not render")
			}
		case "table":
			tables++
			t.Logf("%s", o.Table.Text())
		}
	}
	if plots != 1 || tables != 3 {
		t.Errorf("%d plots and %d tables, want 1 and 3 (values, correlation, residuals)", plots, tables)
	}
	if js, err := res.JSON(); err != nil || !strings.Contains(string(js), `"fit:D"`) {
		t.Errorf("JSON lacks the fitted values: %v", err)
	}
}

// TestFitNoisyCoverage fits data with deterministic pseudo-random noise
// (σ = 0.01 in the uptake fraction): each 95 % interval covers the truth.
func TestFitNoisyCoverage(t *testing.T) {
	const cells = 24
	f := synthUptake(t, cells)
	rng := rand.New(rand.NewPCG(2024, 7))
	for i := range f {
		f[i] += 0.01 * rng.NormFloat64()
	}
	path := writeFit(t, f, 1e-10, 1e-5, cells)
	res, diags, err := RunFile(context.Background(), path, nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	for _, c := range []struct {
		name  string
		truth float64
	}{{"D", trueD}, {"kf", trueKf}} {
		v, lo, hi := fitted(t, res, c.name)
		t.Logf("%s = %.4g (95 %% CI %.4g to %.4g), truth %g", c.name, v, lo, hi, c.truth)
		if !(lo <= c.truth && c.truth <= hi) {
			t.Errorf("%s: interval [%g, %g] misses the truth %g", c.name, lo, hi, c.truth)
		}
		if !(hi > lo) {
			t.Errorf("%s: empty interval [%g, %g]", c.name, lo, hi)
		}
		// At this Biot number (kf·R/D ≈ 19) the film matters little and
		// kf is poorly determined by 12 noisy values; D is well determined.
		if c.name == "D" && (hi-lo)/2 > 0.3*v {
			t.Errorf("D: interval [%g, %g] wider than ±30 %%", lo, hi)
		}
	}
}

// TestFitBadData: data files with problems give clear errors naming the
// file, line and column.
func TestFitBadData(t *testing.T) {
	cases := []struct {
		name, csv string
		want      []string
	}{
		{"bad cell", "# comment\nt [min],F [1]\n\n1,0.2\n2,0.3x\n", []string{"uptake.csv, line 5, column 2", `"F"`, `"0.3x" is not a number`}},
		{"missing time", "t [min],F [1]\n1,0.2\n,0.3\n", []string{"line 3, column 1", "time is missing"}},
		{"negative time", "t [min],F [1]\n-1,0.2\n", []string{"line 2", "negative"}},
		{"infinite", "t [min],F [1]\n1,Inf\n", []string{"line 2, column 2", "not a finite number"}},
		{"no values", "t [min],F [1]\n1,\n2,\n", []string{`column "F" holds no values`}},
		{"bad quote", "t [min],F [1]\n1,\"0.2\n", []string{"uptake.csv"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			// The checker reads the header when the model is checked; the
			// engine reads the rest when the fit runs.
			if err := os.WriteFile(filepath.Join(dir, "uptake.csv"), []byte(c.csv), 0o644); err != nil {
				t.Fatal(err)
			}
			src := fitModel(3e-10, 2e-5, `run until 10 [min] every 1 [min]
settings { cells = 12 }
fit D from 1e-11 [m^2/s] to 1e-8 [m^2/s] against "uptake.csv" { time = "t"  uptake(dye) = "F" }
`)
			path := filepath.Join(dir, "m.mln")
			os.WriteFile(path, []byte(src), 0o644)
			_, diags, err := RunFile(context.Background(), path, nil)
			if err == nil {
				t.Fatalf("no error")
			}
			if diags.HasErrors() {
				t.Fatalf("rejected by the checker, not the engine: %v", err)
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
			if !strings.Contains(err.Error(), "m.mln:") {
				t.Errorf("error %q does not point at the fit statement", err)
			}
		})
	}
}

// TestFitInterrupt: a context cancelled while the fit runs (here after
// a few model runs) ends it with "interrupted".
func TestFitInterrupt(t *testing.T) {
	path := writeFit(t, []float64{0.1, 0.2, 0.3, 0.35, 0.45, 0.5, 0.6, 0.7, 0.75, 0.8, 0.85, 0.9}, 1e-9, 1e-4, 12)
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	f, _ := dsl.Parse(path, string(src))
	base := RecheckFunc(f, nil)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var calls atomic.Int32
	opts := &Options{Recheck: func(over map[string]float64) (*compile.Model, error) {
		if calls.Add(1) == 3 {
			cancel()
		}
		return base(over)
	}}
	_, _, err = RunFile(ctx, path, opts)
	if err == nil || !strings.Contains(err.Error(), "interrupted") {
		t.Errorf("err = %v, want interrupted", err)
	}
	if n := calls.Load(); n > 8 {
		t.Errorf("%d model runs after the interrupt", n-3)
	}
}

// TestFitDemo runs the demonstration in testdata/fit (an invented
// scenario) with coarse settings and checks it produces its outputs.
func TestFitDemo(t *testing.T) {
	res, diags, err := RunFile(context.Background(), "../testdata/fit/bead_dye_fit.mln", nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	v, lo, hi := fitted(t, res, "D_gel")
	if !(lo < v && v < hi) || v < 1e-11 || v > 1e-8 {
		t.Errorf("D_gel = %g [%g, %g]", v, lo, hi)
	}
	plots := 0
	for _, o := range res.Outputs {
		if o.Kind == "plot" {
			plots++
		}
	}
	if plots < 2 {
		t.Errorf("%d plots, want one per fitted series (2) at least", plots)
	}
}

// TestFitBeyondRun: data past the end of the run extend the runs of the
// fit (and its plot); with stages, whose durations fix the run, they are
// an error.
func TestFitBeyondRun(t *testing.T) {
	dir := t.TempDir()
	csv := "t [min],F [%]\n5,30\n10,45\n20,62\n30,71\n"
	if err := os.WriteFile(filepath.Join(dir, "late.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	fit := `fit D from 1e-11 [m^2/s] to 1e-8 [m^2/s] against "late.csv" { time = "t"  uptake(dye) = "F" }
`
	plain := fitModel(3e-10, 2e-5, "run until 10 [min] every 1 [min]\nsettings { cells = 12 }\n"+fit)
	res, diags, err := RunSource(context.Background(), filepath.Join(dir, "plain.mln"), plain, nil)
	if err != nil {
		t.Fatalf("%v\n%v", err, diags)
	}
	fitted(t, res, "D")
	for _, o := range res.Outputs {
		if o.Kind == "plot" && strings.HasPrefix(o.Plot.Title, "fit of") {
			model := o.Plot.Series[1]
			if last := model.X[len(model.X)-1]; math.Abs(last-30) > 1e-9 {
				t.Errorf("model line ends at %g min, want 30", last)
			}
		}
	}
	staged := fitModel(3e-10, 2e-5, `stage soak for 6 [min] { }
stage rest for 4 [min] { }
run every 1 [min]
settings { cells = 12 }
`+fit)
	_, diags, err = RunSource(context.Background(), filepath.Join(dir, "staged.mln"), staged, nil)
	if err == nil || diags.HasErrors() || !strings.Contains(err.Error(), "stages end") {
		t.Errorf("err = %v (diagnostics %v), want an error about the stages' end", err, diags)
	}
}
