package solvers

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"
)

// TestQuadratureLedger checks the mass ledger of a conservative
// finite-volume model: with w = (dx, …, dx), w·f = inflow − consumption, so
// Σ dx·y(t) − q_in(t) + q_used(t) must equal the initial amount at every
// output time (dense output included), across a stop where the inflow
// jumps, for several tolerances and orders. It must close to round-off for
// linear consumption with the exact Jacobian, and for saturable (nonlinear)
// consumption when QuadJac is given; without QuadJac the nonlinear ledger
// closes only to the Newton tolerance (source: the invariant follows from
// the linearity of the BDF update, Shampine & Reichelt 1997, sec. 2, and
// the identity w·J = ∂g/∂y; the exact inflow integral is elementary).
func TestQuadratureLedger(t *testing.T) {
	const n = 40
	cases := []struct {
		rtol      float64
		maxOrder  int
		ndf       bool
		nonlinear bool
		quadJac   bool
		limit     float64 // on the relative ledger defect
	}{
		{1e-4, 0, false, false, false, 1e-13},
		{1e-6, 0, false, false, false, 1e-13},
		{1e-9, 0, false, false, false, 1e-13},
		{1e-6, 2, false, false, false, 1e-13},
		{1e-6, 0, true, false, false, 1e-13},
		{1e-4, 0, false, true, true, 1e-13},
		{1e-6, 0, false, true, true, 1e-13},
		{1e-9, 0, false, true, true, 1e-13},
		{1e-6, 0, true, true, true, 1e-13},
		{1e-4, 0, false, true, false, 1e-4}, // Newton tolerance only
		{1e-6, 0, false, true, false, 1e-6},
	}
	tout := outputGrid(0, 3, 301)
	for _, c := range cases {
		name := fmt.Sprintf("rtol=%g/maxOrder=%d/ndf=%v/nonlinear=%v/quadJac=%v", c.rtol, c.maxOrder, c.ndf, c.nonlinear, c.quadJac)
		t.Run(name, func(t *testing.T) {
			p, dx := ledgerProblem(n, c.nonlinear)
			if !c.quadJac {
				p.QuadJac = nil
			}
			y0 := make([]float64, n)
			for i := range y0 {
				y0[i] = 1 + math.Cos(float64(i))
			}
			var m0 float64
			for _, v := range y0 {
				m0 += dx * v
			}
			r := mustIntegrate(t, p, 0, y0, tout, &Settings{RTol: c.rtol, MaxOrder: c.maxOrder, NDF: c.ndf, Stops: []float64{1}})
			worstLedger, worstIn := 0.0, 0.0
			for i, ti := range tout {
				var m float64
				for _, v := range r.Y[i] {
					m += dx * v
				}
				qin, qused := r.Q[i][0], r.Q[i][1]
				scale := m0 + qin + qused
				worstLedger = max(worstLedger, math.Abs(m-m0-qin+qused)/scale)
				// exact inflow: t for t < 1, then 1 + 3(t−1) − (cos 5t − cos 5)/5
				want := ti
				if ti >= 1 {
					want = 1 + 3*(ti-1) - (math.Cos(5*ti)-math.Cos(5))/5
				}
				worstIn = max(worstIn, math.Abs(qin-want)/max(1, want))
			}
			if worstLedger > c.limit {
				t.Errorf("ledger defect %.3g relative, want ≤ %.3g", worstLedger, c.limit)
			}
			// At order ≤ 2 a thousand steps accumulate more local error
			// (common practice, no source).
			if lim := c.rtol * map[bool]float64{true: 50, false: 10}[c.maxOrder == 2]; worstIn > lim {
				t.Errorf("inflow quadrature error %.3g > %.3g", worstIn, lim)
			}
			if r.Stats.QuadEvals < r.Stats.Steps {
				t.Errorf("QuadEvals %d < Steps %d", r.Stats.QuadEvals, r.Stats.Steps)
			}
			t.Logf("ledger %.3g, inflow err %.3g, %+v", worstLedger, worstIn, r.Stats)
		})
	}
}

