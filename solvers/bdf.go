package solvers

import (
	"context"
	"fmt"
	"math"
	"slices"
	"time"
)

// Settings tunes Integrate. A nil *Settings means all defaults; so does
// every zero field, as documented on the field.
type Settings struct {
	// RTol is the relative tolerance of the local error test. Zero means
	// 1e-6. Values below 100·ε (about 2.2e-14) are raised to 100·ε.
	RTol float64
	// ATol is the absolute tolerance, the same for every component. Zero
	// means 1e-10.
	ATol float64
	// ATolVec, if not nil, gives one absolute tolerance per component and
	// overrides ATol: length N (the quadratures then use ATol) or N+NQuad.
	// Every entry must be positive.
	ATolVec []float64
	// MaxOrder is the highest order used, 1 to 5. Zero means 5.
	MaxOrder int
	// NDF selects the numerical differentiation formulas of Klopfenstein
	// and Shampine (orders 1–4 more accurate than BDF at the same step, with
	// slightly smaller stability regions) instead of the BDFs. The default,
	// false, is BDF.
	NDF bool
	// InitialStep is the size of the first step (and of the first step after
	// each stop). Zero means chosen automatically.
	InitialStep float64
	// MaxStep bounds the step size. Zero means no bound.
	MaxStep float64
	// MaxSteps bounds the number of accepted steps. Zero means 100000.
	MaxSteps int
	// Stops are times at which the right-hand side (or the quadrature
	// function) jumps. The integrator lands on each stop exactly, evaluates
	// the functions on the step that ends there at the largest float below
	// the stop, and restarts from there at order 1 with the functions
	// evaluated at the smallest float above it, so a switch written as
	// "t >= stop" or "t > stop" is seen on the correct side. Stops at or
	// before t0 or after the last output time are ignored; order does not
	// matter.
	Stops []float64
	// QuadUncontrolled excludes the quadrature components from the local
	// error test (they are then only as accurate as y allows). The default,
	// false, includes them.
	QuadUncontrolled bool
}

// Result holds the solution at the requested output times.
type Result struct {
	// T is a copy of the requested output times.
	T []float64
	// Y[i] is y at T[i]; each row has length N.
	Y [][]float64
	// Q[i] is the vector of quadratures at T[i] (length NQuad); nil when the
	// problem has no quadratures.
	Q [][]float64
	// Filled is the number of leading output times whose Y and Q are set:
	// len(T) on success, fewer when the integration stopped early.
	Filled int
	// TReached is the time the integration reached.
	TReached float64
	// Stats are the work counters.
	Stats Stats
	// Status tells how the integration ended.
	Status Status
}

const (
	defaultRTol     = 1e-6
	defaultATol     = 1e-10
	defaultMaxSteps = 100000
	maxBDFOrder     = 5

	newtonMaxIter   = 4    // corrector iterations per attempt
	minStepFactor   = 0.2  // largest reduction after a failed error test
	maxStepFactor   = 10   // largest increase after a successful step
	newtonCutFactor = 0.25 // reduction after a failed corrector iteration
	maxFailures     = 50   // consecutive failures of one step before giving up
	rateMaxAge      = 20   // steps before the convergence rate is measured again
	slowNewtonIters = 3    // accepted steps needing this many iterations refresh J
	landStretch     = 1.05 // a step may grow this much to land on a stop

	// errTestScale multiplies the local error estimate before it is
	// compared with 1: the test asks for half the tolerance. This is a
	// calibration (common practice, no source) chosen so that the global
	// errors of the test problems of this package stay within about
	// 10·RTol; it costs about 10 % more steps than a factor of 1.
	errTestScale = 2
)

// ndfKappa holds the NDF coefficients κ_k of Shampine & Reichelt (1997),
// Table 1 (orders 1–4; order 5 is the BDF).
var ndfKappa = [maxBDFOrder + 2]float64{0, -0.1850, -1.0 / 9, -0.0823, -0.0415, 0, 0}

// failure records why the last attempt of a step failed.
type failure int

const (
	failNone failure = iota
	failErrorTest
	failNewton
	failSingular
	failNonFinite
	failQuadNonFinite
)

// Integrate solves the initial-value problem p from (t0, y0) and returns y
// and the quadratures at the output times tout, which must be finite,
// nondecreasing and not before t0 (tout may start with t0). It is a
// shorthand for new(Integrator).Integrate; see that method.
func Integrate(ctx context.Context, p *Problem, t0 float64, y0, tout []float64, s *Settings) (*Result, error) {
	var it Integrator
	return it.Integrate(ctx, p, t0, y0, tout, s)
}

