package fv

import (
	"math"
	"testing"

	"github.com/massline/massline/solvers"
)

// Steady diffusion with a concentration-dependent diffusivity has closed
// forms through the Kirchhoff transformation U(c) = ∫ D(c) dc, which turns
// the balance into Laplace's equation for U (source: J. Crank, The
// Mathematics of Diffusion, 2nd ed., Oxford 1975, ch. 9, steady state with
// a concentration-dependent diffusivity — from memory): through a slab of
// thickness L with faces held at c0 and c1 the flux is
// (U(c1) − U(c0))/L, for D = D0·exp(β c) equal to
// (D0/(β L))·(exp(β c1) − exp(β c0)); through a spherical shell
// r1 < r < r2 the total rate is 4π (U(c2) − U(c1))/(1/r1 − 1/r2). A
// diffusivity that depends on position only, D = D0 (1 + x/L) in a slab,
// gives the flux D0 (c0 − c1)/(L ln 2) (elementary integration of
// −D dc/dx = const; common practice, no source).

// steady solves the steady state of d from a linear starting profile.
func steady(t *testing.T, d *Discretization) []float64 {
	t.Helper()
	y, err := solvers.Steady(d.Problem(), d.Y0(), 0, nil)
	if err != nil {
		t.Fatalf("steady state: %v", err)
	}
	return y
}

// linearInit returns Init interpolating c0 at a and c1 at b.
func linearInit(a, b, c0, c1 float64) func(int, float64) float64 {
	return func(_ int, r float64) float64 { return c0 + (c1-c0)*(r-a)/(b-a) }
}

// checkOrder2 asserts that successive errors fall by 4 (order 2 ± 0.15).
func checkOrder2(t *testing.T, what string, errs []float64) {
	t.Helper()
	for i, p := range order(errs) {
		if math.Abs(p-2) > 0.15 {
			t.Errorf("%s: observed order %.3f between grids %d and %d (errors %.3g)", what, p, i, i+1, errs)
		}
	}
}

// checkAtLeast2 asserts an observed order of at least 1.85 (steady slabs
// superconverge: the observed order there is about 4).
func checkAtLeast2(t *testing.T, what string, errs []float64) {
	t.Helper()
	for i, p := range order(errs) {
		if p < 1.85 {
			t.Errorf("%s: observed order %.3f between grids %d and %d (errors %.3g)", what, p, i, i+1, errs)
		}
	}
}

func TestKirchhoffSlab(t *testing.T) {
	const (
		L, D0, beta = 1e-3, 1e-9, 1.3
		c0, c1      = 0.2, 1.5
	)
	exact := D0 / (beta * L) * (math.Exp(beta*c1) - math.Exp(beta*c0))
	profile := func(x float64) float64 {
		return math.Log(math.Exp(beta*c0)+x/L*(math.Exp(beta*c1)-math.Exp(beta*c0))) / beta
	}
	var eFlux, eIn, eCells []float64
	for _, n := range []int{10, 20, 40} {
		d, err := Build(&Spec{Geometry: Slab, NSpecies: 1,
			Layers:  []Layer{{Outer: L, D: []float64{D0}, Cells: n, Diffusivity: []DiffusivityFunc{expD(D0, beta, 0, 0)}}},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(c0)}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(c1)}},
			Init:    linearInit(0, L, c0, c1)})
		if err != nil {
			t.Fatal(err)
		}
		y := steady(t, d)
		jo, _ := d.SurfaceFlux(0, y, 0)
		ji, _ := d.InnerFlux(0, y, 0)
		eFlux = append(eFlux, relErr(jo, exact))
		eIn = append(eIn, relErr(-ji, exact))
		want := exactAverages(d, profile)
		worst := 0.0
		for i, w := range want {
			worst = math.Max(worst, math.Abs(y[i]-w))
		}
		eCells = append(eCells, worst)
	}
	if eFlux[2] > 1e-5 {
		t.Errorf("flux error %.2e on 40 cells", eFlux[2])
	}
	checkAtLeast2(t, "outer flux", eFlux)
	checkAtLeast2(t, "inner flux", eIn)
	checkAtLeast2(t, "cell values", eCells)
}

func TestKirchhoffShell(t *testing.T) {
	const (
		r1, r2, D0, beta = 0.4e-3, 1e-3, 1e-9, -0.9
		c1, c2           = 1.0, 0.2
	)
	U := func(c float64) float64 { return D0 / beta * math.Exp(beta*c) }
	exact := 4 * math.Pi * (U(c2) - U(c1)) / (1/r1 - 1/r2) // total inward rate at r2
	var errs []float64
	for _, n := range []int{20, 40, 80} {
		d, err := Build(&Spec{Geometry: Sphere, NSpecies: 1, Inner: r1,
			Layers:  []Layer{{Outer: r2, D: []float64{D0}, Cells: n, Diffusivity: []DiffusivityFunc{expD(D0, beta, 0, 0)}}},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(c1)}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(c2)}},
			Init:    linearInit(r1, r2, c1, c2)})
		if err != nil {
			t.Fatal(err)
		}
		y := steady(t, d)
		jo, _ := d.SurfaceFlux(0, y, 0)
		errs = append(errs, relErr(jo*4*math.Pi*r2*r2, exact))
	}
	checkOrder2(t, "shell rate", errs)
}

