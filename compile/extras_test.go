package compile

import (
	"math"
	"strings"
	"testing"

	"github.com/massline/massline/dsl"
)

func checkText(t *testing.T, src string) (*Model, string) {
	t.Helper()
	f, diags := dsl.Parse("m.mln", src)
	m, more := Check(f, nil)
	diags.Append(more)
	var msgs []string
	for _, d := range diags {
		msgs = append(msgs, d.Error())
	}
	return m, strings.Join(msgs, "\n")
}

// TestMassConcentration: a mass concentration converts to a molar one with
// the species' molar mass: 79.9 mg/L of a solute of 79.9 g/mol is exactly
// 1 mol/m^3 (source: definitions; BIPM SI Brochure, 9th ed., 2019 for
// the units).
func TestMassConcentration(t *testing.T) {
	base := `species br { diffusivity = 1e-9 [m^2/s]  MOLAR }
body b = slab(half_thickness = 1 [mm])
balance br in b
boundary b.centre: symmetry
boundary b.surface: fixed(79.9 [mg/L])
initially b: br = 0 [mg/L]
run until 1 [h]
`
	m, msgs := checkText(t, strings.Replace(base, "MOLAR", "molar_mass = 79.9 [g/mol]", 1))
	if m == nil {
		t.Fatalf("check failed: %s", msgs)
	}
	v, ok := m.Bodies[0].Conditions["surface"][0].Value.IsConst()
	if !ok || math.Abs(v-1) > 1e-12 {
		t.Errorf("fixed value %g mol/m^3, want 1", v)
	}
	m, msgs = checkText(t, strings.Replace(base, "MOLAR", "", 1))
	if m != nil || !strings.Contains(msgs, "give species br a molar_mass") {
		t.Errorf("without a molar mass: %q", msgs)
	}
}

func TestHyperbolicFunctions(t *testing.T) {
	m, msgs := checkText(t, "let a = tanh(0.5)\nlet b = coth(2) * sinh(1) / cosh(1)\n")
	if m == nil {
		t.Fatal(msgs)
	}
	if math.Abs(m.Quantities[0].Value-math.Tanh(0.5)) > 1e-15 {
		t.Errorf("tanh(0.5) = %g", m.Quantities[0].Value)
	}
	if want := math.Tanh(1) / math.Tanh(2); math.Abs(m.Quantities[1].Value-want) > 1e-15 {
		t.Errorf("b = %g, want %g", m.Quantities[1].Value, want)
	}
	// Derivatives by the tape against central differences.
	for _, fn := range []string{"sinh", "cosh", "tanh", "coth"} {
		e := &Expr{op: opCall, fn: fn, args: []*Expr{{op: opConc, idx: 0}}}
		tp := NewTape(e, 1)
		g := make([]float64, 1)
		x := 0.7
		tp.Eval(&Env{C: []float64{x}}, g)
		h := 1e-6
		fd := (e.Eval(&Env{C: []float64{x + h}}) - e.Eval(&Env{C: []float64{x - h}})) / (2 * h)
		if math.Abs(g[0]-fd) > 1e-7*math.Max(1, math.Abs(fd)) {
			t.Errorf("%s'(%g): tape %g, differences %g", fn, x, g[0], fd)
		}
	}
	if _, msgs := checkText(t, "let a = tanh(1 [m])\n"); !strings.Contains(msgs, "dimensionless") {
		t.Errorf("tanh of a length: %q", msgs)
	}
}

func TestSettingsOnOff(t *testing.T) {
	m, msgs := checkText(t, "settings { extrapolate = on, estimate = off }\n")
	if m == nil || !m.Settings.Extrapolate || m.Settings.Estimate {
		t.Errorf("settings: %+v %s", m, msgs)
	}
	if _, msgs := checkText(t, "settings { extrapolate = yes }\n"); !strings.Contains(msgs, "on or off") {
		t.Errorf("bad value: %q", msgs)
	}
}

// TestCanonicalHash: the model hash ignores layout and comments and
// follows every change of meaning.
func TestCanonicalHash(t *testing.T) {
	a, _ := checkText(t, "let R = 1.5 [mm]\nlet D = 4e-10 [m^2/s]\n")
	b, _ := checkText(t, "# a comment\nlet R    =   1.5 [ mm ]\n\n\nlet D = 4e-10 [m^2/s]   # diffusivity\n")
	c, _ := checkText(t, "let R = 1.6 [mm]\nlet D = 4e-10 [m^2/s]\n")
	if a == nil || b == nil || c == nil {
		t.Fatal("check failed")
	}
	if a.Hash != b.Hash {
		t.Errorf("layout and comments changed the hash: %s vs %s", a.Hash, b.Hash)
	}
	if a.Hash == c.Hash {
		t.Error("a changed value kept the hash")
	}
}