// Integrator is a variable-step, variable-order (1–5) BDF/NDF integrator for
// stiff systems with banded Jacobians. It keeps its workspace between calls,
// so repeated integrations of problems of the same shape allocate only their
// results. The zero value is ready to use; an Integrator must not be used by
// several goroutines at once.
//
// # Method
//
// The formulas are the backward differentiation formulas (or, with
// Settings.NDF, the numerical differentiation formulas) in backward-
// difference form with quasi-constant step size, as derived by Shampine and
// Reichelt. With ∇ the backward difference, γ_k = Σ_{j=1..k} 1/j and
// α_k = (1 − κ_k)γ_k (κ_k = 0 for BDF), the order-k step from t_n to
// t_{n+1} = t_n + h solves
//
//	d = (h/α_k) f(t_{n+1}, y⁽⁰⁾ + d) − ψ,   ψ = (1/α_k) Σ_{m=1..k} γ_m ∇^m y_n,
//
// for the correction d = y_{n+1} − y⁽⁰⁾ to the predictor
// y⁽⁰⁾ = Σ_{m=0..k} ∇^m y_n, by simplified Newton iteration with the matrix
// I − (h/α_k)J. The local error is estimated as (κ_k γ_k + 1/(k+1))·d and
// measured in the RMS norm weighted by 1/(ATol_i + RTol·|y_i|) at the new y;
// the step is accepted when that norm is at most 1/2 (see errTestScale).
// The Newton corrections are measured with the weights at y_n. When a
// step is rejected or the step size changes, the difference array is
// interpolated onto the new step by the matrix product (R·U)ᵀ of Shampine &
// Reichelt (sec. 2 of their paper). After k+1 steps of constant size the errors of
// orders k−1 and k+1 are estimated from ∇^k y and ∇^{k+2} y and the order and
// step with the largest predicted step are taken (at most ×10, with a safety
// factor that grows with the Newton iteration count); increases below 20 %
// at unchanged order are skipped to save factorisations.
//
// The Newton matrix is factorised by BandLU whenever h/α_k changes. The
// Jacobian is re-evaluated only when the iteration fails (then the same step
// is retried before it is reduced), when an accepted step needed three or
// more iterations, and after a stop. The first iteration is accepted without
// a second function evaluation when the convergence rate measured on recent
// steps (rescaled by the change of h/α_k) predicts convergence, as in the
// codes of Brown, Byrne and Hindmarsh; the rate is re-measured at least every
// 20 steps. If Problem.Jac is nil the Jacobian is formed by finite
// differences with column grouping (see fdBandJac).
//
// Output at the requested times comes from the interpolating polynomial of
// the current step, y(t_n + s·h) = Σ_{m=0..k} ∇^m y_n Π_{j=0..m−1} (s+j)/(j+1),
// so output times never shorten steps. Steps are shortened only to land on
// Settings.Stops and on the last output time (nothing is evaluated beyond it).
//
// Quadratures q' = g(t, y) are advanced by the same formula once y has
// converged: their correction is d_q = (h/α_k) g(t_{n+1}, y_{n+1}) − ψ_q,
// with their own rows in the same difference array, so they share the step
// size changes, the order changes and the interpolation of y. Everything
// applied to y and q is linear, so when w·f(t, y) = g(t, y) for a fixed w,
// w·y(t) − q(t) stays constant at the steps and at every output time as
// long as the y update matches the formula for q. Newton leaves a residual:
// its last step gives exactly d = (h/α_k)(f(y_j) + J·δ) − ψ, where y_j is
// the last point at which f was evaluated and δ the last correction. With
// Problem.QuadJac (G = ∂g/∂y, evaluated with J at the same point, so that
// w·J = G) the quadratures use g(y_j) + G·δ in place of g(y_{n+1}), and the
// ledger then closes to round-off for nonlinear problems too. Without
// QuadJac it closes to round-off for a linear f with its exact Jacobian,
// and otherwise to the accuracy of the Newton iteration (a small fraction
// of the tolerance).
//
// References:
//
//   - L. F. Shampine and M. W. Reichelt, The MATLAB ODE Suite, SIAM J. Sci.
//     Comput. 18(1):1–22, 1997 (NDF/BDF in backward-difference form, step
//     change by (R·U)ᵀ, error constants, κ values).
//   - G. D. Byrne and A. C. Hindmarsh, A polyalgorithm for the numerical
//     solution of ordinary differential equations, ACM Trans. Math. Softw.
//     1(1):71–96, 1975 (variable-order BDF strategy, Newton rate tests).
//   - P. N. Brown, G. D. Byrne and A. C. Hindmarsh, VODE: a variable-
//     coefficient ODE solver, SIAM J. Sci. Stat. Comput. 10(5):1038–1051,
//     1989 (reuse of the Jacobian and of the convergence rate).
//   - E. Hairer and G. Wanner, Solving Ordinary Differential Equations II,
//     2nd ed., Springer 1996, sec. III.5 (variable-step BDF) and IV.8
//     (implementation of implicit methods, Newton convergence tests).
//   - E. Hairer, S. P. Nørsett and G. Wanner, Solving Ordinary Differential
//     Equations I, 2nd ed., Springer 1993, sec. II.4 (starting step size).
type Integrator struct {
	// shape of the current workspace
	n, nq, m, kl, ku int

	// workspace
	diff   []float64 // (maxBDFOrder+3) rows of m: ∇^j y_n (and q)
	ypred  []float64 // m: predictor
	ynew   []float64 // m: corrector iterate / new solution
	corr   []float64 // m: correction d
	psi    []float64 // m
	wt     []float64 // m: 1/(atol + rtol|y|) at the new y (error test)
	wtN    []float64 // m: the same at y_n (Newton iteration)
	atol   []float64 // m
	f      []float64 // n: f values
	res    []float64 // n: Newton residual / increment
	yjac   []float64 // n: perturbed state for FD Jacobian
	fjac   []float64 // n: f at perturbed state
	del    []float64 // n: FD increments
	g      []float64 // nq: quadrature rates
	gjac   []float64 // nq×n: ∂g/∂y from Problem.QuadJac, or nil
	ylast  []float64 // n: last Newton point (with QuadJac)
	jac    *Band
	newt   *Band
	lu     BandLU
	stops  []float64
	rbuf   [(maxBDFOrder + 1) * (maxBDFOrder + 1)]float64
	ubuf   [(maxBDFOrder + 1) * (maxBDFOrder + 1)]float64
	rubuf  [(maxBDFOrder + 1) * (maxBDFOrder + 1)]float64
	gamma  [maxBDFOrder + 2]float64
	alpha  [maxBDFOrder + 2]float64
	errCst [maxBDFOrder + 3]float64

	// problem and settings of the current call
	p          *Problem
	rtol       float64
	maxOrd     int
	maxStep    float64
	maxSteps   int
	hInit      float64
	ctlQuad    bool // include quadratures in the error test
	newtonTol  float64
	tend       float64
	stopIdx    int // next stop in stops
	stopAtBase bool

	// integration state
	t, h       float64
	order      int
	nEqual     int     // steps taken with the current h and order
	luC        float64 // h/α of the current factorisation
	luOK       bool
	jacStale   bool // re-evaluate J before the next attempt
	jacCurrent bool // J was evaluated during the current step
	fPredOK    bool // f holds f(tf, ypred) for the current attempt
	crate      float64
	rateAge    int
	rateOK     bool
	stats      Stats

	// outcome of the last accepted step, for order and step selection
	lastErr, lastSafety float64
	lastRejected        bool

	// stepHook, when not nil, is called after every accepted step (after
	// the dense output, before the order and step change) with the time of
	// the previous step. Tests use it to inspect the interpolant.
	stepHook func(tPrev float64)
}

