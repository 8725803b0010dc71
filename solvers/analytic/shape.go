package analytic

import (
	"errors"
	"fmt"
	"math"
)

// Shape is the geometry of a body: a slab of half-thickness a exposed on
// both faces, an infinite cylinder of radius a, or a sphere of radius a.
type Shape int

// The three one-dimensional shapes.
const (
	Slab Shape = iota
	Cylinder
	Sphere
)

// String names the shape.
func (s Shape) String() string {
	switch s {
	case Slab:
		return "slab"
	case Cylinder:
		return "cylinder"
	case Sphere:
		return "sphere"
	}
	return fmt.Sprintf("Shape(%d)", int(s))
}

// valid reports whether s is one of the three shapes.
func (s Shape) valid() bool { return s == Slab || s == Cylinder || s == Sphere }

// nu is the exponent of the geometric weight r^ν: 0, 1 or 2.
func (s Shape) nu() float64 { return float64(s) }

// ErrFourierTooSmall is returned when a Fourier number is so small that an
// eigenfunction series would need more than MaxTerms terms and no
// short-time form is implemented for that quantity.
var ErrFourierTooSmall = errors.New("analytic: Fourier number too small for the eigenfunction series")

// MaxTerms is the largest number of eigenvalues a series may use. It bounds
// the smallest Fourier number accepted by series-only quantities to about
// 5e-9.
const MaxTerms = 100000

func checkShape(s Shape) error {
	if !s.valid() {
		return fmt.Errorf("analytic: unknown shape %d", int(s))
	}
	return nil
}

// checkTau rejects negative, infinite and NaN Fourier numbers.
func checkTau(tau float64) error {
	if math.IsNaN(tau) || tau < 0 || math.IsInf(tau, 0) {
		return fmt.Errorf("analytic: Fourier number must be finite and non-negative, got %g", tau)
	}
	return nil
}

// checkPositive rejects parameters that must be finite and > 0.
func checkPositive(name string, v float64) error {
	if math.IsNaN(v) || v <= 0 || math.IsInf(v, 0) {
		return fmt.Errorf("analytic: %s must be finite and positive, got %g", name, v)
	}
	return nil
}

func errNegativeCount(n int) error {
	return fmt.Errorf("analytic: negative number of eigenvalues %d", n)
}
