package analytic

import (
	"math"
	"testing"
)

// integralI returns Iν(x) (ν = 0, 1) from the integral representation
// Iν(x) = (1/π) ∫0^π exp(x cos θ) cos(νθ) dθ (source: Abramowitz & Stegun
// (1964), eq. 9.6.19, from memory), by the trapezoidal rule, which
// converges geometrically for this periodic integrand. The result is scaled
// by exp(−x) to stay finite.
func integralI(nu int, x float64) float64 {
	const m = 4000
	s := 0.0
	for k := 0; k <= m; k++ {
		th := math.Pi * float64(k) / m
		w := 1.0
		if k == 0 || k == m {
			w = 0.5
		}
		s += w * math.Exp(x*(math.Cos(th)-1)) * math.Cos(float64(nu)*th)
	}
	return s / m
}

func TestBesselIAgainstIntegral(t *testing.T) {
	for _, x := range []float64{1e-8, 0.1, 0.5, 1, 2.5, 7, 15, 19.99, 20.01, 25, 50, 120, 400} {
		for nu, f := range []func(float64) float64{BesselI0e, BesselI1e} {
			got, want := f(x), integralI(nu, x)
			// The trapezoidal sum carries round-off of about 1e-16 times
			// its largest term (of order one).
			if e := math.Abs(got - want); e > 2e-14*want+1e-15 {
				t.Errorf("I%d(%g)·e^-x = %.17g, integral %.17g (error %.1e)", nu, x, got, want, e)
			}
		}
	}
}

// TestBesselIAsymptoticMatchesSeries compares the two branches where both
// are accurate: the asymptotic expansion against the power series, which
// is summed here beyond its switch point.
func TestBesselIAsymptoticMatchesSeries(t *testing.T) {
	for _, x := range []float64{20, 22, 26, 30, 40} {
		a0, s0 := i0eAsym(x), i0Series(x)*math.Exp(-x)
		a1, s1 := i1eAsym(x), i1Series(x)*math.Exp(-x)
		if math.Abs(a0-s0) > 4e-15*s0 || math.Abs(a1-s1) > 4e-15*s1 {
			t.Errorf("x=%g: asymptotic %.17g %.17g, series %.17g %.17g", x, a0, a1, s0, s1)
		}
	}
}

func TestBesselIValues(t *testing.T) {
	// source: Abramowitz & Stegun (1964), Table 9.8 (I0(1), I1(1)), from
	// memory.
	if e := math.Abs(BesselI0(1) - 1.2660658777520082); e > 2e-16 {
		t.Errorf("I0(1) = %.17g", BesselI0(1))
	}
	if e := math.Abs(BesselI1(1) - 0.5651591039924851); e > 2e-16 {
		t.Errorf("I1(1) = %.17g", BesselI1(1))
	}
	// Parity, scaling, special values.
	for _, x := range []float64{0.3, 4, 30} {
		if BesselI0(-x) != BesselI0(x) || BesselI1(-x) != -BesselI1(x) {
			t.Errorf("parity fails at %g", x)
		}
		if math.Abs(BesselI0e(x)*math.Exp(x)-BesselI0(x)) > 1e-15*BesselI0(x) {
			t.Errorf("I0e inconsistent at %g", x)
		}
		if math.Abs(BesselI1e(-x)+BesselI1e(x)) != 0 {
			t.Errorf("I1e parity at %g", x)
		}
	}
	if BesselI0(0) != 1 || BesselI1(0) != 0 {
		t.Error("I0(0) or I1(0) wrong")
	}
	if !math.IsNaN(BesselI0(math.NaN())) || !math.IsNaN(BesselI1e(math.NaN())) {
		t.Error("NaN not propagated")
	}
	if !math.IsInf(BesselI0(800), 1) || math.IsInf(BesselI0e(800), 0) {
		t.Error("overflow behaviour")
	}
	// Wronskian-like identity I0'(x) = I1(x) by central differences.
	for _, x := range []float64{0.5, 3, 12, 35} {
		h := 1e-5 * x
		d := (BesselI0(x+h) - BesselI0(x-h)) / (2 * h)
		if math.Abs(d-BesselI1(x)) > 1e-7*BesselI1(x) {
			t.Errorf("I0'(%g) = %.12g, I1 = %.12g", x, d, BesselI1(x))
		}
	}
}

func TestBesselJ0Zeros(t *testing.T) {
	// source: Abramowitz & Stegun (1964), Table 9.5, from memory.
	want := []float64{2.404825557695773, 5.520078110286311, 8.653727912911013, 11.79153443901428}
	z, err := BesselJ0Zeros(200)
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range want {
		if math.Abs(z[i]-w) > 1e-14*w {
			t.Errorf("zero %d: %.16g, table %.16g", i+1, z[i], w)
		}
	}
	for i, x := range z {
		if math.Abs(math.J0(x)) > 1e-15*x {
			t.Errorf("J0(%g) = %g", x, math.J0(x))
		}
		if i > 0 && !(x > z[i-1]+3) {
			t.Errorf("zeros %d and %d too close: %g %g", i, i+1, z[i-1], x)
		}
		// McMahon: j0_n ≈ (n − ¼)π + 1/(8(n − ¼)π).
		b := (float64(i+1) - 0.25) * math.Pi
		if math.Abs(x-(b+1/(8*b))) > 0.02/b {
			t.Errorf("zero %d = %g far from McMahon's %g", i+1, x, b+1/(8*b))
		}
	}
	if _, err := BesselJ0Zeros(-1); err == nil {
		t.Error("negative count accepted")
	}
}
