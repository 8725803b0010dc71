package fv

import (
	"fmt"
	"math"
	"testing"

	"github.com/massline/massline/solvers/analytic"
)

// Physical scales of the checks: a bead or pellet of millimetre size.
const (
	aSize = 1.5e-3 // radius or half-thickness, m
	dEff  = 4e-10  // m²/s
)

var shapes = []Geometry{Slab, Cylinder, Sphere}

// TestFixedSurface compares uptake and centre value with the published
// series (source: J. Crank, The Mathematics of Diffusion, 2nd ed. (1975),
// eqs. 4.18, 5.23, 6.20 and their short-time forms, via package analytic)
// on the default grid with the default solver settings.
//
// Claim checked: the uptake fraction is within 1e-4 (relative) of the exact
// value for Fourier numbers 5e-3 ≤ τ ≤ 1 and within 2e-4 for 1e-3 ≤ τ;
// the centre value is within 1e-3·max(value, 0.1).
func TestFixedSurface(t *testing.T) {
	taus := []float64{1e-3, 5e-3, 0.01, 0.1, 0.5, 1}
	const (
		capacity = 0.45
		c0       = 0.1
		outside  = 0.8
		kp       = 1.3
	)
	cs := kp * outside
	for _, g := range shapes {
		t.Run(g.String(), func(t *testing.T) {
			d, err := Build(&Spec{Geometry: g, NSpecies: 1,
				Layers:  []Layer{{Outer: aSize, D: []float64{dEff}, Capacity: []float64{capacity}}},
				OuterBC: []Boundary{{Kind: Fixed, Value: constant(outside), Partition: kp}},
				Init:    func(int, float64) float64 { return c0 }})
			if err != nil {
				t.Fatal(err)
			}
			scale := capacity * aSize * aSize / dEff // t = τ·scale
			ts := make([]float64, len(taus))
			for i, tau := range taus {
				ts[i] = tau * scale
			}
			res := integrate(t, d, ts, nil)
			an, _ := analytic.NewFixedSurface(analytic.Shape(g))
			vp := bodyVolume(g, aSize)
			m0, mInf := capacity*vp*c0, capacity*vp*cs
			for i, tau := range taus {
				want, _ := an.Uptake(tau)
				m, _ := d.Content(res.Y[i], 0)
				got := (m - m0) / (mInf - m0)
				tol := 1e-4
				if tau < 5e-3 {
					tol = 2e-4
				}
				if e := relErr(got, want); e > tol {
					t.Errorf("τ=%g: uptake %.8f, exact %.8f, relative error %.2e > %.0e", tau, got, want, e, tol)
				}
				wantC, _ := an.Centre(tau)
				c, _ := d.Centre(ts[i], res.Y[i], 0)
				gotC := (c - c0) / (cs - c0)
				if e := math.Abs(gotC - wantC); e > 1e-3*math.Max(wantC, 0.1) {
					t.Errorf("τ=%g: centre %.8f, exact %.8f, error %.2e", tau, gotC, wantC, e)
				}
				// The ledger's outer inflow is the uptake too.
				in := res.Q[i][QuadOuter]
				if e := relErr(in, m-m0); e > 1e-9 {
					t.Errorf("τ=%g: inflow %g, content change %g", tau, in, m-m0)
				}
			}
		})
	}
}

// TestFilm compares with the series for a surface film (source: Crank
// (1975) §4.3.2, §5.3.2, §6.3.2, via package analytic) at Biot numbers 0.1
// to 100, with a partition coefficient K ≠ 1 and a capacity ≠ 1.
func TestFilm(t *testing.T) {
	taus := []float64{1e-3, 0.01, 0.1, 0.5, 1}
	const (
		capacity = 0.7
		kp       = 2.5
		bulk     = 0.4
	)
	for _, g := range shapes {
		for _, biot := range []float64{0.1, 1, 10, 100} {
			t.Run(fmt.Sprintf("%v/Bi=%g", g, biot), func(t *testing.T) {
				h := biot * dEff / aSize
				d, err := Build(&Spec{Geometry: g, NSpecies: 1,
					Layers:  []Layer{{Outer: aSize, D: []float64{dEff}, Capacity: []float64{capacity}}},
					OuterBC: []Boundary{{Kind: Film, H: h, Value: constant(bulk), Partition: kp}}})
				if err != nil {
					t.Fatal(err)
				}
				scale := capacity * aSize * aSize / dEff
				ts := make([]float64, len(taus))
				for i, tau := range taus {
					ts[i] = tau * scale
				}
				res := integrate(t, d, ts, nil)
				an, err := analytic.NewFilm(analytic.Shape(g), biot)
				if err != nil {
					t.Fatal(err)
				}
				cinf := kp * bulk
				mInf := capacity * bodyVolume(g, aSize) * cinf
				for i, tau := range taus {
					want, _ := an.Uptake(tau)
					m, _ := d.Content(res.Y[i], 0)
					if e := relErr(m/mInf, want); e > 2e-4 {
						t.Errorf("τ=%g: uptake %.8g, exact %.8g, relative error %.2e", tau, m/mInf, want, e)
					}
					wantC, _ := an.Centre(tau)
					c, _ := d.Centre(ts[i], res.Y[i], 0)
					if e := math.Abs(c/cinf - wantC); e > 1e-3*math.Max(wantC, 0.1) {
						t.Errorf("τ=%g: centre %.8g, exact %.8g, error %.2e", tau, c/cinf, wantC, e)
					}
					wantS, _ := an.Surface(tau)
					s, _ := d.Surface(ts[i], res.Y[i], 0)
					if e := math.Abs(s/cinf - wantS); e > 1e-3*math.Max(wantS, 0.1) {
						t.Errorf("τ=%g: surface %.8g, exact %.8g, error %.2e", tau, s/cinf, wantS, e)
					}
					// Flux through the film from the surface value.
					j, _ := d.SurfaceFlux(ts[i], res.Y[i], 0)
					if e := math.Abs(j - h*(cinf-s)); e > 1e-12*h*cinf {
						t.Errorf("τ=%g: surface flux %g is not h(K·bulk − surface) = %g", tau, j, h*(cinf-s))
					}
				}
			})
		}
	}
}

