package solvers

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"
	"time"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// LSProblem is a nonlinear least-squares problem: find x, inside the
// bounds, that minimises ½ Σ r_i(x)².
type LSProblem struct {
	// M is the number of residuals and N the number of parameters.
	M, N int
	// Residual evaluates r(x) into r (length M). It must not retain x or
	// r. An error (for example a model that cannot be solved at x), or a
	// NaN or Inf in r, rejects a trial point; at the starting point or
	// while forming a Jacobian it ends the minimisation.
	Residual func(x, r []float64) error
	// Jacobian, optional, fills J (row-major M×N: J[i*N+j] = ∂r_i/∂x_j)
	// at x; J arrives zeroed. Nil means forward differences.
	Jacobian func(x, J []float64) error
	// Lower and Upper are the bounds on x (length N each, or nil for
	// none); entries may be ±Inf.
	Lower, Upper []float64
	// Independent says that Residual may be called from several
	// goroutines at once (each call with its own x and r); the columns of
	// a finite-difference Jacobian are then evaluated in parallel.
	Independent bool
}

// LSSettings tunes LevenbergMarquardt. A nil *LSSettings means the
// defaults; so does every zero field.
type LSSettings struct {
	// MaxIterations bounds the number of Jacobian evaluations (outer
	// iterations); 0 means 100.
	MaxIterations int
	// MaxEvaluations bounds the number of calls of Residual, those for
	// finite differences included; 0 means no bound. The Jacobian at the
	// solution, for the covariance, may take N more.
	MaxEvaluations int
	// StepTol is the tolerance of the step test; 0 means 1e-10.
	StepTol float64
	// CostTol is the tolerance of the cost test; 0 means 1e-12.
	CostTol float64
	// GradTol is the tolerance of the gradient test; 0 means 1e-10.
	GradTol float64
	// FDStep is the relative increment of finite differences; 0 means
	// √ε ≈ 1.5e-8. Residuals that carry noise (a model solved to a
	// tolerance) need about the square root of their relative accuracy.
	FDStep float64
	// InitialDamping is the starting λ relative to Marquardt's scaling;
	// 0 means 1e-3.
	InitialDamping float64
	// Concurrency bounds the goroutines evaluating finite-difference
	// columns when LSProblem.Independent is set; 0 means GOMAXPROCS.
	Concurrency int
}

// LSStatus tells how a minimisation ended.
type LSStatus int

const (
	// LSNotTerminated is the zero value: the minimisation has not run.
	LSNotTerminated LSStatus = iota
	// LSStepConvergence means a proposed step fell below StepTol.
	LSStepConvergence
	// LSCostConvergence means an accepted step changed the cost by less
	// than CostTol relative, as the linear model predicted.
	LSCostConvergence
	// LSGradientConvergence means the gradient test passed (this includes
	// a zero residual).
	LSGradientConvergence
	// LSIterationLimit means MaxIterations was reached first.
	LSIterationLimit
	// LSEvaluationLimit means MaxEvaluations was reached first.
	LSEvaluationLimit
	// LSBadInput means the problem, the start or the settings were
	// rejected before any evaluation.
	LSBadInput
	// LSFailed means the residual or the Jacobian could not be evaluated
	// at the start or while forming a Jacobian, or no step could be
	// found (λ overflowed).
	LSFailed
	// LSInterrupted means the context was cancelled or its deadline
	// passed.
	LSInterrupted
)

var lsStatusNames = [...]string{
	LSNotTerminated:       "NotTerminated",
	LSStepConvergence:     "StepConvergence",
	LSCostConvergence:     "CostConvergence",
	LSGradientConvergence: "GradientConvergence",
	LSIterationLimit:      "IterationLimit",
	LSEvaluationLimit:     "EvaluationLimit",
	LSBadInput:            "BadInput",
	LSFailed:              "Failed",
	LSInterrupted:         "Interrupted",
}

// String returns the name of the status.
func (s LSStatus) String() string {
	if s >= 0 && int(s) < len(lsStatusNames) {
		return lsStatusNames[s]
	}
	return fmt.Sprintf("LSStatus(%d)", int(s))
}

