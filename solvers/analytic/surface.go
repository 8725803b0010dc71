package analytic

import (
	"math"
)

// ShortTime is the Fourier number below which the slab and sphere
// quantities of FixedSurface (and the slab quantities of Flux) are computed
// from their short-time (error-function) forms, and above which from the
// eigenfunction series. Both forms converge to full double precision with
// fewer than ten terms on either side of this switch.
const ShortTime = 0.1

// CylinderShortTime is the Fourier number below which the uptake of a
// cylinder with a fixed surface value is computed from its small-time
// asymptotic expansion (twelve terms; truncation error below 1e-14) rather
// than the Bessel-zero series.
const CylinderShortTime = 1e-3

// FixedSurface is uptake by a body initially at a uniform value C0 whose
// surface is held at Cs from t = 0:
//
//	∂C/∂t = D r^−ν ∂/∂r(r^ν ∂C/∂r), 0 < r < a,
//	∂C/∂r = 0 at r = 0, C = Cs at r = a, C = C0 at t = 0,
//
// with ν = 0, 1, 2 for slab, cylinder, sphere. All results are functions of
// the Fourier number τ = D t / a².
type FixedSurface struct {
	shape Shape
	fam   *family
}

var (
	slabDirichlet   = &family{root: func(n int) (float64, error) { return (float64(n) - 0.5) * math.Pi, nil }}
	sphereDirichlet = &family{root: func(n int) (float64, error) { return float64(n) * math.Pi, nil }}
	cylDirichlet    = &family{root: func(n int) (float64, error) { return besselZeroCached(0, n) }}
)

// dirichletFamily returns the eigenvalues of the fixed-surface problem:
// (n−½)π for the slab, the zeros of J0 for the cylinder, nπ for the sphere.
func dirichletFamily(s Shape) *family {
	switch s {
	case Slab:
		return slabDirichlet
	case Cylinder:
		return cylDirichlet
	}
	return sphereDirichlet
}

// NewFixedSurface returns the fixed-surface problem for shape s.
func NewFixedSurface(s Shape) (*FixedSurface, error) {
	if err := checkShape(s); err != nil {
		return nil, err
	}
	return &FixedSurface{shape: s, fam: dirichletFamily(s)}, nil
}

// Eigenvalues returns the first n eigenvalues β_n (the decay rates are
// β_n² in units of D/a²).
func (p *FixedSurface) Eigenvalues(n int) ([]float64, error) {
	if n < 0 {
		return nil, errNegativeCount(n)
	}
	r, err := p.fam.first(n)
	return append([]float64(nil), r...), err
}

// meanCoef is the weight of mode β in the mean of the remaining fraction,
// 2(ν+1)/β² (source: J. Crank, The Mathematics of Diffusion, 2nd ed.
// (1975), eq. 4.18 (slab), §5.3.1 (cylinder), eq. 6.20 (sphere); numbers
// from memory).
func (p *FixedSurface) meanCoef(b float64) float64 {
	return 2 * (p.shape.nu() + 1) / (b * b)
}

// Uptake returns Mt/M∞, the amount taken up by time t divided by the
// amount at equilibrium, at Fourier number tau.
//
// For τ ≥ ShortTime (slab, sphere) or τ ≥ CylinderShortTime (cylinder) the
// eigenfunction series 1 − Σ 2(ν+1)/β² exp(−β²τ) is used (source: Crank
// (1975) eq. 4.18, §5.3.1, eq. 6.20, from memory). Below, the short-time
// forms
//
//	slab:     2√τ [π^−½ + 2 Σ_{n≥1} (−1)^n ierfc(n/√τ)]
//	sphere:   6√τ [π^−½ + 2 Σ_{n≥1} ierfc(n/√τ)] − 3τ
//
// (source: Crank (1975) eq. 4.17 and §6.3.1 (eqs. 6.19–6.21), numbers from
// memory), and for the cylinder the expansion
// Σ_k 2c_k τ^((k+1)/2) / Γ((k+3)/2), whose first three terms
// 4(τ/π)^½ − τ − τ^(3/2)/(3√π) agree with the short-time form in Crank
// (1975) §5.3.1 (from memory). The coefficients c_k are those of the
// large-argument expansion I1(z)/I0(z) ~ Σ c_k z^−k, generated from the
// Riccati equation R' = 1 − R/z − R² that R = I1/I0 satisfies, and the
// series follows term by term from the Laplace transform
// 2 I1(√s)/(s^(3/2) I0(√s)) of the uptake (derivation in doc.go).
func (p *FixedSurface) Uptake(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	if tau == 0 {
		return 0, nil
	}
	switch {
	case p.shape == Slab && tau < ShortTime:
		rt := math.Sqrt(tau)
		s := 0.0
		for n := 1; n < 50; n++ {
			t := ierfc(float64(n) / rt)
			if n%2 == 1 {
				t = -t
			}
			s += t
			if math.Abs(t) < 1e-300 {
				break
			}
		}
		return 2 * rt * (1/math.SqrtPi + 2*s), nil
	case p.shape == Sphere && tau < ShortTime:
		rt := math.Sqrt(tau)
		s := 0.0
		for n := 1; n < 50; n++ {
			t := ierfc(float64(n) / rt)
			s += t
			if t < 1e-300 {
				break
			}
		}
		return 6*rt*(1/math.SqrtPi+2*s) - 3*tau, nil
	case p.shape == Cylinder && tau < CylinderShortTime:
		return cylinderShortUptake(tau), nil
	}
	s, err := p.fam.sum(tau, p.meanCoef)
	if err != nil {
		return math.NaN(), err
	}
	return 1 - s, nil
}