// TestQuadratureErrorControl checks that a quadrature whose integrand is
// not smooth in the way y is still gets its requested accuracy when it is
// error-controlled: q' = y² cos(20 t) for y' = −y (exact value known).
// source: the exact integral is elementary (beside the check).
func TestQuadratureErrorControl(t *testing.T) {
	p := &Problem{N: 1, NQuad: 1,
		Func: func(t float64, y, dy []float64) { dy[0] = -y[0] },
		Quad: func(t float64, y, dq []float64) { dq[0] = y[0] * y[0] * math.Cos(20*t) },
	}
	// source: ∫0^T e^{−2t} cos(20t) dt = [e^{−2t}(−2 cos 20t + 20 sin 20t)]/404 from 0 to T (elementary).
	exact := func(T float64) float64 {
		return (math.Exp(-2*T)*(-2*math.Cos(20*T)+20*math.Sin(20*T)) + 2) / 404
	}
	tout := outputGrid(0, 3, 61)
	errOf := func(s *Settings) (float64, int) {
		r := mustIntegrate(t, p, 0, []float64{1}, tout, s)
		worst := 0.0
		for i, ti := range tout {
			worst = max(worst, math.Abs(r.Q[i][0]-exact(ti)))
		}
		return worst, r.Stats.Steps
	}
	ctl, nctl := errOf(&Settings{RTol: 1e-7, ATol: 1e-10})
	unc, nunc := errOf(&Settings{RTol: 1e-7, ATol: 1e-10, QuadUncontrolled: true})
	t.Logf("controlled: err %.3g in %d steps; uncontrolled: err %.3g in %d steps", ctl, nctl, unc, nunc)
	if ctl > 1e-7 {
		t.Errorf("controlled quadrature error %.3g > 1e-7", ctl)
	}
	if !(nctl > nunc) || !(ctl < unc) {
		t.Errorf("error control on the quadrature did not take more steps to be more accurate")
	}
}

// TestStops integrates y' = −y + s(t) with a source s switching from 0 to 1
// at t = 1, written both as t >= 1 and t > 1, and compares with the
// piecewise exact solution y = e^{−t} (t ≤ 1), 1 + (e^{−1} − 1)e^{−(t−1)}
// (t ≥ 1) (source: elementary solution of a linear ODE).
func TestStops(t *testing.T) {
	exact := func(t float64) float64 {
		if t <= 1 {
			return math.Exp(-t)
		}
		return 1 + (math.Exp(-1)-1)*math.Exp(-(t-1))
	}
	tout := append(outputGrid(0, 3, 31), 3) // 1 is in the grid, 3 twice
	for _, strict := range []bool{false, true} {
		for _, stops := range [][]float64{{1}, {1, 1, -5, 7}} {
			t.Run(fmt.Sprintf("strict=%v/stops=%v", strict, stops), func(t *testing.T) {
				p := &Problem{N: 1, Func: func(t float64, y, dy []float64) {
					on := t >= 1
					if strict {
						on = t > 1
					}
					dy[0] = -y[0]
					if on {
						dy[0]++
					}
				}}
				r := mustIntegrate(t, p, 0, []float64{1}, tout, &Settings{RTol: 1e-9, ATol: 1e-12, Stops: stops})
				worst := 0.0
				for i, ti := range tout {
					worst = max(worst, math.Abs(r.Y[i][0]-exact(ti)))
				}
				if worst > 1e-8 {
					t.Errorf("max error %.3g > 1e-8", worst)
				}
				if r.Stats.Restarts != 1 {
					t.Errorf("restarts = %d, want 1", r.Stats.Restarts)
				}
			})
		}
	}
	// Without the stop the jump is found by the error test: the step
	// is rejected and shrunk around t = 1, which costs more work than
	// landing on it (this is what Stops are for).
	p := &Problem{N: 1, Func: func(t float64, y, dy []float64) {
		dy[0] = -y[0]
		if t >= 1 {
			dy[0]++
		}
	}}
	s := &Settings{RTol: 1e-9, ATol: 1e-12}
	blind := mustIntegrate(t, p, 0, []float64{1}, tout, s)
	s.Stops = []float64{1}
	landed := mustIntegrate(t, p, 0, []float64{1}, tout, s)
	if blind.Stats.Restarts != 0 || !(landed.Stats.Rejected < blind.Stats.Rejected) || !(landed.Stats.Steps < blind.Stats.Steps) {
		t.Errorf("without stops: %+v\nwith stops: %+v", blind.Stats, landed.Stats)
	}
}