// Converged reports whether one of the convergence tests passed.
func (s LSStatus) Converged() bool {
	return s == LSStepConvergence || s == LSCostConvergence || s == LSGradientConvergence
}

// LSStats are the work counters of a minimisation.
type LSStats struct {
	// Iterations counts outer iterations (Jacobians formed for a step).
	Iterations int
	// Evaluations counts calls of LSProblem.Residual, finite differences
	// included.
	Evaluations int
	// JacEvals counts Jacobians formed (analytic or by differences),
	// including the one at the solution for the covariance.
	JacEvals int
	// Rejected counts trial steps that did not reduce the cost enough
	// or could not be evaluated.
	Rejected int
	// Wall is the elapsed wall-clock time of the call.
	Wall time.Duration
}

// LSResult is the outcome of LevenbergMarquardt.
type LSResult struct {
	// X is the best point found (the solution when Status.Converged()).
	X []float64
	// Residuals are r(X) and Cost is ½‖r(X)‖².
	Residuals []float64
	Cost      float64
	// M and N are the numbers of residuals and parameters.
	M, N int
	// Jacobian is ∂r/∂x at X, row-major M×N; nil when the minimisation
	// ended before it could be formed.
	Jacobian []float64
	// Covariance is s²(JᵀJ)⁻¹ at X, row-major N×N, with s² = 2·Cost/(M−N);
	// nil when M ≤ N, J has not full rank, or Jacobian is nil.
	Covariance []float64
	// AtBound[j] is true when X[j] ended within 0.01 % (of the
	// transformed range) of one of its bounds.
	AtBound []bool
	Stats   LSStats
	Status  LSStatus
}

// Variance returns s² = 2·Cost/(M − N), the estimated variance of one
// residual; NaN when M ≤ N.
func (r *LSResult) Variance() float64 {
	if r.M <= r.N {
		return math.NaN()
	}
	return 2 * r.Cost / float64(r.M-r.N)
}

// StdErr returns the standard errors √C_jj of the parameters; NaN where
// the covariance is unknown.
func (r *LSResult) StdErr() []float64 {
	se := make([]float64, r.N)
	for j := range se {
		se[j] = math.NaN()
		if r.Covariance != nil {
			se[j] = math.Sqrt(r.Covariance[j*r.N+j])
		}
	}
	return se
}

// Correlation returns the correlation matrix of the parameters, row-major
// N×N; NaN entries where the covariance is unknown.
func (r *LSResult) Correlation() []float64 {
	n := r.N
	c := make([]float64, n*n)
	se := r.StdErr()
	for i := range n {
		for j := range n {
			c[i*n+j] = math.NaN()
			if r.Covariance != nil {
				c[i*n+j] = r.Covariance[i*n+j] / (se[i] * se[j])
			}
		}
	}
	return c
}

// ConfidenceIntervals returns the limits X ∓ t·StdErr of the two-sided
// confidence intervals at the given level (0.95 for 95 %), where t is the
// quantile 1 − (1 − level)/2 of Student's t distribution with M − N
// degrees of freedom. They rest on the linearisation of the model at X.
// Entries are NaN when the covariance is unknown or level is not in (0, 1).
func (r *LSResult) ConfidenceIntervals(level float64) (lo, hi []float64) {
	lo, hi = make([]float64, r.N), make([]float64, r.N)
	t := StudentTQuantile(1-(1-level)/2, float64(r.M-r.N))
	se := r.StdErr()
	for j := range lo {
		if j < len(r.X) {
			lo[j], hi[j] = r.X[j]-t*se[j], r.X[j]+t*se[j]
		}
	}
	return lo, hi
}

