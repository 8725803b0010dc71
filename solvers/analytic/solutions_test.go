package analytic

import (
	"errors"
	"fmt"
	"math"
	"testing"
)

var allShapes = []Shape{Slab, Cylinder, Sphere}

// deriv returns the central difference of f at x with step h.
func deriv(t *testing.T, f func(float64) (float64, error), x, h float64) float64 {
	t.Helper()
	a, err1 := f(x + h)
	b, err2 := f(x - h)
	if err1 != nil || err2 != nil {
		t.Fatalf("evaluation failed: %v %v", err1, err2)
	}
	return (a - b) / (2 * h)
}

func mustEval(t *testing.T, f func(float64) (float64, error), x float64) float64 {
	t.Helper()
	v, err := f(x)
	if err != nil {
		t.Fatalf("at %g: %v", x, err)
	}
	return v
}

// TestFixedSurfaceHalfTimes checks the times at which half the final
// uptake is reached: Dt/L² = 0.049 for a sheet of full thickness L = 2a
// (the form used to read diffusivities off sorption curves), and
// Dt/a² = 0.063 (cylinder) and 0.030 (sphere) with a the radius (source:
// J. Crank, The Mathematics of Diffusion, 2nd ed. (1975), §4.3.1, §5.3.1,
// §6.3.1, quoted to two figures, from memory).
func TestFixedSurfaceHalfTimes(t *testing.T) {
	half := map[Shape]float64{Slab: 0.049, Cylinder: 0.063, Sphere: 0.030}
	for _, s := range allShapes {
		p, _ := NewFixedSurface(s)
		// Bisection for Mt/M∞ = 1/2.
		lo, hi := 1e-3, 1.0
		for range 100 {
			m := 0.5 * (lo + hi)
			if mustEval(t, p.Uptake, m) < 0.5 {
				lo = m
			} else {
				hi = m
			}
		}
		if s == Slab {
			lo /= 4 // Dt/(2a)²
		}
		if math.Abs(lo-half[s]) > 0.0006 {
			t.Errorf("%v: half-time τ = %.5f, published %.3f", s, lo, half[s])
		}
	}
}

// TestFixedSurfaceForms checks that the short-time forms and the series
// agree where both converge (they are computed independently), and the
// limits: 2(ν+1)√(τ/π) at small τ, 1 at large τ, centre 0 early and 1 late.
func TestFixedSurfaceForms(t *testing.T) {
	for _, s := range allShapes {
		p, _ := NewFixedSurface(s)
		for _, tau := range []float64{3e-4, 1e-3, 0.01, 0.05, 0.09, 0.11, 0.2} {
			series, err := p.fam.sum(tau, p.meanCoef)
			if err != nil {
				t.Fatal(err)
			}
			got := mustEval(t, p.Uptake, tau)
			if math.Abs(got-(1-series)) > 2e-15 {
				t.Errorf("%v τ=%g: uptake %.17g, series %.17g", s, tau, got, 1-series)
			}
		}
		if s != Cylinder {
			for _, tau := range []float64{0.01, 0.05, 0.2} {
				var c func(float64) float64
				if s == Slab {
					c = func(b float64) float64 { return 2 * math.Sin(b) / b }
				} else {
					c = func(b float64) float64 { return -2 * math.Cos(b) }
				}
				series, _ := p.fam.sum(tau, c)
				got := mustEval(t, p.Centre, tau)
				if math.Abs(got-(1-series)) > 2e-15 {
					t.Errorf("%v τ=%g: centre %.17g, series %.17g", s, tau, got, 1-series)
				}
			}
		}
		nu := s.nu()
		for _, tau := range []float64{1e-10, 1e-8} {
			lead := 2 * (nu + 1) * math.Sqrt(tau/math.Pi)
			if got := mustEval(t, p.Uptake, tau); math.Abs(got/lead-1) > 3*math.Sqrt(tau) {
				t.Errorf("%v τ=%g: uptake %g, leading term %g", s, tau, got, lead)
			}
		}
		if got := mustEval(t, p.Uptake, 20); math.Abs(got-1) > 1e-15 {
			t.Errorf("%v: uptake at τ = 20 is %.17g", s, got)
		}
		if got := mustEval(t, p.Centre, 20); math.Abs(got-1) > 1e-15 {
			t.Errorf("%v: centre at τ = 20 is %.17g", s, got)
		}
		if got := mustEval(t, p.Centre, 1e-3); got > 1e-100 {
			t.Errorf("%v: centre at τ = 1e-3 is %g", s, got)
		}
		// Monotone increase.
		prev := 0.0
		for tau := 1e-5; tau < 3; tau *= 1.3 {
			u := mustEval(t, p.Uptake, tau)
			if !(u > prev) || u > 1 {
				t.Errorf("%v: uptake not increasing in (0, 1] at τ=%g: %g after %g", s, tau, u, prev)
			}
			prev = u
		}
		// Decay rate at long times: −d ln(1 − U)/dτ → β1².
		b, _ := p.Eigenvalues(1)
		r := -deriv(t, func(x float64) (float64, error) {
			u, err := p.Uptake(x)
			return math.Log(1 - u), err
		}, 1.5, 1e-4)
		if math.Abs(r-b[0]*b[0]) > 1e-6*b[0]*b[0] {
			t.Errorf("%v: late decay rate %.10g, β1² = %.10g", s, r, b[0]*b[0])
		}
	}
}