// TestInterrupt cancels the context from inside the right-hand side and
// before the call; the integration must stop promptly with Status
// Interrupted and an error wrapping the context's error.
// source: the context contract documented on Integrate (no reference values).
func TestInterrupt(t *testing.T) {
	p, _ := heat1D(20, true)
	y0 := heatY0(20)
	tout := outputGrid(0, 1, 11)

	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	inner := p.Func
	p.Func = func(t float64, y, dy []float64) {
		calls++
		if calls == 50 {
			cancel()
		}
		inner(t, y, dy)
	}
	r, err := Integrate(ctx, p, 0, y0, tout, &Settings{RTol: 1e-10})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
	var ie *InterruptedError
	if !errors.As(err, &ie) || r.Status != Interrupted {
		t.Fatalf("err %T, status %v", err, r.Status)
	}
	if calls > 55 {
		t.Errorf("%d calls after cancelling at 50: not prompt", calls)
	}
	if r.Filled >= len(tout) || ie.T <= 0 || ie.T >= 1 || ie.H <= 0 {
		t.Errorf("filled %d, t %g, h %g", r.Filled, ie.T, ie.H)
	}
	for i := range r.Filled {
		if tout[i] > ie.T {
			t.Errorf("output %d at %g filled beyond t=%g", i, tout[i], ie.T)
		}
	}

	ctx2, cancel2 := context.WithTimeout(context.Background(), time.Nanosecond)
	defer cancel2()
	<-ctx2.Done()
	r, err = Integrate(ctx2, p, 0, y0, tout, nil)
	if !errors.Is(err, context.DeadlineExceeded) || r.Status != Interrupted || r.Stats.Steps != 0 {
		t.Errorf("expired context: err %v, status %v, steps %d", err, r.Status, r.Stats.Steps)
	}
}

// TestDenseOutput checks that output times do not change the steps taken
// (values at a common time are bitwise identical with 2 or 2001 outputs),
// and that the interpolant between steps is as accurate as the steps, on a
// damped oscillator y” + 0.2y' + y = 0 with exact solution
// e^{−0.1t}(cos ωt + (0.1/ω) sin ωt), ω = √0.99 (source: elementary).
//
// The interpolation error is separated from the global error, which is
// smooth in t: at fractions θ of each step, the error of the interpolated
// value minus the linear blend of the errors at the two ends of the step
// must be within the tolerance. With the order capped at 1 and 2 the
// interpolant has lower degree and must still pass.
func TestDenseOutput(t *testing.T) {
	w := math.Sqrt(0.99)
	exact := func(t float64) float64 { return math.Exp(-0.1*t) * (math.Cos(w*t) + 0.1/w*math.Sin(w*t)) }
	p := &Problem{N: 2, Lower: 1, Upper: 1, Func: func(t float64, y, dy []float64) {
		dy[0] = y[1]
		dy[1] = -y[0] - 0.2*y[1]
	}}
	cases := []struct {
		maxOrder    int
		rtol        float64
		globalLimit float64 // in units of rtol
	}{{0, 1e-5, 30}, {0, 1e-8, 30}, {2, 1e-5, 1000}, {2, 1e-8, 1000}, {1, 1e-4, 1000}}
	for _, c := range cases {
		s := &Settings{RTol: c.rtol, ATol: c.rtol, MaxOrder: c.maxOrder}
		sparse := mustIntegrate(t, p, 0, []float64{1, 0}, []float64{1.25, 5}, s)
		dense := mustIntegrate(t, p, 0, []float64{1, 0}, outputGrid(0, 5, 2001), s)
		if sparse.Stats.Steps != dense.Stats.Steps {
			t.Errorf("rtol %g: %d steps with 2 outputs, %d with 2001", c.rtol, sparse.Stats.Steps, dense.Stats.Steps)
		}
		if sparse.Y[0][0] != dense.Y[500][0] || sparse.Y[1][0] != dense.Y[2000][0] {
			t.Errorf("rtol %g: output values depend on the output grid: %v vs %v", c.rtol, sparse.Y[0][0], dense.Y[500][0])
		}
		global := 0.0
		for i, ti := range dense.T {
			global = max(global, math.Abs(dense.Y[i][0]-exact(ti)))
		}
		if global > c.globalLimit*c.rtol {
			t.Errorf("maxOrder %d rtol %g: global error %.3g > %g·rtol", c.maxOrder, c.rtol, global, c.globalLimit)
		}

		// Interpolation error inside each step.
		var it Integrator
		var ePrev float64 = 0 // error at t0 is zero
		interp := 0.0
		buf := make([]float64, 2)
		it.stepHook = func(tPrev float64) {
			tn := it.t
			eNow := it.row(0)[0] - exact(tn)
			for _, th := range []float64{0.2, 0.5, 0.8} {
				tau := tPrev + th*(tn-tPrev)
				it.interpolate(tau, buf, nil)
				e := buf[0] - exact(tau)
				d := math.Abs(e - ((1-th)*ePrev + th*eNow))
				interp = max(interp, d/(c.rtol*(math.Abs(exact(tau))+1)))
			}
			ePrev = eNow
		}
		if _, err := it.Integrate(context.Background(), p, 0, []float64{1, 0}, []float64{5}, s); err != nil {
			t.Fatal(err)
		}
		if interp > 1 {
			t.Errorf("maxOrder %d rtol %g: interpolation error %.3g·tolerance", c.maxOrder, c.rtol, interp)
		}
		t.Logf("maxOrder %d rtol %g: %d steps, global error %.3g, interpolation error %.3g·tol", c.maxOrder, c.rtol, dense.Stats.Steps, global, interp)
	}
}

