package analytic

import (
	"fmt"
	"math"
)

// Shell is steady diffusion through the wall of a hollow body between an
// inner face r1 held at C1 and an outer face r2 held at C2, with constant
// diffusivity D:
//
//	slab:     C = C1 + (C2 − C1)(r − r1)/(r2 − r1)
//	cylinder: C = C1 + (C2 − C1) ln(r/r1)/ln(r2/r1)
//	sphere:   C = C1 + (C2 − C1)(1/r1 − 1/r)/(1/r1 − 1/r2)
//
// (source: J. Crank, The Mathematics of Diffusion, 2nd ed. (1975), §4.2
// (plane sheet), §5.2 (hollow cylinder), §6.2 (hollow sphere); section
// numbers from memory; each follows from r^ν dC/dr = const).
type Shell struct {
	shape          Shape
	d, r1, r2      float64
	c1, c2         float64
	amountPerValue float64
}

// NewShell returns the steady hollow-body problem. D > 0, 0 ≤ inner < outer
// (inner > 0 for the cylinder and sphere), and the face values must be
// finite.
func NewShell(s Shape, D, inner, outer, cInner, cOuter float64) (*Shell, error) {
	if err := checkShape(s); err != nil {
		return nil, err
	}
	if err := checkPositive("diffusivity", D); err != nil {
		return nil, err
	}
	for _, v := range []float64{inner, outer, cInner, cOuter} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("analytic: shell radii and face values must be finite")
		}
	}
	if inner < 0 || !(inner < outer) {
		return nil, fmt.Errorf("analytic: shell needs 0 ≤ inner < outer, got %g, %g", inner, outer)
	}
	if s != Slab && inner == 0 {
		return nil, fmt.Errorf("analytic: hollow %v needs inner radius > 0", s)
	}
	sh := &Shell{shape: s, d: D, r1: inner, r2: outer, c1: cInner, c2: cOuter}
	// Rate = amountPerValue · D · (C1 − C2), outward.
	switch s {
	case Slab:
		sh.amountPerValue = 1 / (outer - inner)
	case Cylinder:
		sh.amountPerValue = 2 * math.Pi / math.Log(outer/inner)
	default:
		sh.amountPerValue = 4 * math.Pi * inner * outer / (outer - inner)
	}
	return sh, nil
}

// Rate returns the steady outward rate of transfer from the inner to the
// outer face: per unit area for the slab, per unit length for the cylinder
// (2πD(C1 − C2)/ln(r2/r1)) and per body for the sphere
// (4πD(C1 − C2) r1 r2/(r2 − r1)).
func (s *Shell) Rate() float64 { return s.amountPerValue * s.d * (s.c1 - s.c2) }

// Value returns the steady value at position r (inner ≤ r ≤ outer).
func (s *Shell) Value(r float64) (float64, error) {
	if math.IsNaN(r) || r < s.r1 || r > s.r2 {
		return math.NaN(), fmt.Errorf("analytic: position %g outside the wall [%g, %g]", r, s.r1, s.r2)
	}
	var w float64
	switch s.shape {
	case Slab:
		w = (r - s.r1) / (s.r2 - s.r1)
	case Cylinder:
		w = math.Log(r/s.r1) / math.Log(s.r2/s.r1)
	default:
		w = (1/s.r1 - 1/r) / (1/s.r1 - 1/s.r2)
	}
	return s.c1 + (s.c2-s.c1)*w, nil
}