// TestBath compares with the series for a well-stirred bath of limited
// volume (source: Crank (1975) §4.3.5, §5.3.4, §6.3.4, eq. 6.30 for the
// sphere, via package analytic) for α = 0.5, 2, 10, including the final
// equilibrium. α = bath volume / (K · capacity · body volume).
func TestBath(t *testing.T) {
	taus := []float64{1e-3, 0.01, 0.1, 0.5, 1, 6}
	const (
		capacity = 0.8
		kp       = 1.5
		start    = 2.0
	)
	for _, g := range shapes {
		for _, alpha := range []float64{0.5, 2, 10} {
			t.Run(fmt.Sprintf("%v/α=%g", g, alpha), func(t *testing.T) {
				vp := bodyVolume(g, aSize)
				d, err := Build(&Spec{Geometry: g, NSpecies: 1,
					Layers: []Layer{{Outer: aSize, D: []float64{dEff}, Capacity: []float64{capacity}}},
					OuterBC: []Boundary{{Kind: Bath, BathVolume: alpha * kp * capacity * vp,
						BathStart: start, Partition: kp}}})
				if err != nil {
					t.Fatal(err)
				}
				scale := capacity * aSize * aSize / dEff
				ts := make([]float64, len(taus))
				for i, tau := range taus {
					ts[i] = tau * scale
				}
				res := integrate(t, d, ts, nil)
				an, _ := analytic.NewBath(analytic.Shape(g), alpha)
				mInf := capacity * vp * kp * start * an.FinalBath() // held at equilibrium
				for i, tau := range taus {
					want, _ := an.Uptake(tau)
					m, _ := d.Content(res.Y[i], 0)
					if e := relErr(m/mInf, want); e > 2e-4 {
						t.Errorf("τ=%g: uptake %.8g, exact %.8g, relative error %.2e", tau, m/mInf, want, e)
					}
					wantB, _ := an.BathValue(tau)
					cb, _ := d.BathValue(res.Y[i], 0)
					if e := relErr(cb/start, wantB); e > 1e-4 {
						t.Errorf("τ=%g: bath %.8g, exact %.8g, relative error %.2e", tau, cb/start, wantB, e)
					}
				}
				// Final equilibrium: the bath keeps α/(1+α) of its value and
				// the body is at K times the bath value.
				last := len(taus) - 1
				cb, _ := d.BathValue(res.Y[last], 0)
				if e := relErr(cb/start, alpha/(1+alpha)); e > 1e-6 {
					t.Errorf("final bath %.10g, want α/(1+α) = %.10g", cb/start, alpha/(1+alpha))
				}
				c, _ := d.Centre(ts[last], res.Y[last], 0)
				if e := relErr(c, kp*cb); e > 1e-6 {
					t.Errorf("final centre %.10g, want K·bath = %.10g", c, kp*cb)
				}
			})
		}
	}
}

