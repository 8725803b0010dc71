package analytic

import (
	"math"
)

// Bath is uptake by bodies initially free of solute from a well-stirred
// bath of limited volume V whose value Cb starts at Cb0 and falls as the
// bodies take solute up. The value just inside the surface is in
// equilibrium with the bath, C(a,t) = K·Cb(t), and
//
//	∂C/∂t = D r^−ν ∂/∂r(r^ν ∂C/∂r), 0 < r < a,  ∂C/∂r = 0 at r = 0,
//	V dCb/dt = −A D ∂C/∂r at r = a,  C = 0 at t = 0,
//
// where A and Vp are the surface area and volume of the body (or, for many
// equal bodies, V is the bath volume per body). The single parameter is
//
//	α = V / (K·Vp),
//
// the ratio of the bath's capacity to the bodies' capacity: at equilibrium
// the bodies hold the fraction 1/(1+α) of the solute and the bath keeps
// α/(1+α) of its starting value. Results are functions of τ = D t / a².
type Bath struct {
	shape Shape
	alpha float64
	fam   *family
}

// NewBath returns the limited-bath problem for shape s and capacity ratio
// alpha > 0.
func NewBath(s Shape, alpha float64) (*Bath, error) {
	if err := checkShape(s); err != nil {
		return nil, err
	}
	if err := checkPositive("bath capacity ratio", alpha); err != nil {
		return nil, err
	}
	a := alpha
	b := &Bath{shape: s, alpha: a}
	switch s {
	case Slab:
		// tan q = −αq; the n-th root lies in ((n−½)π, nπ).
		g := func(q float64) (float64, float64) {
			sn, cs := math.Sincos(q)
			return sn + a*q*cs, cs + a*cs - a*q*sn
		}
		b.fam = &family{root: func(n int) (float64, error) {
			return bracketRoot(g, (float64(n)-0.5)*math.Pi, float64(n)*math.Pi, 0)
		}}
	case Cylinder:
		// α q J0(q) + 2 J1(q) = 0; the n-th root lies between the n-th
		// zeros of J0 and J1.
		g := func(q float64) (float64, float64) {
			j0, j1 := math.J0(q), math.J1(q)
			return a*q*j0 + 2*j1, a*j0 - a*q*j1 + 2*(j0-j1/q)
		}
		b.fam = &family{root: func(n int) (float64, error) {
			lo, err := besselZeroCached(0, n)
			if err != nil {
				return 0, err
			}
			hi, err := besselZeroCached(1, n)
			if err != nil {
				return 0, err
			}
			return bracketRoot(g, lo, hi, 0)
		}}
	default:
		// tan q = 3q/(3 + αq²); the n-th root lies in (nπ, (n+½)π).
		g := func(q float64) (float64, float64) {
			sn, cs := math.Sincos(q)
			return (3+a*q*q)*sn - 3*q*cs, 2*a*q*sn + a*q*q*cs + 3*q*sn
		}
		b.fam = &family{root: func(n int) (float64, error) {
			return bracketRoot(g, float64(n)*math.Pi, (float64(n)+0.5)*math.Pi, 0)
		}}
	}
	return b, nil
}

// Alpha returns the capacity ratio α = V/(K·Vp).
func (b *Bath) Alpha() float64 { return b.alpha }

// Eigenvalues returns the first n positive roots q_n of
//
//	slab: tan q = −αq;  cylinder: αq J0(q) + 2 J1(q) = 0;
//	sphere: tan q = 3q/(3 + αq²)
//
// (source: J. Crank, The Mathematics of Diffusion, 2nd ed. (1975), §4.3.5,
// §5.3.4 and §6.3.4, from memory).
func (b *Bath) Eigenvalues(n int) ([]float64, error) {
	if n < 0 {
		return nil, errNegativeCount(n)
	}
	r, err := b.fam.first(n)
	return append([]float64(nil), r...), err
}

// FinalUptake returns M∞/(V·Cb0) = 1/(1+α), the fraction of the solute
// first in the bath that the bodies hold at equilibrium.
func (b *Bath) FinalUptake() float64 { return 1 / (1 + b.alpha) }

// FinalBath returns Cb(∞)/Cb0 = α/(1+α).
func (b *Bath) FinalBath() float64 { return b.alpha / (1 + b.alpha) }

// Uptake returns Mt/M∞ at Fourier number tau:
//
//	1 − Σ 2(ν+1)α(1+α) exp(−q²τ) / ((ν+1)²(1+α) + α²q²),
//
// that is 2α(1+α)/(1+α+α²q²) for the slab, 4α(1+α)/(4+4α+α²q²) for the
// cylinder and 6α(1+α)/(9+9α+α²q²) for the sphere (source: J. Crank,
// The Mathematics of Diffusion, 2nd ed. (1975), §4.3.5 (slab), §5.3.4
// (cylinder) and eq. 6.30 in §6.3.4 (sphere); section numbers from
// memory). The sum of the coefficients is 1, so that Mt = 0 at t = 0;
// the package tests check this and the limit α → ∞ (fixed surface).
func (b *Bath) Uptake(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	if tau == 0 {
		return 0, nil
	}
	a := b.alpha
	m := b.shape.nu() + 1
	c := func(q float64) float64 { return 2 * m * a * (1 + a) / (m*m*(1+a) + a*a*q*q) }
	s, err := b.fam.sum(tau, c)
	if err != nil {
		return math.NaN(), err
	}
	return 1 - s, nil
}

// BathValue returns Cb(t)/Cb0 = 1 − (Mt/M∞)/(1+α) at Fourier number tau.
func (b *Bath) BathValue(tau float64) (float64, error) {
	u, err := b.Uptake(tau)
	if err != nil {
		return math.NaN(), err
	}
	return 1 - u/(1+b.alpha), nil
}