// Integrate solves the initial-value problem
//
//	y' = p.Func(t, y), y(t0) = y0,  q' = p.Quad(t, y), q(t0) = 0,
//
// and returns y and q at the output times tout, which must be finite,
// nondecreasing and not before t0 (tout may begin with t0). The integration
// ends exactly at the last output time. s may be nil for defaults.
//
// The returned *Result is never nil. On failure it holds the outputs reached
// so far (Result.Filled), the statistics and a Status, and the error is one
// of *InputError, *MaxStepsError, *StepTooSmallError, *NewtonError,
// *NonFiniteError, *InterruptedError (wrapping the context's error) or
// *PanicError. The context is checked before every step.
func (it *Integrator) Integrate(ctx context.Context, p *Problem, t0 float64, y0, tout []float64, s *Settings) (res *Result, err error) {
	start := time.Now()
	res = &Result{}
	defer func() {
		if r := recover(); r != nil {
			res.Status = Panicked
			err = &PanicError{T: it.t, H: it.h, Value: r}
		}
		res.Stats = it.stats
		res.Stats.Wall = time.Since(start)
		res.TReached = it.t
	}()
	it.stats = Stats{}
	it.t, it.h = t0, 0
	if s == nil {
		s = &Settings{}
	}
	if err := it.setup(p, t0, y0, tout, s); err != nil {
		res.Status = BadInput
		return res, err
	}
	if ctx == nil {
		ctx = context.Background()
	}
	// Results: one backing array each for Y and Q.
	nt := len(tout)
	res.T = slices.Clone(tout)
	res.Y = make([][]float64, nt)
	yflat := make([]float64, nt*it.n)
	for i := range res.Y {
		res.Y[i] = yflat[i*it.n : (i+1)*it.n : (i+1)*it.n]
	}
	if it.nq > 0 {
		res.Q = make([][]float64, nt)
		qflat := make([]float64, nt*it.nq)
		for i := range res.Q {
			res.Q[i] = qflat[i*it.nq : (i+1)*it.nq : (i+1)*it.nq]
		}
	}
	st, err := it.run(ctx, y0, res)
	res.Status = st
	return res, err
}

