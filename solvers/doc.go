// Package solvers holds the numerical engines of massline: a stiff
// variable-order BDF integrator with banded Newton iterations, dense output
// and quadratures for mass ledgers (Integrate, Integrator), a reusable banded
// LU factorisation with partial pivoting (BandLU), and the band matrix and
// problem types they share (Band, Problem).
//
// The APIs follow gonum's shape: a Problem, a *Settings where nil means
// defaults and every zero field has a documented meaning, a Result with
// Stats and a Status, and typed errors that carry the data of the failure
// (the time and step size, or a pivot index), with messages prefixed
// "solvers:". Nothing in this package panics on bad input; a panic in a
// user-supplied function is recovered and returned as a *PanicError.
//
// Results are numerical estimates: their accuracy depends on the model, the
// grid and the tolerances. Validate them against measurements before relying
// on them; local regulations and licensed practice decide how they may be
// used.
package solvers
