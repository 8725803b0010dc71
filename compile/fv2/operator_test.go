package fv2

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

type opCase struct {
	name string
	spec *Spec
}

// operatorCases covers every face kind, several species with linear and
// nonlinear kinetics, time-dependent values and the smallest grids.
func operatorCases() []opCase {
	const (
		R = 1e-3
		L = 1.7e-3
		D = 1e-9
	)
	sine := func(t float64) float64 { return 0.5 + 0.2*math.Sin(t/100) }
	film := fv.Boundary{Kind: fv.Film, H: 3 * D / R, Partition: 1.7, Value: sine}
	fixed := fv.Boundary{Kind: fv.Fixed, Partition: 0.8, Value: sine}
	flux := fv.Boundary{Kind: fv.Flux, Value: func(t float64) float64 { return 1e-7 * math.Cos(t/100) }}
	seal := fv.Boundary{Kind: fv.Flux}
	kin := func(t, r, z float64, c, rate, dRate []float64) {
		// A + B → C style coupling with a position factor.
		k := 1e-3 * (1 + r/R + z/L)
		rate[0] -= k * c[0] * c[1]
		rate[1] -= k * c[0] * c[1]
		rate[2] += k*c[0]*c[1] - 1e-4*c[2]*c[2]
		if dRate != nil {
			dRate[0*3+0] -= k * c[1]
			dRate[0*3+1] -= k * c[0]
			dRate[1*3+0] -= k * c[1]
			dRate[1*3+1] -= k * c[0]
			dRate[2*3+0] += k * c[1]
			dRate[2*3+1] += k * c[0]
			dRate[2*3+2] -= 2e-4 * c[2]
		}
	}
	return []opCase{
		{"one species, fixed/film/flux", &Spec{Radius: R, Length: L, NR: 6, NZ: 7, NSpecies: 1, D: []float64{D},
			Capacity: []float64{0.4}, Rate: [][]float64{{-1e-3}}, Source: []float64{2e-3},
			Side: []fv.Boundary{fixed}, Top: []fv.Boundary{film}, Bottom: []fv.Boundary{flux}}},
		{"three species, kinetics", &Spec{Radius: R, Length: L, NR: 5, NZ: 6, NSpecies: 3, D: []float64{D, 2 * D, 0.5 * D},
			Capacity: []float64{1, 0.5, 2}, Rate: [][]float64{{-1e-3, 2e-4, 0}, {0, -1e-4, 0}, {1e-4, 0, -2e-4}},
			Side: []fv.Boundary{film, fixed, seal}, Top: []fv.Boundary{flux, film, fixed}, Bottom: []fv.Boundary{seal, seal, film},
			Kinetics:    kin,
			ExtraSource: func(s int, t, r, z float64) float64 { return 1e-4 * float64(s+1) * math.Sin(t/100+r/R+z/L) }}},
		{"smallest grid", &Spec{Radius: R, Length: L, NR: 2, NZ: 2, NSpecies: 2, D: []float64{D, D},
			Side: []fv.Boundary{film, fixed}, Top: []fv.Boundary{fixed, film}, Bottom: []fv.Boundary{flux, fixed}}},
		{"three rows", &Spec{Radius: R, Length: L, NR: 3, NZ: 3, NSpecies: 1, D: []float64{D},
			Side: []fv.Boundary{film}, Top: []fv.Boundary{fixed}, Bottom: []fv.Boundary{film}}},
		{"uniform grid", &Spec{Radius: R, Length: L, NR: 5, NZ: 4, NSpecies: 1, D: []float64{D}, Cluster: 1,
			Side: []fv.Boundary{seal}, Top: []fv.Boundary{fixed}, Bottom: []fv.Boundary{seal}}},
	}
}

// TestJacobianMatchesFiniteDifferences compares Jac with central
// differences of Func, checks that nothing lies outside the declared
// band, and compares QuadJac with differences of Quad.
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
			var G []float64
			if p.QuadJac != nil {
				G = make([]float64, p.NQuad*n)
				p.QuadJac(tm, y, G)
			} else if tc.spec.Kinetics != nil {
				t.Fatal("QuadJac missing with Kinetics")
			}
			fp, fm := make([]float64, n), make([]float64, n)
			qp, qm := make([]float64, p.NQuad), make([]float64, p.NQuad)
			scale, qscale := 0.0, 0.0
			for _, v := range J.Data {
				scale = math.Max(scale, math.Abs(v))
			}
			for _, v := range G {
				qscale = math.Max(qscale, math.Abs(v))
			}
			bad := 0
			for j := 0; j < n; j++ {
				h := 1e-6 * math.Max(1, math.Abs(y[j]))
				y0 := y[j]
				y[j] = y0 + h
				p.Func(tm, y, fp)
				p.Quad(tm, y, qp)
				y[j] = y0 - h
				p.Func(tm, y, fm)
				p.Quad(tm, y, qm)
				y[j] = y0
				for i := 0; i < n; i++ {
					fd := (fp[i] - fm[i]) / (2 * h)
					if math.Abs(fd-J.At(i, j)) > 1e-7*scale && bad < 10 {
						bad++
						t.Errorf("J[%d][%d] = %.10g, finite difference %.10g", i, j, J.At(i, j), fd)
					}
					if (j-i > p.Upper || i-j > p.Lower) && math.Abs(fd) > 1e-9*scale {
						t.Errorf("entry (%d,%d) = %g lies outside the declared band (%d, %d)", i, j, fd, p.Lower, p.Upper)
					}
				}
				if G != nil {
					for i := 0; i < p.NQuad; i++ {
						fd := (qp[i] - qm[i]) / (2 * h)
						if math.Abs(fd-G[i*n+j]) > 1e-7*qscale && bad < 10 {
							bad++
							t.Errorf("G[%d][%d] = %.10g, finite difference %.10g", i, j, G[i*n+j], fd)
						}
					}
				}
			}
		})
	}
}

