package compile

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// base is a complete model the tests below extend.
const base = `species dye { diffusivity = 1e-9 [m^2/s] }
body bead = sphere(radius = 1 [mm])
balance dye in bead
boundary bead.centre: symmetry
boundary bead.surface: fixed(1 [mM])
initially bead: dye = 0 [mM]
`

func mustCheck(t *testing.T, src string, opts *Options) *Model {
	t.Helper()
	f, pd := dsl.Parse("m.mln", src)
	m, cd := Check(f, opts)
	if pd.HasErrors() || cd.HasErrors() || m == nil {
		t.Fatalf("unexpected errors in\n%s\n%s%s", src, diag.Text(pd, diag.Sources{"m.mln": src}), diag.Text(cd, diag.Sources{"m.mln": src}))
	}
	return m
}

// near compares with a relative tolerance for values computed in floating
// point from the literals (unit scales multiply the digits).
func near(a, b float64) bool { return math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b)) }

func quantity(m *Model, name string) *Quantity {
	for _, q := range m.Quantities {
		if q.Name == name {
			return q
		}
	}
	return nil
}

func TestQuantitiesInSI(t *testing.T) {
	cases := []struct {
		src   string
		name  string
		value float64
		dim   units.Dim
	}{
		{"let R = 1.5 [mm]", "R", 1.5e-3, units.Length},
		{"let D = 4e-10 [m^2/s]", "D", 4e-10, units.Diffusivity},
		{"let c = 2 [mM]", "c", 2, units.Concentration},
		{"let c = 2 [mol/L]", "c", 2000, units.Concentration},
		{"let k = 3 [1/min]", "k", 0.05, units.Frequency},
		{"let f = 90 [%]", "f", 0.9, units.Dimensionless},
		{"let a = 2 [µm] * 3 [um]", "a", 6e-12, units.Area},
		{"let b = later * 2\nlet later = 1 [h]", "b", 7200, units.Time},
		{"let x = if 2 > 1 then 3 [s] else 4 [s]", "x", 3, units.Time},
		{"let y = sqrt(4 [m^2])", "y", 2, units.Length},
		{"let w = max(1 [cm], 5 [mm], 2 [mm])", "w", 0.01, units.Length},
		{"let p = pi * (2 [m])^2", "p", 4 * math.Pi, units.Area},
		{"let h = (4 [m^2])^0.5", "h", 2, units.Length},
		{"let Bi = 1e-5 [m/s] * 1 [mm] / 1e-9 [m^2/s]", "Bi", 10, units.Dimensionless},
	}
	for _, c := range cases {
		m := mustCheck(t, c.src, nil)
		q := quantity(m, c.name)
		if q == nil || !q.Const || !near(q.Value, c.value) || q.Dim != c.dim {
			t.Errorf("%q: got %+v, want %g %s", c.src, q, c.value, c.dim)
		}
	}
}

func TestSpeciesEffectiveDiffusivity(t *testing.T) {
	m := mustCheck(t, "species s { diffusivity = 1e-9 [m^2/s], porosity = 0.4, tortuosity = 2, molar_mass = 58.44 [g/mol] }", nil)
	sp := m.Species[0]
	d, ok := sp.Diffusivity.IsConst()
	if !ok || !near(d, 1e-9*0.4/2) || sp.Porosity != 0.4 || sp.Tortuosity != 2 || !near(sp.MolarMass, 0.05844) {
		t.Errorf("got D=%g ε=%g τ=%g M=%g", d, sp.Porosity, sp.Tortuosity, sp.MolarMass)
	}
}

