package fv2

import (
	"math"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

// Observed order of accuracy by the method of manufactured solutions
// (source: P. J. Roache, Code verification by the method of manufactured
// solutions, J. Fluids Eng. 124 (2002) 4–10; K. Salari & P. Knupp, Code
// Verification by the Method of Manufactured Solutions, Sandia report
// SAND2000-1444 (2000)). A smooth field c(r, z) is chosen, the source that
// makes it an exact solution is supplied through Spec.ExtraSource, and the
// boundary data through the conditions. Since a condition's value is the
// same all along a face, every field is built so that its value (Fixed),
// its normal derivative (Flux) or its Robin combination (Film) is
// constant along each face: the parts that vary along a face vanish there
// or satisfy the homogeneous condition. The grid is refined twice by 2
// with the same clustering map; the observed order log2(e_h / e_{h/2})
// must be 2 ± 0.15.

// f1 is a function of one variable with its first two derivatives.
type f1 func(x float64) (v, d1, d2 float64)

// term is F(r)·G(z) with an amplitude that may depend on time.
type term struct {
	F, G f1
	amp  func(t float64) (a, da float64)
}

// field is a sum of terms.
type field []term

// at returns c, ∂c/∂t, ∂c/∂r, ∂c/∂z and the Laplacian
// c_rr + c_r/r + c_zz at (r, z, t).
func (f field) at(r, z, t float64) (c, ct, cr, cz, lap float64) {
	for _, tm := range f {
		a, da := 1.0, 0.0
		if tm.amp != nil {
			a, da = tm.amp(t)
		}
		F, F1, F2 := tm.F(r)
		G, G1, G2 := tm.G(z)
		c += a * F * G
		ct += da * F * G
		cr += a * F1 * G
		cz += a * F * G1
		lap += a * ((F2+F1/r)*G + F*G2)
	}
	return
}

func one(float64) (float64, float64, float64) { return 1, 0, 0 }

// cosSq is cos(k x²).
func cosSq(k float64) f1 {
	return func(x float64) (float64, float64, float64) {
		s, c := math.Sincos(k * x * x)
		return c, -2 * k * x * s, -2*k*s - 4*k*k*x*x*c
	}
}

// sinLin is sin(k x + p); cosLin is cos(k x + p).
func sinLin(k, p float64) f1 {
	return func(x float64) (float64, float64, float64) {
		s, c := math.Sincos(k*x + p)
		return s, k * c, -k * k * s
	}
}

func cosLin(k, p float64) f1 {
	return func(x float64) (float64, float64, float64) {
		s, c := math.Sincos(k*x + p)
		return c, -k * s, -k * k * c
	}
}

// expLin is exp(x/a).
func expLin(a float64) f1 {
	return func(x float64) (float64, float64, float64) {
		e := math.Exp(x / a)
		return e, e / a, e / (a * a)
	}
}

// poly is Σ p[k] (x/a)^k.
func poly(a float64, p ...float64) f1 {
	return func(x float64) (float64, float64, float64) {
		var v, d1, d2 float64
		u := x / a
		for k, c := range p {
			v += c * math.Pow(u, float64(k))
			if k >= 1 {
				d1 += c * float64(k) * math.Pow(u, float64(k-1)) / a
			}
			if k >= 2 {
				d2 += c * float64(k*(k-1)) * math.Pow(u, float64(k-2)) / (a * a)
			}
		}
		return v, d1, d2
	}
}

// prod is F·G of two functions of the same variable.
func prod(F, G f1) f1 {
	return func(x float64) (float64, float64, float64) {
		a, a1, a2 := F(x)
		b, b1, b2 := G(x)
		return a * b, a1*b + a*b1, a2*b + 2*a1*b1 + a*b2
	}
}

// exactAverages returns the cell averages of c(·, ·, t) over d's grid by
// composite 3×3-point Gauss quadrature on 4×4 sub-cells (weight r).
func exactAverages(d *Discretization, f field, t float64) []float64 {
	g := &d.Grid
	out := make([]float64, g.Cells())
	const m = 4
	for j := range g.NZ {
		for i := range g.NR {
			ra, rb := g.RFaces[i], g.RFaces[i+1]
			za, zb := g.ZFaces[j], g.ZFaces[j+1]
			hr, hz := (rb-ra)/m, (zb-za)/m
			num, den := 0.0, 0.0
			for a := range m {
				for b := range m {
					rm, zm := ra+(float64(a)+0.5)*hr, za+(float64(b)+0.5)*hz
					for _, p := range gauss3 {
						for _, q := range gauss3 {
							r, z := rm+0.5*hr*p[0], zm+0.5*hz*q[0]
							w := p[1] * q[1] * r
							c, _, _, _, _ := f.at(r, z, t)
							num += w * c
							den += w
						}
					}
				}
			}
			out[j*g.NR+i] = num / den
		}
	}
	return out
}

// surfaceExact returns the area-weighted mean over the exterior surface
// of c and of the inward flux density D ∂c/∂n, by Gauss quadrature on 64
// panels per face.
func surfaceExact(f field, R, L, D, t float64) (value, flux float64) {
	const m = 64
	var sv, sf, area float64
	for k := range m {
		for _, q := range gauss3 {
			// Side: z in panel k.
			z := L * (float64(k) + 0.5 + 0.5*q[0]) / m
			w := q[1] / 2 * L / m * 2 * math.Pi * R
			c, _, cr, _, _ := f.at(R, z, t)
			sv += w * c
			sf += w * D * cr
			area += w
			// Top and bottom: r in panel k.
			r := R * (float64(k) + 0.5 + 0.5*q[0]) / m
			w = q[1] / 2 * R / m * 2 * math.Pi * r
			c, _, _, cz, _ := f.at(r, L, t)
			sv += w * c
			sf += w * D * cz
			c, _, _, cz, _ = f.at(r, 0, t)
			sv += w * c
			sf -= w * D * cz
			area += 2 * w
		}
	}
	return sv / area, sf / area
}

type mmsCase struct {
	name              string
	f                 field
	side, top, bottom fv.Boundary
}

// steadyCases returns the manufactured steady fields with their
// conditions, for a cylinder of radius R and length L, diffusivity D and
// partition coefficient kp. tan(1) gives the film coefficients for which
// cos(x²/R²) (side) and cos(2z/L − 1) (top and bottom) satisfy the
// homogeneous film condition: D·2 tan(1)/a.
func steadyCases(R, L, D, kp float64) []mmsCase {
	fixedAll := field{
		{F: one, G: one},
		{F: cosSq(math.Pi / (2 * R * R)), G: prod(sinLin(math.Pi/L, 0), poly(1, 0.5))},
		{F: prod(cosSq(math.Pi/(2*R*R)), poly(R, 0, 0, 0.3)), G: prod(sinLin(math.Pi/L, 0), expLin(L))},
	}
	hR := 2 * D * math.Tan(1) / R
	hL := 2 * D * math.Tan(1) / L
	psiR := poly(R, 0, 0, 0.4, 0, 0.12)
	filmSide := field{{F: one, G: one}, {F: psiR, G: one}, {F: cosSq(1 / (R * R)), G: prod(cosLin(math.Pi/L, 0), poly(1, 0.5))}}
	v, d1, _ := psiR(R)
	sideValue := (1 + v + D*d1/hR) / kp
	fluxZ := field{{F: one, G: one}, {F: one, G: prod(expLin(L), poly(1, 0.4))}, {F: cosSq(math.Pi / (R * R)), G: prod(cosLin(math.Pi/L, 0), poly(1, 0.5))}}
	_, g0, _ := fluxZ[1].G(0)
	_, gL, _ := fluxZ[1].G(L)
	psiZ := func(x float64) (float64, float64, float64) {
		a, a1, a2 := expLin(L)(x)
		b, b1, b2 := poly(L, 0, 0, 0.5)(x)
		return 0.4 * (a + b), 0.4 * (a1 + b1), 0.4 * (a2 + b2)
	}
	filmZ := field{{F: one, G: one}, {F: one, G: psiZ}, {F: cosSq(math.Pi / (R * R)), G: prod(cosLin(2/L, -1), poly(1, 0.5))}}
	p0, q0, _ := psiZ(0)
	pL, qL, _ := psiZ(L)
	filmAll := field{{F: one, G: one}, {F: cosSq(1 / (R * R)), G: prod(cosLin(2/L, -1), poly(1, 0.5))}}
	sealedBC := fv.Boundary{Kind: fv.Flux}
	return []mmsCase{
		{"fixed on every face", fixedAll,
			fv.Boundary{Kind: fv.Fixed, Partition: kp, Value: constant(1 / kp)},
			fv.Boundary{Kind: fv.Fixed, Partition: kp, Value: constant(1 / kp)},
			fv.Boundary{Kind: fv.Fixed, Partition: kp, Value: constant(1 / kp)}},
		{"film on the side, top and bottom sealed", filmSide,
			fv.Boundary{Kind: fv.Film, H: hR, Partition: kp, Value: constant(sideValue)}, sealedBC, sealedBC},
		{"flux on top and bottom, side sealed", fluxZ,
			sealedBC, fv.Boundary{Kind: fv.Flux, Value: constant(D * gL)}, fv.Boundary{Kind: fv.Flux, Value: constant(-D * g0)}},
		{"film on top and bottom, side sealed", filmZ,
			sealedBC,
			fv.Boundary{Kind: fv.Film, H: hL, Partition: kp, Value: constant((1 + pL + D*qL/hL) / kp)},
			fv.Boundary{Kind: fv.Film, H: hL, Partition: kp, Value: constant((1 + p0 - D*q0/hL) / kp)}},
		{"film on every face", filmAll,
			fv.Boundary{Kind: fv.Film, H: hR, Partition: kp, Value: constant(1 / kp)},
			fv.Boundary{Kind: fv.Film, H: hL, Partition: kp, Value: constant(1 / kp)},
			fv.Boundary{Kind: fv.Film, H: hL, Partition: kp, Value: constant(1 / kp)}},
	}
}

// checkOrder asserts that the last observed order is within tol of 2,
// or, with tol < 0, at least 2 + tol. A quantity that the conditions
// impose exactly (errors at round-off on every grid) is skipped.
func checkOrder(t *testing.T, what string, errs []float64, tol float64) {
	t.Helper()
	exact := true
	for _, e := range errs {
		exact = exact && e < 1e-12
	}
	if exact {
		t.Logf("%s: exact by construction (errors %.2g)", what, errs)
		return
	}
	p := order(errs)
	last := p[len(p)-1]
	t.Logf("%s: errors %.3g, observed orders %.3f", what, errs, p)
	if tol > 0 && math.Abs(last-2) > tol || tol < 0 && last < 2+tol {
		t.Errorf("%s: errors %.3g, observed orders %.3f, want 2 ± %g", what, errs, p, math.Abs(tol))
	}
}

// TestOrderSteadyMMS solves steady problems with first-order consumption
// on the default clustered grids of 20², 40² and 80² cells and checks
// second order for the cell averages (largest error), the mean surface
// value, the mean surface flux and the centre value.
func TestOrderSteadyMMS(t *testing.T) {
	const (
		R  = 1e-3
		L  = 1e-3
		D  = 1e-9
		kp = 1.4
	)
	k := 2 * D / (R * R)
	for _, tc := range steadyCases(R, L, D, kp) {
		t.Run(tc.name, func(t *testing.T) {
			var eCells, eSurf, eFlux, eCentre []float64
			for _, n := range []int{20, 40, 80} {
				d, err := Build(&Spec{Radius: R, Length: L, NR: n, NZ: n, NSpecies: 1,
					D: []float64{D}, Rate: [][]float64{{-k}},
					Side: []fv.Boundary{tc.side}, Top: []fv.Boundary{tc.top}, Bottom: []fv.Boundary{tc.bottom},
					ExtraSource: func(_ int, _, r, z float64) float64 {
						c, _, _, _, lap := tc.f.at(r, z, 0)
						return -D*lap + k*c
					}})
				if err != nil {
					t.Fatal(err)
				}
				y, err := d.SteadyState(0, d.Y0(), nil)
				if err != nil {
					t.Fatal(err)
				}
				ex := exactAverages(d, tc.f, 0)
				e := 0.0
				for i := range ex {
					e = math.Max(e, math.Abs(y[i]-ex[i]))
				}
				eCells = append(eCells, e)
				sv, sf := surfaceExact(tc.f, R, L, D, 0)
				s, _ := d.Surface(0, y, 0)
				j, _ := d.SurfaceFlux(0, y, 0)
				eSurf = append(eSurf, math.Abs(s-sv))
				eFlux = append(eFlux, math.Abs(j-sf)/(D/R))
				cc, _, _, _, _ := tc.f.at(0, L/2, 0)
				c, _ := d.Centre(0, y, 0)
				eCentre = append(eCentre, math.Abs(c-cc))
			}
			checkOrder(t, "cell averages", eCells, 0.15)
			checkOrder(t, "surface value", eSurf, 0.15)
			checkOrder(t, "surface flux", eFlux, 0.15)
			// The centre lies where the clustered grid is coarsest and
			// reaches its asymptotic order last (measured 1.81 to 2.13
			// on the last pair): at least 1.6 is asked.
			checkOrder(t, "centre", eCentre, -0.4)
		})
	}
}

// TestOrderTransientMMS integrates a time-dependent field with
// time-dependent fixed values on every face, a capacity ≠ 1, linear
// consumption and a nonlinear sink through Spec.Kinetics, at a tolerance
// far below the space error, and checks second order for the cell
// averages at the final time (the ledger is checked at every grid).
func TestOrderTransientMMS(t *testing.T) {
	const (
		R   = 1e-3
		L   = 1e-3
		D   = 1e-9
		cap = 0.7
		kp  = 1.3
		T   = 300.0
	)
	k1 := 0.5 * D / (R * R) // linear consumption
	k2 := 2e-3              // nonlinear sink: −k2·c²
	w := 2 * math.Pi / 500
	f := field{
		{F: one, G: one, amp: func(t float64) (float64, float64) { return 1 + 0.3*math.Sin(w*t), 0.3 * w * math.Cos(w*t) }},
		{F: prod(cosSq(math.Pi/(2*R*R)), poly(R, 1, 0, 0.5)), G: prod(sinLin(math.Pi/L, 0), expLin(L)),
			amp: func(t float64) (float64, float64) { return 0.5 * math.Exp(-t/400), -0.5 / 400 * math.Exp(-t/400) }},
	}
	bc := []fv.Boundary{{Kind: fv.Fixed, Partition: kp, Value: func(t float64) float64 { a, _ := f[0].amp(t); return a / kp }}}
	var errs []float64
	for _, n := range []int{10, 20, 40} {
		d, err := Build(&Spec{Radius: R, Length: L, NR: n, NZ: n, NSpecies: 1, D: []float64{D}, Capacity: []float64{cap},
			Rate: [][]float64{{-k1}}, Side: bc, Top: bc, Bottom: bc,
			Init: func(_ int, r, z float64) float64 { c, _, _, _, _ := f.at(r, z, 0); return c },
			Kinetics: func(t, r, z float64, c, rate, dRate []float64) {
				rate[0] -= k2 * c[0] * c[0]
				if dRate != nil {
					dRate[0] -= 2 * k2 * c[0]
				}
			},
			ExtraSource: func(_ int, t, r, z float64) float64 {
				c, ct, _, _, lap := f.at(r, z, t)
				return cap*ct - D*lap + k1*c + k2*c*c
			}})
		if err != nil {
			t.Fatal(err)
		}
		res := integrate(t, d, []float64{T}, &solvers.Settings{RTol: 1e-9, ATol: 1e-12})
		ex := exactAverages(d, f, T)
		e := 0.0
		for c := range ex {
			e = math.Max(e, math.Abs(res.Y[0][c]-ex[c]))
		}
		errs = append(errs, e)
	}
	checkOrder(t, "cell averages", errs, 0.15)
}
