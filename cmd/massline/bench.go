package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/solvers"
	"github.com/massline/massline/solvers/analytic"
)

// benchProblem is one benchmark problem: a model, the times at which a
// quantity is compared with its series solution, and that quantity.
type benchProblem struct {
	name, what string
	model      string
	times      []float64
	ref        []float64
	scale      float64 // absorbed amounts are divided by it
	absorbed   bool    // compare the absorbed amount (else the uptake fraction)
}

const p1Model = `massline 1
species s { diffusivity = 1e-9 [m^2/s] }
body b = sphere(radius = 1 [mm])
balance s in b
boundary b.centre: symmetry
boundary b.surface: film(coefficient = 1e-5 [m/s], bulk = 1 [mol/m^3])
initially b: s = 0 [mol/m^3]
run until 1000 [s] at 10 [s], 100 [s]
`

const p2Model = `massline 1
species s { diffusivity = 1e-9 [m^2/s] }
body b = sphere(radius = 1 [mm])
balance s in b { source = -0.01 [1/s] * s }
boundary b.centre: symmetry
boundary b.surface: fixed(1 [mol/m^3])
initially b: s = 0 [mol/m^3]
run until 1000 [s] at 100 [s]
`

// p3Model is P1 with Langmuir sorption in the accumulation term: porosity
// 0.4, ρ·q_max = 10 mol/m³, K_L = 2 m³/mol.
const p3Model = `massline 1
species s { diffusivity = 1e-9 [m^2/s] }
body b = sphere(radius = 1 [mm])
balance s in b { store = 0.4 * s + 10 [mol/m^3] * 2 [m^3/mol] * s / (1 + 2 [m^3/mol] * s) }
boundary b.centre: symmetry
boundary b.surface: film(coefficient = 1e-5 [m/s], bulk = 1 [mol/m^3])
initially b: s = 0 [mol/m^3]
run until 1000 [s] at 10 [s], 100 [s]
`

// p3Reference are the uptake fractions of P3 at 10, 100 and 1000 s. P3
// has no closed form. These values are massline's own, from very fine
// runs: 1280 and 2560 cells at rtol 1e-11 extrapolated in space
// (Richardson, second order), giving 0.035511386099, 0.237499632051,
// 0.853444695119. They were cross-checked against an independent method
// of lines in scipy (testdata/bench/scipy_mol.py P3-reference: a uniform
// grid with the concentration as unknown, dc/dt = net inflow/(V q'(c)),
// solve_ivp BDF at rtol 1e-10 on 1600 and 3200 cells, extrapolated
// likewise), which gave 0.035511386101, 0.237499632055, 0.853444695114:
// the two agree to 1e-10 (relative). `massline bench --reference`
// recomputes both.
var p3Reference = []float64{0.0355113861, 0.2374996321, 0.8534446951}

// benchProblems builds P1, P2 and P3 with their reference values.
//
// source: P1 — sphere with surface film, Biot number 10: J. Crank, The
// Mathematics of Diffusion, 2nd ed. (1975), eq. 6.41 (Mt/M∞ series with
// roots of β cot β + L − 1 = 0, from memory), as implemented in
// solvers/analytic.Film. P2 — first-order consumption with fixed surface
// value, Danckwerts' transformation (Crank, 2nd ed., §14.2), as in
// solvers/analytic.Reaction.
func benchProblems() ([]benchProblem, error) {
	a, D := 1e-3, 1e-9
	film, err := analytic.NewFilm(analytic.Sphere, 10)
	if err != nil {
		return nil, err
	}
	p1 := benchProblem{name: "P1", what: "sphere, film Bi = 10: uptake fraction at 10, 100, 1000 s", model: p1Model, times: []float64{10, 100, 1000}}
	for _, t := range p1.times {
		v, err := film.Uptake(D * t / (a * a))
		if err != nil {
			return nil, err
		}
		p1.ref = append(p1.ref, v)
	}
	phi := a * math.Sqrt(0.01/D)
	rx, err := analytic.NewReaction(analytic.Sphere, phi)
	if err != nil {
		return nil, err
	}
	vp := 4.0 / 3.0 * math.Pi * a * a * a // amount Vp·Cs with Cs = 1 mol/m^3
	p2 := benchProblem{name: "P2", what: fmt.Sprintf("sphere, fixed surface, k = 0.01 1/s (Thiele %.3g): amount absorbed at 100, 1000 s", phi),
		model: p2Model, times: []float64{100, 1000}, absorbed: true, scale: vp}
	for _, t := range p2.times {
		v, err := rx.Absorbed(D * t / (a * a))
		if err != nil {
			return nil, err
		}
		p2.ref = append(p2.ref, v)
	}
	p3 := benchProblem{name: "P3", what: "sphere, film Bi = 10, Langmuir store 0.4 c + 20 c/(1 + 2 c): uptake fraction at 10, 100, 1000 s (reference: fine massline runs, cross-checked with scipy)",
		model: p3Model, times: []float64{10, 100, 1000}, ref: p3Reference}
	return []benchProblem{p1, p2, p3}, nil
}