// TestFilm checks the film solutions: the flux balance dU/dτ = (ν+1)L(1−S)
// between uptake U and surface value S (the two are summed from different
// coefficients), the small-τ slope (ν+1)L, the large-L limit (fixed
// surface), the lumped limit at small L, and the eigenvalue conditions.
func TestFilm(t *testing.T) {
	for _, s := range allShapes {
		fixed, _ := NewFixedSurface(s)
		nu := s.nu()
		for _, L := range []float64{0.01, 0.1, 1, 10, 100} {
			t.Run(fmt.Sprintf("%v/L=%g", s, L), func(t *testing.T) {
				f, err := NewFilm(s, L)
				if err != nil {
					t.Fatal(err)
				}
				for _, tau := range []float64{0.003, 0.03, 0.3, 1} {
					dU := deriv(t, f.Uptake, tau, 1e-5*tau)
					S := mustEval(t, f.Surface, tau)
					if e := math.Abs(dU - (nu+1)*L*(1-S)); e > 1e-6*math.Max(dU, 1e-3) {
						t.Errorf("τ=%g: dU/dτ = %.10g, (ν+1)L(1−S) = %.10g", tau, dU, (nu+1)*L*(1-S))
					}
					c := mustEval(t, f.Centre, tau)
					u := mustEval(t, f.Uptake, tau)
					if !(c <= u+1e-15 && u <= S+1e-15) {
						t.Errorf("τ=%g: want centre ≤ mean ≤ surface, got %g %g %g", tau, c, u, S)
					}
				}
				// Initial slope; the next term is of relative order L√τ, and
				// the series carries an absolute round-off of about 1e-13.
				tau := 1e-6
				lin := (nu + 1) * L * tau
				if u := mustEval(t, f.Uptake, tau); math.Abs(u-lin) > 2*L*math.Sqrt(tau)*lin+1e-13 {
					t.Errorf("initial slope: U(%g)/((ν+1)Lτ) = %g", tau, u/((nu+1)*L*tau))
				}
				b, _ := f.Eigenvalues(50)
				for i, x := range b {
					var r float64
					switch s {
					case Slab:
						r = x*math.Tan(x) - L
					case Cylinder:
						r = x*math.J1(x) - L*math.J0(x)
					default:
						r = x*math.Cos(x)/math.Sin(x) - (1 - L)
					}
					if math.Abs(r) > 1e-10*(1+L) || (i > 0 && !(x > b[i-1])) {
						t.Errorf("root %d = %.17g: residual %g", i+1, x, r)
					}
				}
				if L == 0.01 {
					// Lumped: nearly uniform inside, U ≈ 1 − exp(−(ν+1)Lτ).
					for _, tau := range []float64{1, 10, 50} {
						u := mustEval(t, f.Uptake, tau)
						lumped := 1 - math.Exp(-(nu+1)*L*tau)
						if math.Abs(u-lumped) > 0.01*lumped {
							t.Errorf("τ=%g: uptake %g, lumped %g", tau, u, lumped)
						}
					}
				}
			})
		}
		f, _ := NewFilm(s, 1e7)
		for _, tau := range []float64{0.01, 0.1, 1} {
			a, b := mustEval(t, f.Uptake, tau), mustEval(t, fixed.Uptake, tau)
			if math.Abs(a-b) > 1e-6 {
				t.Errorf("%v τ=%g: film with L=1e7 %g, fixed surface %g", s, tau, a, b)
			}
		}
	}
	// For L = 1 the sphere's eigenvalues are those of the slab with a fixed
	// surface, and the centre values coincide (u = rC maps one onto the
	// other).
	sph, _ := NewFilm(Sphere, 1)
	slab, _ := NewFixedSurface(Slab)
	for _, tau := range []float64{0.05, 0.2, 0.7} {
		a, b := mustEval(t, sph.Centre, tau), mustEval(t, slab.Centre, tau)
		if math.Abs(a-b) > 1e-14 {
			t.Errorf("τ=%g: sphere L=1 centre %.16g, slab fixed centre %.16g", tau, a, b)
		}
	}
}

