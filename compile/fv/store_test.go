package fv

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"os/exec"
	"strings"
	"testing"

	"github.com/massline/massline/solvers"
)

// TestLinearStoreMatchesCapacity: a store written as the function
// q = K·c must give what Capacity K gives (source: the two are the same
// balance K ∂c/∂t = ∇·(D∇c) + s; common practice, no source). The
// operators agree at random states to round-off (the unknowns differ by
// the factor K), and so do integrations with tolerances scaled alike
// (the same steps are then taken).
func TestLinearStoreMatchesCapacity(t *testing.T) {
	const K = 2.7
	linear := func(c float64) (float64, float64) { return K * c, K }
	for _, g := range shapes {
		for _, bc := range []Boundary{
			{Kind: Film, H: 4, Value: constant(1), Partition: 1.3},
			{Kind: Fixed, Value: func(t float64) float64 { return 1 + 0.5*math.Sin(3*t) }},
		} {
			mk := func(store bool) *Discretization {
				ly := Layer{Outer: 1, D: []float64{1}, Capacity: []float64{K}, Rate: [][]float64{{-0.3}}, Source: []float64{0.1}}
				if store {
					ly.Store = []StoreFunc{linear}
				}
				d, err := Build(&Spec{Geometry: g, NSpecies: 1, Layers: []Layer{ly},
					OuterBC: []Boundary{bc}, Init: func(_ int, r float64) float64 { return 0.2 * r * r }})
				if err != nil {
					t.Fatal(err)
				}
				return d
			}
			a, b := mk(false), mk(true)
			// Operators.
			pa, pb := a.Problem(), b.Problem()
			n := pa.N
			ya := make([]float64, n)
			for i := range ya {
				ya[i] = 0.3 + 0.5*math.Sin(float64(i))
			}
			yb := make([]float64, n)
			for i := range yb {
				yb[i] = K * ya[i]
			}
			fa, fb := make([]float64, n), make([]float64, n)
			pa.Func(0.2, ya, fa)
			pb.Func(0.2, yb, fb)
			for i := range fa {
				if math.Abs(fb[i]-K*fa[i]) > 1e-13*math.Abs(K*fa[i])+1e-15 {
					t.Fatalf("%v %v: f differs at %d: %.16g vs K·%.16g", g, bc.Kind, i, fb[i], fa[i])
				}
			}
			// Integrations.
			ts := []float64{1e-3, 0.01, 0.1, 1}
			const rtol, atol = 1e-8, 1e-11
			atv := func(scale float64) []float64 {
				v := make([]float64, n+QuadPerSpecies)
				for i := range v {
					v[i] = atol
					if i < n {
						v[i] *= scale
					}
				}
				return v
			}
			ra := integrate(t, a, ts, &solvers.Settings{RTol: rtol, ATolVec: atv(1)})
			rb := integrate(t, b, ts, &solvers.Settings{RTol: rtol, ATolVec: atv(K)})
			for i := range ts {
				ma, _ := a.Content(ra.Y[i], 0)
				mb, _ := b.Content(rb.Y[i], 0)
				if math.Abs(ma-mb) > 1e-11*math.Abs(ma) {
					t.Errorf("%v %v τ=%g: content %.15g with Capacity, %.15g with the store", g, bc.Kind, ts[i], ma, mb)
				}
				sa, _ := a.Surface(ts[i], ra.Y[i], 0)
				sb, _ := b.Surface(ts[i], rb.Y[i], 0)
				ca, _ := a.Centre(ts[i], ra.Y[i], 0)
				cb, _ := b.Centre(ts[i], rb.Y[i], 0)
				if math.Abs(sa-sb) > 1e-10*math.Abs(sa) || math.Abs(ca-cb) > 1e-10*math.Max(math.Abs(ca), 1e-3) {
					t.Errorf("%v %v τ=%g: surface %g / %g, centre %g / %g", g, bc.Kind, ts[i], sa, sb, ca, cb)
				}
			}
		}
	}
}

// p3Spec is benchmark P3 (cmd/massline bench): a sphere of radius 1 mm,
// D = 1e-9 m²/s, a film of Biot number 10 to a bulk at 1 mol/m³, and the
// store q = 0.4 c + 10·2 c/(1 + 2 c).
func p3Spec(cells int) *Spec {
	return &Spec{Geometry: Sphere, NSpecies: 1,
		Layers:  []Layer{{Outer: 1e-3, D: []float64{1e-9}, Cells: cells, Store: []StoreFunc{langmuir(0.4, 10, 2)}}},
		OuterBC: []Boundary{{Kind: Film, H: 1e-5, Value: constant(1)}}}
}

