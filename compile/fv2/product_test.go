package fv2

import (
	"fmt"
	"math"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers/analytic"
)

// The uptake of a short cylinder is checked against the product rule: when
// the body is the intersection of an infinite cylinder of radius R and a
// plane sheet of thickness L, starts uniform and has the same kind of
// condition on every face (a fixed surface value, or a film toward the
// same outside value), the normalised unaccomplished change
// θ = (c∞ − c)/(c∞ − c0) is the product of those of the cylinder and the
// sheet, and so is its mean:
//
//	1 − U(t) = (1 − U_cyl(D t/R²)) · (1 − U_slab(D t/(L/2)²)),
//
// each factor with its own Biot number for a film (h R/D and h (L/2)/D).
// (source: the product solution for a body that is the intersection of
// two simpler ones — H. S. Carslaw and J. C. Jaeger, Conduction of Heat in
// Solids, 2nd ed. (1959), §1.15, and the finite cylinder in J. Crank, The
// Mathematics of Diffusion, 2nd ed. (1975), ch. 5; section numbers from
// memory. It also follows directly: θ_cyl(r, t)·θ_slab(z, t) satisfies the
// equation, the start θ = 1 and the homogeneous condition on every face.
// The factors are the series of Crank §4.3 and §5.3 via package analytic.)

const (
	rSize = 1.5e-3 // radius, m
	lSize = 3e-3   // length, m (L/2 = R: both factors at the same Fourier number)
	dEff  = 4e-10  // m²/s
)

// productCase runs a short cylinder with the condition bc on all three
// faces from a uniform start c0 and returns the uptake fractions at the
// Fourier numbers τ = D t/(κ R²).
func productCase(t *testing.T, bc fv.Boundary, capacity, c0, cInf float64, nr, nz int, taus []float64) []float64 {
	t.Helper()
	d, err := Build(&Spec{Radius: rSize, Length: lSize, NR: nr, NZ: nz, NSpecies: 1,
		D: []float64{dEff}, Capacity: []float64{capacity},
		Side: faces(1, bc), Top: faces(1, bc), Bottom: faces(1, bc),
		Init: func(int, float64, float64) float64 { return c0 }})
	if err != nil {
		t.Fatal(err)
	}
	scale := capacity * rSize * rSize / dEff
	ts := make([]float64, len(taus))
	for i, tau := range taus {
		ts[i] = tau * scale
	}
	res := integrate(t, d, ts, nil)
	vol := math.Pi * rSize * rSize * lSize
	m0, mInf := capacity*vol*c0, capacity*vol*cInf
	u := make([]float64, len(taus))
	for i := range taus {
		m, _ := d.Content(res.Y[i], 0)
		u[i] = (m - m0) / (mInf - m0)
	}
	return u
}

// productUptake returns the product-rule uptake for a fixed surface value
// (biot = 0) or a film with Biot number biot·(a/R) on each face family.
func productUptake(t *testing.T, biot, tau float64) float64 {
	t.Helper()
	half := lSize / 2
	tauZ := tau * rSize * rSize / (half * half)
	var uc, us float64
	var err1, err2 error
	if biot == 0 {
		c, _ := analytic.NewFixedSurface(analytic.Cylinder)
		s, _ := analytic.NewFixedSurface(analytic.Slab)
		uc, err1 = c.Uptake(tau)
		us, err2 = s.Uptake(tauZ)
	} else {
		c, err := analytic.NewFilm(analytic.Cylinder, biot)
		if err != nil {
			t.Fatal(err)
		}
		s, err := analytic.NewFilm(analytic.Slab, biot*half/rSize)
		if err != nil {
			t.Fatal(err)
		}
		uc, err1 = c.Uptake(tau)
		us, err2 = s.Uptake(tauZ)
	}
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	return 1 - (1-uc)*(1-us)
}

var productTaus = []float64{0.01, 0.02, 0.05, 0.1, 0.2, 0.5}