// TestBath checks the limited-bath solutions: the coefficients sum to one
// (uptake → 0 as τ → 0, at the rate of an unlimited bath), α → ∞ gives the
// fixed surface, the bath and the body share the solute, and the roots.
func TestBath(t *testing.T) {
	for _, s := range allShapes {
		fixed, _ := NewFixedSurface(s)
		nu := s.nu()
		for _, alpha := range []float64{0.1, 0.5, 2, 10} {
			b, err := NewBath(s, alpha)
			if err != nil {
				t.Fatal(err)
			}
			tau := 1e-8
			lead := 2 * (nu + 1) * math.Sqrt(tau/math.Pi) * (1 + alpha) / alpha
			if u := mustEval(t, b.Uptake, tau); math.Abs(u/lead-1) > 5e-3 {
				t.Errorf("%v α=%g: U(%g) = %g, leading term %g", s, alpha, tau, u, lead)
			}
			if u := mustEval(t, b.Uptake, 30); math.Abs(u-1) > 1e-14 {
				t.Errorf("%v α=%g: U(30) = %.17g", s, alpha, u)
			}
			if math.Abs(b.FinalUptake()+b.FinalBath()-1) > 1e-15 {
				t.Errorf("%v α=%g: final fractions do not add up", s, alpha)
			}
			for _, tau := range []float64{0.01, 0.1} {
				u := mustEval(t, b.Uptake, tau)
				cb := mustEval(t, b.BathValue, tau)
				// Solute lost by the bath = solute gained by the bodies.
				if math.Abs((1-cb)-u*b.FinalUptake()) > 1e-15 {
					t.Errorf("%v α=%g τ=%g: bath loses %g, bodies gain %g", s, alpha, tau, 1-cb, u*b.FinalUptake())
				}
				// A limited bath drives a faster approach to its (lower)
				// equilibrium than an unlimited one.
				if uf := mustEval(t, fixed.Uptake, tau); !(u > uf) {
					t.Errorf("%v α=%g τ=%g: limited bath %g not ahead of fixed surface %g", s, alpha, tau, u, uf)
				}
			}
			q, _ := b.Eigenvalues(40)
			for i, x := range q {
				var r float64
				switch s {
				case Slab:
					r = math.Sin(x) + alpha*x*math.Cos(x)
				case Cylinder:
					r = alpha*x*math.J0(x) + 2*math.J1(x)
				default:
					r = (3+alpha*x*x)*math.Sin(x) - 3*x*math.Cos(x)
				}
				if math.Abs(r) > 1e-12*(1+alpha*x*x) || (i > 0 && !(x > q[i-1])) {
					t.Errorf("%v α=%g: root %d = %.17g, residual %g", s, alpha, i+1, x, r)
				}
			}
		}
		b, _ := NewBath(s, 1e8)
		for _, tau := range []float64{0.01, 0.1, 1} {
			a, c := mustEval(t, b.Uptake, tau), mustEval(t, fixed.Uptake, tau)
			if math.Abs(a-c) > 1e-7 {
				t.Errorf("%v τ=%g: bath α=1e8 %g, fixed surface %g", s, tau, a, c)
			}
		}
	}
	// Crank's Table 6.1-style check by an independent route: the sphere in
	// a bath with α = 4 takes up half its final amount a little earlier
	// than with a fixed surface (source: Crank (1975) §6.3.4, fig. 6.4,
	// qualitative, from memory).
	b, _ := NewBath(Sphere, 4)
	if u := mustEval(t, b.Uptake, 0.030); !(u > 0.5) {
		t.Errorf("α = 4 sphere at τ = 0.030: uptake %g, want > 0.5", u)
	}
}