// setup validates the input and prepares the workspace.
func (it *Integrator) setup(p *Problem, t0 float64, y0, tout []float64, s *Settings) error {
	bad := func(format string, a ...any) error { return &InputError{Msg: fmt.Sprintf(format, a...)} }
	switch {
	case p == nil:
		return bad("nil problem")
	case p.N < 1:
		return bad("problem size N = %d, want ≥ 1", p.N)
	case p.Func == nil:
		return bad("problem has no Func")
	case p.Lower < 0 || p.Upper < 0:
		return bad("negative Jacobian bandwidth (Lower %d, Upper %d)", p.Lower, p.Upper)
	case p.NQuad < 0:
		return bad("NQuad = %d, want ≥ 0", p.NQuad)
	case p.NQuad > 0 && p.Quad == nil:
		return bad("NQuad = %d but Quad is nil", p.NQuad)
	case len(y0) != p.N:
		return bad("len(y0) = %d, want N = %d", len(y0), p.N)
	case math.IsNaN(t0) || math.IsInf(t0, 0):
		return bad("t0 = %g is not finite", t0)
	case len(tout) == 0:
		return bad("no output times")
	}
	for i, v := range y0 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return bad("y0[%d] = %g is not finite", i, v)
		}
	}
	prev := t0
	for i, v := range tout {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return bad("tout[%d] = %g is not finite", i, v)
		}
		if v < prev {
			if i == 0 {
				return bad("tout[0] = %g is before t0 = %g", v, t0)
			}
			return bad("tout is not nondecreasing: tout[%d] = %g < tout[%d] = %g", i, v, i-1, prev)
		}
		prev = v
	}
	notFinite := func(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) }
	switch {
	case notFinite(s.RTol) || s.RTol < 0:
		return bad("RTol = %g, want a finite value ≥ 0", s.RTol)
	case notFinite(s.ATol) || s.ATol < 0:
		return bad("ATol = %g, want a finite value ≥ 0", s.ATol)
	case s.ATolVec != nil && len(s.ATolVec) != p.N && len(s.ATolVec) != p.N+p.NQuad:
		return bad("len(ATolVec) = %d, want N = %d or N+NQuad = %d", len(s.ATolVec), p.N, p.N+p.NQuad)
	case s.MaxOrder < 0 || s.MaxOrder > maxBDFOrder:
		return bad("MaxOrder = %d, want 0 (default) to %d", s.MaxOrder, maxBDFOrder)
	case notFinite(s.InitialStep) || s.InitialStep < 0:
		return bad("InitialStep = %g, want a finite value ≥ 0", s.InitialStep)
	case notFinite(s.MaxStep) || s.MaxStep < 0:
		return bad("MaxStep = %g, want a finite value ≥ 0", s.MaxStep)
	case s.MaxSteps < 0:
		return bad("MaxSteps = %d, want ≥ 0", s.MaxSteps)
	}
	for i, v := range s.ATolVec {
		if notFinite(v) || v <= 0 {
			return bad("ATolVec[%d] = %g, want a finite value > 0", i, v)
		}
	}
	for i, v := range s.Stops {
		if notFinite(v) {
			return bad("Stops[%d] = %g is not finite", i, v)
		}
	}

	// Workspace.
	n, nq := p.N, p.NQuad
	kl, ku := min(p.Lower, n-1), min(p.Upper, n-1)
	m := n + nq
	if it.n != n || it.nq != nq || it.kl != kl || it.ku != ku || it.diff == nil {
		it.n, it.nq, it.m, it.kl, it.ku = n, nq, m, kl, ku
		it.diff = make([]float64, (maxBDFOrder+3)*m)
		vecs := make([]float64, 7*m+5*n+nq)
		take := func(k int) []float64 { v := vecs[:k:k]; vecs = vecs[k:]; return v }
		it.ypred, it.ynew, it.corr, it.psi, it.wt, it.wtN, it.atol = take(m), take(m), take(m), take(m), take(m), take(m), take(m)
		it.f, it.res, it.yjac, it.fjac, it.del = take(n), take(n), take(n), take(n), take(n)
		it.g = take(nq)
		it.gjac, it.ylast = nil, nil
		it.jac = NewBand(n, kl, ku)
		it.newt = NewBand(n, kl, ku)
		it.lu = BandLU{}
	}
	it.p = p
	if p.QuadJac != nil && nq > 0 {
		if len(it.gjac) != nq*n {
			it.gjac = make([]float64, nq*n)
			it.ylast = make([]float64, n)
		}
	} else {
		it.gjac = nil
	}

	// Settings.
	it.rtol = s.RTol
	if it.rtol == 0 {
		it.rtol = defaultRTol
	}
	it.rtol = max(it.rtol, 100*epsilon)
	atol := s.ATol
	if atol == 0 {
		atol = defaultATol
	}
	for i := range it.atol {
		it.atol[i] = atol
		if i < len(s.ATolVec) {
			it.atol[i] = s.ATolVec[i]
		}
	}
	it.maxOrd = s.MaxOrder
	if it.maxOrd == 0 {
		it.maxOrd = maxBDFOrder
	}
	it.maxSteps = s.MaxSteps
	if it.maxSteps == 0 {
		it.maxSteps = defaultMaxSteps
	}
	it.tend = tout[len(tout)-1]
	it.maxStep = s.MaxStep
	if it.maxStep == 0 {
		it.maxStep = math.Inf(1)
	}
	it.hInit = s.InitialStep
	it.ctlQuad = nq > 0 && !s.QuadUncontrolled
	it.newtonTol = max(10*epsilon/it.rtol, min(0.03, math.Sqrt(it.rtol)))

	// Stops strictly inside (t0, tend], sorted, without duplicates.
	it.stops = it.stops[:0]
	it.stopAtBase = false
	for _, v := range s.Stops {
		if v == t0 {
			it.stopAtBase = true
		}
		if v > t0 && v <= it.tend {
			it.stops = append(it.stops, v)
		}
	}
	slices.Sort(it.stops)
	it.stops = slices.Compact(it.stops)
	it.stopIdx = 0

	// Formula coefficients.
	it.stats.Method = fmt.Sprintf("bdf1-%d", it.maxOrd)
	if s.NDF {
		it.stats.Method = fmt.Sprintf("ndf1-%d", it.maxOrd)
	}
	for k := 1; k <= maxBDFOrder+1; k++ {
		it.gamma[k] = it.gamma[k-1] + 1/float64(k)
	}
	for k := 0; k <= maxBDFOrder+2; k++ {
		kappa := 0.0
		if s.NDF && k <= maxBDFOrder {
			kappa = ndfKappa[k]
		}
		g := 0.0
		if k <= maxBDFOrder+1 {
			g = it.gamma[k]
		}
		if k <= maxBDFOrder+1 {
			it.alpha[k] = (1 - kappa) * g
		}
		it.errCst[k] = kappa*g + 1/float64(k+1)
	}
	return nil
}

