package analytic

import (
	"math"
	"testing"
)

// TestFilmEigenvaluesHandbook checks the first eigenvalue of the film
// (Biot) problem against the one-term coefficients tabulated for
// transient conduction, a second check independent of the series code.
//
// source: F. P. Incropera and D. P. DeWitt, Fundamentals of Heat and Mass
// Transfer, Table 5.1 (first root ζ₁ for the plane wall, infinite cylinder
// and sphere), values quoted to four decimals — from memory. The sphere at
// Bi = 1 is exactly π/2 (1 − ζ cot ζ = 1).
func TestFilmEigenvaluesHandbook(t *testing.T) {
	table := []struct {
		shape Shape
		biot  float64
		zeta  float64
	}{
		{Slab, 0.1, 0.3111}, {Slab, 1, 0.8603}, {Slab, 10, 1.4289}, {Slab, 100, 1.5552},
		{Cylinder, 0.1, 0.4417}, {Cylinder, 1, 1.2558}, {Cylinder, 10, 2.1795}, {Cylinder, 100, 2.3809},
		{Sphere, 0.1, 0.5423}, {Sphere, 1, 1.5708}, {Sphere, 10, 2.8363}, {Sphere, 100, 3.1102},
	}
	for _, c := range table {
		f, err := NewFilm(c.shape, c.biot)
		if err != nil {
			t.Fatal(err)
		}
		ev, err := f.Eigenvalues(1)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(ev[0]-c.zeta) > 6e-5 {
			t.Errorf("%v Bi = %g: first eigenvalue %.6f, table %.4f", c.shape, c.biot, ev[0], c.zeta)
		}
	}
}