// TestReaction checks Danckwerts' solution: the balance
// d(consumed)/dτ = φ²·content, d(absorbed)/dτ → φ²η, content → η,
// φ → 0 gives the fixed surface, and the closed-form −dη/d(φ²) against a
// difference quotient of η.
func TestReaction(t *testing.T) {
	for _, s := range allShapes {
		fixed, _ := NewFixedSurface(s)
		for _, phi := range []float64{0, 1e-4, 0.3, 1, 2.5, 3, 5, 20} {
			t.Run(fmt.Sprintf("%v/φ=%g", s, phi), func(t *testing.T) {
				r, err := NewReaction(s, phi)
				if err != nil {
					t.Fatal(err)
				}
				p2 := phi * phi
				for _, tau := range []float64{0.005, 0.05, 0.5} {
					h := 1e-5 * tau
					dc := deriv(t, r.Consumed, tau, h)
					c := mustEval(t, r.Content, tau)
					// The consumed amount is absorbed − content, whose
					// round-off (≈1e-16) the difference quotient magnifies.
					if math.Abs(dc-p2*c) > 1e-6*p2*c+1e-14/h {
						t.Errorf("τ=%g: d(consumed)/dτ = %.10g, φ²·content = %.10g", tau, dc, p2*c)
					}
					if phi == 0 {
						a, b := mustEval(t, r.Absorbed, tau), mustEval(t, fixed.Uptake, tau)
						if math.Abs(a-b) > 1e-14 {
							t.Errorf("τ=%g: no reaction: absorbed %.16g, fixed surface %.16g", tau, a, b)
						}
					}
				}
				b1, _ := fixed.Eigenvalues(1)
				late := 40 / (b1[0]*b1[0] + p2) // well past the slowest transient
				if c := mustEval(t, r.Content, late); math.Abs(c-r.SteadyContent()) > 1e-13 {
					t.Errorf("content at τ=%g is %.16g, steady %.16g", late, c, r.SteadyContent())
				}
				if d := deriv(t, r.Absorbed, late, 1e-4*late); math.Abs(d-r.SteadyRate()) > 1e-7*math.Max(r.SteadyRate(), 1e-3) {
					t.Errorf("late absorption rate %.10g, φ²η = %.10g", d, r.SteadyRate())
				}
				if phi < 0.1 {
					k0 := map[Shape]float64{Slab: 1.0 / 3, Cylinder: 1.0 / 8, Sphere: 1.0 / 15}[s]
					if math.Abs(r.kap-k0) > p2 {
						t.Errorf("−dη/dφ² = %.12g, limit %.12g", r.kap, k0)
					}
				} else {
					h := 1e-4 * p2
					ep, _ := Effectiveness(s, math.Sqrt(p2+h))
					em, _ := Effectiveness(s, math.Sqrt(p2-h))
					fd := -(ep - em) / (2 * h)
					if math.Abs(fd-r.kap) > 1e-7*r.kap {
						t.Errorf("−dη/dφ² = %.12g, difference quotient %.12g", r.kap, fd)
					}
				}
			})
		}
	}
}

