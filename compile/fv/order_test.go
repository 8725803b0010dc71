package fv

import (
	"fmt"
	"math"
	"testing"

	"github.com/massline/massline/solvers"
)

// Observed order of accuracy by the method of manufactured solutions
// (source: P. J. Roache, Code verification by the method of manufactured
// solutions, J. Fluids Eng. 124 (2002) 4–10; K. Salari & P. Knupp, Code
// Verification by the Method of Manufactured Solutions, Sandia report
// SAND2000-1444 (2000)). A smooth profile is chosen, the source that makes
// it an exact solution is supplied through Spec.ExtraSource and the
// boundary values through Boundary.Value; the grid is refined twice by 2
// with the same (default) clustering map, and the observed order
// log2(e_h / e_{h/2}) of the maximum cell-average error must be 2 ± 0.1.

// mmsProfile is a smooth manufactured profile with its first two
// derivatives; even in r when even is set (needed at r = 0).
type mmsProfile struct {
	R    float64
	even bool
}

func (m mmsProfile) f(r float64) (v, d1, d2 float64) {
	k := 2.2 / m.R
	v = 1 + 0.5*math.Cos(k*r)
	d1 = -0.5 * k * math.Sin(k*r)
	d2 = -0.5 * k * k * math.Cos(k*r)
	if m.even {
		x := r / m.R
		v += 0.3 * x * x
		d1 += 0.6 * x / m.R
		d2 += 0.6 / (m.R * m.R)
	} else {
		v += 0.3 * r / m.R
		d1 += 0.3 / m.R
	}
	return v, d1, d2
}

// laplacian returns f” + ν f'/r.
func laplacian(g Geometry, r, d1, d2 float64) float64 {
	return d2 + float64(g)*d1/r
}

// exactAverages returns the cell averages of f over d's grid by composite
// 3-point Gauss quadrature on 16 sub-intervals with the geometric weight
// (error far below the scheme's; the nodes are interior, so a profile that
// jumps at a layer interface is sampled on the correct side).
func exactAverages(d *Discretization, f func(r float64) float64) []float64 {
	out := make([]float64, d.Cells())
	for i := range out {
		a, b := d.Grid.Faces[i], d.Grid.Faces[i+1]
		const m = 16
		h := (b - a) / m
		num, den := 0.0, 0.0
		for j := 0; j < m; j++ {
			mid := a + (float64(j)+0.5)*h
			for _, g := range gauss3 {
				r := mid + 0.5*h*g[0]
				w := g[1] * weight(d.geo, r)
				num += w * f(r)
				den += w
			}
		}
		out[i] = num / den
	}
	return out
}

type mmsErrors struct{ cells, surface, flux, inner float64 }

// steadyMMS builds a one-layer steady problem with first-order consumption
// whose exact solution is the profile, and returns the errors.
func steadyMMS(t *testing.T, g Geometry, inner, R float64, innerKind, outerKind BoundaryKind, cells int) mmsErrors {
	t.Helper()
	const (
		D  = 1e-9
		kp = 1.4
	)
	k := 2 * D / (R * R)
	H := 3 * D / R
	prof := mmsProfile{R: R, even: inner == 0 && innerKind == Symmetry}
	value := func(kind BoundaryKind, r float64, outward float64) func(float64) float64 {
		v, d1, _ := prof.f(r)
		j := outward * D * d1 // inward flux D ∂c/∂n
		switch kind {
		case Fixed:
			return constant(v / kp)
		case Film:
			return constant((v + j/H) / kp)
		case Flux:
			return constant(j)
		}
		return nil
	}
	spec := &Spec{Geometry: g, Inner: inner, NSpecies: 1,
		Layers:  []Layer{{Outer: R, D: []float64{D}, Rate: [][]float64{{-k}}, Cells: cells}},
		InnerBC: []Boundary{{Kind: innerKind, H: H, Partition: kp, Value: value(innerKind, inner, -1)}},
		OuterBC: []Boundary{{Kind: outerKind, H: H, Partition: kp, Value: value(outerKind, R, 1)}},
		ExtraSource: func(_ int, _, r float64) float64 {
			v, d1, d2 := prof.f(r)
			return -D*laplacian(g, r, d1, d2) + k*v
		},
	}
	d, err := Build(spec)
	if err != nil {
		t.Fatal(err)
	}
	y := steadyState(t, d, 0)
	ex := exactAverages(d, func(r float64) float64 { v, _, _ := prof.f(r); return v })
	var e mmsErrors
	for i := range ex {
		e.cells = math.Max(e.cells, math.Abs(y[i]-ex[i]))
	}
	vR, dR, _ := prof.f(R)
	s, _ := d.Surface(0, y, 0)
	e.surface = math.Abs(s - vR)
	j, _ := d.SurfaceFlux(0, y, 0)
	e.flux = math.Abs(j-D*dR) / (D / R)
	v0, _, _ := prof.f(inner)
	c, _ := d.Centre(0, y, 0)
	e.inner = math.Abs(c - v0)
	return e
}

