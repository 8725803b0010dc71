package fv

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func goodSpec() *Spec {
	return &Spec{Geometry: Sphere, NSpecies: 1,
		Layers:  []Layer{{Outer: 1e-3, D: []float64{1e-9}}},
		OuterBC: []Boundary{{Kind: Fixed, Value: constant(1)}}}
}

func TestBuildRejectsBadSpecs(t *testing.T) {
	nan := math.NaN()
	cases := []struct {
		name   string
		modify func(s *Spec)
		want   string
	}{
		{"unknown geometry", func(s *Spec) { s.Geometry = 7 }, "unknown geometry"},
		{"negative inner", func(s *Spec) { s.Inner = -1e-4 }, "inner coordinate"},
		{"NaN inner", func(s *Spec) { s.Inner = nan }, "inner coordinate"},
		{"no species", func(s *Spec) { s.NSpecies = 0 }, "at least one species"},
		{"no layers", func(s *Spec) { s.Layers = nil }, "at least one layer"},
		{"inner beyond outer", func(s *Spec) { s.Inner = 2e-3 }, "must exceed the inner"},
		{"inner equals outer", func(s *Spec) { s.Inner = 1e-3 }, "must exceed the inner"},
		{"zero radius", func(s *Spec) { s.Layers[0].Outer = 0 }, "must exceed"},
		{"NaN radius", func(s *Spec) { s.Layers[0].Outer = nan }, "must exceed"},
		{"infinite radius", func(s *Spec) { s.Layers[0].Outer = math.Inf(1) }, "must exceed"},
		{"layers out of order", func(s *Spec) {
			s.Layers = append(s.Layers, Layer{Outer: 0.5e-3, D: []float64{1e-9}})
		}, "must exceed that of layer 0"},
		{"one cell", func(s *Spec) { s.Layers[0].Cells = 1 }, "Cells"},
		{"negative cells", func(s *Spec) { s.Layers[0].Cells = -3 }, "Cells"},
		{"missing diffusivity", func(s *Spec) { s.Layers[0].D = nil }, "D must have"},
		{"zero diffusivity", func(s *Spec) { s.Layers[0].D = []float64{0} }, "D[0]"},
		{"NaN diffusivity", func(s *Spec) { s.Layers[0].D = []float64{nan} }, "D[0]"},
		{"negative capacity", func(s *Spec) { s.Layers[0].Capacity = []float64{-1} }, "Capacity[0]"},
		{"capacity wrong length", func(s *Spec) { s.Layers[0].Capacity = []float64{1, 1} }, "Capacity must have"},
		{"rate wrong shape", func(s *Spec) { s.Layers[0].Rate = [][]float64{{1, 2}} }, "Rate row 0"},
		{"rate NaN", func(s *Spec) { s.Layers[0].Rate = [][]float64{{nan}} }, "not finite"},
		{"source NaN", func(s *Spec) { s.Layers[0].Source = []float64{nan} }, "Source[0]"},
		{"partition on first layer", func(s *Spec) { s.Layers[0].Partition = []float64{2} }, "no inner neighbour"},
		{"negative contact partition", func(s *Spec) {
			s.Layers = append(s.Layers, Layer{Outer: 2e-3, D: []float64{1e-9}, Partition: []float64{-1}})
		}, "Partition[0]"},
		{"negative resistance", func(s *Spec) {
			s.Layers = append(s.Layers, Layer{Outer: 2e-3, D: []float64{1e-9}, Resistance: []float64{-1}})
		}, "Resistance[0]"},
		{"missing outer condition", func(s *Spec) { s.OuterBC = nil }, "OuterBC"},
		{"inner conditions wrong length", func(s *Spec) { s.InnerBC = []Boundary{{}, {}} }, "InnerBC"},
		{"flux through the centre", func(s *Spec) { s.InnerBC = []Boundary{{Kind: Flux}} }, "must be symmetry"},
		{"symmetry outside", func(s *Spec) { s.OuterBC[0].Kind = Symmetry }, "only at the inner face"},
		{"bath inside", func(s *Spec) {
			s.Inner = 1e-4
			s.InnerBC = []Boundary{{Kind: Bath, BathVolume: 1}}
		}, "only at the outer face"},
		{"film without coefficient", func(s *Spec) { s.OuterBC[0] = Boundary{Kind: Film} }, "H > 0"},
		{"negative film coefficient", func(s *Spec) { s.OuterBC[0] = Boundary{Kind: Film, H: -1} }, "film coefficient"},
		{"negative partition", func(s *Spec) { s.OuterBC[0].Partition = -2 }, "partition"},
		{"NaN partition", func(s *Spec) { s.OuterBC[0].Partition = nan }, "partition"},
		{"bath without volume", func(s *Spec) { s.OuterBC[0] = Boundary{Kind: Bath} }, "bath volume"},
		{"bath NaN start", func(s *Spec) { s.OuterBC[0] = Boundary{Kind: Bath, BathVolume: 1, BathStart: nan} }, "bath starting"},
		{"unknown boundary kind", func(s *Spec) { s.OuterBC[0].Kind = 42 }, "unknown outer boundary"},
		{"cluster below one", func(s *Spec) { s.Cluster = 0.5 }, "Cluster"},
		{"NaN initial value", func(s *Spec) { s.Init = func(int, float64) float64 { return nan } }, "non-finite"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := goodSpec()
			tc.modify(s)
			d, err := Build(s)
			if err == nil {
				t.Fatalf("Build accepted the spec (%d cells)", d.Cells())
			}
			if !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "fv: ") {
				t.Errorf("error %q does not mention %q", err, tc.want)
			}
		})
	}
	if _, err := Build(nil); err == nil {
		t.Error("Build(nil) succeeded")
	}
	if _, err := Build(goodSpec()); err != nil {
		t.Errorf("good spec rejected: %v", err)
	}
}