const epsilon = 0x1p-52

// row returns row j of the difference array.
func (it *Integrator) row(j int) []float64 {
	return it.diff[j*it.m : (j+1)*it.m : (j+1)*it.m]
}

// run performs the integration after setup.
func (it *Integrator) run(ctx context.Context, y0 []float64, res *Result) (Status, error) {
	t0 := it.t
	clear(it.diff)
	y := it.row(0)
	copy(y, y0)

	// Outputs at t0.
	next := 0
	for next < len(res.T) && res.T[next] == t0 {
		copy(res.Y[next], y0)
		next++
	}
	res.Filled = next
	if next == len(res.T) {
		return Success, nil
	}

	// Initial derivative.
	te := t0
	if it.stopAtBase {
		te = math.Nextafter(t0, math.Inf(1))
	}
	if st, err := it.startAt(te); err != nil {
		return st, err
	}

	done := ctx.Done()
	for {
		if done != nil {
			select {
			case <-done:
				return Interrupted, &InterruptedError{T: it.t, H: it.h, Err: ctx.Err()}
			default:
			}
		}
		if it.stats.Steps >= it.maxSteps {
			return MaxStepsReached, &MaxStepsError{T: it.t, H: it.h, Steps: it.maxSteps}
		}
		tPrev := it.t
		landed, landedStop, st, err := it.step()
		if err != nil {
			return st, err
		}
		// Dense output on (t_prev, t] from the polynomial of this step,
		// before the order and step size change.
		for next < len(res.T) && res.T[next] <= it.t {
			it.interpolate(res.T[next], res.Y[next], qrow(res, next))
			next++
		}
		res.Filled = next
		if it.stepHook != nil {
			it.stepHook(tPrev)
		}
		if next == len(res.T) {
			return Success, nil
		}
		switch {
		case landedStop:
			it.stats.Restarts++
			if st, err := it.startAt(math.Nextafter(it.t, math.Inf(1))); err != nil {
				return st, err
			}
		case !landed:
			it.selectOrderStep()
		}
	}
}

// qrow returns the quadrature row i of res, or nil without quadratures.
func qrow(res *Result, i int) []float64 {
	if res.Q == nil {
		return nil
	}
	return res.Q[i]
}

// startAt (re)starts the method at order 1 from the state in row 0 at it.t,
// evaluating the functions at te (it.t or the float just after a stop).
func (it *Integrator) startAt(te float64) (Status, error) {
	n := it.n
	y := it.row(0)[:n]
	it.stats.FuncEvals++
	it.p.Func(te, y, it.f)
	if !allFinite(it.f) {
		return NonFinite, &NonFiniteError{T: it.t}
	}
	if it.nq > 0 {
		it.stats.QuadEvals++
		it.p.Quad(te, y, it.g)
		if !allFinite(it.g) {
			return NonFinite, &NonFiniteError{T: it.t, Quad: true}
		}
	}
	for i, v := range it.row(0) {
		it.wtN[i] = 1 / (it.atol[i] + it.rtol*math.Abs(v))
	}
	h := it.hInit
	if h == 0 {
		h = it.initialStep(te)
	}
	h = min(h, it.maxStep, it.tend-it.t)
	if !(h > 0) {
		h = it.tend - it.t
	}
	it.h = h
	for j := 1; j < maxBDFOrder+3; j++ {
		clear(it.row(j))
	}
	d1 := it.row(1)
	for i := range n {
		d1[i] = h * it.f[i]
	}
	for i := range it.nq {
		d1[n+i] = h * it.g[i]
	}
	it.order = 1
	it.nEqual = 0
	it.jacStale, it.jacCurrent = true, false
	it.luOK = false
	it.crate, it.rateOK, it.rateAge = 1, false, 0
	return Success, nil
}

// initialStep chooses the first step from f(te, y) in it.f by the algorithm
// of Hairer, Nørsett & Wanner I, sec. II.4, for a method of order 1.
func (it *Integrator) initialStep(te float64) float64 {
	n := it.n
	y := it.row(0)[:n]
	d0 := wrms(y, it.wtN[:n])
	d1 := wrms(it.f, it.wtN[:n])
	var h0 float64
	if d0 < 1e-5 || d1 < 1e-5 {
		h0 = 1e-6
	} else {
		h0 = 0.01 * d0 / d1
	}
	b, _ := it.bound()
	h0 = min(h0, b-it.t, it.maxStep)
	// One explicit Euler step to estimate the second derivative.
	for i := range n {
		it.yjac[i] = y[i] + h0*it.f[i]
	}
	it.stats.FuncEvals++
	it.p.Func(te+h0, it.yjac, it.fjac)
	var s float64
	for i := range n {
		v := (it.fjac[i] - it.f[i]) * it.wtN[i]
		s += v * v
	}
	d2 := math.Sqrt(s/float64(n)) / h0
	var h1 float64
	if dm := max(d1, d2); !(dm > 1e-15) {
		h1 = max(1e-6, h0*1e-3)
	} else {
		h1 = math.Sqrt(0.01 / dm)
	}
	if math.IsNaN(h1) {
		return h0
	}
	return min(100*h0, h1)
}

