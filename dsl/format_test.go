package dsl

import (
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/massline/massline/dsl/diag"
)

var update = flag.Bool("update", false, "rewrite the golden files of the formatter and S-expression tests")

// formatDir holds the formatter's inputs (*.mln) and their canonical
// layout (*.golden) and tree (*.sexpr).
const formatDir = "../testdata/lang/format"

// TestFormatGolden checks, for every input, that Format gives the golden
// text, that formatting the golden text changes nothing, that the
// formatted text parses to the same tree, that every comment survives in
// order, and that the tree matches the golden S-expression dump.
func TestFormatGolden(t *testing.T) {
	inputs, err := filepath.Glob(filepath.Join(formatDir, "*.mln"))
	if err != nil || len(inputs) == 0 {
		t.Fatalf("no inputs in %s (%v)", formatDir, err)
	}
	for _, in := range inputs {
		name := strings.TrimSuffix(filepath.Base(in), ".mln")
		t.Run(name, func(t *testing.T) {
			src := readFile(t, in)
			f := mustParse(t, in, src)
			got := Format(f)
			tree := SExprFile(f)
			goldenPath := strings.TrimSuffix(in, ".mln") + ".golden"
			sexprPath := strings.TrimSuffix(in, ".mln") + ".sexpr"
			if *update {
				writeFile(t, goldenPath, got)
				writeFile(t, sexprPath, tree)
			}
			if want := readFile(t, goldenPath); got != want {
				t.Errorf("Format(%s) differs from %s:\n%s", in, goldenPath, lineDiff(want, got))
			}
			if want := readFile(t, sexprPath); tree != want {
				t.Errorf("the tree of %s differs from %s:\n%s", in, sexprPath, lineDiff(want, tree))
			}
			g := mustParse(t, goldenPath, got)
			if again := Format(g); again != got {
				t.Errorf("formatting is not idempotent on %s:\n%s", in, lineDiff(got, again))
			}
			if back := SExprFile(g); back != tree {
				t.Errorf("the formatted text of %s parses to a different tree:\n%s", in, lineDiff(tree, back))
			}
			if a, b := commentTexts(f), commentTexts(g); strings.Join(a, "\n") != strings.Join(b, "\n") {
				t.Errorf("comments changed in formatting %s:\nbefore: %q\nafter:  %q", in, a, b)
			}
		})
	}
}

// TestFormatCases checks small layouts of the canonical form.
func TestFormatCases(t *testing.T) {
	cases := []struct{ in, want string }{
		{"let a=1[m]", "let a = 1 [m]\n"},
		{"let a = 1 [ m ^ 2 / s ]", "let a = 1 [m^2/s]\n"},
		{"let a = x ^ 2", "let a = x^2\n"},
		{"let a = -x", "let a = -x\n"},
		{"let a = not x", "let a = not x\n"},
		{"let a = ((x))", "let a = ((x))\n"},
		{"let a = 1\nlet bbb = 2", "let a   = 1\nlet bbb = 2\n"},
		{"let a = 1\n\nlet bbb = 2", "let a = 1\n\nlet bbb = 2\n"},
		{"species s {}", "species s\n"},
		{"settings {}", "settings {}\n"},
		{"boundary b.surface: sealed", "boundary b.surface: sealed\n"},
		{"boundary b.surface: sealed()", "boundary b.surface: sealed()\n"},
		{"boundary b.c | d: contact", "boundary b.c|d: contact\n"},
		{"run steady", "run steady\n"},
		{"print \"a\\tb\"", "print \"a\\tb\"\n"},
		{"", ""},
		{"# only a comment", "# only a comment\n"},
		{"\n\n# c\n\n", "# c\n"},
		{"show uptake(dye) at 1 [h] scale log", "show uptake(dye) at 1 [h] scale log\n"},
		{"species s { diffusivity = 1e-9 [m^2/s] }", "species s { diffusivity = 1e-9 [m^2/s] }\n"},
		{"species s { diffusivity = 1e-9 [m^2/s], porosity = 0.5 }",
			"species s {\n  diffusivity = 1e-9 [m^2/s]\n  porosity = 0.5\n}\n"},
		{"species s { diffusivity = 1e-9 [m^2/s] * (1 + s / 1 [mol/m^3]) * exp(-s / 10 [mol/m^3]) }",
			"species s {\n  diffusivity = 1e-9 [m^2/s] * (1 + s / 1 [mol/m^3]) * exp(-s / 10 [mol/m^3])\n}\n"},
		{"let µm_size = 3 [µm]  # Greek and µ keep their width\nlet α = 1", "let µm_size = 3 [µm]  # Greek and µ keep their width\nlet α       = 1\n"},
	}
	for _, c := range cases {
		f := mustParse(t, "case.mln", c.in)
		if got := Format(f); got != c.want {
			t.Errorf("Format(%q) =\n%q\nwant\n%q", c.in, got, c.want)
		}
	}
}

func mustParse(t *testing.T, name, src string) *File {
	t.Helper()
	f, ds := Parse(name, src)
	if ds.HasErrors() {
		t.Fatalf("%s does not parse:\n%s", name, diag.Text(ds, diag.Sources{name: src}))
	}
	return f
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run the test with -update to create it)", err)
	}
	return string(b)
}

func writeFile(t *testing.T, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

func commentTexts(f *File) []string {
	var out []string
	for _, c := range f.Comments {
		out = append(out, c.Text)
	}
	return out
}

// lineDiff shows the first lines where two texts differ.
func lineDiff(want, got string) string {
	w, g := strings.Split(want, "\n"), strings.Split(got, "\n")
	var b strings.Builder
	shown := 0
	for i := 0; i < max(len(w), len(g)) && shown < 8; i++ {
		var a, c string
		if i < len(w) {
			a = w[i]
		}
		if i < len(g) {
			c = g[i]
		}
		if a != c {
			b.WriteString("line " + itoa(i+1) + ":\n  want: " + a + "\n  got:  " + c + "\n")
			shown++
		}
	}
	return b.String()
}

func itoa(n int) string {
	if n == 0 {
		return "0"
	}
	s := ""
	for n > 0 {
		s = string(rune('0'+n%10)) + s
		n /= 10
	}
	return s
}
