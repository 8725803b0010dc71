package analytic

import (
	"fmt"
	"math"
)

// Reaction is uptake with first-order consumption by a body initially
// free of solute whose surface is held at Cs from t = 0:
//
//	∂C/∂t = D r^−ν ∂/∂r(r^ν ∂C/∂r) − k C,  0 < r < a,
//	∂C/∂r = 0 at r = 0,  C = Cs at r = a,  C = 0 at t = 0.
//
// The parameter is the Thiele modulus φ = a √(k/D) (a the half-thickness or
// radius; not the generalised modulus based on volume/area). Amounts are
// given as fractions of Vp·Cs, the amount the body would hold at Cs
// without reaction, and time as the Fourier number τ = D t / a².
//
// By Danckwerts' transformation (source: J. Crank, The Mathematics of
// Diffusion, 2nd ed. (1975), §14.2, eqs. 14.5–14.6, from memory) a
// solution C1 of the problem without reaction gives
// C = k ∫0^t C1 exp(−k t') dt' + C1 exp(−k t); applied to the eigenfunction
// series of FixedSurface this gives, with μ_n = β_n² + φ²,
//
//	content:  η − Σ 2(ν+1)/μ_n · exp(−μ_n τ)
//	absorbed: content + φ² [η τ − Σ 2(ν+1)/μ_n² · (1 − exp(−μ_n τ))]
//
// where η = Σ 2(ν+1)/μ_n is the effectiveness factor (see Effectiveness)
// and Σ 2(ν+1)/μ_n² = −dη/d(φ²) is evaluated in closed form.
type Reaction struct {
	shape    Shape
	phi      float64
	eta, kap float64
	fam      *family
}

// NewReaction returns the reaction problem for shape s and Thiele modulus
// thiele ≥ 0.
func NewReaction(s Shape, thiele float64) (*Reaction, error) {
	if err := checkShape(s); err != nil {
		return nil, err
	}
	if math.IsNaN(thiele) || thiele < 0 || math.IsInf(thiele, 0) {
		return nil, fmt.Errorf("analytic: Thiele modulus must be finite and non-negative, got %g", thiele)
	}
	eta, err := Effectiveness(s, thiele)
	if err != nil {
		return nil, err
	}
	return &Reaction{shape: s, phi: thiele, eta: eta, kap: etaSlope(s, thiele), fam: dirichletFamily(s)}, nil
}

// Thiele returns the Thiele modulus φ.
func (r *Reaction) Thiele() float64 { return r.phi }

// SteadyContent returns the amount held at steady state as a fraction of
// Vp·Cs; it equals the effectiveness factor η.
func (r *Reaction) SteadyContent() float64 { return r.eta }

// SteadyRate returns the steady rate of absorption (equal to the rate of
// consumption) in units of Vp·Cs·D/a², that is φ²·η.
func (r *Reaction) SteadyRate() float64 { return r.phi * r.phi * r.eta }

// Content returns the amount in the body at Fourier number tau as a
// fraction of Vp·Cs.
func (r *Reaction) Content(tau float64) (float64, error) {
	if err := checkTau(tau); err != nil {
		return math.NaN(), err
	}
	if tau == 0 {
		return 0, nil
	}
	m := 2 * (r.shape.nu() + 1)
	p2 := r.phi * r.phi
	s, err := r.fam.sum(tau, func(b float64) float64 { return m / (b*b + p2) })
	if err != nil {
		return math.NaN(), err
	}
	return r.eta - math.Exp(-p2*tau)*s, nil
}

// Absorbed returns the amount that has entered through the surface by
// Fourier number tau (held plus consumed), as a fraction of Vp·Cs.
func (r *Reaction) Absorbed(tau float64) (float64, error) {
	c, err := r.Content(tau)
	if err != nil || tau == 0 {
		return c, err
	}
	m := 2 * (r.shape.nu() + 1)
	p2 := r.phi * r.phi
	s, err := r.fam.sum(tau, func(b float64) float64 { u := b*b + p2; return m / (u * u) })
	if err != nil {
		return math.NaN(), err
	}
	return c + p2*(r.eta*tau-r.kap+math.Exp(-p2*tau)*s), nil
}

// Consumed returns the amount consumed by the reaction by Fourier number
// tau, as a fraction of Vp·Cs.
func (r *Reaction) Consumed(tau float64) (float64, error) {
	a, err := r.Absorbed(tau)
	if err != nil {
		return math.NaN(), err
	}
	c, err := r.Content(tau)
	return a - c, err
}