// bound returns the time the current step must not pass: the next stop or
// the last output time, and whether it is a stop.
func (it *Integrator) bound() (float64, bool) {
	for it.stopIdx < len(it.stops) && it.stops[it.stopIdx] <= it.t {
		it.stopIdx++
	}
	if it.stopIdx < len(it.stops) && it.stops[it.stopIdx] < it.tend {
		return it.stops[it.stopIdx], true
	}
	return it.tend, false
}

// setStep changes the step size to h, interpolating the differences.
func (it *Integrator) setStep(h float64) {
	if h == it.h {
		return
	}
	it.rescale(h / it.h)
	it.h = h
	it.nEqual = 0
}

// step takes one accepted step. It reports whether the step landed on a
// stop or the last output time, and whether that was a stop.
func (it *Integrator) step() (landed, atStop bool, st Status, err error) {
	n, m := it.n, it.m
	failures := 0
	rejected := false
	var why failure
	var cause error
	for {
		b, isStop := it.bound()
		rem := b - it.t
		land := false
		switch {
		case rem <= landStretch*it.h && rem <= it.maxStep:
			it.setStep(rem)
			land = true
		case rem < 2*it.h:
			it.setStep(rem / 2)
		}
		h := it.h
		if failures > 0 && (failures >= maxFailures || h < minStep(it.t)) {
			st, err := it.failStatus(why, cause)
			return false, false, st, err
		}
		tnew := it.t + h
		tf := tnew
		if land {
			tnew = b
			tf = b
			if isStop {
				tf = math.Nextafter(b, math.Inf(-1))
			}
		}
		k := it.order

		// Predictor and ψ in one pass over the differences.
		yp, psi := it.ypred, it.psi
		ia := 1 / it.alpha[k]
		var rows [maxBDFOrder + 1][]float64
		var gs [maxBDFOrder + 1]float64
		for j := 0; j <= k; j++ {
			rows[j] = it.row(j)[:m]
			gs[j] = it.gamma[j] * ia
		}
		for i := range yp {
			y, ps := rows[0][i], 0.0
			for j := 1; j <= k; j++ {
				v := rows[j][i]
				y += v
				ps += gs[j] * v
			}
			yp[i], psi[i] = y, ps
		}
		c := h * ia

		// Newton matrix.
		it.fPredOK = false
		if it.jacStale {
			it.evalJac(tf, yp[:n])
		}
		if !it.luOK || c != it.luC {
			if it.luOK && c > it.luC {
				it.crate *= c / it.luC // rate scales at most like c
			}
			if err := it.factor(c); err != nil {
				failures++
				it.stats.NewtonFailures++
				why, cause = failSingular, err
				if !it.jacCurrent {
					it.jacStale = true
					continue
				}
				it.setStep(h * newtonCutFactor)
				continue
			}
		}

		iters, fw := it.newton(tf, c)
		if fw == failNone && it.nq > 0 {
			// Quadratures by the same formula at the converged y: with
			// QuadJac, g at the last Newton point linearised along the
			// last correction (this matches the y update exactly, see
			// the type's doc), otherwise g at the new y.
			it.stats.QuadEvals++
			if it.gjac != nil {
				it.p.Quad(tf, it.ylast, it.g)
				for i := range it.nq {
					gi := it.gjac[i*n : (i+1)*n]
					s := it.g[i]
					for j, v := range it.res {
						s += gi[j] * v
					}
					it.g[i] = s
				}
			} else {
				it.p.Quad(tf, it.ynew[:n], it.g)
			}
			if allFinite(it.g) {
				for i := range it.nq {
					dq := c*it.g[i] - psi[n+i]
					it.corr[n+i] = dq
					it.ynew[n+i] = yp[n+i] + dq
				}
			} else {
				fw = failQuadNonFinite
			}
		}
		if fw != failNone {
			failures++
			it.stats.NewtonFailures++
			why, cause = fw, nil
			if fw == failNewton && !it.jacCurrent {
				it.jacStale = true // retry the same step with a fresh Jacobian
				continue
			}
			it.setStep(h * newtonCutFactor)
			continue
		}

		// Local error test.
		mc := n
		if it.ctlQuad {
			mc = m
		}
		var ss float64
		for i := range mc {
			w := 1 / (it.atol[i] + it.rtol*math.Abs(it.ynew[i]))
			it.wt[i] = w
			v := it.corr[i] * w
			ss += v * v
		}
		errNorm := errTestScale * it.errCst[k] * math.Sqrt(ss/float64(mc))
		safety := 0.9 * float64(2*newtonMaxIter+1) / float64(2*newtonMaxIter+iters)
		if !(errNorm <= 1) {
			failures++
			it.stats.Rejected++
			rejected = true
			why, cause = failErrorTest, nil
			fac := minStepFactor
			if errNorm <= math.MaxFloat64 {
				fac = max(minStepFactor, safety*math.Pow(errNorm, -1/float64(k+1)))
			}
			it.setStep(h * fac)
			continue
		}

		// Accept.
		it.stats.Steps++
		it.stats.LastStep = h
		it.nEqual++
		it.t = tnew
		it.jacCurrent = false
		if iters >= slowNewtonIters {
			it.jacStale = true
		}
		// New differences: ∇^{k+2} = d − ∇^{k+1}_old, ∇^{k+1} = d,
		// ∇^j += ∇^{j+1} for j = k … 0, in one pass.
		dk1, dk2 := it.row(k + 1)[:m], it.row(k + 2)[:m]
		for j := 0; j <= k; j++ {
			rows[j] = it.row(j)[:m]
		}
		for i, d := range it.corr[:m] {
			dk2[i] = d - dk1[i]
			dk1[i] = d
			acc := d
			for j := k; j >= 0; j-- {
				acc += rows[j][i]
				rows[j][i] = acc
			}
		}
		// The error-test weights (at y_{n+1}) are the Newton weights of
		// the next step.
		it.wt, it.wtN = it.wtN, it.wt
		it.lastErr, it.lastSafety, it.lastRejected = errNorm, safety, rejected
		return land, land && isStop, Success, nil
	}
}

