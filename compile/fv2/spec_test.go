package fv2

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

func goodSpec() *Spec {
	fix := faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(1)})
	return &Spec{Radius: 1e-3, Length: 2e-3, NR: 6, NZ: 8, NSpecies: 1, D: []float64{1e-9},
		Side: fix, Top: faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(1)}), Bottom: faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(1)})}
}

func TestBuildRejectsBadSpecs(t *testing.T) {
	nan := math.NaN()
	cases := []struct {
		name   string
		modify func(s *Spec)
		want   string
	}{
		{"zero radius", func(s *Spec) { s.Radius = 0 }, "Radius"},
		{"NaN radius", func(s *Spec) { s.Radius = nan }, "Radius"},
		{"infinite length", func(s *Spec) { s.Length = math.Inf(1) }, "Length"},
		{"negative length", func(s *Spec) { s.Length = -1 }, "Length"},
		{"one cell in r", func(s *Spec) { s.NR = 1 }, "NR and NZ"},
		{"negative cells in z", func(s *Spec) { s.NZ = -2 }, "NR and NZ"},
		{"absurd cells", func(s *Spec) { s.NR, s.NZ = 1<<30, 1<<30 }, "too many"},
		{"band too large", func(s *Spec) { s.NR, s.NZ = 5000, 5000 }, "too"},
		{"cluster below one", func(s *Spec) { s.Cluster = 0.5 }, "Cluster"},
		{"NaN cluster", func(s *Spec) { s.Cluster = nan }, "Cluster"},
		{"no species", func(s *Spec) { s.NSpecies = 0 }, "at least one species"},
		{"missing diffusivity", func(s *Spec) { s.D = nil }, "D must have"},
		{"zero diffusivity", func(s *Spec) { s.D = []float64{0} }, "D[0]"},
		{"NaN diffusivity", func(s *Spec) { s.D = []float64{nan} }, "D[0]"},
		{"negative capacity", func(s *Spec) { s.Capacity = []float64{-1} }, "Capacity[0]"},
		{"capacity wrong length", func(s *Spec) { s.Capacity = []float64{1, 1} }, "Capacity must have"},
		{"rate wrong shape", func(s *Spec) { s.Rate = [][]float64{{1, 2}} }, "Rate row 0"},
		{"rate rows", func(s *Spec) { s.Rate = [][]float64{{1}, {2}} }, "Rate must have"},
		{"rate NaN", func(s *Spec) { s.Rate = [][]float64{{nan}} }, "not finite"},
		{"source NaN", func(s *Spec) { s.Source = []float64{nan} }, "Source[0]"},
		{"missing side", func(s *Spec) { s.Side = nil }, "Side"},
		{"top wrong length", func(s *Spec) { s.Top = sealedFaces(2) }, "Top"},
		{"missing bottom", func(s *Spec) { s.Bottom = nil }, "Bottom"},
		{"symmetry on the side", func(s *Spec) { s.Side[0].Kind = fv.Symmetry }, "sealed face"},
		{"bath on top", func(s *Spec) { s.Top[0] = fv.Boundary{Kind: fv.Bath, BathVolume: 1} }, "bath"},
		{"unknown kind", func(s *Spec) { s.Bottom[0].Kind = 42 }, "unknown Bottom boundary"},
		{"film without coefficient", func(s *Spec) { s.Side[0] = fv.Boundary{Kind: fv.Film} }, "H > 0"},
		{"negative film coefficient", func(s *Spec) { s.Side[0] = fv.Boundary{Kind: fv.Film, H: -1} }, "film coefficient"},
		{"negative partition", func(s *Spec) { s.Top[0].Partition = -2 }, "partition"},
		{"NaN partition", func(s *Spec) { s.Top[0].Partition = nan }, "partition"},
		{"NaN initial value", func(s *Spec) { s.Init = func(int, float64, float64) float64 { return nan } }, "non-finite"},
		{"tiny body", func(s *Spec) { s.Radius = 1e-310 }, "representable"},
		{"huge body", func(s *Spec) { s.Radius, s.Length = 1e300, 1e300 }, "large"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s := goodSpec()
			tc.modify(s)
			d, err := Build(s)
			if err == nil {
				t.Fatalf("Build accepted the spec (%d cells)", d.Cells())
			}
			if !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "fv2: ") {
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
	vals := []float64{-1, 0, 1e-3, 2e-3, math.NaN(), math.Inf(1), 1e-300, 1, 1e300}
	pick := func() float64 { return vals[rng.IntN(len(vals))] }
	bcs := func() []fv.Boundary {
		var out []fv.Boundary
		for range rng.IntN(3) {
			out = append(out, fv.Boundary{Kind: fv.BoundaryKind(rng.IntN(6)), H: pick(), Partition: pick(), BathVolume: pick()})
		}
		return out
	}
	for trial := 0; trial < 3000; trial++ {
		ns := rng.IntN(3)
		s := &Spec{Radius: pick(), Length: pick(), NR: rng.IntN(6) - 1, NZ: rng.IntN(6) - 1, NSpecies: ns, Cluster: pick(),
			Side: bcs(), Top: bcs(), Bottom: bcs()}
		for range rng.IntN(3) {
			s.D = append(s.D, pick())
		}
		if rng.IntN(2) == 0 {
			s.Capacity = []float64{pick()}
		}
		if rng.IntN(3) == 0 {
			s.Rate = [][]float64{{pick()}}
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
				for s := range d.NSpecies() {
					d.Centre(0, y, s)
					d.Surface(0, y, s)
					d.Profile(0, y, s)
					d.ProfileZ(0, y, s)
				}
			}
		}()
	}
}

// TestAccessorsRejectBadInput: wrong lengths and species give errors,
// never a panic; the bath methods say there is no bath.
func TestAccessorsRejectBadInput(t *testing.T) {
	d, err := Build(goodSpec())
	if err != nil {
		t.Fatal(err)
	}
	short := make([]float64, d.N()-1)
	y := d.Y0()
	for _, s := range []int{-1, 1} {
		if _, err := d.Content(y, s); err == nil {
			t.Errorf("Content accepted species %d", s)
		}
		if _, err := d.Centre(0, y, s); err == nil {
			t.Errorf("Centre accepted species %d", s)
		}
		if _, _, err := d.Profile(0, y, s); err == nil {
			t.Errorf("Profile accepted species %d", s)
		}
		if _, _, _, err := d.Field(y, s); err == nil {
			t.Errorf("Field accepted species %d", s)
		}
		if _, err := d.EquilibriumContent(s, 1); err == nil {
			t.Errorf("EquilibriumContent accepted species %d", s)
		}
	}
	checks := map[string]error{}
	_, checks["Content"] = d.Content(short, 0)
	_, checks["Mean"] = d.Mean(short, 0)
	_, checks["Centre"] = d.Centre(0, short, 0)
	_, checks["Surface"] = d.Surface(0, short, 0)
	_, checks["SurfaceFlux"] = d.SurfaceFlux(0, short, 0)
	_, checks["CellValues"] = d.CellValues(short, 0)
	_, _, checks["Profile"] = d.Profile(0, short, 0)
	_, _, checks["ProfileZ"] = d.ProfileZ(0, short, 0)
	_, _, _, checks["Field"] = d.Field(short, 0)
	_, _, _, checks["FaceInflows"] = d.FaceInflows(0, short, 0)
	_, checks["Ledger"] = d.Ledger(short, y, make([]float64, QuadPerSpecies))
	_, checks["Ledger quadratures"] = d.Ledger(y, y, make([]float64, 3))
	_, checks["SteadyState"] = d.SteadyState(0, short, nil)
	for name, err := range checks {
		if err == nil {
			t.Errorf("%s accepted a short state", name)
		}
	}
	if _, err := d.BathValue(y, 0); !errors.Is(err, ErrNoBath) {
		t.Errorf("BathValue: %v", err)
	}
	if _, err := d.EquilibriumWithBath(y, 0); !errors.Is(err, ErrNoBath) {
		t.Errorf("EquilibriumWithBath: %v", err)
	}
	if d.BathIndex(0) != -1 || d.EvalError() != nil {
		t.Errorf("BathIndex %d, EvalError %v", d.BathIndex(0), d.EvalError())
	}
}

// TestOutputs checks the reconstructions on fields the scheme represents
// exactly, and the shapes of the profiles and the map.
func TestOutputs(t *testing.T) {
	const (
		R = 1e-3
		L = 3e-3
	)
	// c = a + b r² + e (z − L/2)²: every reconstruction (axis closure,
	// interpolation to mid-height, face closures) is exact for it.
	a, b, e := 0.7, 2e5, -4e4
	c := func(r, z float64) float64 { return a + b*r*r + e*(z-L/2)*(z-L/2) }
	for _, nz := range []int{9, 10} { // L/2 inside a row, and on a face
		spec := &Spec{Radius: R, Length: L, NR: 7, NZ: nz, NSpecies: 1, D: []float64{1e-9}, Capacity: []float64{0.5},
			Side: faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(c(R, 0))}), // the value itself is not used below
			// Inward flux D ∂c/∂n = D·2e·(L/2) on both faces.
			Top:    faces(1, fv.Boundary{Kind: fv.Flux, Value: constant(1e-9 * 2 * e * L / 2)}),
			Bottom: faces(1, fv.Boundary{Kind: fv.Flux, Value: constant(1e-9 * 2 * e * L / 2)}),
			Init:   func(_ int, r, z float64) float64 { return c(r, z) }}
		d, err := Build(spec)
		if err != nil {
			t.Fatal(err)
		}
		y := d.Y0()
		centre, _ := d.Centre(0, y, 0)
		if math.Abs(centre-c(0, L/2)) > 1e-12 {
			t.Errorf("nz = %d: centre %.15g, exact %.15g", nz, centre, c(0, L/2))
		}
		r, v, err := d.Profile(0, y, 0)
		if err != nil || len(r) != d.Grid.NR+2 || len(v) != len(r) || r[0] != 0 || r[len(r)-1] != R {
			t.Fatalf("Profile: %d points, err %v", len(r), err)
		}
		for i := 0; i < len(r)-1; i++ { // the last point is the Fixed value
			// Interior points are cell averages in r: compare with the
			// average of b r² over the annulus at z = L/2.
			want := c(0, L/2)
			if i > 0 {
				ra, rb := d.Grid.RFaces[i-1], d.Grid.RFaces[i]
				want = a + b*(ra*ra+rb*rb)/2 + 0 // annular mean of r² is (r₁² + r₂²)/2
			}
			if math.Abs(v[i]-want) > 1e-12 {
				t.Errorf("nz = %d: profile point %d at r = %g: %.15g, want %.15g", nz, i, r[i], v[i], want)
			}
		}
		z, w, err := d.ProfileZ(0, y, 0)
		if err != nil || len(z) != d.Grid.NZ+2 || z[0] != 0 || z[len(z)-1] != L {
			t.Fatalf("ProfileZ: %d points, err %v", len(z), err)
		}
		for _, k := range []int{0, len(z) - 1} { // end values from the Flux closures
			if math.Abs(w[k]-c(0, z[k])) > 1e-12 {
				t.Errorf("nz = %d: axial end value at z = %g: %.15g, want %.15g", nz, z[k], w[k], c(0, z[k]))
			}
		}
		rr, zz, cc, err := d.Field(y, 0)
		if err != nil || len(rr) != d.Grid.NR || len(zz) != d.Grid.NZ || len(cc) != d.Grid.NZ || len(cc[0]) != d.Grid.NR {
			t.Fatalf("Field: shapes %d, %d, %d, err %v", len(rr), len(zz), len(cc), err)
		}
		cv, _ := d.CellValues(y, 0)
		for j := range cc {
			for i := range cc[j] {
				if cc[j][i] != cv[j*d.Grid.NR+i] {
					t.Fatalf("Field and CellValues differ at (%d, %d)", i, j)
				}
			}
		}
		// Content, Mean and EquilibriumContent.
		m, _ := d.Content(y, 0)
		mean, _ := d.Mean(y, 0)
		vol := math.Pi * R * R * L
		exactMean := a + b*R*R/2 + e*L*L/12
		if relErr(mean, exactMean) > 1e-13 || relErr(m, 0.5*vol*exactMean) > 1e-13 {
			t.Errorf("mean %.15g, content %.15g; exact %.15g, %.15g", mean, m, exactMean, 0.5*vol*exactMean)
		}
		if eq, _ := d.EquilibriumContent(0, 2); relErr(eq, 0.5*vol*2) > 1e-15 {
			t.Errorf("EquilibriumContent %g", eq)
		}
	}
}

