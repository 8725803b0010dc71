package compile

import (
	gocontext "context"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/compile/fv2"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/solvers"
	"github.com/massline/massline/solvers/analytic"
)

// lower2DSource checks src and lowers its first body with Lower2D.
func lower2DSource(t *testing.T, src string, set Settings) (*Model, *Lowered2D, error) {
	t.Helper()
	f, pd := dsl.Parse("test.mln", src)
	if pd.HasErrors() {
		t.Fatalf("parse: %v", pd)
	}
	m, cd := Check(f, nil)
	if m == nil || cd.HasErrors() {
		t.Fatalf("check: %v", cd)
	}
	b := m.Bodies[0]
	low, err := Lower2D(m, b, b.Conditions, set)
	return m, low, err
}

const pelletModel = `massline 1
species dye { diffusivity = 4e-10 [m^2/s] }
species tracer { diffusivity = 2e-10 [m^2/s] }
body pel = short_cylinder(radius = 1.5 [mm], length = 3 [mm])
balance dye in pel { store = 0.5 * dye }
balance tracer in pel { source = -1e-3 [1/s] * tracer + 1e-4 [1/s] * dye }
boundary pel.axis: symmetry
boundary pel.side: film(coefficient = 2e-6 [m/s], bulk = 0.8 [mol/m^3], partition = 2)
boundary pel.top: film(coefficient = 2e-6 [m/s], bulk = 0.8 [mol/m^3], partition = 2)
boundary pel.bottom for dye: film(coefficient = 2e-6 [m/s], bulk = 0.8 [mol/m^3], partition = 2)
boundary pel.bottom for tracer: sealed
initially pel: dye = 0 [mol/m^3]
initially pel: tracer = 0.1 [mol/m^3] + 50 [mol/m^4] * z
run until 1 [h] every 10 [min]
`

// TestLower2DSpec checks the mapping of a short cylinder to fv2.Spec:
// geometry, capacity from a linear store, affine sources to Rate, the
// film coefficient converted to H = kf/K, a sealed face, the starting
// value reading z, and the split of Settings.Cells.
func TestLower2DSpec(t *testing.T) {
	_, low, err := lower2DSource(t, pelletModel, Settings{Cells: 400})
	if err != nil {
		t.Fatal(err)
	}
	s := low.Spec
	if s.Radius != 1.5e-3 || s.Length != 3e-3 || s.NSpecies != 2 {
		t.Fatalf("geometry %g × %g, %d species", s.Radius, s.Length, s.NSpecies)
	}
	if s.NR != 14 || s.NZ != 28 {
		t.Errorf("cells = 400 split as %d × %d, want 14 × 28", s.NR, s.NZ)
	}
	if s.Capacity[0] != 0.5 || s.Capacity[1] != 1 || s.D[0] != 4e-10 || s.D[1] != 2e-10 {
		t.Errorf("capacity %v, D %v", s.Capacity, s.D)
	}
	if s.Rate[1][1] != -1e-3 || s.Rate[1][0] != 1e-4 || s.Rate[0][0] != 0 || s.Kinetics != nil {
		t.Errorf("rate %v, kinetics set: %v", s.Rate, s.Kinetics != nil)
	}
	f := s.Side[0]
	if f.Kind != fv.Film || f.Partition != 2 || math.Abs(f.H-1e-6) > 1e-21 || f.Value(0) != 0.8 {
		t.Errorf("side film %+v", f)
	}
	if s.Bottom[1].Kind != fv.Flux || s.Bottom[1].Value != nil || s.Bottom[0].Kind != fv.Film {
		t.Errorf("bottom %+v", s.Bottom)
	}
	if v := s.Init(1, 1e-3, 2e-3); math.Abs(v-0.2) > 1e-15 {
		t.Errorf("tracer starts at %g at z = 2 mm, want 0.2", v)
	}
	if low.Local(low.Species[1]) != 1 || low.Local(99) != -1 {
		t.Errorf("Local")
	}
	if _, err := fv2.Build(s); err != nil {
		t.Fatal(err)
	}
	// The one-dimensional lowering still refuses the body.
	f2, _ := dsl.Parse("test.mln", pelletModel)
	m, _ := Check(f2, nil)
	var ue *UnsupportedError
	if _, err := Lower(m, m.Bodies[0], m.Bodies[0].Conditions, Settings{}); !errors.As(err, &ue) {
		t.Errorf("Lower on a short cylinder: %v", err)
	}
}