// Effectiveness returns the effectiveness factor of a first-order reaction
// in a body with fixed surface value, the mean rate divided by the rate at
// the surface value, for Thiele modulus φ = a √(k/D):
//
//	slab:     tanh φ / φ
//	cylinder: 2 I1(φ) / (φ I0(φ))
//	sphere:   3/φ² (φ coth φ − 1)
//
// (source: R. Aris, The Mathematical Theory of Diffusion and Reaction in
// Permeable Catalysts, vol. 1 (1975), ch. 3; also H. S. Fogler, Elements of
// Chemical Reaction Engineering, ch. 12 (sphere); from memory). φ = 0
// gives 1. Near φ = 0 cancellation-free power series are used.
func Effectiveness(s Shape, thiele float64) (float64, error) {
	if err := checkShape(s); err != nil {
		return math.NaN(), err
	}
	if math.IsNaN(thiele) || thiele < 0 || math.IsInf(thiele, 0) {
		return math.NaN(), fmt.Errorf("analytic: Thiele modulus must be finite and non-negative, got %g", thiele)
	}
	phi := thiele
	if phi == 0 {
		return 1, nil
	}
	switch s {
	case Slab:
		return math.Tanh(phi) / phi, nil
	case Cylinder:
		return 2 * besselRatio(phi) / phi, nil
	}
	if phi < 3 {
		// 3(φ cosh φ − sinh φ)/(φ² sinh φ) with
		// φ cosh φ − sinh φ = Σ_{k≥1} 2k φ^(2k+1)/(2k+1)!.
		return 3 * phiCoshMinusSinh(phi) / (phi * phi * math.Sinh(phi)), nil
	}
	return 3 * (phi/math.Tanh(phi) - 1) / (phi * phi), nil
}

// phiCoshMinusSinh returns φ cosh φ − sinh φ by its positive power series.
func phiCoshMinusSinh(phi float64) float64 {
	p2 := phi * phi
	term := phi // φ^(2k+1)/(2k+1)! for k = 0
	sum := 0.0
	for k := 1; k < 200; k++ {
		term *= p2 / float64((2*k)*(2*k+1))
		t := 2 * float64(k) * term
		sum += t
		if t < 1e-17*sum {
			break
		}
	}
	return sum
}

// etaSlope returns κ = −dη/d(φ²) = Σ 2(ν+1)/(β_n² + φ²)², by forms free of
// cancellation:
//
//	slab:     (sinh 2φ − 2φ) / (4 φ³ cosh² φ)
//	sphere:   3 (φ² csch²φ + φ coth φ − 2) / (2 φ⁴)
//	cylinder: (2R + φR² − φ)/φ³, R = I1(φ)/I0(φ)
//
// with power series for the small-φ differences. Its values at φ = 0 are
// 1/3, 1/8 and 1/15.
func etaSlope(s Shape, phi float64) float64 {
	switch s {
	case Slab:
		if phi == 0 {
			return 1.0 / 3
		}
		y := 2 * phi
		var d float64 // sinh y − y
		if y < 4 {
			term, sum := y, 0.0
			for k := 1; k < 200; k++ {
				term *= y * y / float64((2*k)*(2*k+1))
				sum += term
				if term < 1e-17*sum {
					break
				}
			}
			d = sum
		} else {
			d = math.Sinh(y) - y
		}
		c := math.Cosh(phi)
		if math.IsInf(d, 0) || math.IsInf(c, 0) {
			// cosh²φ ≈ e^(2φ)/4 and sinh 2φ ≈ e^(2φ)/2 for large φ.
			return 1 / (2 * phi * phi * phi)
		}
		return d / (4 * phi * phi * phi * c * c)
	case Sphere:
		if phi == 0 {
			return 1.0 / 15
		}
		if phi < 3 {
			// φ²csch²φ + φ coth φ − 2 = Σ_{m≥3} (m−2) y^(2m) / (2 (2m)!) / sinh²φ,
			// y = 2φ.
			y := 2 * phi
			term := 1.0 // y^(2m)/(2m)! at m = 0
			sum := 0.0
			for m := 1; m < 200; m++ {
				term *= y * y / float64((2*m-1)*(2*m))
				if m < 3 {
					continue
				}
				t := float64(m-2) * term / 2
				sum += t
				if t < 1e-17*sum {
					break
				}
			}
			sh := math.Sinh(phi)
			return 3 * sum / (2 * phi * phi * phi * phi * sh * sh)
		}
		csch := 1 / math.Sinh(phi)
		return 3 * (phi*phi*csch*csch + phi/math.Tanh(phi) - 2) / (2 * phi * phi * phi * phi)
	}
	// Cylinder.
	if phi < 2 {
		// η = A(u)/B(u), u = φ²/4, A = Σ u^k/(k!(k+1)!), B = Σ u^k/(k!)²;
		// κ = −(1/4) dη/du = (A B' − A' B)/(4 B²).
		u := phi * phi / 4
		var A, B, dA, dB float64
		a, b := 1.0, 1.0 // u^k/(k!(k+1)!), u^k/(k!)²
		for k := 0; k < 100; k++ {
			if k > 0 {
				a *= u / float64(k*(k+1))
				b *= u / float64(k*k)
			}
			A += a
			B += b
			if u > 0 {
				dA += float64(k) * a / u
				dB += float64(k) * b / u
			} else if k == 1 {
				dA, dB = 0.5, 1
			}
			if b < 1e-18*B && k > 2 {
				break
			}
		}
		if u == 0 {
			dA, dB = 0.5, 1
		}
		return (A*dB - dA*B) / (4 * B * B)
	}
	R := besselRatio(phi)
	return (2*R + phi*R*R - phi) / (phi * phi * phi)
}