func TestLayersAndRefinedBalances(t *testing.T) {
	src := `species dye { diffusivity = 1e-9 [m^2/s] }
body tab = sphere(radius = 2 [mm]) {
  layer core to 1.5 [mm]
  layer coat to 2 [mm]
}
balance dye in tab { source = -1e-3 [1/s] * dye }
balance dye in tab.coat { store = 0.5 * dye }
boundary tab.centre: symmetry
boundary tab.surface: film(coefficient = 1e-5 [m/s], bulk = 1 [mM])
boundary tab.core|coat: contact(partition = 2, resistance = 10 [s/m])
initially tab.core: dye = 3 [mM]
initially tab: dye = 1 [mM]
`
	m := mustCheck(t, src, nil)
	b := m.Bodies[0]
	if len(b.Regions) != 2 || b.Regions[0].Outer != 1.5e-3 || b.Regions[1].Inner != 1.5e-3 || b.Regions[1].Outer != 2e-3 {
		t.Fatalf("regions: %+v %+v", b.Regions[0], b.Regions[1])
	}
	core, coat := b.Regions[0].Balances[0], b.Regions[1].Balances[0]
	if core.Source == nil || coat.Source == nil || core.Store != nil || coat.Store == nil {
		t.Errorf("the coat's balance should refine the body's: core %+v, coat %+v", core, coat)
	}
	// The layer's starting value wins over the body's, whatever the order.
	if v, _ := core.Initial.IsConst(); v != 3 {
		t.Errorf("core starts at %g, want 3", v)
	}
	if v, _ := coat.Initial.IsConst(); v != 1 {
		t.Errorf("coat starts at %g, want 1", v)
	}
	c := b.Conditions["core|coat"][0]
	if c == nil || c.Kind != Contact || c.Partition != 2 || c.Resistance != 10 {
		t.Errorf("contact: %+v", c)
	}
	f := b.Conditions["surface"][0]
	if f.Kind != Film || f.Coefficient != 1e-5 || f.Partition != 1 {
		t.Errorf("film: %+v", f)
	}
}

func TestBathPerParticle(t *testing.T) {
	cases := []struct {
		body, cond string
		want       float64
	}{
		{"sphere(radius = 1 [mm])", "bath(volume = 1 [mL], particles = 100, start = 2 [mM])", 1e-8},
		{"slab(half_thickness = 1 [mm])", "bath(volume = 1 [mL], area = 2 [cm^2])", 1e-6 / 2e-4},
		{"cylinder(radius = 1 [mm])", "bath(volume = 1 [mL], length = 1 [cm], particles = 10)", 1e-6 / 10 / 1e-2},
	}
	for _, c := range cases {
		src := strings.NewReplacer("sphere(radius = 1 [mm])", c.body, "fixed(1 [mM])", c.cond).Replace(base)
		m := mustCheck(t, src, nil)
		cond := m.Bodies[0].Conditions["surface"][0]
		if cond.Kind != Bath || !near(cond.BathVolume, c.want) {
			t.Errorf("%s around %s: volume per particle %g, want %g", c.cond, c.body, cond.BathVolume, c.want)
		}
	}
}

func TestRunTimes(t *testing.T) {
	cases := []struct {
		run  string
		want []float64
	}{
		{"run until 1 [h] every 15 [min]", []float64{0, 900, 1800, 2700, 3600}},
		{"run until 1 [h] every 25 [min]", []float64{0, 1500, 3000, 3600}},
		{"run until 10 [s] at 5 [s], 1 [s], 5 [s]", []float64{0, 1, 5, 10}},
		{"run until 100 [s] log 3 from 1 [s]", []float64{0, 1, 10, 100}},
	}
	for _, c := range cases {
		m := mustCheck(t, base+c.run, nil)
		got := m.Run.Times
		ok := len(got) == len(c.want)
		for i := 0; ok && i < len(got); i++ {
			ok = near(got[i], c.want[i])
		}
		if !ok {
			t.Errorf("%s: times %v, want %v", c.run, got, c.want)
		}
	}
	m := mustCheck(t, base+"run steady\nshow profile(dye)", nil)
	if !m.Run.Steady {
		t.Error("run steady is not steady")
	}
}