// TestSurfaceValue: the mean surface value is the area-weighted mean of
// the face values (here Fixed on the side and films elsewhere).
func TestSurfaceValue(t *testing.T) {
	const (
		R = 1e-3
		L = 2e-3
	)
	d, err := Build(&Spec{Radius: R, Length: L, NR: 5, NZ: 6, NSpecies: 1, D: []float64{1e-9},
		Side:   faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(2), Partition: 1.5}),
		Top:    faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(1)}),
		Bottom: faces(1, fv.Boundary{Kind: fv.Fixed, Value: constant(0.5)})})
	if err != nil {
		t.Fatal(err)
	}
	s, _ := d.Surface(0, d.Y0(), 0)
	want := (2*math.Pi*R*L*3 + math.Pi*R*R*1 + math.Pi*R*R*0.5) / (2*math.Pi*R*L + 2*math.Pi*R*R)
	if relErr(s, want) > 1e-14 {
		t.Errorf("Surface %.15g, want %.15g", s, want)
	}
}

// TestSteadyState: a consumption with fixed faces has a steady state that
// SteadyState finds (Func vanishes there); a sealed body without reaction
// has none, and the error says so.
func TestSteadyState(t *testing.T) {
	s := goodSpec()
	s.Rate = [][]float64{{-1e-3}}
	d, err := Build(s)
	if err != nil {
		t.Fatal(err)
	}
	y, err := d.SteadyState(0, d.Y0(), nil)
	if err != nil {
		t.Fatal(err)
	}
	f := make([]float64, d.N())
	d.Problem().Func(0, y, f)
	for k, v := range f {
		if math.Abs(v) > 1e-12 {
			t.Fatalf("Func at the steady state: f[%d] = %g", k, v)
		}
	}
	s = goodSpec()
	s.Side, s.Top, s.Bottom = sealedFaces(1), sealedFaces(1), sealedFaces(1)
	s.Init = func(_ int, r, z float64) float64 { return r * z }
	d, err = Build(s)
	if err != nil {
		t.Fatal(err)
	}
	var se *solvers.SteadyError
	if _, err := d.SteadyState(0, d.Y0(), nil); !errors.As(err, &se) || !strings.Contains(err.Error(), "no isolated steady state") {
		t.Errorf("sealed body: %v", err)
	}
}