// TestKirchhoffFilm: slab with a film at the outer face; the surface value
// c_s solves H (c_b − c_s) = (U(c_s) − U(c0))/L.
func TestKirchhoffFilm(t *testing.T) {
	const (
		L, D0, beta, H = 1e-3, 1e-9, 1.1, 2e-6
		c0, cb         = 0.1, 2.0
	)
	U := func(c float64) float64 { return D0 / beta * math.Exp(beta*c) }
	lo, hi := c0, cb
	for range 200 {
		m := 0.5 * (lo + hi)
		if H*(cb-m) > (U(m)-U(c0))/L {
			lo = m
		} else {
			hi = m
		}
	}
	exact := H * (cb - 0.5*(lo+hi))
	var errs []float64
	for _, n := range []int{10, 20, 40} {
		d, err := Build(&Spec{Geometry: Slab, NSpecies: 1,
			Layers:  []Layer{{Outer: L, D: []float64{D0}, Cells: n, Diffusivity: []DiffusivityFunc{expD(D0, beta, 0, 0)}}},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(c0)}},
			OuterBC: []Boundary{{Kind: Film, H: H, Value: constant(cb)}},
			Init:    linearInit(0, L, c0, cb)})
		if err != nil {
			t.Fatal(err)
		}
		y := steady(t, d)
		jo, _ := d.SurfaceFlux(0, y, 0)
		errs = append(errs, relErr(jo, exact))
	}
	checkAtLeast2(t, "film flux", errs)
}

// TestKirchhoffContact: two slab layers with different variable
// diffusivities, a partition coefficient and a contact resistance; the flux
// J solves K·a(J) − b(J) = J·Rc with U1(a) = U1(c0) − J L1 and
// U2(b) = U2(c3) + J L2.
func TestKirchhoffContact(t *testing.T) {
	const (
		L1, L2, D1, D2, beta, gamma = 0.6e-3, 0.5e-3, 1e-9, 4e-10, 0.7, 1.5
		K, Rc, c0, c3               = 1.8, 2e5, 1.2, 0.1
	)
	U1 := func(c float64) float64 { return D1 / beta * math.Exp(beta*c) }
	U1inv := func(u float64) float64 { return math.Log(u*beta/D1) / beta }
	U2 := func(c float64) float64 { return D2 * (c + gamma*c*c/2) }
	U2inv := func(u float64) float64 { return (-1 + math.Sqrt(1+2*gamma*u/D2)) / gamma }
	res := func(J float64) float64 {
		a := U1inv(U1(c0) - J*L1)
		b := U2inv(U2(c3) + J*L2)
		return K*a - b - J*Rc
	}
	lo, hi := 0.0, (U1(c0)-U1(0))/L1
	for range 200 {
		m := 0.5 * (lo + hi)
		if res(m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	exact := 0.5 * (lo + hi) // in +x, leaves through the outer face
	gD := func(r float64, c, dD []float64) float64 {
		if dD != nil {
			dD[0] = D2 * gamma
		}
		return D2 * (1 + gamma*c[0])
	}
	var errs []float64
	for _, n := range []int{32, 64, 128} {
		d, err := Build(&Spec{Geometry: Slab, NSpecies: 1,
			Layers: []Layer{
				{Outer: L1, D: []float64{D1}, Cells: n, Diffusivity: []DiffusivityFunc{expD(D1, beta, 0, 0)}},
				{Outer: L1 + L2, D: []float64{D2}, Cells: n, Diffusivity: []DiffusivityFunc{gD},
					Partition: []float64{K}, Resistance: []float64{Rc}},
			},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(c0)}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(c3)}},
			Init:    linearInit(0, L1+L2, c0, c3)})
		if err != nil {
			t.Fatal(err)
		}
		y := steady(t, d)
		jo, _ := d.SurfaceFlux(0, y, 0)
		errs = append(errs, relErr(-jo, exact))
	}
	checkOrder2(t, "contact flux", errs)
}

func TestPositionDependentDiffusivity(t *testing.T) {
	const (
		L, D0  = 1e-3, 1e-9
		c0, c1 = 1.0, 0.3
	)
	exact := D0 * (c0 - c1) / (L * math.Ln2) // in +x
	df := func(r float64, c, dD []float64) float64 { return D0 * (1 + r/L) }
	var errs []float64
	for _, n := range []int{20, 40, 80} {
		d, err := Build(&Spec{Geometry: Slab, NSpecies: 1,
			Layers:  []Layer{{Outer: L, D: []float64{D0}, Cells: n, Diffusivity: []DiffusivityFunc{df}}},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(c0)}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(c1)}},
			Init:    linearInit(0, L, c0, c1)})
		if err != nil {
			t.Fatal(err)
		}
		y := steady(t, d)
		jo, _ := d.SurfaceFlux(0, y, 0)
		errs = append(errs, relErr(-jo, exact))
	}
	checkOrder2(t, "flux", errs)
}
