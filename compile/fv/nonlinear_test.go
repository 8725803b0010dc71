package fv

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/massline/massline/solvers"
)

// langmuir returns the store ε·c + Q·K·c/(1 + K·c): porosity ε plus a
// Langmuir isotherm of capacity Q (per unit volume of body) and affinity
// K (source: I. Langmuir, J. Am. Chem. Soc. 40 (1918) 1361, the isotherm
// q = Q K c/(1 + K c); common practice, no source, for adding the pore
// fluid ε·c).
func langmuir(eps, Q, K float64) StoreFunc {
	return func(c float64) (float64, float64) {
		den := 1 + K*c
		return eps*c + Q*K*c/den, eps + Q*K/(den*den)
	}
}

// expD returns D0·exp(β·c_s) for species s (and, when cross is set, also
// grows with the concentration of the other species).
func expD(D0, beta float64, s int, cross float64) DiffusivityFunc {
	return func(r float64, c, dD []float64) float64 {
		x := beta * c[s]
		for j := range c {
			if j != s {
				x += cross * c[j]
			}
		}
		D := D0 * math.Exp(x)
		if dD != nil {
			for j := range c {
				if j == s {
					dD[j] = beta * D
				} else {
					dD[j] = cross * D
				}
			}
		}
		return D
	}
}

// nonlinearCases exercise every nonlinear path: stores in one layer and not
// the next, variable diffusivities inside layers, at contacts (on either
// side) and at every boundary kind, cross-species dependence, position
// dependence, baths with and without film, and Kinetics together with
// a store.
func nonlinearCases() []struct {
	name string
	spec *Spec
} {
	mm := operatorCases()[4].spec.Kinetics
	posD := func(D0 float64) DiffusivityFunc {
		return func(r float64, c, dD []float64) float64 {
			// Grows with depth and with the first species.
			D := D0 * (1 + 300*r) * (1 + 0.5*c[0]*c[0])
			if dD != nil {
				dD[0] = D0 * (1 + 300*r) * c[0]
			}
			return D
		}
	}
	return []struct {
		name string
		spec *Spec
	}{
		{"sphere Langmuir film", &Spec{Geometry: Sphere, NSpecies: 1,
			Layers:  []Layer{{Outer: 1e-3, D: []float64{1e-9}, Cells: 12, Store: []StoreFunc{langmuir(0.4, 10, 2)}}},
			OuterBC: []Boundary{{Kind: Film, H: 1e-5, Value: constant(1)}}}},
		{"slab variable D fixed both faces", &Spec{Geometry: Slab, NSpecies: 1,
			Layers:  []Layer{{Outer: 2e-3, D: []float64{1e-9}, Cells: 10, Diffusivity: []DiffusivityFunc{expD(1e-9, 1.3, 0, 0)}}},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(0.2)}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(1.5), Partition: 0.8}}}},
		{"cylinder Langmuir, variable D, bath", &Spec{Geometry: Cylinder, NSpecies: 1,
			Layers: []Layer{{Outer: 5e-4, D: []float64{2e-10}, Cells: 9, Capacity: []float64{3},
				Store: []StoreFunc{langmuir(0.3, 5, 1.5)}, Diffusivity: []DiffusivityFunc{expD(2e-10, -0.7, 0, 0)}}},
			OuterBC: []Boundary{{Kind: Bath, BathVolume: 1e-6, BathStart: 3, Partition: 1.7}}}},
		{"layered sphere, store in core, variable D in coat, bath with film, two species", &Spec{Geometry: Sphere, NSpecies: 2,
			Layers: []Layer{
				{Outer: 1e-3, D: []float64{1e-9, 5e-10}, Cells: 8,
					Rate: [][]float64{{-1e-3, 2e-4}, {1e-3, -5e-4}}, Source: []float64{1e-4, 0},
					Store: []StoreFunc{langmuir(0.5, 4, 3), nil}},
				{Outer: 1.2e-3, D: []float64{1e-10, 2e-10}, Capacity: []float64{0.5, 2}, Cells: 5,
					Partition: []float64{0.6, 1.5}, Resistance: []float64{1e5, 0},
					Diffusivity: []DiffusivityFunc{expD(1e-10, 0.8, 0, 0.3), posD(2e-10)}},
			},
			OuterBC: []Boundary{
				{Kind: Bath, H: 2e-6, BathVolume: 3e-9, BathStart: 1, Partition: 1.2},
				{Kind: Flux, Value: constant(-1e-7)},
			}}},
		{"hollow sphere, kinetics, stores and variable D, three species", &Spec{Geometry: Sphere, NSpecies: 3, Inner: 2e-4,
			Layers: []Layer{{Outer: 1e-3, D: []float64{1e-9, 7e-10, 3e-10}, Cells: 11,
				Rate:        [][]float64{{0, 0, 0}, {0, -1e-3, 0}, {0, 5e-4, -1e-4}},
				Store:       []StoreFunc{nil, langmuir(0.4, 2, 5), langmuir(1, 1, 1)},
				Diffusivity: []DiffusivityFunc{expD(1e-9, 0.5, 0, -0.2), nil, expD(3e-10, 1, 2, 0.1)}}},
			InnerBC: []Boundary{
				{Kind: Film, H: 1e-5, Value: constant(1)},
				{Kind: Flux},
				{Kind: Fixed, Value: func(t float64) float64 { return 0.2 + 0.1*math.Sin(t) }},
			},
			OuterBC: []Boundary{
				{Kind: Fixed, Value: constant(0.5)},
				{Kind: Film, H: 3e-6},
				{Kind: Bath, BathVolume: 1e-8, BathStart: 0.4},
			},
			Kinetics: mm}},
		{"hollow cylinder, three layers, variable D on both sides of contacts", &Spec{Geometry: Cylinder, NSpecies: 1, Inner: 1e-4,
			Layers: []Layer{
				{Outer: 3e-4, D: []float64{1e-9}, Cells: 4, Diffusivity: []DiffusivityFunc{posD(1e-9)}},
				{Outer: 4e-4, D: []float64{1e-10}, Cells: 3, Partition: []float64{3}, Store: []StoreFunc{langmuir(0.2, 3, 0.5)}},
				{Outer: 6e-4, D: []float64{5e-10}, Cells: 6, Resistance: []float64{2e4}, Diffusivity: []DiffusivityFunc{expD(5e-10, 0.4, 0, 0)}},
			},
			InnerBC:     []Boundary{{Kind: Flux, Value: func(t float64) float64 { return 1e-6 * (1 + t) }}},
			OuterBC:     []Boundary{{Kind: Film, H: 5e-6, Value: constant(0.3), Partition: 0.9}},
			ExtraSource: func(s int, t, r float64) float64 { return 1e-3 * math.Cos(r*1e4) * (1 + t) }}},
	}
}