// engineView lists the methods the engine calls on a discretisation
// (shared with package fv), plus the two-dimensional extras; the
// assignment below fails to compile if one goes missing.
type engineView interface {
	Problem() *solvers.Problem
	Y0() []float64
	N() int
	Cells() int
	NSpecies() int
	BathIndex(s int) int
	Content(y []float64, s int) (float64, error)
	Mean(y []float64, s int) (float64, error)
	Centre(t float64, y []float64, s int) (float64, error)
	Surface(t float64, y []float64, s int) (float64, error)
	SurfaceFlux(t float64, y []float64, s int) (float64, error)
	BathValue(y []float64, s int) (float64, error)
	Profile(t float64, y []float64, s int) (r, c []float64, err error)
	Ledger(y0, y, q []float64) ([]fv.LedgerLine, error)
	SteadyState(t float64, y0 []float64, s *solvers.SteadySettings) ([]float64, error)
	EquilibriumWithBath(y []float64, s int) (float64, error)
	CellValues(y []float64, s int) ([]float64, error)
	EvalError() error
	// Two-dimensional extras.
	ProfileZ(t float64, y []float64, s int) (z, c []float64, err error)
	Field(y []float64, s int) (r, z []float64, c [][]float64, err error)
	CellVolumes() []float64
	CellCentres() (r, z []float64)
	FaceInflows(t float64, y []float64, s int) (side, top, bottom float64, err error)
	EquilibriumContent(s int, cs float64) (float64, error)
}

var _ engineView = (*Discretization)(nil)