func checkOrder(t *testing.T, what string, errs []float64) {
	t.Helper()
	p := order(errs)
	last := p[len(p)-1]
	t.Logf("%s: errors %.3g, observed orders %.3f", what, errs, p)
	if math.Abs(last-2) > 0.1 {
		t.Errorf("%s: errors %.3g, observed orders %.3f, want 2 ± 0.1", what, errs, p)
	}
}

func TestOrderSteadyMMS(t *testing.T) {
	type bc struct{ inner, outer BoundaryKind }
	var cases []struct {
		g     Geometry
		inner float64
		bc
	}
	for _, g := range shapes {
		for _, o := range []BoundaryKind{Fixed, Film, Flux} {
			cases = append(cases, struct {
				g     Geometry
				inner float64
				bc
			}{g, 0, bc{Symmetry, o}})
		}
	}
	for _, g := range shapes {
		for _, in := range []BoundaryKind{Fixed, Film, Flux} {
			for _, o := range []BoundaryKind{Fixed, Film, Flux} {
				cases = append(cases, struct {
					g     Geometry
					inner float64
					bc
				}{g, 0.3e-3, bc{in, o}})
			}
		}
	}
	for _, c := range cases {
		name := fmt.Sprintf("%v inner=%g %v/%v", c.g, c.inner, c.bc.inner, c.bc.outer)
		t.Run(name, func(t *testing.T) {
			var cellsE, surfE, fluxE, innerE []float64
			for _, n := range []int{40, 80, 160} {
				e := steadyMMS(t, c.g, c.inner, 1e-3, c.bc.inner, c.bc.outer, n)
				cellsE = append(cellsE, e.cells)
				surfE = append(surfE, e.surface)
				fluxE = append(fluxE, e.flux)
				innerE = append(innerE, e.inner)
			}
			checkOrder(t, "cell averages", cellsE)
			if c.bc.outer != Fixed {
				checkOrder(t, "surface value", surfE)
			}
			if c.bc.outer != Flux {
				checkOrder(t, "surface flux", fluxE)
			}
			if c.bc.inner != Fixed {
				checkOrder(t, "inner value", innerE)
			}
		})
	}
}