// benchRow is one point of the work-precision table.
type benchRow struct {
	Problem string  `json:"problem"`
	Method  string  `json:"method"`
	Cells   int     `json:"cells"`
	RTol    float64 `json:"rtol"`
	Seconds float64 `json:"seconds"`
	Error   float64 `json:"error"`
}

// solveOnce lowers, builds and integrates a benchmark model and returns
// the compared quantity at the reference times.
func solveOnce(p benchProblem, m *compile.Model, set compile.Settings, it *solvers.Integrator) ([]float64, error) {
	b := m.Bodies[0]
	low, err := compile.Lower(m, b, b.Conditions, set)
	if err != nil {
		return nil, err
	}
	d, err := fv.Build(low.Spec)
	if err != nil {
		return nil, err
	}
	prob := d.Problem()
	r, err := it.Integrate(context.Background(), prob, 0, d.Y0(), p.times, &solvers.Settings{RTol: set.RTol, ATol: set.RTol * 1e-3})
	if err != nil {
		return nil, err
	}
	return benchValues(p, d, r)
}

// benchValues returns the compared quantity at the output times: the
// absorbed amount over p.scale, or the uptake fraction (the content over
// the content in equilibrium with the bulk value, 1 mol/m³).
func benchValues(p benchProblem, d *fv.Discretization, r *solvers.Result) ([]float64, error) {
	full, err := d.EquilibriumContent(0, 1)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(p.times))
	for i := range p.times {
		if p.absorbed {
			out[i] = (r.Q[i][fv.QuadOuter] + r.Q[i][fv.QuadInner]) / p.scale
		} else {
			c, _ := d.Content(r.Y[i], 0)
			out[i] = c / full
		}
	}
	return out, nil
}