// TestProductFixedSurface: fixed surface value on side, top and bottom.
//
// Measured on the default grid (28 × 56 cells for L = 2R) with the
// default integrator settings: relative error 5.5e-4 at τ = 0.01,
// 2.5e-4 at 0.05, 1.4e-4 at 0.1, below 1e-5 from 0.5 on — each factor
// carries the error of a 1-D grid of 28 cells, (80/28)² times fv's on its
// 80-cell default. Richardson extrapolation over the default grid and the
// grid with half the cells each way (U + (U − U_half)/3 for a
// second-order error, L. F. Richardson's deferred approach to the limit;
// common practice; the grids are nested, the clustering map the same) brings it below 4e-5 for every τ ≥ 0.01:
// the claim checked is 2e-4 for the extrapolated value and 7e-4
// (τ < 0.05), 3e-4 (τ ≥ 0.05) on the default grid alone.
func TestProductFixedSurface(t *testing.T) {
	const (
		capacity = 0.45
		c0       = 0.1
		outside  = 0.8
		kp       = 1.3
	)
	bc := fv.Boundary{Kind: fv.Fixed, Value: constant(outside), Partition: kp}
	nr, nz := cellCounts(&Spec{Radius: rSize, Length: lSize})
	fine := productCase(t, bc, capacity, c0, kp*outside, 0, 0, productTaus)
	coarse := productCase(t, bc, capacity, c0, kp*outside, nr/2, nz/2, productTaus)
	for i, tau := range productTaus {
		want := productUptake(t, 0, tau)
		rich := fine[i] + (fine[i]-coarse[i])/3
		e, er := relErr(fine[i], want), relErr(rich, want)
		t.Logf("τ=%g: exact %.8f, default grid %.2e, extrapolated %.2e", tau, want, e, er)
		tol := 7e-4
		if tau >= 0.05 {
			tol = 3e-4
		}
		if e > tol {
			t.Errorf("τ=%g: uptake %.8f, exact %.8f, relative error %.2e > %.0e", tau, fine[i], want, e, tol)
		}
		if er > 2e-4 {
			t.Errorf("τ=%g: extrapolated uptake %.8f, exact %.8f, relative error %.2e > 2e-4", tau, rich, want, er)
		}
	}
}

// TestProductFilm: a film toward the same bulk value on side, top and
// bottom (K ≠ 1, capacity ≠ 1); the Biot number of the cylinder factor is
// h R/D and that of the sheet h (L/2)/D (equal here, L/2 = R).
//
// Measured on the default grid: at most 6.5e-5 (Bi = 1) and 3.3e-4
// (Bi = 10, at τ = 0.01; 1.5e-4 at 0.1); extrapolated as above, below
// 4e-5. Claimed: 5e-4 (τ < 0.05) and 3e-4 on the default grid, 2e-4
// extrapolated.
func TestProductFilm(t *testing.T) {
	const (
		capacity = 0.7
		kp       = 2.5
		bulk     = 0.4
	)
	for _, biot := range []float64{1, 10} {
		t.Run(fmt.Sprintf("Bi=%g", biot), func(t *testing.T) {
			h := biot * dEff / rSize
			bc := fv.Boundary{Kind: fv.Film, H: h, Value: constant(bulk), Partition: kp}
			nr, nz := cellCounts(&Spec{Radius: rSize, Length: lSize})
			fine := productCase(t, bc, capacity, 0, kp*bulk, 0, 0, productTaus)
			coarse := productCase(t, bc, capacity, 0, kp*bulk, nr/2, nz/2, productTaus)
			for i, tau := range productTaus {
				want := productUptake(t, biot, tau)
				rich := fine[i] + (fine[i]-coarse[i])/3
				e, er := relErr(fine[i], want), relErr(rich, want)
				t.Logf("τ=%g: exact %.8f, default grid %.2e, extrapolated %.2e", tau, want, e, er)
				tol := 5e-4
				if tau >= 0.05 {
					tol = 3e-4
				}
				if e > tol {
					t.Errorf("τ=%g: uptake %.8f, exact %.8f, relative error %.2e > %.0e", tau, fine[i], want, e, tol)
				}
				if er > 2e-4 {
					t.Errorf("τ=%g: extrapolated uptake %.8f, exact %.8f, relative error %.2e > 2e-4", tau, rich, want, er)
				}
			}
		})
	}
}