var p3Times = []float64{10, 100, 1000}

// p3Uptake integrates P3 on the given grid and returns the uptake
// fractions at p3Times (the ledger is checked at each).
func p3Uptake(t *testing.T, cells int, rtol float64) []float64 {
	t.Helper()
	d, err := Build(p3Spec(cells))
	if err != nil {
		t.Fatal(err)
	}
	res := integrate(t, d, p3Times, &solvers.Settings{RTol: rtol, ATol: rtol * 1e-3})
	full, err := d.EquilibriumContent(0, 1)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]float64, len(p3Times))
	for i := range out {
		m, _ := d.Content(res.Y[i], 0)
		out[i] = m / full
	}
	return out
}

// TestLangmuirSelfConvergence: Langmuir uptake by a sphere (benchmark P3)
// on three grids refined by 2 with the same clustering map: the observed
// order log2((F_h − F_h/2)/(F_h/2 − F_h/4)) is 2 ± 0.1 (source: Roache
// 2002, grid-convergence study without an exact solution; see
// order_test.go), and the ledger closes on every run.
func TestLangmuirSelfConvergence(t *testing.T) {
	var f [3][]float64
	for i, n := range []int{80, 160, 320} {
		f[i] = p3Uptake(t, n, 1e-10)
	}
	for k, tm := range p3Times {
		p := math.Log2((f[0][k] - f[1][k]) / (f[1][k] - f[2][k]))
		if math.Abs(p-2) > 0.1 {
			t.Errorf("t = %g s: observed order %.3f (F = %.10f, %.10f, %.10f)", tm, p, f[0][k], f[1][k], f[2][k])
		}
	}
}

// TestLangmuirAgainstScipy runs benchmark P3 side by side with an
// independent method of lines in scipy (testdata/bench/scipy_mol.py: a
// uniform grid with the concentration as unknown, dc/dt = net inflow /
// (V q'(c)), integrated by solve_ivp's BDF at rtol 1e-10). Both sides are
// extrapolated from two grids (Richardson, second order); they must agree
// to 1e-8 (relative), far below either discretisation error.
func TestLangmuirAgainstScipy(t *testing.T) {
	if testing.Short() {
		t.Skip("side-by-side run skipped in -short mode")
	}
	script := "../../testdata/bench/scipy_mol.py"
	probe := exec.Command("/usr/bin/python3", "-c", "import numpy, scipy")
	if err := probe.Run(); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("CI=true but /usr/bin/python3 with numpy and scipy is missing: %v", err)
		}
		t.Skipf("/usr/bin/python3 with numpy and scipy is missing (%v)", err)
	}
	out, err := exec.Command("/usr/bin/python3", script, "P3-reference", "400,800").Output()
	if err != nil {
		t.Fatalf("scipy reference: %v", err)
	}
	var ref struct {
		Extrapolated []float64 `json:"extrapolated"`
	}
	if err := json.Unmarshal(out, &ref); err != nil || len(ref.Extrapolated) != len(p3Times) {
		t.Fatalf("scipy reference output %q: %v", out, err)
	}
	coarse := p3Uptake(t, 320, 1e-11)
	fine := p3Uptake(t, 640, 1e-11)
	for k, tm := range p3Times {
		ml := fine[k] + (fine[k]-coarse[k])/3
		if e := relErr(ml, ref.Extrapolated[k]); e > 1e-8 {
			t.Errorf("t = %g s: massline %.12f, scipy %.12f (relative difference %.2e)", tm, ml, ref.Extrapolated[k], e)
		}
	}
}