// selectOrderStep chooses the order and step size for the next step after
// k+1 steps of constant size (Shampine & Reichelt 1997, sec. 2).
func (it *Integrator) selectOrderStep() {
	errNorm, safety, rejected := it.lastErr, it.lastSafety, it.lastRejected
	k := it.order
	if it.nEqual < k+1 {
		return
	}
	mc := it.n
	if it.ctlQuad {
		mc = it.m
	}
	// The error-test weights (from the new y) are now in wtN.
	wt := it.wtN[:mc]
	fm, fp := 0.0, 0.0
	if k > 1 {
		em := errTestScale * it.errCst[k-1] * wrms(it.row(k)[:mc], wt)
		fm = math.Pow(em, -1/float64(k))
	}
	if k < it.maxOrd {
		ep := errTestScale * it.errCst[k+1] * wrms(it.row(k + 2)[:mc], wt)
		fp = math.Pow(ep, -1/float64(k+2))
	}
	f0 := math.Pow(errNorm, -1/float64(k+1))
	newOrder, fac := k, f0
	if fm > fac {
		newOrder, fac = k-1, fm
	}
	if fp > fac {
		newOrder, fac = k+1, fp
	}
	fac = min(maxStepFactor, safety*fac)
	if math.IsNaN(fac) {
		fac = 1
	}
	if rejected {
		fac = min(fac, 1)
	}
	fac = min(fac, it.maxStep/it.h)
	if newOrder == k && fac >= 1 && fac < 1.2 {
		it.nEqual = 0 // keep h; look again after k+1 more steps
		return
	}
	it.order = newOrder
	it.setStep(it.h * fac)
}

// minStep is the smallest step that still changes t.
func minStep(t float64) float64 {
	return 10 * (math.Nextafter(math.Abs(t), math.Inf(1)) - math.Abs(t))
}

// failStatus maps the last failure of a step to a status and an error.
func (it *Integrator) failStatus(why failure, cause error) (Status, error) {
	switch why {
	case failNonFinite:
		return NonFinite, &NonFiniteError{T: it.t, H: it.h}
	case failQuadNonFinite:
		return NonFinite, &NonFiniteError{T: it.t, H: it.h, Quad: true}
	case failNewton, failSingular:
		return NewtonFailed, &NewtonError{T: it.t, H: it.h, Err: cause}
	}
	return StepTooSmall, &StepTooSmallError{T: it.t, H: it.h}
}

// evalJac evaluates the Jacobian at (tf, y) and marks the factorisation out
// of date. With finite differences it leaves f(tf, y) in it.f.
func (it *Integrator) evalJac(tf float64, y []float64) {
	it.stats.JacEvals++
	it.jac.Zero()
	if it.gjac != nil {
		clear(it.gjac)
		it.p.QuadJac(tf, y, it.gjac)
	}
	if it.p.Jac != nil {
		it.p.Jac(tf, y, it.jac)
	} else {
		it.stats.FuncEvals++
		it.p.Func(tf, y, it.f)
		it.fPredOK = true
		it.stats.FuncEvals += fdBandJac(it.p.Func, tf, y, it.f, it.h, it.rtol, it.atol[:it.n], it.yjac, it.fjac, it.del, it.jac)
	}
	it.jacStale = false
	it.jacCurrent = true
	it.luOK = false
	it.crate, it.rateOK = 1, false
}

// factor forms I − cJ and factorises it.
func (it *Integrator) factor(c float64) error {
	nb, jb := it.newt, it.jac
	w := jb.KL + jb.KU + 1
	for i, v := range jb.Data {
		nb.Data[i] = -c * v
	}
	for i := range it.n {
		nb.Data[i*w+jb.KL] += 1
	}
	it.stats.Factorizations++
	it.luOK = false
	if err := it.lu.Factorize(nb); err != nil {
		return err
	}
	it.luOK = true
	it.luC = c
	return nil
}

