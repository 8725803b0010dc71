package analytic

import (
	"fmt"
	"math"
)

// Flux is a body initially at a uniform value C0 into whose surface a
// constant flux F (amount per area per time) is imposed from t = 0:
//
//	∂C/∂t = D r^−ν ∂/∂r(r^ν ∂C/∂r),  ∂C/∂r = 0 at r = 0,
//	D ∂C/∂r = F at r = a,  C = C0 at t = 0.
//
// Values are returned as (C − C0)/(F a / D) at Fourier number τ = D t / a².
// The amount taken up is exactly (ν+1)τ in units of Vp F a / D, where Vp is
// the body's volume. Slab (half-thickness a, both faces fed) and sphere
// are provided.
type Flux struct {
	shape Shape
	fam   *family
}

var (
	slabNeumann = &family{root: func(n int) (float64, error) { return float64(n) * math.Pi, nil }}
	// tan β = β; the n-th positive root lies in (nπ, (n+½)π).
	sphereNeumann = &family{root: func(n int) (float64, error) {
		g := func(b float64) (float64, float64) {
			sn, cs := math.Sincos(b)
			return sn - b*cs, b * sn
		}
		return bracketRoot(g, float64(n)*math.Pi, (float64(n)+0.5)*math.Pi, 0)
	}}
)

// NewFlux returns the constant-flux problem for a slab or a sphere.
func NewFlux(s Shape) (*Flux, error) {
	switch s {
	case Slab:
		return &Flux{shape: s, fam: slabNeumann}, nil
	case Sphere:
		return &Flux{shape: s, fam: sphereNeumann}, nil
	}
	if err := checkShape(s); err != nil {
		return nil, err
	}
	return nil, fmt.Errorf("analytic: constant flux is provided for slab and sphere, not %v", s)
}

// sphereFluxShort is the Fourier number below which the sphere's surface
// value is computed from its short-time form; the neglected terms are of
// order exp(−1/τ) < 1e-21.
const sphereFluxShort = 0.02

// Surface returns (C(a,t) − C0)/(F a/D) at Fourier number tau.
//
// Slab (source: H. S. Carslaw & J. C. Jaeger, Conduction of Heat in
// Solids, 2nd ed. (1959), ch. III, slab with a constant flux at its faces,
// from memory; the series is re-derived in doc.go):
//
//	τ + 1/3 − (2/π²) Σ exp(−n²π²τ)/n²             (τ ≥ ShortTime)
//	2√τ [π^−½ + 2 Σ_{n≥1} ierfc(n/√τ)]             (τ < ShortTime, images)
//
// Sphere (source: Carslaw & Jaeger (1959) ch. IX, sphere with a constant
// surface flux, from memory; the coefficients re-derived in doc.go):
//
//	3τ + 1/5 − Σ 2 exp(−β²τ)/β²,  tan β = β          (τ ≥ 0.02)
//	e^τ (1 + erf √τ) − 1                            (τ < 0.02)
//
// the latter from the Laplace transform 1/(s(√s coth √s − 1)) with
// coth √s replaced by 1 (derivation in doc.go).
func (f *Flux) Surface(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	if tau == 0 {
		return 0, nil
	}
	if f.shape == Slab {
		if tau < ShortTime {
			rt := math.Sqrt(tau)
			s := 0.0
			for n := 1; n < 50; n++ {
				t := ierfc(float64(n) / rt)
				s += t
				if t < 1e-300 {
					break
				}
			}
			return 2 * rt * (1/math.SqrtPi + 2*s), nil
		}
		s, err := f.fam.sum(tau, func(b float64) float64 { return 2 / (b * b) })
		if err != nil {
			return math.NaN(), err
		}
		return tau + 1.0/3 - s, nil
	}
	if tau < sphereFluxShort {
		return math.Exp(tau)*(1+math.Erf(math.Sqrt(tau))) - 1, nil
	}
	s, err := f.fam.sum(tau, func(b float64) float64 { return 2 / (b * b) })
	if err != nil {
		return math.NaN(), err
	}
	return 3*tau + 0.2 - s, nil
}

// Centre returns (C(0,t) − C0)/(F a/D) at Fourier number tau.
//
// Slab: τ − 1/6 − (2/π²) Σ (−1)^n exp(−n²π²τ)/n² for τ ≥ ShortTime and
// 4√τ Σ_{n≥0} ierfc((2n+1)/(2√τ)) below (same sources as Surface).
// Sphere: 3τ − 3/10 − Σ 2 exp(−β²τ)/(β sin β), tan β = β.
func (f *Flux) Centre(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	if tau == 0 {
		return 0, nil
	}
	if f.shape == Slab {
		if tau < ShortTime {
			rt := math.Sqrt(tau)
			s := 0.0
			for n := 0; n < 50; n++ {
				t := ierfc(float64(2*n+1) / (2 * rt))
				s += t
				if t < 1e-300 {
					break
				}
			}
			return 4 * rt * s, nil
		}
		s, err := f.fam.sum(tau, func(b float64) float64 { return 2 * math.Cos(b) / (b * b) })
		if err != nil {
			return math.NaN(), err
		}
		return tau - 1.0/6 - s, nil
	}
	if tau < 1e-3 {
		// The value is below 1e-100: exp(−1/(4τ)) times powers of τ.
		return 0, nil
	}
	s, err := f.fam.sum(tau, func(b float64) float64 { return 2 / (b * math.Sin(b)) })
	if err != nil {
		return math.NaN(), err
	}
	return 3*tau - 0.3 - s, nil
}

// Uptake returns the amount taken up in units of Vp·F·a/D, (ν+1)τ.
func (f *Flux) Uptake(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	return (f.shape.nu() + 1) * tau, nil
}