// StudentTQuantile returns the p-quantile of Student's t distribution
// with nu degrees of freedom (gonum's distuv.StudentsT); NaN when p is
// not in (0, 1) or nu is not positive.
func StudentTQuantile(p, nu float64) float64 {
	if !(p > 0 && p < 1) || !(nu > 0) {
		return math.NaN()
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile(p)
}

// ResidualError reports that LSProblem.Residual or LSProblem.Jacobian failed
// (returned an error, a NaN or Inf, or panicked) where a value was needed.
type ResidualError struct {
	// X is the point of the failed evaluation.
	X []float64
	// Err is the cause.
	Err error
}

// Error implements the error interface.
func (e *ResidualError) Error() string {
	return fmt.Sprintf("solvers: residuals cannot be evaluated at x=%g: %v", e.X, e.Err)
}

// Unwrap returns the cause.
func (e *ResidualError) Unwrap() error { return e.Err }

// errNonFinite is the cause when residuals contain NaN or Inf.
var errNonFinite = errors.New("a residual is NaN or Inf")

// boundKind selects the map between internal and actual parameters.
type boundKind int

const (
	freeMap boundKind = iota
	lowerMap
	upperMap
	logisticMap
	logLogisticMap
)

// bound maps an internal variable u onto one parameter x.
type bound struct {
	kind   boundKind
	lo, hi float64
	scale  float64 // freeMap: x = scale·u
	span   float64 // logLogisticMap: ln(hi/lo)
}

// sigma is the logistic function, evaluated without overflow.
func sigma(u float64) float64 {
	if u >= 0 {
		return 1 / (1 + math.Exp(-u))
	}
	e := math.Exp(u)
	return e / (1 + e)
}

func (b *bound) toX(u float64) float64 {
	switch b.kind {
	case lowerMap:
		return b.lo + math.Exp(u)
	case upperMap:
		return b.hi - math.Exp(u)
	case logisticMap:
		return math.Min(b.hi, math.Max(b.lo, b.lo+(b.hi-b.lo)*sigma(u)))
	case logLogisticMap:
		return math.Min(b.hi, math.Max(b.lo, b.lo*math.Exp(b.span*sigma(u))))
	}
	return b.scale * u
}

// dxdu is the derivative of the map at u.
func (b *bound) dxdu(u float64) float64 {
	switch b.kind {
	case lowerMap:
		return math.Exp(u)
	case upperMap:
		return -math.Exp(u)
	case logisticMap:
		return (b.hi - b.lo) * sigma(u) * sigma(-u)
	case logLogisticMap:
		return b.toX(u) * b.span * sigma(u) * sigma(-u)
	}
	return b.scale
}

// fraction returns where x lies in the transformed range, 0 to 1 (NaN
// for one-sided and free maps).
func (b *bound) fraction(x float64) float64 {
	switch b.kind {
	case logisticMap:
		return (x - b.lo) / (b.hi - b.lo)
	case logLogisticMap:
		return math.Log(x/b.lo) / b.span
	}
	return math.NaN()
}

// startFraction is how far inside a two-sided range a start is moved.
const startFraction = 1e-3

func (b *bound) toU(x float64) float64 {
	switch b.kind {
	case lowerMap:
		return math.Log(x - b.lo)
	case upperMap:
		return math.Log(b.hi - x)
	case logisticMap, logLogisticMap:
		p := math.Min(1-startFraction, math.Max(startFraction, b.fraction(x)))
		return math.Log(p / (1 - p))
	}
	return x / b.scale
}

// typical is the size used for a finite-difference increment at x = 0.
func (b *bound) typical() float64 {
	switch b.kind {
	case logisticMap:
		return b.hi - b.lo
	case freeMap:
		return b.scale
	}
	return 1
}

// lmRun holds the state of one minimisation.
type lmRun struct {
	ctx    context.Context
	p      *LSProblem
	set    LSSettings
	bounds []bound
	stats  LSStats
	mu     sync.Mutex // guards stats.Evaluations during parallel differences
}

func (s *LSSettings) withDefaults() LSSettings {
	var o LSSettings
	if s != nil {
		o = *s
	}
	if o.MaxIterations <= 0 {
		o.MaxIterations = 100
	}
	if o.StepTol <= 0 {
		o.StepTol = 1e-10
	}
	if o.CostTol <= 0 {
		o.CostTol = 1e-12
	}
	if o.GradTol <= 0 {
		o.GradTol = 1e-10
	}
	if o.FDStep <= 0 {
		o.FDStep = math.Sqrt(epsilon)
	}
	if o.InitialDamping <= 0 {
		o.InitialDamping = 1e-3
	}
	if o.Concurrency <= 0 {
		o.Concurrency = runtime.GOMAXPROCS(0)
	}
	return o
}

// LevenbergMarquardt minimises the cost ½‖r(x)‖² over parameters x, each
// optionally held between bounds, and returns the minimiser with the
// Jacobian and the covariance of the estimate there.
//
// Method. Each iteration forms the Jacobian J of the residuals (analytic,
// or forward differences), and solves the damped linear least-squares
// problem
//
//	min ‖J δ + r‖² + λ ‖D δ‖²
//
// by a QR factorisation of the stacked matrix [J; √λ D] (never the normal
// equations, whose conditioning is the square of J's). D is Marquardt's
// scaling: D_j² is the largest (JᵀJ)_jj seen so far, so the method does not
// depend on the units of the parameters. A trial step is accepted when the
// gain ratio ρ = (actual reduction of the cost) / (reduction predicted by
// the linear model) exceeds 1e-4; then λ ← λ·max(1/3, 1 − (2ρ − 1)³),
// otherwise λ ← λ·ν with ν doubling on each consecutive rejection. The
// initial λ is LSSettings.InitialDamping (relative to D², so dimensionless).
//
// References: K. Levenberg, A method for the solution of certain
// non-linear problems in least squares, Quart. Appl. Math. 2:164–168,
// 1944; D. W. Marquardt, An algorithm for least-squares estimation of
// nonlinear parameters, SIAM J. Appl. Math. 11:431–441, 1963; J. J. Moré,
// The Levenberg–Marquardt algorithm: implementation and theory, in
// Numerical Analysis (G. A. Watson, ed.), Lecture Notes in Mathematics 630,
// Springer, 1978, pp. 105–116 (scaling and the tests on step and cost);
// the λ update on the gain ratio is that of H. B. Nielsen, Damping
// parameter in Marquardt's method, report IMM-REP-1999-05, DTU, 1999
// (from memory).
//
// Bounds. The iteration runs on unbounded internal variables u, one per
// parameter, mapped onto the box so that every trial point lies inside it:
//
//   - no bounds: x = s·u with s = |x0| (1 when x0 = 0), so u is of order 1;
//   - a lower bound only: x = lo + e^u; an upper bound only: x = hi − e^u
//     (the start must then lie strictly inside);
//   - both bounds, 0 < lo and hi ≥ 10·lo (positive bounds spanning a decade
//     or more, typical of diffusivities and rate constants): a logistic map
//     in the logarithm, ln x = ln lo + ln(hi/lo)·σ(u), σ(u) = 1/(1 + e^−u),
//     so steps are relative changes of x;
//   - any other two bounds: a logistic map, x = lo + (hi − lo)·σ(u).
//
// A start on a two-sided bound (or closer to it than 0.1 % of the
// transformed range) is moved 0.1 % of that range inside. The maps flatten
// near the bounds, so a parameter whose best value lies beyond a bound
// converges onto that bound; LSResult.AtBound flags it, and its confidence
// interval is then not meaningful.
//
// Finite differences. Without LSProblem.Jacobian, column j of J is
// (r(x + h_j e_j) − r(x))/h_j with h_j = FDStep·|x_j| (FDStep times the
// typical size of x_j when x_j = 0: the bound range, or the scale s), taken
// backwards where the forward point would cross the upper bound; the
// difference actually representable, (x_j + h_j) − x_j, is the divisor.
// Differences are taken in x, and the chain rule with the map's derivative
// gives the Jacobian in u. When LSProblem.Independent is set the columns are
// evaluated in parallel.
//
// Convergence (Moré 1978, adapted): the step test stops when a proposed
// step satisfies |δu_j| ≤ StepTol·(1 + |u_j|) for every j (whether or not
// it would be accepted: smaller steps cannot change the answer); the cost
// test stops when an accepted step reduced the cost, and the linear model
// predicted it would, by no more than CostTol times the cost; the gradient
// test stops when every column of J is within GradTol of orthogonal to the
// residual vector, |J_jᵀ r| ≤ GradTol·‖J_j‖·‖r‖ (this includes r = 0).
//
// Covariance. At the solution, with the Jacobian J in x (recomputed there
// if the last accepted step moved the point), the covariance of the
// estimate is s²(JᵀJ)⁻¹ with s² = 2·Cost/(M − N), the residual variance.
// It is computed from a singular value decomposition of J with its columns
// scaled to unit length, and left nil when M ≤ N or J has not full rank.
// This is the linearised covariance for residuals that are independent
// with equal variance: weight the residuals beforehand when they are not.
//
// Nothing here panics on bad input; a panic in LSProblem.Residual or
// LSProblem.Jacobian is recovered and returned as a *ResidualError.
//
// Result. It returns the result and a nil error when a convergence test
// passed or a limit was reached (Status says which); otherwise an error
// (*InputError, *ResidualError, or one wrapping the context's error)
// together with the best point found so far when there is one.
func LevenbergMarquardt(ctx context.Context, p *LSProblem, x0 []float64, s *LSSettings) (res *LSResult, err error) {
	start := time.Now()
	if ctx == nil {
		ctx = context.Background()
	}
	if p == nil {
		return &LSResult{Status: LSBadInput}, &InputError{Msg: "nil least-squares problem"}
	}
	run := &lmRun{ctx: ctx, p: p, set: s.withDefaults()}
	res = &LSResult{M: p.M, N: p.N}
	defer func() {
		res.Stats = run.stats
		res.Stats.Wall = time.Since(start)
	}()
	if err := run.setup(x0); err != nil {
		res.Status = LSBadInput
		return res, err
	}
	return run.minimise(x0, res)
}

// setup checks the problem and builds the bound maps.
func (run *lmRun) setup(x0 []float64) error {
	p := run.p
	switch {
	case p.N < 1:
		return &InputError{Msg: fmt.Sprintf("N = %d parameters", p.N)}
	case p.M < 1:
		return &InputError{Msg: fmt.Sprintf("M = %d residuals", p.M)}
	case p.Residual == nil:
		return &InputError{Msg: "nil Residual function"}
	case len(x0) != p.N:
		return &InputError{Msg: fmt.Sprintf("x0 has %d values for N = %d", len(x0), p.N)}
	case p.Lower != nil && len(p.Lower) != p.N, p.Upper != nil && len(p.Upper) != p.N:
		return &InputError{Msg: "Lower and Upper must have N entries (or be nil)"}
	}
	run.bounds = make([]bound, p.N)
	for j := range p.N {
		lo, hi := math.Inf(-1), math.Inf(1)
		if p.Lower != nil {
			lo = p.Lower[j]
		}
		if p.Upper != nil {
			hi = p.Upper[j]
		}
		x := x0[j]
		switch {
		case math.IsNaN(x) || math.IsInf(x, 0):
			return &InputError{Msg: fmt.Sprintf("x0[%d] = %g", j, x)}
		case math.IsNaN(lo) || math.IsNaN(hi) || !(lo < hi) || math.IsInf(lo, 1) || math.IsInf(hi, -1):
			return &InputError{Msg: fmt.Sprintf("bounds of parameter %d: [%g, %g]", j, lo, hi)}
		case x < lo || x > hi:
			return &InputError{Msg: fmt.Sprintf("x0[%d] = %g lies outside its bounds [%g, %g]", j, x, lo, hi)}
		}
		b := bound{lo: lo, hi: hi}
		finLo, finHi := !math.IsInf(lo, 0), !math.IsInf(hi, 0)
		switch {
		case finLo && finHi && lo > 0 && hi >= 10*lo:
			b.kind, b.span = logLogisticMap, math.Log(hi/lo)
		case finLo && finHi:
			b.kind = logisticMap
		case finLo:
			b.kind = lowerMap
			if !(x > lo) {
				return &InputError{Msg: fmt.Sprintf("x0[%d] = %g must lie strictly above its lower bound", j, x)}
			}
		case finHi:
			b.kind = upperMap
			if !(x < hi) {
				return &InputError{Msg: fmt.Sprintf("x0[%d] = %g must lie strictly below its upper bound", j, x)}
			}
		default:
			b.kind, b.scale = freeMap, math.Abs(x)
			if b.scale == 0 {
				b.scale = 1
			}
		}
		run.bounds[j] = b
	}
	return nil
}

// eval computes r(x), recovering a panic and rejecting non-finite values.
func (run *lmRun) eval(x, r []float64) (err error) {
	run.mu.Lock()
	run.stats.Evaluations++
	run.mu.Unlock()
	defer func() {
		if v := recover(); v != nil {
			err = &ResidualError{X: append([]float64(nil), x...), Err: fmt.Errorf("panic: %v", v)}
		}
	}()
	if err := run.p.Residual(x, r); err != nil {
		return &ResidualError{X: append([]float64(nil), x...), Err: err}
	}
	for _, v := range r {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return &ResidualError{X: append([]float64(nil), x...), Err: errNonFinite}
		}
	}
	return nil
}

