package compile

import (
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// bigModel writes a realistic model of about lines lines: blocks of
// quantities, a species, a (sometimes layered) body, its balance with a
// reaction and sorption, its boundary conditions, starting value, shows
// and an expectation, with comments.
func bigModel(lines int) string {
	var b strings.Builder
	b.WriteString("massline 1\n\n# A generated model for the benchmark.\n")
	b.WriteString("run until 4 [h] every 5 [min]\nsettings { rtol = 1e-6, cells = 40 }\n")
	shapes := []string{"sphere(radius = R_%d)", "cylinder(radius = R_%d)", "slab(half_thickness = R_%d)"}
	for k := 0; strings.Count(b.String(), "\n") < lines; k++ {
		fmt.Fprintf(&b, "\n# ---- particle family %d ----\n", k)
		fmt.Fprintf(&b, "let R_%d    = %g [mm]  # radius\n", k, 1+float64(k%9)/10)
		fmt.Fprintf(&b, "let kf_%d   = 1.2e-5 [m/s] * (1 + %d / 100)\n", k, k%7)
		fmt.Fprintf(&b, "let D_%d    = 4e-10 [m^2/s] * %g\n", k, 1+float64(k%5)/10)
		fmt.Fprintf(&b, "let cb_%d   = 0.8 [mol/m^3]\n", k)
		fmt.Fprintf(&b, "let Bi_%d   = kf_%d * R_%d / D_%d\n", k, k, k, k)
		fmt.Fprintf(&b, "let krx_%d  = 2e-3 [1/s] * exp(-Bi_%d / 1000)\n", k, k)
		fmt.Fprintf(&b, "species s_%d {\n  diffusivity = D_%d\n  molar_mass = 479 [g/mol]\n  porosity = 0.4\n  tortuosity = 2.5\n}\n", k, k)
		layered := k%2 == 1
		fmt.Fprintf(&b, "body b_%d = "+shapes[k%3], k, k)
		if layered {
			fmt.Fprintf(&b, " {\n  layer core to R_%d * 0.8\n  layer coat to R_%d\n}\n", k, k)
		} else {
			b.WriteString("\n")
		}
		fmt.Fprintf(&b, "balance s_%d in b_%d {\n  source = -krx_%d * s_%d\n  store  = 0.4 * s_%d + 10 [mol/m^3] * s_%d / (0.5 [mol/m^3] + s_%d)\n}\n", k, k, k, k, k, k, k)
		fmt.Fprintf(&b, "boundary b_%d.centre: symmetry\n", k)
		fmt.Fprintf(&b, "boundary b_%d.surface: film(coefficient = kf_%d, bulk = cb_%d * (1 - exp(-t / 10 [min])), partition = 1.3)\n", k, k, k)
		if layered {
			fmt.Fprintf(&b, "boundary b_%d.core|coat: contact(partition = 2, resistance = 1e4 [s/m])\n", k)
		}
		fmt.Fprintf(&b, "initially b_%d: s_%d = 0 [mol/m^3]\n", k, k)
		fmt.Fprintf(&b, "show uptake(s_%d), centre(s_%d) scale sqrt\n", k, k)
		fmt.Fprintf(&b, "show profile(s_%d) at 1 [min], 10 [min], 1 [h]\n", k)
		fmt.Fprintf(&b, "expect uptake(s_%d) at 1 [h] = 0.5 within 0.5\n", k)
	}
	return b.String()
}

// TestBigModelChecks makes sure the benchmark measures the whole path: the
// generated model must parse and check without errors, quickly.
func TestBigModelChecks(t *testing.T) {
	src := bigModel(1000)
	start := time.Now()
	f, pd := dsl.Parse("big.mln", src)
	m, cd := Check(f, nil)
	elapsed := time.Since(start)
	if pd.HasErrors() || cd.HasErrors() || m == nil {
		t.Fatalf("the generated model has errors:\n%s%s", diag.Text(pd, diag.Sources{"big.mln": src}), diag.Text(cd, diag.Sources{"big.mln": src}))
	}
	if n := strings.Count(src, "\n"); n < 1000 || len(m.Bodies) < 30 {
		t.Fatalf("the generated model is too small: %d lines, %d bodies", n, len(m.Bodies))
	}
	// The limit is generous (the measured time is tens of milliseconds) so
	// that a loaded machine or the race detector does not fail the test.
	if elapsed > 3*time.Second {
		t.Errorf("parsing and checking 1000 lines took %v", elapsed)
	}
}

// BenchmarkCheck1000Lines measures Parse+Check of a 1,000-line model.
func BenchmarkCheck1000Lines(b *testing.B) {
	src := bigModel(1000)
	b.SetBytes(int64(len(src)))
	b.ReportAllocs()
	for b.Loop() {
		f, _ := dsl.Parse("big.mln", src)
		if m, _ := Check(f, nil); m == nil {
			b.Fatal("the model has errors")
		}
	}
}

// BenchmarkParse1000Lines measures Parse alone, for comparison.
func BenchmarkParse1000Lines(b *testing.B) {
	src := bigModel(1000)
	b.SetBytes(int64(len(src)))
	b.ReportAllocs()
	for b.Loop() {
		dsl.Parse("big.mln", src)
	}
}

// BenchmarkFormat1000Lines measures Format of a parsed 1,000-line model.
func BenchmarkFormat1000Lines(b *testing.B) {
	src := bigModel(1000)
	f, _ := dsl.Parse("big.mln", src)
	b.ReportAllocs()
	for b.Loop() {
		dsl.Format(f)
	}
}
