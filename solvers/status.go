package solvers

import (
	"fmt"
	"time"
)

// Status tells how an integration ended.
type Status int

const (
	// NotTerminated is the zero value: the integration has not run.
	NotTerminated Status = iota
	// Success means every requested output time was reached.
	Success
	// BadInput means the problem, the initial state, the output times or
	// the settings were rejected before any step was taken.
	BadInput
	// MaxStepsReached means Settings.MaxSteps steps were taken before the
	// last output time.
	MaxStepsReached
	// StepTooSmall means the local error test kept failing until the step
	// fell below the resolution of floating point at the current time.
	StepTooSmall
	// NewtonFailed means the corrector (Newton) iteration kept failing, even
	// with a fresh Jacobian, until the step became too small.
	NewtonFailed
	// NonFinite means the right-hand side or the quadrature function
	// returned NaN or ±Inf, even for very small steps.
	NonFinite
	// Interrupted means the context was cancelled or its deadline passed.
	Interrupted
	// Panicked means a user-supplied function panicked.
	Panicked
)

var statusNames = [...]string{
	NotTerminated:   "NotTerminated",
	Success:         "Success",
	BadInput:        "BadInput",
	MaxStepsReached: "MaxStepsReached",
	StepTooSmall:    "StepTooSmall",
	NewtonFailed:    "NewtonFailed",
	NonFinite:       "NonFinite",
	Interrupted:     "Interrupted",
	Panicked:        "Panicked",
}

// String returns the name of the status.
func (s Status) String() string {
	if s >= 0 && int(s) < len(statusNames) {
		return statusNames[s]
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Stats are the work counters of an integration.
type Stats struct {
	// Method names the formula family and the orders allowed,
	// e.g. "bdf1-5" or "ndf1-3".
	Method string
	// Steps is the number of accepted steps.
	Steps int
	// Rejected is the number of steps rejected by the local error test.
	Rejected int
	// FuncEvals counts calls of Problem.Func, including those made to form
	// finite-difference Jacobians and to choose the first step.
	FuncEvals int
	// QuadEvals counts calls of Problem.Quad.
	QuadEvals int
	// JacEvals counts Jacobian evaluations (analytic or finite-difference).
	JacEvals int
	// Factorizations counts LU factorisations of the Newton matrix I − cJ.
	Factorizations int
	// NewtonIters counts corrector iterations (one linear solve each).
	NewtonIters int
	// NewtonFailures counts corrector iterations that failed to converge,
	// diverged, met a singular matrix or a non-finite value.
	NewtonFailures int
	// Restarts counts restarts at order 1 at Settings.Stops.
	Restarts int
	// LastStep is the size of the last accepted step.
	LastStep float64
	// Wall is the elapsed wall-clock time of the call.
	Wall time.Duration
}

// InputError reports a problem, initial state, output grid or setting that
// cannot be integrated.
type InputError struct {
	// Msg says what is wrong.
	Msg string
}

// Error implements the error interface.
func (e *InputError) Error() string { return "solvers: bad input: " + e.Msg }

// MaxStepsError reports that Settings.MaxSteps accepted steps were taken
// before the last output time.
type MaxStepsError struct {
	// T is the time reached and H the current step size.
	T, H float64
	// Steps is the limit that was hit.
	Steps int
}

// Error implements the error interface.
func (e *MaxStepsError) Error() string {
	return fmt.Sprintf("solvers: %d steps taken without reaching the last output time (t=%g, h=%g)", e.Steps, e.T, e.H)
}

// StepTooSmallError reports that the local error test could not be passed
// with any representable step size at time T.
type StepTooSmallError struct {
	// T is the time reached and H the last step size tried.
	T, H float64
}

// Error implements the error interface.
func (e *StepTooSmallError) Error() string {
	return fmt.Sprintf("solvers: step size too small at t=%g (h=%g): error test keeps failing", e.T, e.H)
}

// NewtonError reports that the corrector iteration failed at time T for
// every step size down to H, even with a fresh Jacobian. Err, when not nil,
// is the last cause (for example a *SingularError).
type NewtonError struct {
	// T is the time reached and H the last step size tried.
	T, H float64
	// Err is the underlying cause, or nil if the iteration simply did not
	// converge.
	Err error
}

// Error implements the error interface.
func (e *NewtonError) Error() string {
	msg := fmt.Sprintf("solvers: Newton iteration failed at t=%g (h=%g)", e.T, e.H)
	if e.Err != nil {
		msg += ": " + e.Err.Error()
	}
	return msg
}

// Unwrap returns the underlying cause.
func (e *NewtonError) Unwrap() error { return e.Err }

// NonFiniteError reports that Problem.Func or Problem.Quad returned NaN or
// ±Inf. At the initial point H is zero; during integration the step was
// reduced to H without the value becoming finite.
type NonFiniteError struct {
	// T is the time at which the value appeared and H the step size.
	T, H float64
	// Quad is true when the non-finite value came from Problem.Quad.
	Quad bool
}

// Error implements the error interface.
func (e *NonFiniteError) Error() string {
	what := "right-hand side"
	if e.Quad {
		what = "quadrature function"
	}
	return fmt.Sprintf("solvers: %s returned NaN or Inf at t=%g (h=%g)", what, e.T, e.H)
}

// InterruptedError reports that the context ended the integration at time
// T. It wraps the context's error, so errors.Is(err, context.Canceled) works.
type InterruptedError struct {
	// T is the time reached and H the current step size.
	T, H float64
	// Err is the context's error.
	Err error
}

// Error implements the error interface.
func (e *InterruptedError) Error() string {
	return fmt.Sprintf("solvers: integration interrupted at t=%g (h=%g): %v", e.T, e.H, e.Err)
}

// Unwrap returns the context's error.
func (e *InterruptedError) Unwrap() error { return e.Err }

// PanicError reports that a user-supplied function (Func, Jac or Quad)
// panicked; the integrator recovers and returns this error instead.
type PanicError struct {
	// T is the time reached and H the current step size.
	T, H float64
	// Value is the value passed to panic.
	Value any
}

// Error implements the error interface.
func (e *PanicError) Error() string {
	return fmt.Sprintf("solvers: user function panicked near t=%g (h=%g): %v", e.T, e.H, e.Value)
}