func TestEffectiveness(t *testing.T) {
	nu := map[Shape]float64{Slab: 0, Cylinder: 1, Sphere: 2}
	small := map[Shape]float64{Slab: 1.0 / 3, Cylinder: 1.0 / 8, Sphere: 1.0 / 15}
	for _, s := range allShapes {
		// Small φ: η ≈ 1 − φ²·c (c = 1/3, 1/8, 1/15); large φ: η ≈ (ν+1)/φ
		// (source: Aris (1975), ch. 3, asymptotes, from memory).
		for _, phi := range []float64{1e-3, 1e-2} {
			eta, _ := Effectiveness(s, phi)
			if math.Abs((1-eta)/(phi*phi)-small[s]) > 0.01*small[s] {
				t.Errorf("%v φ=%g: (1−η)/φ² = %g, want %g", s, phi, (1-eta)/(phi*phi), small[s])
			}
		}
		for _, phi := range []float64{200, 1e4} {
			eta, _ := Effectiveness(s, phi)
			if math.Abs(eta*phi/(nu[s]+1)-1) > 1.5/phi {
				t.Errorf("%v φ=%g: ηφ = %g, want %g", s, phi, eta*phi, nu[s]+1)
			}
		}
		// The power series used for small φ against the closed forms where
		// the latter lose little to cancellation.
		for _, phi := range []float64{1.5, 2, 2.5, 3, 4} {
			var eta, kap float64
			switch s {
			case Slab:
				eta = math.Tanh(phi) / phi
				c := math.Cosh(phi)
				kap = (math.Sinh(2*phi) - 2*phi) / (4 * phi * phi * phi * c * c)
			case Cylinder:
				R := BesselI1(phi) / BesselI0(phi)
				eta = 2 * R / phi
				kap = (2*R + phi*R*R - phi) / (phi * phi * phi)
			default:
				csch := 1 / math.Sinh(phi)
				eta = 3 * (phi/math.Tanh(phi) - 1) / (phi * phi)
				kap = 3 * (phi*phi*csch*csch + phi/math.Tanh(phi) - 2) / (2 * phi * phi * phi * phi)
			}
			got, _ := Effectiveness(s, phi)
			if math.Abs(got-eta) > 1e-14 {
				t.Errorf("%v φ=%g: η %.17g, closed form %.17g", s, phi, got, eta)
			}
			if k := etaSlope(s, phi); math.Abs(k-kap) > 1e-13*kap {
				t.Errorf("%v φ=%g: −dη/dφ² %.17g, closed form %.17g", s, phi, k, kap)
			}
		}
		// η = Σ 2(ν+1)/(β_n² + φ²) (the series that Danckwerts' content
		// approaches), summed with many terms and a tail estimate.
		fam := dirichletFamily(s)
		roots, _ := fam.first(20000)
		for _, phi := range []float64{0.5, 2, 7} {
			sum := 0.0
			for i := len(roots) - 1; i >= 0; i-- {
				sum += 2 * (nu[s] + 1) / (roots[i]*roots[i] + phi*phi)
			}
			// Tail: roots spaced by π, so Σ_{n>N} 2(ν+1)/β² ≈ 2(ν+1)/(π β_N).
			sum += 2 * (nu[s] + 1) / (math.Pi * roots[len(roots)-1])
			eta, _ := Effectiveness(s, phi)
			if math.Abs(sum-eta) > 1e-8 {
				t.Errorf("%v φ=%g: Σ 2(ν+1)/(β²+φ²) = %.12g, η = %.12g", s, phi, sum, eta)
			}
		}
	}
	// Closed forms at φ = 1 (source: the formulas above with tanh 1,
	// coth 1 and I1(1)/I0(1) from Abramowitz & Stegun tables, from memory).
	for _, c := range []struct {
		s    Shape
		want float64
	}{{Slab, 0.7615941559557649}, {Sphere, 3 * (1.3130352854993312 - 1)}, {Cylinder, 2 * 0.5651591039924851 / 1.2660658777520082}} {
		if eta, _ := Effectiveness(c.s, 1); math.Abs(eta-c.want) > 1e-15 {
			t.Errorf("%v: η(1) = %.17g, want %.17g", c.s, eta, c.want)
		}
	}
}