// TestOutputAtT0 checks output times equal to t0 (including all of them).
// source: exact solution cos t of the Prothero–Robinson problem (1974).
func TestOutputAtT0(t *testing.T) {
	p := protheroRobinson(-1)
	r := mustIntegrate(t, p, 2, []float64{math.Cos(2)}, []float64{2, 2}, nil)
	if r.Y[0][0] != math.Cos(2) || r.Y[1][0] != math.Cos(2) || r.Stats.Steps != 0 {
		t.Errorf("outputs at t0: %v, steps %d", r.Y, r.Stats.Steps)
	}
	r = mustIntegrate(t, p, 2, []float64{math.Cos(2)}, []float64{2, 2.5, 3}, nil)
	if r.Y[0][0] != math.Cos(2) || math.Abs(r.Y[2][0]-math.Cos(3)) > 1e-5 {
		t.Errorf("outputs: %v", r.Y)
	}
}

// TestBadInput checks that malformed input gives an *InputError and Status
// BadInput, never a panic.
// source: the input contract documented on Integrate (no reference values).
func TestBadInput(t *testing.T) {
	good := func() *Problem { return protheroRobinson(-1) }
	y0 := []float64{1}
	tout := []float64{1}
	cases := []struct {
		name string
		p    *Problem
		t0   float64
		y0   []float64
		tout []float64
		s    *Settings
		want string
	}{
		{"nil problem", nil, 0, y0, tout, nil, "nil problem"},
		{"N=0", &Problem{Func: good().Func}, 0, nil, tout, nil, "size"},
		{"nil Func", &Problem{N: 1}, 0, y0, tout, nil, "Func"},
		{"y0 length", good(), 0, []float64{1, 2}, tout, nil, "len(y0)"},
		{"y0 NaN", good(), 0, []float64{math.NaN()}, tout, nil, "y0[0]"},
		{"t0 Inf", good(), math.Inf(1), y0, tout, nil, "t0"},
		{"no tout", good(), 0, y0, nil, nil, "no output"},
		{"tout before t0", good(), 0, y0, []float64{-1}, nil, "before t0"},
		{"tout decreasing", good(), 0, y0, []float64{1, 2, 1.5}, nil, "nondecreasing"},
		{"tout NaN", good(), 0, y0, []float64{1, math.NaN()}, nil, "tout[1]"},
		{"negative band", &Problem{N: 1, Lower: -1, Func: good().Func}, 0, y0, tout, nil, "bandwidth"},
		{"quad without func", &Problem{N: 1, NQuad: 1, Func: good().Func}, 0, y0, tout, nil, "Quad"},
		{"negative RTol", good(), 0, y0, tout, &Settings{RTol: -1}, "RTol"},
		{"NaN ATol", good(), 0, y0, tout, &Settings{ATol: math.NaN()}, "ATol"},
		{"ATolVec length", good(), 0, y0, tout, &Settings{ATolVec: []float64{1, 2}}, "ATolVec"},
		{"ATolVec zero", good(), 0, y0, tout, &Settings{ATolVec: []float64{0}}, "ATolVec[0]"},
		{"MaxOrder 6", good(), 0, y0, tout, &Settings{MaxOrder: 6}, "MaxOrder"},
		{"negative MaxStep", good(), 0, y0, tout, &Settings{MaxStep: -1}, "MaxStep"},
		{"negative MaxSteps", good(), 0, y0, tout, &Settings{MaxSteps: -1}, "MaxSteps"},
		{"NaN stop", good(), 0, y0, tout, &Settings{Stops: []float64{math.NaN()}}, "Stops[0]"},
	}
	for _, c := range cases {
		r, err := Integrate(context.Background(), c.p, c.t0, c.y0, c.tout, c.s)
		var ie *InputError
		if !errors.As(err, &ie) || r == nil || r.Status != BadInput {
			t.Errorf("%s: err %v, want *InputError with status BadInput", c.name, err)
			continue
		}
		if !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "solvers: ") {
			t.Errorf("%s: message %q does not mention %q", c.name, err, c.want)
		}
	}
}

