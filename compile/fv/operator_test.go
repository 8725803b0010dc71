package fv

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/massline/massline/solvers"
	"gonum.org/v1/gonum/mat"
)

// operatorCases are discretisations that exercise every term of the
// operator: all geometries, hollow bodies, layers with partition and
// contact resistance, every boundary kind, several species with coupled
// kinetics, sources, a nonlinear Kinetics hook and an extra source.
func operatorCases() []struct {
	name string
	spec *Spec
} {
	mm := func(t, r float64, layer int, c, rate, dRate []float64) {
		// Saturating conversion of species 0 into species 1 (Michaelis–
		// Menten form), faster in layer 1.
		vm, km := 2e-3*float64(1+layer), 0.3
		v := vm * c[0] / (km + c[0])
		rate[0] -= v
		rate[1] += v
		if dRate != nil {
			dv := vm * km / ((km + c[0]) * (km + c[0]))
			dRate[0*len(c)+0] -= dv
			dRate[1*len(c)+0] += dv
		}
	}
	return []struct {
		name string
		spec *Spec
	}{
		{"sphere fixed", &Spec{Geometry: Sphere, NSpecies: 1,
			Layers:  []Layer{{Outer: 1e-3, D: []float64{1e-9}, Cells: 12}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(2)}}}},
		{"slab fixed inner, film outer", &Spec{Geometry: Slab, NSpecies: 1,
			Layers:  []Layer{{Outer: 2e-3, D: []float64{3e-10}, Capacity: []float64{0.4}, Cells: 10}},
			InnerBC: []Boundary{{Kind: Fixed, Value: constant(1), Partition: 0.7}},
			OuterBC: []Boundary{{Kind: Film, H: 1e-6, Value: constant(0.5), Partition: 2}}}},
		{"cylinder bath", &Spec{Geometry: Cylinder, NSpecies: 1,
			Layers:  []Layer{{Outer: 5e-4, D: []float64{2e-10}, Capacity: []float64{0.6}, Cells: 9}},
			OuterBC: []Boundary{{Kind: Bath, BathVolume: 1e-6, BathStart: 3, Partition: 1.7}}}},
		{"layered sphere, bath with film, two species", &Spec{Geometry: Sphere, NSpecies: 2,
			Layers: []Layer{
				{Outer: 1e-3, D: []float64{1e-9, 5e-10}, Cells: 8,
					Rate: [][]float64{{-1e-3, 2e-4}, {1e-3, -5e-4}}, Source: []float64{1e-4, 0}},
				{Outer: 1.2e-3, D: []float64{1e-10, 2e-10}, Capacity: []float64{0.5, 2}, Cells: 5,
					Partition: []float64{0.6, 1.5}, Resistance: []float64{1e5, 0}},
			},
			OuterBC: []Boundary{
				{Kind: Bath, H: 2e-6, BathVolume: 3e-9, BathStart: 1, Partition: 1.2},
				{Kind: Flux, Value: constant(-1e-7)},
			}}},
		{"hollow sphere, kinetics, three species", &Spec{Geometry: Sphere, NSpecies: 3, Inner: 2e-4,
			Layers: []Layer{{Outer: 1e-3, D: []float64{1e-9, 7e-10, 3e-10}, Cells: 11,
				Rate: [][]float64{{0, 0, 0}, {0, -1e-3, 0}, {0, 5e-4, -1e-4}}}},
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
		{"hollow cylinder, three layers, extra source", &Spec{Geometry: Cylinder, NSpecies: 1, Inner: 1e-4,
			Layers: []Layer{
				{Outer: 3e-4, D: []float64{1e-9}, Cells: 4},
				{Outer: 4e-4, D: []float64{1e-10}, Cells: 3, Partition: []float64{3}},
				{Outer: 6e-4, D: []float64{5e-10}, Cells: 6, Resistance: []float64{2e4}},
			},
			InnerBC:     []Boundary{{Kind: Flux, Value: func(t float64) float64 { return 1e-6 * (1 + t) }}},
			OuterBC:     []Boundary{{Kind: Film, H: 5e-6, Value: constant(0.3), Partition: 0.9}},
			ExtraSource: func(s int, t, r float64) float64 { return 1e-3 * math.Cos(r*1e4) * (1 + t) }}},
	}
}

// randomState returns a state with values of order one.
func randomState(rng *rand.Rand, n int) []float64 {
	y := make([]float64, n)
	for i := range y {
		y[i] = 0.2 + rng.Float64()
	}
	return y
}

func TestJacobianMatchesFiniteDifferences(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range operatorCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			n := p.N
			y := randomState(rng, n)
			tm := 0.37
			J := solvers.NewBand(n, p.Lower, p.Upper)
			p.Jac(tm, y, J)
			fp, fm := make([]float64, n), make([]float64, n)
			scale := 0.0
			for _, v := range J.Data {
				scale = math.Max(scale, math.Abs(v))
			}
			for j := 0; j < n; j++ {
				h := 1e-6 * math.Max(1, math.Abs(y[j]))
				y0 := y[j]
				y[j] = y0 + h
				p.Func(tm, y, fp)
				y[j] = y0 - h
				p.Func(tm, y, fm)
				y[j] = y0
				for i := 0; i < n; i++ {
					fd := (fp[i] - fm[i]) / (2 * h)
					if math.Abs(fd-J.At(i, j)) > 1e-7*scale {
						t.Errorf("J[%d][%d] = %.10g, finite difference %.10g", i, j, J.At(i, j), fd)
					}
					if (j-i > p.Upper || i-j > p.Lower) && math.Abs(fd) > 1e-9*scale {
						t.Errorf("entry (%d,%d) = %g lies outside the declared band (%d, %d)", i, j, fd, p.Lower, p.Upper)
					}
				}
			}
		})
	}
}