// TestFlux checks the constant-flux solutions: short-time and series forms
// agree where both converge, the surface value starts as 2√(τ/π) (a
// semi-infinite medium), and grows at the rate (ν+1) per unit τ late on.
func TestFlux(t *testing.T) {
	for _, s := range []Shape{Slab, Sphere} {
		f, err := NewFlux(s)
		if err != nil {
			t.Fatal(err)
		}
		nu := s.nu()
		for _, tau := range []float64{0.005, 0.015, 0.03, 0.08} {
			var series float64
			if s == Slab {
				x, _ := f.fam.sum(tau, func(b float64) float64 { return 2 / (b * b) })
				series = tau + 1.0/3 - x
			} else {
				x, _ := f.fam.sum(tau, func(b float64) float64 { return 2 / (b * b) })
				series = 3*tau + 0.2 - x
			}
			if got := mustEval(t, f.Surface, tau); math.Abs(got-series) > 1e-14 {
				t.Errorf("%v τ=%g: short-time surface %.16g, series %.16g", s, tau, got, series)
			}
		}
		if s == Slab {
			for _, tau := range []float64{0.01, 0.05} {
				x, _ := f.fam.sum(tau, func(b float64) float64 { return 2 * math.Cos(b) / (b * b) })
				if got := mustEval(t, f.Centre, tau); math.Abs(got-(tau-1.0/6-x)) > 1e-14 {
					t.Errorf("slab τ=%g: short-time centre %.16g, series %.16g", tau, got, tau-1.0/6-x)
				}
			}
		}
		tau := 1e-8
		if v := mustEval(t, f.Surface, tau); math.Abs(v/(2*math.Sqrt(tau/math.Pi))-1) > 1e-3 {
			t.Errorf("%v: surface at τ=1e-8 is %g", s, v)
		}
		for _, tau := range []float64{2, 3} {
			ds := deriv(t, f.Surface, tau, 1e-3)
			dc := deriv(t, f.Centre, tau, 1e-3)
			if math.Abs(ds-(nu+1)) > 1e-8 || math.Abs(dc-(nu+1)) > 1e-8 {
				t.Errorf("%v τ=%g: surface and centre rise at %g, %g; want %g", s, tau, ds, dc, nu+1)
			}
		}
		if u := mustEval(t, f.Uptake, 0.7); u != (nu+1)*0.7 {
			t.Errorf("%v: uptake %g", s, u)
		}
	}
	if _, err := NewFlux(Cylinder); err == nil {
		t.Error("cylinder flux accepted")
	}
}

func TestShell(t *testing.T) {
	for _, s := range allShapes {
		sh, err := NewShell(s, 2e-9, 0.3e-3, 1e-3, 5, 1)
		if err != nil {
			t.Fatal(err)
		}
		// Rate = −D·A(r)·dC/dr at any radius (steady: the same everywhere).
		for _, r := range []float64{0.35e-3, 0.6e-3, 0.95e-3} {
			h := 1e-9
			dc := deriv(t, sh.Value, r, h)
			A := 1.0
			switch s {
			case Cylinder:
				A = 2 * math.Pi * r
			case Sphere:
				A = 4 * math.Pi * r * r
			}
			if rate := -2e-9 * A * dc; math.Abs(rate-sh.Rate()) > 1e-6*sh.Rate() {
				t.Errorf("%v r=%g: −DA dC/dr = %g, Rate %g", s, r, rate, sh.Rate())
			}
		}
		if v := mustEval(t, sh.Value, 0.3e-3); v != 5 {
			t.Errorf("%v: inner value %g", s, v)
		}
		if v := mustEval(t, sh.Value, 1e-3); math.Abs(v-1) > 1e-15 {
			t.Errorf("%v: outer value %g", s, v)
		}
		if _, err := sh.Value(2e-3); err == nil {
			t.Errorf("%v: value outside the wall accepted", s)
		}
	}
}