// Centre returns (C(0,t) − C0)/(Cs − C0), the value at the centre, at
// Fourier number tau.
//
// Series (τ ≥ ShortTime, and the cylinder for every τ ≥ 1e-3):
//
//	slab:     1 − Σ 2(−1)^(n+1)/β_n exp(−β_n²τ), β_n = (n−½)π
//	cylinder: 1 − Σ 2/(β_n J1(β_n)) exp(−β_n²τ), J0(β_n) = 0
//	sphere:   1 − Σ 2(−1)^(n+1) exp(−n²π²τ)
//
// (source: Crank (1975) §4.3.1, §5.3.1, §6.3.1 at the centre, from
// memory).
// Short-time forms (τ < ShortTime):
//
//	slab:   2 Σ_{n≥0} (−1)^n erfc((2n+1)/(2√τ))
//	sphere: Σ_{n≥0} 2 (πτ)^−½ exp(−(2n+1)²/(4τ))
//
// (source: Crank (1975) §4.3.1 and §6.3.1, from memory; the sphere's as the limit
// r → 0 of (a/r) Σ [erfc(((2n+1)a−r)/2√(Dt)) − erfc(((2n+1)a+r)/2√(Dt))],
// from memory). For the cylinder below τ = 1e-3 the value is below 1e-100
// and 0 is returned.
func (p *FixedSurface) Centre(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	if tau == 0 {
		return 0, nil
	}
	switch {
	case p.shape == Slab && tau < ShortTime:
		rt := math.Sqrt(tau)
		s := 0.0
		for n := 0; n < 50; n++ {
			t := math.Erfc(float64(2*n+1) / (2 * rt))
			if n%2 == 1 {
				t = -t
			}
			s += t
			if math.Abs(t) < 1e-300 {
				break
			}
		}
		return 2 * s, nil
	case p.shape == Sphere && tau < ShortTime:
		s := 0.0
		for n := 0; n < 50; n++ {
			k := float64(2*n + 1)
			t := 2 / math.Sqrt(math.Pi*tau) * math.Exp(-k*k/(4*tau))
			s += t
			if t < 1e-300 {
				break
			}
		}
		return s, nil
	case p.shape == Cylinder && tau < 1e-3:
		return 0, nil
	}
	var c func(b float64) float64
	switch p.shape {
	case Slab:
		c = func(b float64) float64 { return 2 * math.Sin(b) / b }
	case Cylinder:
		c = func(b float64) float64 { return 2 / (b * math.J1(b)) }
	default:
		c = func(b float64) float64 { return -2 * math.Cos(b) }
	}
	s, err := p.fam.sum(tau, c)
	if err != nil {
		return math.NaN(), err
	}
	return 1 - s, nil
}

// ierfc is the first integral of the complementary error function,
// ierfc(x) = exp(−x²)/√π − x erfc(x) (source: Crank (1975), table of the
// error function and its integrals in the appendix, from memory).
func ierfc(x float64) float64 {
	if x > 26 {
		return 0
	}
	return math.Exp(-x*x)/math.SqrtPi - x*math.Erfc(x)
}

// cylShortTerms is the number of terms of the small-time expansion of the
// cylinder's uptake.
const cylShortTerms = 12

// cylShortCoef holds 2c_k/Γ((k+3)/2), the coefficients of τ^((k+1)/2).
var cylShortCoef = func() [cylShortTerms]float64 {
	var c [cylShortTerms]float64
	c[0] = 1
	for m := 1; m < cylShortTerms; m++ {
		s := 0.0
		for i := 1; i < m; i++ {
			s += c[i] * c[m-i]
		}
		c[m] = (float64(m-2)*c[m-1] - s) / 2
	}
	var out [cylShortTerms]float64
	for k := range c {
		out[k] = 2 * c[k] / math.Gamma(float64(k+3)/2)
	}
	return out
}()

// cylinderShortUptake sums the small-time expansion of the cylinder's
// uptake, valid for τ ≤ CylinderShortTime.
func cylinderShortUptake(tau float64) float64 {
	rt := math.Sqrt(tau)
	s := 0.0
	pw := rt
	for k := 0; k < cylShortTerms; k++ {
		s += cylShortCoef[k] * pw
		pw *= rt
	}
	return s
}