// TestOrderLayers checks the contact between layers (partition coefficient
// and contact resistance) with a steady manufactured solution that is f in
// the core and, in the coat,
//
//	c = K f(r₁) + R_c D₁ f'(r₁) + (D₁/D₂)(f(r) − f(r₁)),
//
// which satisfies continuity of flux and (K c_core − c_coat)/R_c = flux at
// the interface r₁.
func TestOrderLayers(t *testing.T) {
	const (
		R  = 1e-3
		D1 = 1e-9
		D2 = 3e-10
		kp = 1.8
	)
	r1 := 0.6 * R
	k1, k2 := 2*D1/(R*R), 5*D2/(R*R)
	rc := 0.2 * R / D2
	for _, g := range shapes {
		for _, inner := range []float64{0, 0.2e-3} {
			t.Run(fmt.Sprintf("%v inner=%g", g, inner), func(t *testing.T) {
				prof := mmsProfile{R: R, even: inner == 0}
				f1, d1r, _ := prof.f(r1)
				exact := func(r float64) (v, d1, lap float64) {
					fv, fd1, fd2 := prof.f(r)
					if r < r1 {
						return fv, fd1, laplacian(g, r, fd1, fd2)
					}
					q := D1 / D2
					return kp*f1 + rc*D1*d1r + q*(fv-f1), q * fd1, q * laplacian(g, r, fd1, fd2)
				}
				var errs []float64
				for _, n := range []int{40, 80, 160} {
					vR, dR, _ := exact(R)
					in := []Boundary{{Kind: Symmetry}}
					if inner > 0 {
						v0, _, _ := exact(inner)
						in = []Boundary{{Kind: Fixed, Value: constant(v0)}}
					}
					spec := &Spec{Geometry: g, Inner: inner, NSpecies: 1,
						Layers: []Layer{
							{Outer: r1, D: []float64{D1}, Rate: [][]float64{{-k1}}, Cells: n},
							{Outer: R, D: []float64{D2}, Rate: [][]float64{{-k2}}, Cells: n / 2,
								Partition: []float64{kp}, Resistance: []float64{rc}},
						},
						InnerBC: in,
						OuterBC: []Boundary{{Kind: Film, H: 2 * D2 / R, Value: constant(vR + D2*dR/(2*D2/R))}},
						ExtraSource: func(_ int, _, r float64) float64 {
							v, _, lap := exact(r)
							if r < r1 {
								return -D1*lap + k1*v
							}
							return -D2*lap + k2*v
						},
					}
					d, err := Build(spec)
					if err != nil {
						t.Fatal(err)
					}
					y := steadyState(t, d, 0)
					ex := exactAverages(d, func(r float64) float64 { v, _, _ := exact(r); return v })
					e := 0.0
					for i := range ex {
						e = math.Max(e, math.Abs(y[i]-ex[i]))
					}
					errs = append(errs, e)
				}
				checkOrder(t, "cell averages", errs)
			})
		}
	}
}

// transientMMS is c(r,t) = A(t) + B(t) ψ(r) with B = 1 + 0.3 sin(ωt) and
// ψ = cos(2.2 r/R) (+ 0.3 r/R when not even). With a bath, A(t) is chosen
// so that the bath balance V_b dc_b/dt = −Area·D ∂c/∂r holds exactly with
// c_b = (c(R) + D ∂c/∂r/H)/K (no film: H = ∞); otherwise
// A = 0.5 + 0.2 sin(0.7ωt).
type transientMMS struct {
	g            Geometry
	prof         mmsProfile
	omega        float64
	bath         bool
	a0, slope, h float64 // bath: A(t) = a0 − slope ∫B − (B − 1) φR
	phiR         float64
}

func (m *transientMMS) B(t float64) (b, db, intB float64) {
	w := m.omega
	return 1 + 0.3*math.Sin(w*t), 0.3 * w * math.Cos(w*t), t + 0.3*(1-math.Cos(w*t))/w
}

func (m *transientMMS) A(t float64) (a, da float64) {
	b, db, ib := m.B(t)
	if m.bath {
		return m.a0 - m.slope*ib - (b-1)*m.phiR, -m.slope*b - db*m.phiR
	}
	w := 0.7 * m.omega
	return 0.5 + 0.2*math.Sin(w*t), 0.2 * w * math.Cos(w*t)
}

// c returns the value, ∂c/∂t, ∂c/∂r and the Laplacian.
func (m *transientMMS) c(r, t float64) (v, dt, dr, lap float64) {
	a, da := m.A(t)
	b, db, _ := m.B(t)
	p, d1, d2 := m.prof.f(r)
	p-- // ψ = f − 1
	return a + b*p, da + db*p, b * d1, b * laplacian(m.g, r, d1, d2)
}