// TestStoreErrors: a store that decreases is refused at Build when it
// does so at the starting values, and reported by EvalError when an
// evaluation meets it; a diffusivity that is not positive is reported the
// same way. Nothing panics.
func TestStoreErrors(t *testing.T) {
	bad := func(c float64) (float64, float64) { return c - c*c, 1 - 2*c } // decreases beyond c = 0.5
	_, err := Build(&Spec{Geometry: Sphere, NSpecies: 1,
		Layers:  []Layer{{Outer: 1, D: []float64{1}, Store: []StoreFunc{bad}}},
		OuterBC: []Boundary{{Kind: Fixed, Value: constant(1)}},
		Init:    func(int, float64) float64 { return 0.8 }})
	if err == nil || !strings.Contains(err.Error(), "increase") {
		t.Errorf("Build with a decreasing store at the start: err = %v", err)
	}
	d, err := Build(&Spec{Geometry: Sphere, NSpecies: 1,
		Layers:  []Layer{{Outer: 1, D: []float64{1}, Store: []StoreFunc{bad}}},
		OuterBC: []Boundary{{Kind: Fixed, Value: constant(1)}}})
	if err != nil {
		t.Fatal(err)
	}
	res, err := solvers.Integrate(context.Background(), d.Problem(), 0, d.Y0(), []float64{1}, nil)
	if err == nil {
		t.Fatalf("the integration succeeded with a store that cannot hold more than 0.25 (status %v)", res.Status)
	}
	var ne *NonlinearError
	if e := d.EvalError(); !errors.As(e, &ne) || !strings.Contains(e.Error(), "store") {
		t.Errorf("EvalError = %v, want a NonlinearError about the store", e)
	}
	// Outputs at such a state report the error instead of panicking.
	y := d.Y0()
	y[0] = 5
	if _, _, err := d.Profile(0, y, 0); err == nil {
		t.Error("Profile at an amount the store cannot hold gave no error")
	}

	negD := func(r float64, c, dD []float64) float64 {
		if dD != nil {
			dD[0] = -1
		}
		return 1 - c[0]
	}
	d, err = Build(&Spec{Geometry: Slab, NSpecies: 1,
		Layers:  []Layer{{Outer: 1, D: []float64{1}, Diffusivity: []DiffusivityFunc{negD}}},
		OuterBC: []Boundary{{Kind: Fixed, Value: constant(2)}}})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := solvers.Integrate(context.Background(), d.Problem(), 0, d.Y0(), []float64{1}, nil); err == nil {
		t.Error("the integration succeeded with a diffusivity that turns negative")
	}
	if e := d.EvalError(); e == nil || !strings.Contains(e.Error(), "diffusivity") {
		t.Errorf("EvalError = %v, want one about the diffusivity", e)
	}
}

// TestEquilibriumWithBath: a Langmuir sphere soaking in a limited bath,
// integrated to equilibrium, holds what EquilibriumWithBath predicts from
// the starting state (source: conservation of the total amount and
// equilibrium c = K·c_bath everywhere; common practice, no source); with a
// linear store the prediction equals the closed form
// K·κ·V·(V_b c_b0 + held)/(V_b + K κ V).
func TestEquilibriumWithBath(t *testing.T) {
	const a, vb, cb0, kp = 1e-3, 5e-9, 2.0, 1.3
	for _, store := range []bool{false, true} {
		ly := Layer{Outer: a, D: []float64{1e-9}, Capacity: []float64{0.6}}
		if store {
			ly.Store = []StoreFunc{langmuir(0.4, 10, 2)}
			ly.Capacity = nil
		}
		d, err := Build(&Spec{Geometry: Sphere, NSpecies: 1, Layers: []Layer{ly},
			OuterBC: []Boundary{{Kind: Bath, BathVolume: vb, BathStart: cb0, Partition: kp}},
			Init:    func(int, float64) float64 { return 0.1 }})
		if err != nil {
			t.Fatal(err)
		}
		want, err := d.EquilibriumWithBath(d.Y0(), 0)
		if err != nil {
			t.Fatal(err)
		}
		res := integrate(t, d, []float64{1e6}, &solvers.Settings{RTol: 1e-9, ATol: 1e-14})
		got, _ := d.Content(res.Y[0], 0)
		if e := relErr(got, want); e > 1e-7 {
			t.Errorf("store %v: content at equilibrium %.10g, EquilibriumWithBath %.10g (%.1e)", store, got, want, e)
		}
		if !store {
			v := 4 * math.Pi / 3 * a * a * a
			held, _ := d.Content(d.Y0(), 0)
			closed := kp * 0.6 * v * (vb*cb0 + held) / (vb + kp*0.6*v)
			if e := relErr(want, closed); e > 1e-13 {
				t.Errorf("linear store: EquilibriumWithBath %.15g, closed form %.15g", want, closed)
			}
		}
	}
	// Errors: no bath.
	d, _ := Build(goodSpec())
	if _, err := d.EquilibriumWithBath(d.Y0(), 0); err == nil {
		t.Error("EquilibriumWithBath without a bath gave no error")
	}
}