// p3Recompute recomputes the P3 reference both ways: massline on two fine
// grids extrapolated in space, and the scipy script's extrapolation (see
// p3Reference); it prints both and their largest relative difference.
func p3Recompute(p benchProblem, script string, noScipy bool, stdout io.Writer) error {
	f, diags := dsl.Parse(p.name, p.model)
	m, more := compile.Check(f, nil)
	if m == nil {
		return fmt.Errorf("%v %v", diags, more)
	}
	b := m.Bodies[0]
	var runs [][]float64
	for _, n := range []int{1280, 2560} {
		low, err := compile.Lower(m, b, b.Conditions, compile.Settings{RTol: 1e-11, Cells: n})
		if err != nil {
			return err
		}
		d, err := fv.Build(low.Spec)
		if err != nil {
			return err
		}
		r, err := solvers.Integrate(context.Background(), d.Problem(), 0, d.Y0(), p.times, &solvers.Settings{RTol: 1e-11, ATol: 1e-14})
		if err != nil {
			return err
		}
		v, err := benchValues(p, d, r)
		if err != nil {
			return err
		}
		lines, err := d.Ledger(d.Y0(), r.Y[len(r.Y)-1], r.Q[len(r.Q)-1])
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "  massline %d cells, rtol 1e-11: %.12f (ledger closure %.1e)\n", n, v, lines[0].Closure)
		runs = append(runs, v)
	}
	ml := make([]float64, len(p.times))
	for i := range ml {
		ml[i] = runs[1][i] + (runs[1][i]-runs[0][i])/3
	}
	fmt.Fprintf(stdout, "  massline extrapolated:            %.12f\n", ml)
	if noScipy {
		return nil
	}
	out, err := exec.Command("/usr/bin/python3", script, "P3-reference", "1600,3200").Output()
	if err != nil {
		return fmt.Errorf("scipy reference: %v", err)
	}
	var ref struct {
		Cells        []int       `json:"cells"`
		Values       [][]float64 `json:"values"`
		Extrapolated []float64   `json:"extrapolated"`
	}
	if err := json.Unmarshal(out, &ref); err != nil || len(ref.Extrapolated) != len(ml) || len(ref.Values) != len(ref.Cells) {
		return fmt.Errorf("scipy reference output %q: %v", out, err)
	}
	for i, n := range ref.Cells {
		fmt.Fprintf(stdout, "  scipy %d cells, rtol 1e-10:    %.12f\n", n, ref.Values[i])
	}
	fmt.Fprintf(stdout, "  scipy extrapolated:               %.12f\n", ref.Extrapolated)
	worst := 0.0
	for i := range ml {
		worst = math.Max(worst, math.Abs(ml[i]-ref.Extrapolated[i])/math.Abs(ref.Extrapolated[i]))
	}
	fmt.Fprintf(stdout, "  largest relative difference %.1e; the bench uses %v\n", worst, p.ref)
	return nil
}

// worstError is the largest relative error against the reference.
func (p benchProblem) worstError(got []float64) float64 {
	worst := 0.0
	for i := range got {
		worst = math.Max(worst, math.Abs(got[i]-p.ref[i])/math.Abs(p.ref[i]))
	}
	return worst
}

// timeIt returns the best wall time of repeated calls (at least reps, and
// at least 50 ms in all).
func timeIt(reps int, f func() error) (float64, error) {
	best := math.Inf(1)
	start := time.Now()
	for i := 0; i < reps || time.Since(start) < 50*time.Millisecond; i++ {
		t0 := time.Now()
		if err := f(); err != nil {
			return 0, err
		}
		best = math.Min(best, time.Since(t0).Seconds())
		if i > 1000 {
			break
		}
	}
	return best, nil
}

func benchMassline(p benchProblem, quick bool) ([]benchRow, error) {
	f, diags := dsl.Parse(p.name, p.model)
	m, more := compile.Check(f, nil)
	if m == nil {
		return nil, fmt.Errorf("%v %v", diags, more)
	}
	cells := []int{0, 20, 40, 80, 160, 320}
	rtols := []float64{1e-5, 1e-7, 1e-9}
	if quick {
		cells, rtols = []int{0, 40}, []float64{1e-6}
	}
	var rows []benchRow
	it := &solvers.Integrator{}
	for _, n := range cells {
		for _, rtol := range rtols {
			set := compile.Settings{RTol: rtol, Cells: n}
			var e float64
			sec, err := timeIt(5, func() error {
				got, err := solveOnce(p, m, set, it)
				e = p.worstError(got)
				return err
			})
			if err != nil {
				return nil, err
			}
			label := n
			if n == 0 {
				label = defaultCells(m, set)
			}
			method := "massline"
			if n == 0 {
				method = "massline (default grid)"
			}
			rows = append(rows, benchRow{Problem: p.name, Method: method, Cells: label, RTol: rtol, Seconds: sec, Error: e})
		}
	}
	// Richardson extrapolation in space (settings { extrapolate = on }):
	// N/2 and N cells, combined as (4·v_N − v_N/2)/3.
	for _, n := range []int{40, 80, 160} {
		for _, rtol := range rtols {
			var e float64
			sec, err := timeIt(5, func() error {
				fine, err := solveOnce(p, m, compile.Settings{RTol: rtol, Cells: n}, it)
				if err != nil {
					return err
				}
				coarse, err := solveOnce(p, m, compile.Settings{RTol: rtol, Cells: n / 2}, it)
				if err != nil {
					return err
				}
				for i := range fine {
					fine[i] = (4*fine[i] - coarse[i]) / 3
				}
				e = p.worstError(fine)
				return nil
			})
			if err != nil {
				return nil, err
			}
			rows = append(rows, benchRow{Problem: p.name, Method: "massline extrapolated", Cells: n, RTol: rtol, Seconds: sec, Error: e})
		}
		if quick {
			break
		}
	}
	return rows, nil
}