// jacobian fills J (M×N, in x) at x, where r0 = r(x).
func (run *lmRun) jacobian(x, r0, J []float64) (err error) {
	run.stats.JacEvals++
	m, n := run.p.M, run.p.N
	if run.p.Jacobian != nil {
		clear(J)
		func() {
			defer func() {
				if v := recover(); v != nil {
					err = fmt.Errorf("panic: %v", v)
				}
			}()
			err = run.p.Jacobian(x, J)
		}()
		if err == nil {
			for _, v := range J {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					err = errNonFinite
					break
				}
			}
		}
		if err != nil {
			return &ResidualError{X: append([]float64(nil), x...), Err: fmt.Errorf("Jacobian: %w", err)}
		}
		return nil
	}
	column := func(j int, xp, rp []float64) error {
		b := &run.bounds[j]
		h := run.set.FDStep * math.Abs(x[j])
		if h == 0 {
			h = run.set.FDStep * b.typical()
		}
		copy(xp, x)
		xp[j] = x[j] + h
		if xp[j] > b.hi {
			xp[j] = x[j] - h
		}
		if xp[j] < b.lo {
			// The range is narrower than the increment: step to its middle.
			xp[j] = b.lo + (b.hi-b.lo)/2
		}
		d := xp[j] - x[j]
		if d == 0 {
			return &ResidualError{X: append([]float64(nil), x...), Err: fmt.Errorf("no representable increment of parameter %d", j)}
		}
		if err := run.eval(xp, rp); err != nil {
			return err
		}
		for i := range m {
			J[i*n+j] = (rp[i] - r0[i]) / d
		}
		return nil
	}
	workers := 1
	if run.p.Independent {
		workers = max(1, min(run.set.Concurrency, n))
	}
	errs := make([]error, n)
	if workers == 1 {
		xp, rp := make([]float64, n), make([]float64, m)
		for j := range n {
			if err := run.ctx.Err(); err != nil {
				return err
			}
			if errs[j] = column(j, xp, rp); errs[j] != nil {
				return errs[j]
			}
		}
		return nil
	}
	next := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			xp, rp := make([]float64, n), make([]float64, m)
			for j := range next {
				if err := run.ctx.Err(); err != nil {
					errs[j] = err
					continue
				}
				errs[j] = column(j, xp, rp)
			}
		}()
	}
	for j := range n {
		next <- j
	}
	close(next)
	wg.Wait()
	return errors.Join(errs...)
}