// newton solves the corrector equation d = c f(tf, ypred + d) − ψ by
// simplified Newton iteration. On success ynew[:n] and corr[:n] hold the
// result. It returns the number of iterations and the failure kind.
func (it *Integrator) newton(tf, c float64) (int, failure) {
	n := it.n
	y, d, r, f := it.ynew[:n], it.corr[:n], it.res, it.f
	psi, wt := it.psi[:n], it.wtN[:n]
	copy(y, it.ypred[:n])
	clear(d)
	tol := it.newtonTol
	useRate := it.rateOK && it.rateAge < rateMaxAge
	var dyOld float64
	for iter := range newtonMaxIter {
		it.stats.NewtonIters++
		if iter > 0 || !it.fPredOK {
			it.stats.FuncEvals++
			it.p.Func(tf, y, f)
		}
		for i := range r {
			r[i] = c*f[i] - psi[i] - d[i]
		}
		if err := it.lu.Solve(r); err != nil {
			return iter + 1, failSingular
		}
		dy := wrms(r, wt)
		if !(dy <= math.MaxFloat64) {
			return iter + 1, failNonFinite
		}
		var rate float64
		if iter > 0 {
			rate = dy / dyOld
			if rate >= 1 || math.Pow(rate, float64(newtonMaxIter-iter))/(1-rate)*dy > tol {
				it.crate = max(it.crate, rate)
				it.rateOK = true
				return iter + 1, failNewton
			}
			it.crate = max(0.3*it.crate, rate)
			it.rateOK, it.rateAge = true, 0
		} else if useRate {
			rate = min(it.crate, 0.9)
		}
		conv := dy == 0 || ((iter > 0 || useRate) && rate/(1-rate)*dy <= tol)
		if conv && it.gjac != nil {
			copy(it.ylast, y) // the point of the last f evaluation
		}
		for i, v := range r {
			y[i] += v
			d[i] += v
		}
		if conv {
			if iter == 0 {
				it.rateAge++
			}
			return iter + 1, failNone
		}
		dyOld = dy
	}
	return newtonMaxIter, failNewton
}

// rescale changes the step of the difference array by the factor ρ:
// D[0..k] ← (R(ρ)·U)ᵀ D[0..k] (Shampine & Reichelt 1997, sec. 2), where
// R(ρ)_{ij} = Π_{l=1..i} (l − 1 − ρj)/l for i ≥ 1, R_{0j} = 1, and U = R(1).
func (it *Integrator) rescale(rho float64) {
	k := it.order
	const s = maxBDFOrder + 1
	r, u, ru := &it.rbuf, &it.ubuf, &it.rubuf
	for j := 0; j <= k; j++ {
		r[j], u[j] = 1, 1
		for i := 1; i <= k; i++ {
			fi := float64(i)
			r[i*s+j] = r[(i-1)*s+j] * (fi - 1 - rho*float64(j)) / fi
			u[i*s+j] = u[(i-1)*s+j] * (fi - 1 - float64(j)) / fi
		}
	}
	for i := 0; i <= k; i++ {
		for j := 0; j <= k; j++ {
			var sum float64
			for l := 0; l <= k; l++ {
				sum += r[i*s+l] * u[l*s+j]
			}
			ru[i*s+j] = sum
		}
	}
	// new D_j = Σ_{i≥j} ru[i][j] D_i, j = 1..k: (R·U)_{ij} vanishes for
	// i < j (the j-th difference of a polynomial involves only its
	// derivatives of order ≥ j) and row 0 is unchanged, so the rows can be
	// updated in place in increasing j.
	for j := 1; j <= k; j++ {
		dj := it.row(j)
		a := ru[j*s+j]
		for l := range dj {
			dj[l] *= a
		}
		for i := j + 1; i <= k; i++ {
			a := ru[i*s+j]
			di := it.row(i)
			di = di[:len(dj)]
			for l, v := range di {
				dj[l] += a * v
			}
		}
	}
}

// interpolate evaluates the interpolating polynomial of the last step at t,
// writing y into y and the quadratures into q (if not nil).
func (it *Integrator) interpolate(t float64, y, q []float64) {
	n := it.n
	copy(y, it.row(0)[:n])
	if q != nil {
		copy(q, it.row(0)[n:])
	}
	if t == it.t {
		return
	}
	x := (t - it.t) / it.h
	coef := 1.0
	for j := 1; j <= it.order; j++ {
		coef *= (x + float64(j-1)) / float64(j)
		rj := it.row(j)
		for i := range y {
			y[i] += coef * rj[i]
		}
		for i := range q {
			q[i] += coef * rj[n+i]
		}
	}
}

// wrms is the weighted root-mean-square norm sqrt(Σ (x_i w_i)² / len(x)).
func wrms(x, w []float64) float64 {
	var s float64
	for i, v := range x {
		v *= w[i]
		s += v * v
	}
	return math.Sqrt(s / float64(len(x)))
}

func allFinite(x []float64) bool {
	for _, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}