func defaultCells(m *compile.Model, set compile.Settings) int {
	b := m.Bodies[0]
	low, err := compile.Lower(m, b, b.Conditions, set)
	if err != nil {
		return 0
	}
	d, err := fv.Build(low.Spec)
	if err != nil {
		return 0
	}
	return d.Cells()
}

// benchScipy runs the scipy reference script side by side.
func benchScipy(p benchProblem, script string, quick bool) ([]benchRow, error) {
	ref, _ := json.Marshal(map[string]any{"times": p.times, "values": p.ref, "scale": p.scale})
	args := []string{script, p.name, string(ref)}
	if quick {
		args = append(args, "100,400")
	}
	out, err := exec.Command("/usr/bin/python3", args...).Output()
	if err != nil {
		return nil, fmt.Errorf("scipy reference: %v", err)
	}
	var rs []benchRow
	if err := json.Unmarshal(out, &rs); err != nil {
		return nil, fmt.Errorf("scipy reference output: %v", err)
	}
	for i := range rs {
		rs[i].Problem = p.name
		rs[i].Method = "scipy " + rs[i].Method
	}
	return rs, nil
}

// bestAt returns the fastest row of a method family reaching err ≤ target.
func bestAt(rows []benchRow, prefix string, target float64) (benchRow, bool) {
	var best benchRow
	found := false
	for _, r := range rows {
		if strings.HasPrefix(r.Method, prefix) && r.Error <= target && (!found || r.Seconds < best.Seconds) {
			best, found = r, true
		}
	}
	return best, found
}

func cmdBench(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("bench", flag.ContinueOnError)
	fs.SetOutput(stderr)
	quick := fs.Bool("quick", false, "a few points only")
	noScipy := fs.Bool("no-scipy", false, "skip the scipy reference")
	asJSON := fs.Bool("json", false, "print the rows as JSON")
	script := fs.String("scipy-script", "", "path of the scipy reference script (default: testdata/bench/scipy_mol.py)")
	reference := fs.Bool("reference", false, "recompute the P3 reference values (massline and scipy side by side) and stop")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if *script == "" {
		*script = findScript()
	}
	probs, err := benchProblems()
	if err != nil {
		fmt.Fprintf(stderr, "massline: bench: %v\n", err)
		return 1
	}
	if *reference {
		fmt.Fprintln(stdout, "P3 reference (uptake fraction at 10, 100, 1000 s):")
		if err := p3Recompute(probs[2], *script, *noScipy, stdout); err != nil {
			fmt.Fprintf(stderr, "massline: bench --reference: %v\n", err)
			return 1
		}
		return 0
	}
	var all []benchRow
	for _, p := range probs {
		rows, err := benchMassline(p, *quick)
		if err != nil {
			fmt.Fprintf(stderr, "massline: bench %s: %v\n", p.name, err)
			return 1
		}
		all = append(all, rows...)
		if !*noScipy {
			rs, err := benchScipy(p, *script, *quick)
			if err != nil {
				fmt.Fprintf(stderr, "massline: bench %s: %v (use --no-scipy to skip)\n", p.name, err)
				return 1
			}
			all = append(all, rs...)
		}
	}
	if *asJSON {
		b, _ := json.MarshalIndent(all, "", "  ")
		fmt.Fprintln(stdout, string(b))
		return 0
	}
	fmt.Fprintf(stdout, "massline bench — %s, GOMAXPROCS %d, %s\n", runtime.Version(), runtime.GOMAXPROCS(0), time.Now().UTC().Format("2006-01-02"))
	for _, p := range probs {
		fmt.Fprintf(stdout, "\n%s: %s\n", p.name, p.what)
		var rows []benchRow
		for _, r := range all {
			if r.Problem == p.name {
				rows = append(rows, r)
			}
		}
		sort.SliceStable(rows, func(i, j int) bool { return rows[i].Method < rows[j].Method })
		tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "method\tcells\trtol\ttime [ms]\trel. error\t")
		for _, r := range rows {
			fmt.Fprintf(tw, "%s\t%d\t%.0e\t%.3f\t%.2e\t\n", r.Method, r.Cells, r.RTol, r.Seconds*1e3, r.Error)
		}
		tw.Flush()
		for _, target := range []float64{1e-4, 1e-6} {
			ml, ok := bestAt(rows, "massline", target)
			if !ok {
				fmt.Fprintf(stdout, "  error ≤ %.0e: massline did not reach it\n", target)
				continue
			}
			line := fmt.Sprintf("  error ≤ %.0e: %s %.3f ms (%d cells, rtol %.0e)", target, ml.Method, ml.Seconds*1e3, ml.Cells, ml.RTol)
			for _, sp := range []string{"scipy BDF", "scipy LSODA"} {
				if s, ok := bestAt(rows, sp, target); ok {
					line += fmt.Sprintf("; %s %.2f ms (%d cells) → %.0f× faster", sp, s.Seconds*1e3, s.Cells, s.Seconds/ml.Seconds)
				} else if !*noScipy {
					line += fmt.Sprintf("; %s did not reach it", sp)
				}
			}
			fmt.Fprintln(stdout, line)
		}
	}
	if err := benchScaling(stdout, *quick); err != nil {
		fmt.Fprintf(stderr, "massline: bench: %v\n", err)
		return 1
	}
	return 0
}