// TestReaction compares uptake with first-order consumption with
// Danckwerts' solution (source: Crank (1975) §14.2, via package analytic),
// and the steady state with the effectiveness factor (source: Aris (1975),
// from memory). Capacity 1 and the Thiele modulus φ = a√(k/D).
func TestReaction(t *testing.T) {
	taus := []float64{1e-3, 0.01, 0.1, 0.5, 12}
	const cs = 1.0
	for _, g := range shapes {
		for _, phi := range []float64{0.5, 2, 6} {
			t.Run(fmt.Sprintf("%v/φ=%g", g, phi), func(t *testing.T) {
				k := phi * phi * dEff / (aSize * aSize)
				d, err := Build(&Spec{Geometry: g, NSpecies: 1,
					Layers:  []Layer{{Outer: aSize, D: []float64{dEff}, Rate: [][]float64{{-k}}}},
					OuterBC: []Boundary{{Kind: Fixed, Value: constant(cs)}}})
				if err != nil {
					t.Fatal(err)
				}
				scale := aSize * aSize / dEff
				ts := make([]float64, len(taus))
				for i, tau := range taus {
					ts[i] = tau * scale
				}
				res := integrate(t, d, ts, nil)
				an, _ := analytic.NewReaction(analytic.Shape(g), phi)
				vp := bodyVolume(g, aSize)
				for i, tau := range taus {
					want, _ := an.Content(tau)
					m, _ := d.Content(res.Y[i], 0)
					if e := relErr(m/(vp*cs), want); e > 2e-4 {
						t.Errorf("τ=%g: content %.8g, exact %.8g, relative error %.2e", tau, m/(vp*cs), want, e)
					}
					wantA, _ := an.Absorbed(tau)
					absorbed := res.Q[i][QuadOuter] / (vp * cs)
					if e := relErr(absorbed, wantA); e > 2e-4 {
						t.Errorf("τ=%g: absorbed %.8g, exact %.8g, relative error %.2e", tau, absorbed, wantA, e)
					}
					wantX, _ := an.Consumed(tau)
					consumed := -res.Q[i][QuadProduced] / (vp * cs)
					if e := math.Abs(consumed - wantX); e > 2e-4*wantA {
						t.Errorf("τ=%g: consumed %.8g, exact %.8g", tau, consumed, wantX)
					}
				}
				// Steady state: content η·Vp·Cs and inflow φ²η·Vp·Cs·D/a².
				last := len(taus) - 1
				m, _ := d.Content(res.Y[last], 0)
				if e := relErr(m/(vp*cs), an.SteadyContent()); e > 2e-4 {
					t.Errorf("steady content %.8g, effectiveness factor %.8g", m/(vp*cs), an.SteadyContent())
				}
				j, _ := d.SurfaceFlux(ts[last], res.Y[last], 0)
				rate := j * d.Grid.Areas[d.Cells()] / (vp * cs * dEff / (aSize * aSize))
				if e := relErr(rate, an.SteadyRate()); e > 2e-4 {
					t.Errorf("steady uptake rate %.8g, exact φ²η = %.8g", rate, an.SteadyRate())
				}
			})
		}
	}
}

// TestConstantFlux compares with the series and short-time forms for a
// constant imposed flux (source: Carslaw & Jaeger (1959) §3.3, §9.3, via
// package analytic) for slab and sphere; the amount taken up must be
// exactly F·A·t.
func TestConstantFlux(t *testing.T) {
	taus := []float64{1e-3, 0.01, 0.1, 0.5, 1}
	const (
		flux = 2e-8 // mol/(m²·s)
		c0   = 0.3
	)
	for _, g := range []Geometry{Slab, Sphere} {
		t.Run(g.String(), func(t *testing.T) {
			d, err := Build(&Spec{Geometry: g, NSpecies: 1,
				Layers:  []Layer{{Outer: aSize, D: []float64{dEff}}},
				OuterBC: []Boundary{{Kind: Flux, Value: constant(flux)}},
				Init:    func(int, float64) float64 { return c0 }})
			if err != nil {
				t.Fatal(err)
			}
			scale := aSize * aSize / dEff
			ts := make([]float64, len(taus))
			for i, tau := range taus {
				ts[i] = tau * scale
			}
			res := integrate(t, d, ts, nil)
			an, _ := analytic.NewFlux(analytic.Shape(g))
			unit := flux * aSize / dEff
			area := d.Grid.Areas[d.Cells()]
			m0, _ := d.Content(d.Y0(), 0)
			for i, tau := range taus {
				m, _ := d.Content(res.Y[i], 0)
				if e := relErr(m-m0, flux*area*ts[i]); e > 1e-7 {
					t.Errorf("τ=%g: uptake %g, want F·A·t = %g", tau, m-m0, flux*area*ts[i])
				}
				wantS, _ := an.Surface(tau)
				s, _ := d.Surface(ts[i], res.Y[i], 0)
				if e := relErr((s-c0)/unit, wantS); e > 1e-3 {
					t.Errorf("τ=%g: surface %.8g, exact %.8g, relative error %.2e", tau, (s-c0)/unit, wantS, e)
				}
				wantC, _ := an.Centre(tau)
				c, _ := d.Centre(ts[i], res.Y[i], 0)
				if e := math.Abs((c-c0)/unit - wantC); e > 1e-3*math.Max(math.Abs(wantC), 0.1) {
					t.Errorf("τ=%g: centre %.8g, exact %.8g, error %.2e", tau, (c-c0)/unit, wantC, e)
				}
			}
		})
	}
}