// storeState returns a random state of order one in concentration,
// converted to amounts held where the store is nonlinear.
func storeState(d *Discretization, rng *rand.Rand) []float64 {
	y := randomState(rng, d.N())
	for k := 0; k < d.nc*d.ns; k++ {
		if st := d.store[k]; st != nil {
			y[k], _ = st(y[k])
		}
	}
	return y
}

// TestNonlinearJacobian checks Jac against central differences of Func,
// QuadJac against central differences of Quad, and the ledger identity
// Σ_k W_k ∂f_k/∂y_j = Σ_quad ∂g/∂y_j column by column (source: the
// discrete balance; common practice, no source).
func TestNonlinearJacobian(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for _, tc := range nonlinearCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			if p.QuadJac == nil {
				t.Fatal("a nonlinear problem has no QuadJac")
			}
			n, nq := p.N, p.NQuad
			y := storeState(d, rng)
			tm := 0.37
			J := solvers.NewBand(n, p.Lower, p.Upper)
			G := make([]float64, nq*n)
			p.QuadJac(tm, y, G)
			p.Jac(tm, y, J)
			fp, fm := make([]float64, n), make([]float64, n)
			gp, gm := make([]float64, nq), make([]float64, nq)
			scale := 0.0
			for _, v := range J.Data {
				scale = math.Max(scale, math.Abs(v))
			}
			gscale := 0.0
			for _, v := range G {
				gscale = math.Max(gscale, math.Abs(v))
			}
			for j := 0; j < n; j++ {
				h := 1e-6 * math.Max(1, math.Abs(y[j]))
				y0 := y[j]
				y[j] = y0 + h
				p.Func(tm, y, fp)
				p.Quad(tm, y, gp)
				y[j] = y0 - h
				p.Func(tm, y, fm)
				p.Quad(tm, y, gm)
				y[j] = y0
				for i := 0; i < n; i++ {
					fd := (fp[i] - fm[i]) / (2 * h)
					if math.Abs(fd-J.At(i, j)) > 1e-6*scale {
						t.Errorf("J[%d][%d] = %.10g, finite difference %.10g", i, j, J.At(i, j), fd)
					}
					if (j-i > p.Upper || i-j > p.Lower) && math.Abs(fd) > 1e-9*scale {
						t.Errorf("entry (%d,%d) = %g lies outside the declared band (%d, %d)", i, j, fd, p.Lower, p.Upper)
					}
				}
				for i := 0; i < nq; i++ {
					fd := (gp[i] - gm[i]) / (2 * h)
					if math.Abs(fd-G[i*n+j]) > 1e-6*gscale {
						t.Errorf("G[%d][%d] = %.10g, finite difference %.10g", i, j, G[i*n+j], fd)
					}
				}
				// Ledger identity, per species.
				for s := 0; s < d.ns; s++ {
					lhs, mag := 0.0, 0.0
					for i := 0; i < d.nc; i++ {
						k := i*d.ns + s
						lhs += d.rowW[k] * J.At(k, j)
						mag += math.Abs(d.rowW[k] * J.At(k, j))
					}
					rhs := 0.0
					for q := 0; q < QuadPerSpecies; q++ {
						rhs += G[(QuadPerSpecies*s+q)*n+j]
					}
					if math.Abs(lhs-rhs) > 1e-12*math.Max(mag, 1e-300) {
						t.Errorf("species %d column %d: Σ W ∂f/∂y = %.16g, Σ ∂g/∂y = %.16g", s, j, lhs, rhs)
					}
				}
			}
		})
	}
}