// TestConservation checks, at random states, that the rate of change of the
// amount held equals the boundary inflow plus production exactly (the face
// fluxes telescope), and that the bath loses what the body gains through the
// outer face.
func TestConservation(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, tc := range operatorCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			for trial := 0; trial < 5; trial++ {
				y := randomState(rng, p.N)
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
					if k := d.BathIndex(s); k >= 0 {
						lost := -d.outer[s].vb * dy[k]
						out := dq[QuadPerSpecies*s+QuadOuter]
						if math.Abs(lost-out) > 1e-13*math.Abs(out) {
							t.Errorf("species %d: bath loses %.16g, body gains %.16g through the outer face", s, lost, out)
						}
					}
				}
			}
		})
	}
}

// TestStable checks that every eigenvalue of the (linear) operator has a
// non-positive real part: the semi-discrete system is dissipative.
func TestStable(t *testing.T) {
	for _, tc := range operatorCases() {
		if tc.spec.Kinetics != nil {
			continue
		}
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			A, _, _, _ := linearParts(d, 0)
			var eig mat.Eigen
			if !eig.Factorize(A, mat.EigenNone) {
				t.Fatal("eigen decomposition failed")
			}
			norm := mat.Norm(A, math.Inf(1))
			for _, v := range eig.Values(nil) {
				if real(v) > 1e-12*norm {
					t.Errorf("eigenvalue %v has a positive real part (‖A‖∞ = %g)", v, norm)
				}
			}
		})
	}
	// The default grid of each geometry with a fixed surface.
	for _, g := range []Geometry{Slab, Cylinder, Sphere} {
		d, err := Build(&Spec{Geometry: g, NSpecies: 1, Layers: []Layer{{Outer: 1, D: []float64{1}}},
			OuterBC: []Boundary{{Kind: Fixed, Value: constant(1)}}})
		if err != nil {
			t.Fatal(err)
		}
		A, _, _, _ := linearParts(d, 0)
		var eig mat.Eigen
		if !eig.Factorize(A, mat.EigenNone) {
			t.Fatal("eigen decomposition failed")
		}
		for _, v := range eig.Values(nil) {
			if real(v) >= 0 || math.Abs(imag(v)) > 1e-8*math.Abs(real(v)) {
				t.Errorf("%v default grid: eigenvalue %v is not real and negative", g, v)
			}
		}
	}
}

func TestNoAllocations(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, tc := range operatorCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			y := randomState(rng, p.N)
			dy := make([]float64, p.N)
			dq := make([]float64, p.NQuad)
			J := solvers.NewBand(p.N, p.Lower, p.Upper)
			allocs := testing.AllocsPerRun(50, func() {
				p.Func(0.5, y, dy)
				J.Zero()
				p.Jac(0.5, y, J)
				p.Quad(0.5, y, dq)
			})
			if allocs != 0 {
				t.Errorf("Func+Jac+Quad allocate %v times per call", allocs)
			}
		})
	}
}