// TestBuildNeverPanics feeds randomly broken specs to Build.
func TestBuildNeverPanics(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	vals := []float64{-1, 0, 1e-3, 2e-3, math.NaN(), math.Inf(1), 1e-300, 1}
	pick := func() float64 { return vals[rng.IntN(len(vals))] }
	for trial := 0; trial < 3000; trial++ {
		ns := rng.IntN(3)
		s := &Spec{Geometry: Geometry(rng.IntN(4) - 0), Inner: pick(), NSpecies: ns, Cluster: pick()}
		for l := rng.IntN(3); l > 0; l-- {
			ly := Layer{Outer: pick(), Cells: rng.IntN(5) - 1}
			for range rng.IntN(3) {
				ly.D = append(ly.D, pick())
			}
			if rng.IntN(2) == 0 {
				ly.Partition = []float64{pick()}
			}
			s.Layers = append(s.Layers, ly)
		}
		for range rng.IntN(3) {
			s.OuterBC = append(s.OuterBC, Boundary{Kind: BoundaryKind(rng.IntN(6)), H: pick(), BathVolume: pick(), Partition: pick()})
		}
		if rng.IntN(2) == 0 {
			for range rng.IntN(3) {
				s.InnerBC = append(s.InnerBC, Boundary{Kind: BoundaryKind(rng.IntN(6)), H: pick()})
			}
		}
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Fatalf("Build panicked on %+v: %v", s, r)
				}
			}()
			d, err := Build(s)
			if err == nil {
				// A spec that passes must give a usable system.
				p := d.Problem()
				y := d.Y0()
				dy := make([]float64, p.N)
				p.Func(0, y, dy)
			}
		}()
	}
}