// TestOrderTransientMMS checks second order in space for time-dependent
// boundary values (Fixed, Film, Flux with Value(t)) and for the bath with
// and without a film, integrating in time with the solvers' BDF code at a
// tolerance far below the space error.
func TestOrderTransientMMS(t *testing.T) {
	const (
		R   = 1e-3
		D   = 1e-9
		cap = 0.7
		kp  = 1.3
		T   = 300.0
	)
	k := 1.5 * D / (R * R)
	H := 4 * D / R
	omega := 2 * math.Pi / 500
	type tc struct {
		g     Geometry
		inner float64
		in    BoundaryKind
		out   BoundaryKind
		h     float64 // film coefficient for Bath
	}
	var cases []tc
	for _, g := range shapes {
		cases = append(cases, tc{g, 0, Symmetry, Bath, 0}, tc{g, 0, Symmetry, Bath, H})
	}
	cases = append(cases,
		tc{Sphere, 0.3e-3, Fixed, Film, 0},
		tc{Cylinder, 0.3e-3, Film, Flux, 0},
		tc{Slab, 0.3e-3, Flux, Fixed, 0},
		tc{Sphere, 0.3e-3, Film, Bath, H},
	)
	for _, c := range cases {
		t.Run(fmt.Sprintf("%v inner=%g %v/%v H=%g", c.g, c.inner, c.in, c.out, c.h), func(t *testing.T) {
			var errs, bathErrs []float64
			for _, n := range []int{40, 80, 160} {
				m := &transientMMS{g: c.g, prof: mmsProfile{R: R, even: c.inner == 0}, omega: omega, bath: c.out == Bath}
				_, d1R, _ := m.prof.f(R)
				pR, _, _ := m.prof.f(R)
				pR--
				area := area(c.g, R)
				vb := 2.5 * bodyVolume(c.g, R)
				if m.bath {
					m.phiR = pR
					if c.h > 0 {
						m.phiR += D * d1R / c.h
					}
					m.slope = kp * area * D * d1R / vb
					m.a0 = 0.4
				}
				value := func(kind BoundaryKind, r, outward float64) func(float64) float64 {
					return func(t float64) float64 {
						v, _, dr, _ := m.c(r, t)
						j := outward * D * dr
						switch kind {
						case Fixed:
							return v / kp
						case Film:
							return (v + j/H) / kp
						case Flux:
							return j
						}
						return 0
					}
				}
				in := []Boundary{{Kind: c.in, H: H, Partition: kp, Value: value(c.in, c.inner, -1)}}
				out := []Boundary{{Kind: c.out, H: H, Partition: kp, Value: value(c.out, R, 1)}}
				if m.bath {
					v0, _, dr0, _ := m.c(R, 0)
					cb0 := v0
					if c.h > 0 {
						cb0 += D * dr0 / c.h
					}
					out = []Boundary{{Kind: Bath, H: c.h, Partition: kp, BathVolume: vb, BathStart: cb0 / kp}}
				}
				spec := &Spec{Geometry: c.g, Inner: c.inner, NSpecies: 1,
					Layers: []Layer{{Outer: R, D: []float64{D}, Capacity: []float64{cap},
						Rate: [][]float64{{-k}}, Cells: n}},
					InnerBC: in, OuterBC: out,
					Init: func(_ int, r float64) float64 { v, _, _, _ := m.c(r, 0); return v },
					ExtraSource: func(_ int, t, r float64) float64 {
						v, dt, _, lap := m.c(r, t)
						return cap*dt - D*lap + k*v
					},
				}
				d, err := Build(spec)
				if err != nil {
					t.Fatal(err)
				}
				res := integrate(t, d, []float64{T}, &solvers.Settings{RTol: 1e-11, ATol: 1e-13})
				ex := exactAverages(d, func(r float64) float64 { v, _, _, _ := m.c(r, T); return v })
				e := 0.0
				for i := range ex {
					e = math.Max(e, math.Abs(res.Y[0][i]-ex[i]))
				}
				errs = append(errs, e)
				if m.bath {
					vR, _, drR, _ := m.c(R, T)
					want := vR
					if c.h > 0 {
						want += D * drR / c.h
					}
					cb, _ := d.BathValue(res.Y[0], 0)
					bathErrs = append(bathErrs, math.Abs(cb-want/kp))
				}
			}
			checkOrder(t, "cell averages", errs)
			if bathErrs != nil {
				checkOrder(t, "bath value", bathErrs)
			}
		})
	}
}