// TestSteadyStateWithStore: at steady state nothing accumulates, so a
// store drops out (source: the balance with ∂q/∂t = 0; common practice,
// no source). SteadyState with a Langmuir store and a concentration-
// dependent diffusivity, started from an empty body, must give the
// concentrations of the same problem without the store, and amounts held
// q(c); Newton's method on the amounts held alone does not converge from
// there (the store flattens and steps overshoot), which is why SteadyState
// solves for the concentrations.
func TestSteadyStateWithStore(t *testing.T) {
	mk := func(store bool) *Discretization {
		ly := Layer{Outer: 1e-3, D: []float64{1e-9}, Rate: [][]float64{{-1e-3}},
			Diffusivity: []DiffusivityFunc{expD(1e-9, 0.7, 0, 0)}}
		if store {
			ly.Store = []StoreFunc{langmuir(0.4, 10, 2)}
		}
		d, err := Build(&Spec{Geometry: Slab, NSpecies: 1, Layers: []Layer{ly},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(2)}}})
		if err != nil {
			t.Fatal(err)
		}
		return d
	}
	plain, stored := mk(false), mk(true)
	yp, err := plain.SteadyState(0, plain.Y0(), nil)
	if err != nil {
		t.Fatal(err)
	}
	ys, err := stored.SteadyState(0, stored.Y0(), nil)
	if err != nil {
		t.Fatal(err)
	}
	cp, _ := plain.CellValues(yp, 0)
	cs, _ := stored.CellValues(ys, 0)
	st := langmuir(0.4, 10, 2)
	for i := range cp {
		if math.Abs(cp[i]-cs[i]) > 1e-12*math.Abs(cp[i]) {
			t.Errorf("cell %d: %.15g without the store, %.15g with it", i, cp[i], cs[i])
		}
		if q, _ := st(cs[i]); math.Abs(ys[i]-q) > 1e-14*q {
			t.Errorf("cell %d: amount held %g, q(c) = %g", i, ys[i], q)
		}
	}
	// The steady state is a zero of the Problem's Func.
	f := make([]float64, len(ys))
	stored.Problem().Func(0, ys, f)
	for i, v := range f {
		if math.Abs(v) > 1e-9 {
			t.Errorf("Func at the steady state: f[%d] = %g", i, v)
		}
	}
}

// TestStoreInversion: the scalar inversion q(c) = u finds the root on the
// branch that contains c = 0 whatever the starting guess — a Langmuir
// store has a pole at c = −1/K beyond which it holds every amount again —
// for concave and convex stores, small negative amounts included, and
// reports a store that does not increase (source: the closed-form inverse
// of ε c + Q K c/(1 + K c), a quadratic in c; common practice, no source).
func TestStoreInversion(t *testing.T) {
	const eps, Q, K = 0.4, 10.0, 2.0
	exact := func(u float64) float64 {
		// ε K c² + (ε + Q K − u K) c − u = 0, the root above −1/K,
		// written without cancellation: c = 2u/(b + √(b² + 4 ε K u)).
		b := eps + Q*K - u*K
		if b > 0 {
			return 2 * u / (b + math.Sqrt(b*b+4*eps*K*u))
		}
		return (-b + math.Sqrt(b*b+4*eps*K*u)) / (2 * eps * K)
	}
	lang := storeInverse{f: langmuir(eps, Q, K), q0: 0, slope: 1}
	for _, u := range []float64{-1e-6, -0.5, 0, 1e-9, 0.3, 7.74, 40, 1e4} {
		// Starting points an integration can produce: on the branch
		// of c = 0 (below −1/K a start may sit on the other branch,
		// and no test of the store at a few points can tell).
		for _, g := range []float64{-0.49, -0.01, 0, 0.01, 1, 7.74, 100, 1e6} {
			c, dq, err := lang.invert(u, g)
			if err != nil {
				t.Errorf("u = %g from %g: %v", u, g, err)
				continue
			}
			if w := exact(u); math.Abs(c-w) > 1e-12*math.Max(math.Abs(w), 1e-9) {
				t.Errorf("u = %g from %g: c = %.15g, want %.15g", u, g, c, w)
			}
			if _, want := langmuir(eps, Q, K)(c); math.Abs(dq-want) > 1e-6*want {
				t.Errorf("u = %g from %g: slope %g, want %g", u, g, dq, want)
			}
		}
	}
	convex := storeInverse{f: func(c float64) (float64, float64) { return c + c*c*c, 1 + 3*c*c }, q0: 0, slope: 1}
	for _, u := range []float64{-2, 0.5, 30, 1e6} {
		c, _, err := convex.invert(u, 0.7)
		if err != nil || math.Abs(c+c*c*c-u) > 1e-12*math.Abs(u) {
			t.Errorf("convex store, u = %g: c = %g (%v)", u, c, err)
		}
	}
	bad := storeInverse{f: func(c float64) (float64, float64) { return c - c*c, 1 - 2*c }, q0: 0, slope: 1}
	if _, _, err := bad.invert(0.3, 0.1); err == nil || !strings.Contains(err.Error(), "increase") {
		t.Errorf("a store that cannot hold 0.3: err = %v", err)
	}
}