// TestFailures checks the typed errors for failures during integration:
// NaN from f at the start and later, NaN from the quadrature, a panicking
// Jacobian (writing outside the band), and the step limit.
// source: exact solution e^{−t} for the value checked; otherwise the error
// contract documented on Integrate.
func TestFailures(t *testing.T) {
	nanAfter := func(tn float64) *Problem {
		return &Problem{N: 1, Func: func(t float64, y, dy []float64) {
			dy[0] = -y[0]
			if t > tn {
				dy[0] = math.NaN()
			}
		}}
	}
	tout := outputGrid(0, 2, 21)

	r, err := Integrate(context.Background(), nanAfter(-1), 0, []float64{1}, tout, nil)
	var nf *NonFiniteError
	if !errors.As(err, &nf) || r.Status != NonFinite || nf.T != 0 {
		t.Errorf("NaN at start: err %v status %v", err, r.Status)
	}

	r, err = Integrate(context.Background(), nanAfter(0.5), 0, []float64{1}, tout, nil)
	if !errors.As(err, &nf) || r.Status != NonFinite || nf.Quad {
		t.Fatalf("NaN after 0.5: err %v status %v", err, r.Status)
	}
	// The integrator creeps up to t = 0.5 (f is finite there) but cannot
	// pass it.
	if nf.T > 0.5 || nf.T < 0.49 || r.Filled < 5 || math.Abs(r.Y[4][0]-math.Exp(-0.4)) > 1e-5 {
		t.Errorf("NaN after 0.5: stopped at t=%g with %d outputs (y(0.4)=%v)", nf.T, r.Filled, r.Y[4])
	}

	pq := &Problem{N: 1, NQuad: 1,
		Func: func(t float64, y, dy []float64) { dy[0] = -y[0] },
		Quad: func(t float64, y, dq []float64) { dq[0] = math.Log(1 - t) }, // NaN beyond t = 1
	}
	r, err = Integrate(context.Background(), pq, 0, []float64{1}, tout, nil)
	if !errors.As(err, &nf) || !nf.Quad || r.Status != NonFinite || nf.T > 1 {
		t.Errorf("quadrature NaN: err %v status %v", err, r.Status)
	}

	pj := protheroRobinson(-1)
	pj.Jac = func(t float64, y []float64, J *Band) { J.Set(0, 1, 1) } // outside a 1×1 band
	r, err = Integrate(context.Background(), pj, 0, []float64{1}, tout, nil)
	var pe *PanicError
	if !errors.As(err, &pe) || r.Status != Panicked {
		t.Errorf("panicking Jacobian: err %v status %v", err, r.Status)
	}

	r, err = Integrate(context.Background(), protheroRobinson(-1), 0, []float64{1}, []float64{100}, &Settings{MaxSteps: 10})
	var ms *MaxStepsError
	if !errors.As(err, &ms) || r.Status != MaxStepsReached || r.Stats.Steps != 10 || ms.T <= 0 {
		t.Errorf("max steps: err %v status %v steps %d", err, r.Status, r.Stats.Steps)
	}
	if r.Stats.Wall <= 0 || r.Stats.Method != "bdf1-5" {
		t.Errorf("stats not filled on failure: %+v", r.Stats)
	}
}

// TestStatusString checks the names of the statuses.
// source: the names declared in status.go (no reference values).
func TestStatusString(t *testing.T) {
	want := map[Status]string{Success: "Success", Interrupted: "Interrupted", NewtonFailed: "NewtonFailed", Status(99): "Status(99)"}
	for s, w := range want {
		if s.String() != w {
			t.Errorf("%d: %q, want %q", int(s), s.String(), w)
		}
	}
}