func TestBadInput(t *testing.T) {
	nan := math.NaN()
	f, _ := NewFilm(Sphere, 1)
	fs, _ := NewFixedSurface(Slab)
	b, _ := NewBath(Cylinder, 1)
	r, _ := NewReaction(Sphere, 1)
	fl, _ := NewFlux(Slab)
	errs := map[string]error{}
	add := func(name string, err error) { errs[name] = err }
	_, err := NewFixedSurface(Shape(5))
	add("unknown shape", err)
	_, err = NewFilm(Slab, 0)
	add("zero Biot", err)
	_, err = NewFilm(Slab, nan)
	add("NaN Biot", err)
	_, err = NewBath(Sphere, -1)
	add("negative α", err)
	_, err = NewBath(Sphere, math.Inf(1))
	add("infinite α", err)
	_, err = NewReaction(Slab, -1)
	add("negative Thiele", err)
	_, err = Effectiveness(Slab, nan)
	add("NaN Thiele", err)
	_, err = Effectiveness(Shape(-1), 1)
	add("effectiveness shape", err)
	_, err = NewShell(Sphere, 1, 0, 1, 0, 0)
	add("solid shell", err)
	_, err = NewShell(Cylinder, 1, 2, 1, 0, 0)
	add("inner > outer", err)
	_, err = NewShell(Slab, -1, 0, 1, 0, 0)
	add("negative D", err)
	_, err = NewShell(Slab, 1, 0, 1, nan, 0)
	add("NaN value", err)
	_, err = fs.Uptake(-1)
	add("negative τ", err)
	_, err = f.Centre(nan)
	add("NaN τ", err)
	_, err = b.Uptake(math.Inf(1))
	add("infinite τ", err)
	_, err = r.Absorbed(-0.1)
	add("reaction negative τ", err)
	_, err = fl.Surface(nan)
	add("flux NaN τ", err)
	_, err = f.Eigenvalues(-1)
	add("negative count", err)
	for name, err := range errs {
		if err == nil {
			t.Errorf("%s: no error", name)
		} else if len(err.Error()) < 10 || err.Error()[:10] != "analytic: " {
			t.Errorf("%s: error %q lacks the package prefix", name, err)
		}
	}
	// A Fourier number too small for the series is reported, not guessed.
	if _, err := f.Uptake(1e-14); !errors.Is(err, ErrFourierTooSmall) {
		t.Errorf("film at τ=1e-14: %v", err)
	}
	// Fixed-surface uptake has short-time forms and works at any τ.
	for _, s := range allShapes {
		p, _ := NewFixedSurface(s)
		if _, err := p.Uptake(1e-14); err != nil {
			t.Errorf("%v fixed surface at τ=1e-14: %v", s, err)
		}
	}
}

// TestConcurrentUse evaluates one problem from several goroutines (the
// eigenvalue cache grows under a lock) and compares with sequential
// results.
func TestConcurrentUse(t *testing.T) {
	taus := []float64{1e-6, 1e-4, 1e-2, 0.3}
	want := make([]float64, len(taus))
	ref, _ := NewFilm(Cylinder, 3)
	for i, tau := range taus {
		want[i] = mustEval(t, ref.Uptake, tau)
	}
	f, _ := NewFilm(Cylinder, 3)
	done := make(chan error, 8)
	for g := 0; g < 8; g++ {
		go func(g int) {
			for k := range taus {
				i := (k + g) % len(taus)
				v, err := f.Uptake(taus[i])
				if err != nil || v != want[i] {
					done <- fmt.Errorf("τ=%g: %v %v, want %v", taus[i], v, err, want[i])
					return
				}
			}
			done <- nil
		}(g)
	}
	for range 8 {
		if err := <-done; err != nil {
			t.Error(err)
		}
	}
}