// minimise runs the iteration from x0.
func (run *lmRun) minimise(x0 []float64, res *LSResult) (*LSResult, error) {
	p, set := run.p, run.set
	m, n := p.M, p.N
	u := make([]float64, n)
	x := make([]float64, n)
	for j := range n {
		u[j] = run.bounds[j].toU(x0[j])
		x[j] = run.bounds[j].toX(u[j])
	}
	r := make([]float64, m)
	if err := run.eval(x, r); err != nil {
		res.Status = LSFailed
		return res, err
	}
	cost := half2(r)
	keep := func() {
		res.X = append(res.X[:0], x...)
		res.Residuals = append(res.Residuals[:0], r...)
		res.Cost = cost
	}
	keep()

	Jx := make([]float64, m*n) // Jacobian in x
	Ju := make([]float64, m*n) // Jacobian in u
	fresh := false             // Jx is the Jacobian at x
	d2 := make([]float64, n)   // Marquardt's scaling, squared
	lambda, nu := set.InitialDamping, 2.0
	g := make([]float64, n)
	delta := make([]float64, n)
	jd := make([]float64, m)
	un, xn, rn := make([]float64, n), make([]float64, n), make([]float64, m)
	aug := mat.NewDense(m+n, n, nil)
	rhs := mat.NewVecDense(m+n, nil)
	var step mat.VecDense
	var qr mat.QR

	status := LSNotTerminated
	var failure error
	interrupted := func() bool {
		if err := run.ctx.Err(); err != nil {
			status, failure = LSInterrupted, fmt.Errorf("solvers: minimisation interrupted: %w", err)
			return true
		}
		return false
	}
	overBudget := func(k int) bool {
		if set.MaxEvaluations > 0 && run.stats.Evaluations+k > set.MaxEvaluations {
			status = LSEvaluationLimit
			return true
		}
		return false
	}
outer:
	for {
		if interrupted() {
			break
		}
		if run.stats.Iterations >= set.MaxIterations {
			status = LSIterationLimit
			break
		}
		if p.Jacobian == nil && overBudget(n) {
			break
		}
		if err := run.jacobian(x, r, Jx); err != nil {
			if run.ctx.Err() != nil {
				interrupted()
			} else {
				status, failure = LSFailed, err
			}
			break
		}
		fresh = true
		run.stats.Iterations++
		for i := range m {
			for j := range n {
				Ju[i*n+j] = Jx[i*n+j] * run.bounds[j].dxdu(u[j])
			}
		}
		// Gradient Juᵀr and the cosine test; Marquardt's scaling.
		rnorm := math.Sqrt(2 * cost)
		gradOK := true
		for j := range n {
			gj, cn := 0.0, 0.0
			for i := range m {
				gj += Ju[i*n+j] * r[i]
				cn += Ju[i*n+j] * Ju[i*n+j]
			}
			g[j] = gj
			d2[j] = math.Max(d2[j], cn)
			if cn > 0 && math.Abs(gj) > set.GradTol*math.Sqrt(cn)*rnorm {
				gradOK = false
			}
		}
		if gradOK {
			status = LSGradientConvergence
			break
		}
		for j := range n {
			if d2[j] == 0 {
				d2[j] = 1 // the parameter has had no effect so far
			}
		}
		// Trial steps with increasing damping until one is accepted.
		for {
			if interrupted() {
				break outer
			}
			if !(lambda < 1e300) {
				status, failure = LSFailed, errors.New("solvers: no step reduces the sum of squares (damping overflowed)")
				break outer
			}
			for i := range m {
				for j := range n {
					aug.Set(i, j, Ju[i*n+j])
				}
				rhs.SetVec(i, -r[i])
			}
			sl := math.Sqrt(lambda)
			for k := range n {
				for j := range n {
					aug.Set(m+k, j, 0)
				}
				aug.Set(m+k, k, sl*math.Sqrt(d2[k]))
				rhs.SetVec(m+k, 0)
			}
			qr.Factorize(aug)
			err := qr.SolveVecTo(&step, false, rhs)
			var cond mat.Condition
			ok := err == nil || errors.As(err, &cond)
			small := true
			for j := range n {
				delta[j] = step.AtVec(j)
				if math.IsNaN(delta[j]) || math.IsInf(delta[j], 0) {
					ok = false
				}
				if math.Abs(delta[j]) > set.StepTol*(1+math.Abs(u[j])) {
					small = false
				}
			}
			if !ok {
				lambda, nu = lambda*nu, 2*nu
				run.stats.Rejected++
				continue
			}
			if small {
				status = LSStepConvergence
				break outer
			}
			if overBudget(1) {
				break outer
			}
			for j := range n {
				un[j] = u[j] + delta[j]
				xn[j] = run.bounds[j].toX(un[j])
			}
			// The reduction predicted by the linear model:
			// ½‖r‖² − ½‖r + J δ‖² = −(rᵀJδ + ½‖Jδ‖²).
			pred := 0.0
			for i := range m {
				s := 0.0
				for j := range n {
					s += Ju[i*n+j] * delta[j]
				}
				jd[i] = s
				pred -= r[i]*s + 0.5*s*s
			}
			if err := run.eval(xn, rn); err != nil {
				if run.ctx.Err() != nil {
					interrupted()
					break outer
				}
				lambda, nu = lambda*nu, 2*nu
				run.stats.Rejected++
				continue
			}
			costN := half2(rn)
			actual := cost - costN
			rho := -1.0
			if pred > 0 {
				rho = actual / pred
			}
			if rho <= 1e-4 {
				lambda, nu = lambda*nu, 2*nu
				run.stats.Rejected++
				continue
			}
			old := cost
			copy(u, un)
			copy(x, xn)
			copy(r, rn)
			cost = costN
			fresh = false
			keep()
			lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
			nu = 2
			if actual <= set.CostTol*old && pred <= set.CostTol*old {
				status = LSCostConvergence
				break outer
			}
			if cost == 0 {
				status = LSGradientConvergence
				break outer
			}
			break
		}
	}
	res.Status = status
	if status == LSInterrupted || status == LSFailed {
		return res, failure
	}
	// The Jacobian at the solution, and the covariance from it.
	if !fresh {
		if err := run.jacobian(x, r, Jx); err != nil {
			if run.ctx.Err() != nil {
				interrupted()
				res.Status = LSInterrupted
				return res, failure
			}
			// The solution stands; only its covariance is unknown.
			run.finish(res, nil)
			return res, nil
		}
	}
	run.finish(res, Jx)
	return res, nil
}