func TestStagesSetTheRun(t *testing.T) {
	src := base + `stage soak for 30 [min] {
  boundary bead.surface: fixed(2 [mM])
}
stage rinse for 1 [h] {
  boundary bead.surface: sealed
}
run every 30 [min]
`
	m := mustCheck(t, src, nil)
	if len(m.Stages) != 2 || m.Stages[0].Name != "soak" || m.Stages[1].Duration != 3600 || m.Run.Until != 5400 {
		t.Fatalf("stages %+v, until %g", m.Stages, m.Run.Until)
	}
	if c := m.Stages[1].Conditions["bead"]["surface"][0]; c == nil || c.Kind != Sealed {
		t.Errorf("rinse condition: %+v", c)
	}
}

func TestActions(t *testing.T) {
	src := base + `let R = 1 [mm]
run until 2 [h]
show uptake(dye), mean(dye) scale log
show profile(dye) at 10 [min], 1 [h]
expect time_to(dye, 90 [%]) = 1.5 [h] within 5 [%]
expect mean(dye) at 1 [h] = 0.5 [mM] within 0.1 [mM]
sweep R from 1 [mm] to 100 [mm] steps 3 log {
  show uptake(dye)
}
print "R is", R
`
	m := mustCheck(t, src, nil)
	if len(m.Actions) != 6 {
		t.Fatalf("%d actions", len(m.Actions))
	}
	sh := m.Actions[0].(*Show)
	if sh.Scale != "log" || len(sh.Items) != 2 || sh.Items[1].Kind != "mean" || sh.Items[1].Dim != units.Concentration {
		t.Errorf("show: %+v", sh)
	}
	if p := m.Actions[1].(*Show); len(p.At) != 2 || p.At[0] != 600 {
		t.Errorf("profile times: %v", p.At)
	}
	e := m.Actions[2].(*Expect)
	if e.Subject.Fraction != 0.9 || !e.Relative || !near(e.Tol, 0.05) || e.Value != 5400 || e.At != -1 {
		t.Errorf("time_to expect: %+v", e)
	}
	e = m.Actions[3].(*Expect)
	if e.Relative || e.Tol != 0.1 || e.Value != 0.5 || e.At != 3600 {
		t.Errorf("mean expect: %+v", e)
	}
	sw := m.Actions[4].(*Sweep)
	if sw.Param != "R" || len(sw.Values) != 3 || !near(sw.Values[1], 0.01) || len(sw.Actions) != 1 {
		t.Errorf("sweep: %+v", sw)
	}
	pr := m.Actions[5].(*Print)
	if len(pr.Parts) != 2 || pr.Parts[0].Text != "R is" || pr.Parts[1].Unit != "mm" {
		t.Errorf("print: %+v", pr)
	}
}

func TestSideTables(t *testing.T) {
	src := "let a = 2 [m]\nlet b = a * 3"
	f, _ := dsl.Parse("m.mln", src)
	m, ds := Check(f, nil)
	if ds.HasErrors() {
		t.Fatal(ds)
	}
	let := f.Stmts[1].(*dsl.Let)
	use := let.Value.(*dsl.Binary).X.(*dsl.Ident)
	if sym := m.Info.Uses[use]; sym == nil || sym.Name != "a" || sym.Kind != QuantitySym {
		t.Errorf("use of a resolves to %+v", sym)
	}
	if sym := m.Info.Defs[let.Name]; sym == nil || sym.Dim != units.Length {
		t.Errorf("definition of b: %+v", sym)
	}
	if d, ok := m.Info.Dims[let.Value]; !ok || d != units.Length {
		t.Errorf("dimension of a * 3: %v", d)
	}
}