// TestLower2DRefuses: a nonlinear store and a variable diffusivity are
// refused with an *UnsupportedError that names them.
func TestLower2DRefuses(t *testing.T) {
	for _, tc := range []struct{ replace, with, want string }{
		{"balance dye in pel { store = 0.5 * dye }", "balance dye in pel { store = 0.5 * dye + 2 [mol/m^3] * dye / (1 [mol/m^3] + dye) }", "store"},
		{"balance dye in pel { store = 0.5 * dye }", "balance dye in pel { diffusivity = 4e-10 [m^2/s] * (1 + dye / (1 [mol/m^3])) }", "diffusivity"},
		{"balance dye in pel { store = 0.5 * dye }", "balance dye in pel { diffusivity = 4e-10 [m^2/s] * (1 + z / (1 [mm])) }", "diffusivity"},
	} {
		src := strings.Replace(pelletModel, tc.replace, tc.with, 1)
		_, _, err := lower2DSource(t, src, Settings{})
		var ue *UnsupportedError
		if !errors.As(err, &ue) || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "short cylinder") {
			t.Errorf("%s: %v", tc.with, err)
		}
	}
}

// TestLower2DKinetics: a source that reads z and is not affine goes
// through Kinetics with its exact derivative, evaluated at (t, r, z).
func TestLower2DKinetics(t *testing.T) {
	src := strings.Replace(pelletModel, "balance dye in pel { store = 0.5 * dye }",
		"balance dye in pel { store = 0.5 * dye\n source = -1e-3 [1/s] * dye * dye / (1 [mol/m^3]) * (1 + z / (1 [mm])) }", 1)
	_, low, err := lower2DSource(t, src, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	k := low.Spec.Kinetics
	if k == nil {
		t.Fatal("no Kinetics for a nonlinear source")
	}
	c := []float64{0.7, 0.3}
	rate := make([]float64, 2)
	dRate := make([]float64, 4)
	k(5, 1e-3, 2e-3, c, rate, dRate)
	want := -1e-3 * 0.7 * 0.7 * 3
	if math.Abs(rate[0]-want) > 1e-15 || math.Abs(dRate[0]-2*want/0.7) > 1e-15 || rate[1] != 0 || dRate[1] != 0 {
		t.Errorf("rate %v, dRate %v; want rate[0] = %g, dRate[0] = %g", rate, dRate, want, 2*want/0.7)
	}
}

// TestLower2DProductRule runs a lowered short cylinder with the same film
// on every face and compares its uptake with the product rule (source:
// H. S. Carslaw and J. C. Jaeger, Conduction of Heat in Solids, 2nd ed.
// (1959), §1.15, from memory; factors from J. Crank, The Mathematics of
// Diffusion, 2nd ed. (1975), §4.3.2 and §5.3.2, via package analytic),
// which checks the film conversion H = kf/K and the capacity end to end.
func TestLower2DProductRule(t *testing.T) {
	src := strings.Replace(pelletModel, "boundary pel.bottom for tracer: sealed",
		"boundary pel.bottom for tracer: film(coefficient = 2e-6 [m/s], bulk = 0.8 [mol/m^3], partition = 2)", 1)
	_, low, err := lower2DSource(t, src, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	d, err := fv2.Build(low.Spec)
	if err != nil {
		t.Fatal(err)
	}
	const (
		R, L = 1.5e-3, 3e-3
		D    = 4e-10
		cap  = 0.5
		kp   = 2.0
		kf   = 2e-6
	)
	// The film coefficient of the discretisation is kf/K; Biot = (kf/K)·a/D.
	biot := kf / kp * R / D
	taus := []float64{0.02, 0.1, 0.3}
	ts := make([]float64, len(taus))
	for i, tau := range taus {
		ts[i] = tau * cap * R * R / D
	}
	res, err := solvers.Integrate(gocontext.Background(), d.Problem(), 0, d.Y0(), ts, nil)
	if err != nil {
		t.Fatal(err)
	}
	cyl, _ := analytic.NewFilm(analytic.Cylinder, biot)
	slab, _ := analytic.NewFilm(analytic.Slab, biot*(L/2)/R)
	full, _ := d.EquilibriumContent(0, kp*0.8)
	for i, tau := range taus {
		uc, _ := cyl.Uptake(tau)
		us, _ := slab.Uptake(tau * R * R / (L * L / 4))
		want := 1 - (1-uc)*(1-us)
		m, _ := d.Content(res.Y[i], 0)
		if e := math.Abs(m/full-want) / want; e > 5e-4 {
			t.Errorf("τ = %g: uptake %.6f, product rule %.6f (relative error %.2e)", tau, m/full, want, e)
		}
	}
}