// benchScaling prints the cost of one integrator step against the number
// of cells (P1, rtol 1e-6) and the heap allocations per step, measured on
// a second run with the same integrator (its workspace already sized).
func benchScaling(w io.Writer, quick bool) error {
	probs, err := benchProblems()
	if err != nil {
		return err
	}
	p := probs[0]
	f, _ := dsl.Parse(p.name, p.model)
	m, diags := compile.Check(f, nil)
	if m == nil {
		return diags.Err()
	}
	cells := []int{100, 200, 400, 800, 1600, 3200}
	if quick {
		cells = []int{100, 400}
	}
	fmt.Fprintf(w, "\nCost per step (P1, rtol 1e-6): linear in the number of cells, no allocation per step\n")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "cells\tsteps\ttime [ms]\tµs/step\tns/(step·cell)\tallocs/step\t")
	for _, n := range cells {
		b := m.Bodies[0]
		low, err := compile.Lower(m, b, b.Conditions, compile.Settings{Cells: n, RTol: 1e-6})
		if err != nil {
			return err
		}
		d, err := fv.Build(low.Spec)
		if err != nil {
			return err
		}
		prob := d.Problem()
		it := &solvers.Integrator{}
		set := &solvers.Settings{RTol: 1e-6, ATol: 1e-9}
		if _, err := it.Integrate(context.Background(), prob, 0, d.Y0(), p.times, set); err != nil {
			return err
		}
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		t0 := time.Now()
		r, err := it.Integrate(context.Background(), prob, 0, d.Y0(), p.times, set)
		el := time.Since(t0)
		runtime.ReadMemStats(&after)
		if err != nil {
			return err
		}
		steps := r.Stats.Steps
		allocs := float64(after.Mallocs-before.Mallocs) / float64(steps)
		us := el.Seconds() * 1e6 / float64(steps)
		fmt.Fprintf(tw, "%d\t%d\t%.2f\t%.1f\t%.1f\t%.2f\t\n", n, steps, el.Seconds()*1e3, us, us*1e3/float64(n), allocs)
	}
	return tw.Flush()
}

// findScript looks for the scipy script next to the working directory or
// the executable.
func findScript() string {
	cands := []string{"testdata/bench/scipy_mol.py", "../../testdata/bench/scipy_mol.py"}
	if exe, err := os.Executable(); err == nil {
		cands = append(cands, filepath.Join(filepath.Dir(exe), "testdata/bench/scipy_mol.py"))
	}
	for _, c := range cands {
		if _, err := os.Stat(c); err == nil {
			return c
		}
	}
	return cands[0]
}