func TestNotebookChunks(t *testing.T) {
	prev, _ := dsl.Parse("cell[1]", "let R = 1 [mm]")
	cur, _ := dsl.Parse("cell[2]", "let R = 2 [mm]\nlet S = R * 2")
	m, ds := Check(cur, &Options{Previous: []*dsl.File{prev}, Redefine: true})
	if ds.HasErrors() || m == nil {
		t.Fatalf("redefinition across cells: %v", ds)
	}
	if q := quantity(m, "S"); q == nil || !near(q.Value, 4e-3) {
		t.Errorf("S = %+v, want 4 mm", q)
	}
	if len(ds) != 1 || ds[0].Severity != diag.Note || !strings.Contains(ds[0].Message, "redefined") {
		t.Errorf("want one note about the redefinition, got %v", ds)
	}
	if _, ds := Check(cur, &Options{Previous: []*dsl.File{prev}}); !ds.HasErrors() {
		t.Error("without Redefine a second definition must be an error")
	}
}

func TestOverrideAndLenient(t *testing.T) {
	m := mustCheck(t, "let R = 1 [mm]\nlet S = R * 2", &Options{Override: map[string]float64{"R": 0.5}})
	if q := quantity(m, "S"); !near(q.Value, 1) {
		t.Errorf("S with R overridden to 0.5 m: %g", q.Value)
	}
	// Lenient: a body without balance or conditions is accepted.
	mustCheck(t, "species dye { diffusivity = 1e-9 [m^2/s] }\nbody bead = sphere(radius = 1 [mm])", &Options{Lenient: true})
}

// TestNoModelWithBadStatements checks that a file with a statement that
// did not parse never yields a model, even though the checker itself
// stays quiet about it.
func TestNoModelWithBadStatements(t *testing.T) {
	f, pd := dsl.Parse("m.mln", base+"let x = = 2\n")
	if !pd.HasErrors() {
		t.Fatal("expected a syntax error")
	}
	m, cd := Check(f, nil)
	if m != nil || cd.HasErrors() {
		t.Errorf("model %v, check errors %v", m != nil, cd)
	}
	if m, ds := Check(nil, nil); m == nil && ds.HasErrors() {
		t.Errorf("Check(nil) reported %v", ds)
	}
}

func TestClosest(t *testing.T) {
	cases := []struct {
		name  string
		cands []string
		want  string
	}{
		{"Def", []string{"Deff", "R"}, "Deff"},
		{"dey", []string{"dye", "salt"}, "dye"},
		{"diffusivty", []string{"diffusivity", "porosity"}, "diffusivity"},
		{"x", []string{"radius"}, ""},
		{"RADIUS", []string{"radius"}, "radius"},
		{"same", []string{"same"}, ""},
		{"αβ", []string{"αγ"}, "αγ"},
	}
	for _, c := range cases {
		if got := Closest(c.name, c.cands); got != c.want {
			t.Errorf("Closest(%q, %v) = %q, want %q", c.name, c.cands, got, c.want)
		}
	}
}

// TestIncludeSources checks that the text of an included file reaches
// Options.Sources, so its diagnostics render with their source line.
func TestIncludeSources(t *testing.T) {
	files := map[string]string{"dir/props.mln": "let D = 1e-9 [m^2/sec]\n"}
	read := func(path string) ([]byte, error) {
		if s, ok := files[path]; ok {
			return []byte(s), nil
		}
		return nil, errNotFound
	}
	f, _ := dsl.Parse("dir/model.mln", "use \"props.mln\"\nlet E = D * 2\n")
	srcs := diag.Sources{}
	m, ds := Check(f, &Options{ReadFile: read, Sources: srcs})
	if m != nil || len(ds) != 1 || ds[0].Subject.File != "dir/props.mln" {
		t.Fatalf("want one error in the included file, got %v", ds)
	}
	if srcs["dir/props.mln"] != files["dir/props.mln"] || srcs["dir/model.mln"] == "" {
		t.Fatalf("sources: %v", srcs)
	}
	if got := diag.Text(ds, srcs); !strings.Contains(got, "   1 | let D = 1e-9 [m^2/sec]\n") {
		t.Errorf("rendered without the included line:\n%s", got)
	}
}

var errNotFound = errors.New("not found")