// TestNoAllocPerStep checks that the allocations of a reused Integrator do
// not depend on the number of steps: a run with 10× more steps (tighter
// tolerance) allocates the same (only the result).
// source: the allocation contract documented on Integrator (no reference
// values).
func TestNoAllocPerStep(t *testing.T) {
	p, _ := heat1D(100, false) // finite-difference Jacobian path too
	p.NQuad = 1
	p.Quad = func(t float64, y, dq []float64) { dq[0] = y[0] }
	y0 := heatY0(100)
	var it Integrator
	ctx := context.Background()
	tout := []float64{0.1, 0.3}
	run := func(rtol float64) (float64, int) {
		var steps int
		s := &Settings{RTol: rtol, Stops: []float64{0.2}}
		allocs := testing.AllocsPerRun(5, func() {
			r, err := it.Integrate(ctx, p, 0, y0, tout, s)
			if err != nil {
				t.Fatal(err)
			}
			steps = r.Stats.Steps
		})
		return allocs, steps
	}
	aShort, sShort := run(1e-4)
	aLong, sLong := run(1e-10)
	if sLong < 3*sShort {
		t.Fatalf("step counts %d and %d do not differ enough for the test", sShort, sLong)
	}
	if aShort != aLong {
		t.Errorf("allocations: %v for %d steps, %v for %d steps", aShort, sShort, aLong, sLong)
	}
	t.Logf("%v allocations for %d and for %d steps", aLong, sShort, sLong)
}

// TestRescale checks the step-change interpolation of the difference array
// against differences computed directly: for a polynomial of degree k the
// backward differences at spacing ρh must be reproduced exactly (source:
// Shampine & Reichelt 1997, sec. 2).
func TestRescale(t *testing.T) {
	poly := func(x float64) float64 { return 0.3 - 1.2*x + 0.7*x*x - 0.25*x*x*x + 0.05*x*x*x*x - 0.01*x*x*x*x*x }
	for k := 1; k <= maxBDFOrder; k++ {
		for _, rho := range []float64{0.2, 0.5, 1.7, 3} {
			it := Integrator{m: 1, diff: make([]float64, maxBDFOrder+3), order: k}
			backward := func(h float64, dst []float64) { // ∇^j p(0) at spacing h, j = 0..k
				vals := make([]float64, k+1)
				for j := range vals {
					vals[j] = poly(-float64(j) * h)
				}
				for j := 0; j <= k; j++ {
					dst[j] = vals[0]
					for i := 0; i < k-j; i++ {
						vals[i] -= vals[i+1]
					}
				}
			}
			h := 0.1
			backward(h, it.diff)
			it.h = h
			it.rescale(rho)
			want := make([]float64, k+1)
			backward(rho*h, want)
			// The interpolant has degree k, so it matches the polynomial's
			// differences only when the polynomial has degree ≤ k; compare
			// the interpolating polynomials instead via their values.
			for _, s := range []float64{-0.5, -1.3, -2.2} {
				x := s * rho * h
				got, ref := 0.0, 0.0
				cg, cr := 1.0, 1.0
				for j := 0; j <= k; j++ {
					if j > 0 {
						cg *= (s + float64(j-1)) / float64(j)
						cr *= (x/h + float64(j-1)) / float64(j)
					}
					got += cg * it.diff[j]
				}
				// reference: old interpolant at x
				old := make([]float64, k+1)
				backward(h, old)
				cr = 1
				for j := 0; j <= k; j++ {
					if j > 0 {
						cr *= (x/h + float64(j-1)) / float64(j)
					}
					ref += cr * old[j]
				}
				if math.Abs(got-ref) > 1e-11 {
					t.Errorf("k=%d ρ=%g s=%g: rescaled interpolant %.15g, original %.15g", k, rho, s, got, ref)
				}
			}
			if k == maxBDFOrder { // degree-5 polynomial: differences exact
				for j := range want {
					if math.Abs(it.diff[j]-want[j]) > 1e-11 {
						t.Errorf("k=%d ρ=%g: ∇^%d = %.15g, want %.15g", k, rho, j, it.diff[j], want[j])
					}
				}
			}
		}
	}
}