// TestNonlinearConservation checks at random states that the rate of
// change of the amount held (Σ W_k f_k) equals inflow plus production
// (source: the discrete balance telescopes; common practice, no source).
func TestNonlinearConservation(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for _, tc := range nonlinearCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			for trial := 0; trial < 5; trial++ {
				y := storeState(d, rng)
				dy := make([]float64, p.N)
				dq := make([]float64, p.NQuad)
				tm := rng.Float64()
				p.Func(tm, y, dy)
				p.Quad(tm, y, dq)
				for s := 0; s < d.NSpecies(); s++ {
					held, mag := 0.0, 0.0
					for i := 0; i < d.Cells(); i++ {
						k := i*d.NSpecies() + s
						held += d.capV[k] * dy[k]
						mag += math.Abs(d.capV[k] * dy[k])
					}
					in := dq[QuadPerSpecies*s+QuadInner] + dq[QuadPerSpecies*s+QuadOuter] + dq[QuadPerSpecies*s+QuadProduced]
					if math.Abs(held-in) > 1e-12*math.Max(mag, math.Abs(in)) {
						t.Errorf("species %d: d(content)/dt = %.16g, inflow+production = %.16g", s, held, in)
					}
				}
			}
		})
	}
}

// TestNonlinearNoAllocations: Func, Jac, Quad and QuadJac do not allocate.
func TestNonlinearNoAllocations(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	for _, tc := range nonlinearCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			y := storeState(d, rng)
			dy := make([]float64, p.N)
			dq := make([]float64, p.NQuad)
			G := make([]float64, p.N*p.NQuad)
			J := solvers.NewBand(p.N, p.Lower, p.Upper)
			allocs := testing.AllocsPerRun(50, func() {
				p.Func(0.5, y, dy)
				J.Zero()
				p.Jac(0.5, y, J)
				p.Quad(0.5, y, dq)
				clear(G)
				p.QuadJac(0.5, y, G)
			})
			if allocs != 0 {
				t.Errorf("Func+Jac+Quad+QuadJac allocate %v times per call", allocs)
			}
		})
	}
}

// TestSteadyProblemJacobian checks the Jacobian of the problem SteadyState
// solves (the concentrations as unknowns of every cell) against central
// differences (common practice, no source).
func TestSteadyProblemJacobian(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	for _, tc := range nonlinearCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.problem(true)
			n := p.N
			y := randomState(rng, n)
			J := solvers.NewBand(n, p.Lower, p.Upper)
			p.Jac(0.3, y, J)
			scale := 0.0
			for _, v := range J.Data {
				scale = math.Max(scale, math.Abs(v))
			}
			fp, fm := make([]float64, n), make([]float64, n)
			for j := 0; j < n; j++ {
				h := 1e-6 * math.Max(1, math.Abs(y[j]))
				y0 := y[j]
				y[j] = y0 + h
				p.Func(0.3, y, fp)
				y[j] = y0 - h
				p.Func(0.3, y, fm)
				y[j] = y0
				for i := 0; i < n; i++ {
					if fd := (fp[i] - fm[i]) / (2 * h); math.Abs(fd-J.At(i, j)) > 1e-6*scale {
						t.Errorf("J[%d][%d] = %.10g, finite difference %.10g", i, j, J.At(i, j), fd)
					}
				}
			}
		})
	}
}