// finish records the Jacobian, covariance and bound flags at res.X.
func (run *lmRun) finish(res *LSResult, J []float64) {
	m, n := run.p.M, run.p.N
	res.AtBound = make([]bool, n)
	for j := range n {
		f := run.bounds[j].fraction(res.X[j])
		res.AtBound[j] = f < 1e-4 || f > 1-1e-4
	}
	if J == nil {
		return
	}
	res.Jacobian = append([]float64(nil), J...)
	if m > n {
		res.Covariance = covariance(J, m, n, 2*res.Cost/float64(m-n))
	}
}

// covariance returns s2·(JᵀJ)⁻¹ (row-major n×n), from the singular value
// decomposition of J with unit columns; nil when J has not full rank.
func covariance(J []float64, m, n int, s2 float64) []float64 {
	c := make([]float64, n)
	for j := range n {
		for i := range m {
			c[j] += J[i*n+j] * J[i*n+j]
		}
		c[j] = math.Sqrt(c[j])
		if c[j] == 0 {
			return nil
		}
	}
	js := mat.NewDense(m, n, nil)
	for i := range m {
		for j := range n {
			js.Set(i, j, J[i*n+j]/c[j])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(js, mat.SVDThinV) {
		return nil
	}
	sv := svd.Values(nil)
	if sv[n-1] <= sv[0]*float64(max(m, n))*epsilon {
		return nil
	}
	var v mat.Dense
	svd.VTo(&v)
	cov := make([]float64, n*n)
	for i := range n {
		for j := range n {
			s := 0.0
			for k := range n {
				s += v.At(i, k) * v.At(j, k) / (sv[k] * sv[k])
			}
			cov[i*n+j] = s2 * s / (c[i] * c[j])
		}
	}
	return cov
}

// half2 returns ½‖r‖².
func half2(r []float64) float64 {
	s := 0.0
	for _, v := range r {
		s += v * v
	}
	return s / 2
}