// TestConservation checks at random states that the rate of change of the
// amount held, Σ V·Capacity·f, equals the sum of the ledger rates (inflow
// through the three faces plus production): the face fluxes telescope.
// It also checks FaceInflows against the quadratures and SurfaceFlux
// against their sum.
func TestConservation(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, tc := range operatorCases() {
		t.Run(tc.name, func(t *testing.T) {
			d, err := Build(tc.spec)
			if err != nil {
				t.Fatal(err)
			}
			p := d.Problem()
			y := randomState(rng, p.N)
			tm := 1.3
			f := make([]float64, p.N)
			q := make([]float64, p.NQuad)
			p.Func(tm, y, f)
			p.Quad(tm, y, q)
			for s := range d.NSpecies() {
				dm, mag := 0.0, 0.0
				for c, v := range d.Grid.Volumes {
					x := v * d.cap[s] * f[c*d.ns+s]
					dm += x
					mag += math.Abs(x)
				}
				qs := q[QuadPerSpecies*s:]
				sum := qs[QuadSide] + qs[QuadTop] + qs[QuadBottom] + qs[QuadProduced]
				if math.Abs(dm-sum) > 1e-13*mag {
					t.Errorf("species %d: d(content)/dt = %.15g, inflow + production = %.15g", s, dm, sum)
				}
				side, top, bottom, err := d.FaceInflows(tm, y, s)
				if err != nil {
					t.Fatal(err)
				}
				for k, pr := range [][2]float64{{side, qs[QuadSide]}, {top, qs[QuadTop]}, {bottom, qs[QuadBottom]}} {
					if math.Abs(pr[0]-pr[1]) > 1e-14*math.Abs(pr[1]) {
						t.Errorf("species %d: face %d inflow %.15g, quadrature %.15g", s, k, pr[0], pr[1])
					}
				}
				j, _ := d.SurfaceFlux(tm, y, s)
				R, L := tc.spec.Radius, tc.spec.Length
				area := 2*math.Pi*R*L + 2*math.Pi*R*R
				if want := (side + top + bottom) / area; math.Abs(j-want) > 1e-14*(math.Abs(side)+math.Abs(top)+math.Abs(bottom))/area {
					t.Errorf("species %d: SurfaceFlux %.15g, total inflow / area %.15g", s, j, want)
				}
			}
		})
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
			G := make([]float64, p.NQuad*p.N)
			J := solvers.NewBand(p.N, p.Lower, p.Upper)
			allocs := testing.AllocsPerRun(50, func() {
				p.Func(0.5, y, dy)
				J.Zero()
				p.Jac(0.5, y, J)
				p.Quad(0.5, y, dq)
				if p.QuadJac != nil {
					clear(G)
					p.QuadJac(0.5, y, G)
				}
			})
			if allocs != 0 {
				t.Errorf("Func+Jac+Quad+QuadJac allocate %v times per call", allocs)
			}
		})
	}
}

// TestJacobianIntoWiderBand checks that Jac also fills a band matrix wider
// than the declared one.
func TestJacobianIntoWiderBand(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	tc := operatorCases()[1]
	d, err := Build(tc.spec)
	if err != nil {
		t.Fatal(err)
	}
	p := d.Problem()
	y := randomState(rng, p.N)
	J := solvers.NewBand(p.N, p.Lower, p.Upper)
	W := solvers.NewBand(p.N, p.Lower+3, p.Upper+5)
	p.Jac(0, y, J)
	p.Jac(0, y, W)
	for i := 0; i < p.N; i++ {
		for j := 0; j < p.N; j++ {
			if J.At(i, j) != W.At(i, j) {
				t.Fatalf("(%d,%d): %g in the declared band, %g in a wider one", i, j, J.At(i, j), W.At(i, j))
			}
		}
	}
}