// TestJacobianIntoWiderBand checks that Jac also fills a band matrix wider
// than the declared one (as a caller sharing one workspace might pass).
func TestJacobianIntoWiderBand(t *testing.T) {
	d, err := Build(operatorCases()[3].spec)
	if err != nil {
		t.Fatal(err)
	}
	p := d.Problem()
	y := randomState(rand.New(rand.NewPCG(7, 8)), p.N)
	J1 := solvers.NewBand(p.N, p.Lower, p.Upper)
	J2 := solvers.NewBand(p.N, p.Lower+2, p.Upper+3)
	p.Jac(0, y, J1)
	p.Jac(0, y, J2)
	for i := 0; i < p.N; i++ {
		for j := 0; j < p.N; j++ {
			if J1.At(i, j) != J2.At(i, j) {
				t.Fatalf("entry (%d,%d): %g in the declared band, %g in a wider one", i, j, J1.At(i, j), J2.At(i, j))
			}
		}
	}
}

func TestGrid(t *testing.T) {
	cases := []struct {
		name   string
		spec   *Spec
		volume float64
	}{
		{"slab", &Spec{Geometry: Slab, NSpecies: 1, Layers: []Layer{{Outer: 2, D: []float64{1}}},
			OuterBC: []Boundary{{Kind: Fixed}}}, 2},
		{"cylinder", &Spec{Geometry: Cylinder, NSpecies: 1, Layers: []Layer{{Outer: 2, D: []float64{1}}},
			OuterBC: []Boundary{{Kind: Fixed}}}, 4 * math.Pi},
		{"hollow sphere, two layers", &Spec{Geometry: Sphere, NSpecies: 1, Inner: 0.5,
			Layers:  []Layer{{Outer: 1, D: []float64{1}}, {Outer: 1.1, D: []float64{0.01}}},
			InnerBC: []Boundary{{Kind: Fixed}}, OuterBC: []Boundary{{Kind: Flux, Value: constant(1)}}},
			4 * math.Pi / 3 * (1.1*1.1*1.1 - 0.125)},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			g := d.Grid
			n := g.Cells()
			if len(g.Faces) != n+1 || len(g.Areas) != n+1 || len(g.Centres) != n || len(g.Layer) != n {
				t.Fatalf("inconsistent grid lengths")
			}
			if g.Faces[0] != tc.spec.Inner || g.Faces[n] != tc.spec.Layers[len(tc.spec.Layers)-1].Outer {
				t.Errorf("grid spans [%g, %g]", g.Faces[0], g.Faces[n])
			}
			sum := 0.0
			for i := 0; i < n; i++ {
				if !(g.Faces[i+1] > g.Faces[i]) || !(g.Centres[i] > g.Faces[i] && g.Centres[i] < g.Faces[i+1]) {
					t.Errorf("cell %d: faces %g, %g, centre %g", i, g.Faces[i], g.Faces[i+1], g.Centres[i])
				}
				if i > 0 && g.Layer[i] != g.Layer[i-1] && g.Faces[i] != tc.spec.Layers[g.Layer[i-1]].Outer {
					t.Errorf("layer boundary at %g, want %g", g.Faces[i], tc.spec.Layers[g.Layer[i-1]].Outer)
				}
				sum += g.Volumes[i]
			}
			if relErr(sum, tc.volume) > 1e-14 {
				t.Errorf("volumes add up to %.16g, want %.16g", sum, tc.volume)
			}
			// The widest and narrowest cells of the first layer are in a
			// ratio of about DefaultCluster (less the uniform share).
			wmin, wmax := math.Inf(1), 0.0
			for i := 0; i < n && g.Layer[i] == 0; i++ {
				w := g.Faces[i+1] - g.Faces[i]
				wmin, wmax = math.Min(wmin, w), math.Max(wmax, w)
			}
			if r := wmax / wmin; r < 3 || r > DefaultCluster {
				t.Errorf("width ratio in layer 0 is %g", r)
			}
		})
	}
	// Narrowest cells sit at the outer face of a solid body.
	d, _ := Build(&Spec{Geometry: Sphere, NSpecies: 1, Layers: []Layer{{Outer: 1, D: []float64{1}}},
		OuterBC: []Boundary{{Kind: Fixed}}})
	f := d.Grid.Faces
	n := d.Cells()
	if n != DefaultCells {
		t.Errorf("default cells: %d, want %d", n, DefaultCells)
	}
	if !(f[n]-f[n-1] < (f[1]-f[0])/10) {
		t.Errorf("outer cell %g is not much narrower than the centre cell %g", f[n]-f[n-1], f[1]-f[0])
	}
	// Uniform when Cluster = 1.
	d, _ = Build(&Spec{Geometry: Slab, NSpecies: 1, Cluster: 1, Layers: []Layer{{Outer: 1, D: []float64{1}, Cells: 10}},
		OuterBC: []Boundary{{Kind: Fixed}}})
	for i, v := range d.Grid.Volumes {
		if math.Abs(v-0.1) > 1e-15 {
			t.Errorf("uniform cell %d has width %g", i, v)
		}
	}
}