func TestAccessorsRejectBadInput(t *testing.T) {
	d, err := Build(goodSpec())
	if err != nil {
		t.Fatal(err)
	}
	y := d.Y0()
	short := y[:3]
	checks := []struct {
		name string
		err  error
	}{}
	add := func(name string, err error) {
		checks = append(checks, struct {
			name string
			err  error
		}{name, err})
	}
	_, err = d.Content(short, 0)
	add("Content short", err)
	_, err = d.Content(y, 1)
	add("Content species", err)
	_, err = d.Mean(y, -1)
	add("Mean species", err)
	_, err = d.Centre(0, short, 0)
	add("Centre short", err)
	_, err = d.Surface(0, y, 3)
	add("Surface species", err)
	_, err = d.SurfaceFlux(0, short, 0)
	add("SurfaceFlux short", err)
	_, err = d.InnerFlux(0, y, 2)
	add("InnerFlux species", err)
	_, err = d.BathValue(y, 0)
	add("BathValue without bath", err)
	_, _, err = d.Profile(0, short, 0)
	add("Profile short", err)
	_, err = d.Ledger(y, short, make([]float64, QuadPerSpecies))
	add("Ledger short state", err)
	_, err = d.Ledger(y, y, make([]float64, 2))
	add("Ledger short quadratures", err)
	for _, c := range checks {
		if c.err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
	if d.BathIndex(0) != -1 || d.BathIndex(5) != -1 {
		t.Error("BathIndex of a species without bath is not -1")
	}
}

// TestDefaults checks the documented defaults: nil Value is zero, a nil
// InnerBC is symmetry for a solid body and an insulated face for a hollow
// one, zero Partition means 1, nil Capacity means 1.
func TestDefaults(t *testing.T) {
	d, err := Build(&Spec{Geometry: Cylinder, NSpecies: 1, Inner: 1e-4,
		Layers:  []Layer{{Outer: 1e-3, D: []float64{1e-9}, Cells: 6}},
		OuterBC: []Boundary{{Kind: Fixed}}, // nil Value: zero
		Init:    func(int, float64) float64 { return 2 }})
	if err != nil {
		t.Fatal(err)
	}
	y := d.Y0()
	for i, v := range y {
		if v != 2 {
			t.Fatalf("initial value of cell %d is %g, want 2", i, v)
		}
	}
	if s, _ := d.Surface(0, y, 0); s != 0 {
		t.Errorf("surface value with nil Value is %g, want 0", s)
	}
	if j, _ := d.InnerFlux(0, y, 0); j != 0 {
		t.Errorf("hollow body with nil InnerBC: inner flux %g, want 0 (insulated)", j)
	}
	if m, _ := d.Content(y, 0); relErr(m, 2*math.Pi*(1e-6-1e-8)) > 1e-14 {
		t.Errorf("content %g with capacity 1", m)
	}
	r, c, err := d.Profile(0, y, 0)
	if err != nil || len(r) != d.Cells()+2 || r[0] != 1e-4 || r[len(r)-1] != 1e-3 || c[len(c)-1] != 0 {
		t.Errorf("profile ends: %v %v %v", r, c, err)
	}
	// Solid body: symmetry by default, centre value from the even fit.
	d, _ = Build(&Spec{Geometry: Sphere, NSpecies: 1,
		Layers:  []Layer{{Outer: 1, D: []float64{1}, Cells: 10}},
		OuterBC: []Boundary{{Kind: Fixed, Value: constant(1), Partition: 0}},
		Init:    func(_ int, r float64) float64 { return 3 - r*r }})
	y = d.Y0()
	if j, _ := d.InnerFlux(0, y, 0); j != 0 {
		t.Errorf("inner flux of a solid body %g", j)
	}
	if c, _ := d.Centre(0, y, 0); math.Abs(c-3) > 1e-12 {
		t.Errorf("centre of the profile 3 − r² reconstructed as %.15g", c)
	}
	if s, _ := d.Surface(0, y, 0); s != 1 {
		t.Errorf("surface value %g with Partition 0 (means 1)", s)
	}
	if m, _ := d.Mean(y, 0); math.Abs(m-(3-0.6)) > 1e-12 {
		t.Errorf("mean of 3 − r² over the unit sphere: %.15g, want 2.4", m)
	}
}