// TestKineticsLedger integrates the three-species case with nonlinear
// kinetics: the ledger closes to 1e-9 (in fact to round-off, through
// QuadJac) at every output time.
func TestKineticsLedger(t *testing.T) {
	tc := operatorCases()[1]
	spec := *tc.spec
	spec.NR, spec.NZ = 12, 14
	spec.Init = func(s int, r, z float64) float64 { return 0.2 + 0.3*float64(s) }
	d, err := Build(&spec)
	if err != nil {
		t.Fatal(err)
	}
	y0 := d.Y0()
	res := integrate(t, d, []float64{10, 100, 1000, 3000}, nil)
	lines, _ := d.Ledger(y0, res.Y[3], res.Q[3])
	for _, l := range lines {
		t.Logf("species %d: closure %.2g (initial %.4g, inflow %.4g, consumed %.4g, final %.4g)", l.Species, l.Closure, l.Initial, l.InflowOuter, l.Consumed, l.Final)
		if math.Abs(l.Closure) > 1e-12 {
			t.Errorf("species %d: closure %.2g, expected round-off", l.Species, l.Closure)
		}
	}
}

// TestGrid checks the geometry: exact volumes summing to πR²L, faces
// spanning the body, centres inside their cells, and the clustering rule.
func TestGrid(t *testing.T) {
	R, L := 2e-3, 5e-3
	d, err := Build(&Spec{Radius: R, Length: L, NSpecies: 1, D: []float64{1e-9},
		Side: sealedFaces(1), Top: faces(1, fv.Boundary{Kind: fv.Fixed}), Bottom: sealedFaces(1)})
	if err != nil {
		t.Fatal(err)
	}
	g := &d.Grid
	if g.NR*g.NZ != d.Cells() || d.N() != d.Cells() {
		t.Fatalf("cells %d × %d, Cells %d, N %d", g.NR, g.NZ, d.Cells(), d.N())
	}
	// Default: about DefaultCells in proportion to R and L.
	if math.Abs(float64(g.NR*g.NZ)-DefaultCells) > 0.05*DefaultCells || math.Abs(float64(g.NZ)/float64(g.NR)-L/R) > 0.1 {
		t.Errorf("default grid %d × %d for R = %g, L = %g", g.NR, g.NZ, R, L)
	}
	sum := 0.0
	for _, v := range d.CellVolumes() {
		sum += v
	}
	if relErr(sum, math.Pi*R*R*L) > 1e-14 {
		t.Errorf("volumes sum to %.15g, want πR²L = %.15g", sum, math.Pi*R*R*L)
	}
	if g.RFaces[0] != 0 || g.RFaces[g.NR] != R || g.ZFaces[0] != 0 || g.ZFaces[g.NZ] != L {
		t.Errorf("faces do not span the body")
	}
	r, z := d.CellCentres()
	for c := range r {
		i, j := c%g.NR, c/g.NR
		if !(r[c] > g.RFaces[i] && r[c] < g.RFaces[i+1] && z[c] > g.ZFaces[j] && z[c] < g.ZFaces[j+1]) {
			t.Errorf("cell %d: centre (%g, %g) outside", c, r[c], z[c])
		}
	}
	// Side and bottom sealed: uniform in r; z clustered toward the top
	// only (its last cell the narrowest).
	for i := 1; i < g.NR; i++ {
		if math.Abs(g.RFaces[i]-R*float64(i)/float64(g.NR)) > 1e-15*R {
			t.Errorf("r faces are not uniform: %g", g.RFaces[i])
		}
	}
	if !(g.Heights[g.NZ-1] < g.Heights[0]/10) {
		t.Errorf("z not clustered toward the top: heights %g … %g", g.Heights[0], g.Heights[g.NZ-1])
	}
	if lo, up := d.Bandwidths(); lo != 2*g.NR || up != 2*g.NR {
		t.Errorf("bandwidths %d, %d, want %d", lo, up, 2*g.NR)
	}
}

// TestCellCounts checks the automatic choice of NR and NZ.
func TestCellCounts(t *testing.T) {
	for _, tc := range []struct {
		R, L           float64
		nr, nz         int
		wantNR, wantNZ int
	}{
		{1, 1, 0, 0, 40, 40},
		{1, 2, 0, 0, 28, 56},
		{1, 1e-6, 0, 0, MaxAutoCells, MinCells},
		{1e-6, 1, 0, 0, MinCells, MaxAutoCells},
		{1, 3, 10, 0, 10, 30},
		{1, 3, 7, 0, 7, 22},
		{2, 1, 0, 10, 20, 10},
		{1, 1, 7, 9, 7, 9},
	} {
		nr, nz := cellCounts(&Spec{Radius: tc.R, Length: tc.L, NR: tc.nr, NZ: tc.nz})
		if nr != tc.wantNR || nz != tc.wantNZ {
			t.Errorf("R = %g, L = %g, NR = %d, NZ = %d: got %d × %d, want %d × %d", tc.R, tc.L, tc.nr, tc.nz, nr, nz, tc.wantNR, tc.wantNZ)
		}
	}
}
