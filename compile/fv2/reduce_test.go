package fv2

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

// The reductions below compare with package fv, an independent
// implementation of the same one-dimensional scheme (source: the fv
// package's own checks against J. Crank, The Mathematics of Diffusion,
// 2nd ed. (1975), and its manufactured-solution orders). With the top and
// bottom sealed and a start that does not depend on z, nothing varies
// along z and each row of cells must evolve as the fv cylinder with the
// same cells; with the side sealed and a start that does not depend on r,
// each column must evolve as an fv slab 0 ≤ z ≤ L with the same
// conditions on its two faces.

type reduction struct {
	name    string
	spec    *Spec    // the short cylinder
	one     *fv.Spec // the one-dimensional body
	perUnit float64  // fv amounts × perUnit = fv2 amounts
	alongR  bool     // the fv coordinate is r (else z)
}

func reductions() []reduction {
	const (
		R = 1.2e-3
		L = 2.5e-3
		D = 3e-10
	)
	ns := 2
	rate := [][]float64{{-2e-4, 5e-5}, {1e-4, -3e-4}}
	capa := []float64{0.6, 1.4}
	src := []float64{1e-3, 0}
	sideBC := []fv.Boundary{
		{Kind: fv.Film, H: 4 * D / R, Partition: 1.3, Value: func(t float64) float64 { return 1 + 0.5*math.Sin(t/800) }},
		{Kind: fv.Fixed, Value: constant(0.2)},
	}
	cyl := reduction{name: "sealed top and bottom → cylinder", alongR: true, perUnit: L,
		spec: &Spec{Radius: R, Length: L, NR: 24, NZ: 9, NSpecies: ns, D: []float64{D, 2 * D}, Capacity: capa, Rate: rate, Source: src,
			Side: sideBC, Top: sealedFaces(ns), Bottom: sealedFaces(ns),
			Init: func(s int, r, z float64) float64 { return 0.3 + 0.1*float64(s) + 0.2*math.Cos(3*r/R) }},
		one: &fv.Spec{Geometry: fv.Cylinder, NSpecies: ns,
			Layers:  []fv.Layer{{Outer: R, Cells: 24, D: []float64{D, 2 * D}, Capacity: capa, Rate: rate, Source: src}},
			OuterBC: sideBC,
			Init:    func(s int, r float64) float64 { return 0.3 + 0.1*float64(s) + 0.2*math.Cos(3*r/R) }},
	}
	top := []fv.Boundary{{Kind: fv.Fixed, Value: constant(1)}, {Kind: fv.Flux, Value: func(t float64) float64 { return 2e-7 * math.Exp(-t/1000) }}}
	bottom := []fv.Boundary{{Kind: fv.Film, H: 2 * D / L, Partition: 0.7, Value: constant(0.5)}, {Kind: fv.Flux}}
	slab := reduction{name: "sealed side → slab", alongR: false, perUnit: math.Pi * R * R,
		spec: &Spec{Radius: R, Length: L, NR: 7, NZ: 30, NSpecies: ns, D: []float64{D, 2 * D}, Capacity: capa, Rate: rate, Source: src,
			Side: sealedFaces(ns), Top: top, Bottom: bottom,
			Init: func(s int, r, z float64) float64 { return 0.3 + 0.1*float64(s) + 0.2*math.Sin(2*z/L) }},
		one: &fv.Spec{Geometry: fv.Slab, NSpecies: ns,
			Layers:  []fv.Layer{{Outer: L, Cells: 30, D: []float64{D, 2 * D}, Capacity: capa, Rate: rate, Source: src}},
			InnerBC: bottom, OuterBC: top,
			Init: func(s int, z float64) float64 { return 0.3 + 0.1*float64(s) + 0.2*math.Sin(2*z/L) }},
	}
	return []reduction{cyl, slab}
}

// lift spreads a state of the fv body over the short cylinder.
func (rd *reduction) lift(d *Discretization, y1 []float64) []float64 {
	ns, nr, nz := d.ns, d.nr, d.nz
	y := make([]float64, d.n)
	for j := range nz {
		for i := range nr {
			c := i
			if !rd.alongR {
				c = j
			}
			for s := range ns {
				y[(j*nr+i)*ns+s] = y1[c*ns+s]
			}
		}
	}
	return y
}

// maxDiff returns the largest |a_k − lift(b)_k| over the cells and the
// largest |lift(b)_k|.
func (rd *reduction) maxDiff(d *Discretization, a, b []float64) (diff, scale float64) {
	lb := rd.lift(d, b)
	for k := range a {
		diff = math.Max(diff, math.Abs(a[k]-lb[k]))
		scale = math.Max(scale, math.Abs(lb[k]))
	}
	return diff, scale
}

// TestReductionGrid checks that the faces of the direction that varies
// are those of the fv body (same clustering map).
func TestReductionGrid(t *testing.T) {
	for _, rd := range reductions() {
		d, err := Build(rd.spec)
		if err != nil {
			t.Fatal(err)
		}
		d1, err := fv.Build(rd.one)
		if err != nil {
			t.Fatal(err)
		}
		f := d.Grid.ZFaces
		if rd.alongR {
			f = d.Grid.RFaces
		}
		for i, x := range d1.Grid.Faces {
			if x != f[i] {
				t.Errorf("%s: face %d at %.17g, fv has %.17g", rd.name, i, f[i], x)
			}
		}
	}
}

// TestReductionOperator compares Func, the ledger rates and Centre-type
// reconstructions with fv at random states that do not vary in the
// reduced direction.
func TestReductionOperator(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for _, rd := range reductions() {
		t.Run(rd.name, func(t *testing.T) {
			d, err := Build(rd.spec)
			if err != nil {
				t.Fatal(err)
			}
			d1, err := fv.Build(rd.one)
			if err != nil {
				t.Fatal(err)
			}
			p, p1 := d.Problem(), d1.Problem()
			y1 := randomState(rng, p1.N)
			y := rd.lift(d, y1)
			tm := 137.0
			f, f1 := make([]float64, p.N), make([]float64, p1.N)
			p.Func(tm, y, f)
			p1.Func(tm, y1, f1)
			diff, scale := rd.maxDiff(d, f, f1)
			if diff > 1e-12*scale {
				t.Errorf("Func differs from fv by %.3g (scale %.3g)", diff, scale)
			}
			// Initial states.
			if diff, scale := rd.maxDiff(d, d.Y0(), d1.Y0()); diff > 1e-13*scale {
				t.Errorf("Y0 differs from fv by %.3g (scale %.3g)", diff, scale)
			}
			// Quadratures: fv's inner and outer faces are the bottom and
			// the top for the slab; the outer face is the side for the
			// cylinder.
			q, q1 := make([]float64, p.NQuad), make([]float64, p1.NQuad)
			p.Quad(tm, y, q)
			p1.Quad(tm, y1, q1)
			for s := range d.ns {
				qs, q1s := q[QuadPerSpecies*s:], q1[fv.QuadPerSpecies*s:]
				pairs := [][2]float64{{qs[QuadProduced], q1s[fv.QuadProduced] * rd.perUnit}}
				if rd.alongR {
					pairs = append(pairs, [2]float64{qs[QuadSide], q1s[fv.QuadOuter] * rd.perUnit},
						[2]float64{qs[QuadTop], 0}, [2]float64{qs[QuadBottom], 0})
				} else {
					pairs = append(pairs, [2]float64{qs[QuadSide], 0},
						[2]float64{qs[QuadTop], q1s[fv.QuadOuter] * rd.perUnit}, [2]float64{qs[QuadBottom], q1s[fv.QuadInner] * rd.perUnit})
				}
				for k, pr := range pairs {
					if math.Abs(pr[0]-pr[1]) > 1e-12*(math.Abs(pr[1])+math.Abs(q1s[fv.QuadProduced]*rd.perUnit)) {
						t.Errorf("species %d: quadrature pair %d: %.15g, fv %.15g", s, k, pr[0], pr[1])
					}
				}
				// Content per body against fv's per unit length or area.
				m, _ := d.Content(y, s)
				m1, _ := d1.Content(y1, s)
				if relErr(m, m1*rd.perUnit) > 1e-13 {
					t.Errorf("species %d: content %.15g, fv %.15g", s, m, m1*rd.perUnit)
				}
				// Profiles: the one along the varying direction is fv's.
				var pos, val []float64
				if rd.alongR {
					pos, val, _ = d.Profile(tm, y, s)
				} else {
					pos, val, _ = d.ProfileZ(tm, y, s)
				}
				pos1, val1, _ := d1.Profile(tm, y1, s)
				for i := range pos1 {
					if math.Abs(pos[i]-pos1[i]) > 1e-15*rd.spec.Length || math.Abs(val[i]-val1[i]) > 1e-12*math.Abs(val1[i]) {
						t.Errorf("species %d: profile point %d (%g, %.15g), fv (%g, %.15g)", s, i, pos[i], val[i], pos1[i], val1[i])
					}
				}
				if rd.alongR {
					c, _ := d.Centre(tm, y, s)
					c1, _ := d1.Centre(tm, y1, s)
					if relErr(c, c1) > 1e-12 {
						t.Errorf("species %d: centre %.15g, fv %.15g", s, c, c1)
					}
				}
			}
		})
	}
}

// TestReductionIntegrated integrates both systems with the same settings
// and compares the states at the output times. The quadratures are left
// out of the error test (their number differs between the two systems and
// would change the step sizes); the state is then integrated with the
// same steps to within round-off.
func TestReductionIntegrated(t *testing.T) {
	for _, rd := range reductions() {
		t.Run(rd.name, func(t *testing.T) {
			d, err := Build(rd.spec)
			if err != nil {
				t.Fatal(err)
			}
			d1, err := fv.Build(rd.one)
			if err != nil {
				t.Fatal(err)
			}
			ts := []float64{100, 1000, 5000, 20000}
			set := &solvers.Settings{QuadUncontrolled: true}
			res := integrate(t, d, ts, set)
			res1, err := solvers.Integrate(context.Background(), d1.Problem(), 0, d1.Y0(), ts, set)
			if err != nil {
				t.Fatal(err)
			}
			for k := range ts {
				diff, scale := rd.maxDiff(d, res.Y[k], res1.Y[k])
				t.Logf("t = %g: largest difference %.3g (scale %.3g)", ts[k], diff, scale)
				if diff > 1e-10*scale {
					t.Errorf("t = %g: state differs from fv by %.3g (scale %.3g)", ts[k], diff, scale)
				}
			}
			if res.Stats.Steps != res1.Stats.Steps {
				t.Logf("steps %d, fv %d", res.Stats.Steps, res1.Stats.Steps)
			}
		})
	}
}
