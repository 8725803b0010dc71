package dsl

import (
	"strings"
	"testing"
)

// TestRecovery checks that every syntax error of a file is reported, in
// order, and that the statements around them are kept, the broken ones as
// BadStmt with their keyword and declared name.
func TestRecovery(t *testing.T) {
	src := `let a = 1 [m]
let b 2
species dye {
  diffusivity = 1e-9 [m^2/s]
body bead = sphere(radius = a
let c = a * 2
stage soak for 1 [h] boundary
`
	f, ds := Parse("m.mln", src)
	var lines []int
	for _, d := range ds {
		lines = append(lines, d.Subject.Start.Line)
	}
	if got := fmtInts(lines); got != "[2 3 5 7]" {
		t.Errorf("errors on lines %v, want 2 3 5 7:\n%v", lines, ds)
	}
	want := []string{"(let a (num 1 [m]))", "bad let b", "bad species dye", "bad body bead", "(let c (* a (num 2)))", "bad stage soak"}
	if len(f.Stmts) != len(want) {
		t.Fatalf("%d statements: %s", len(f.Stmts), SExprFile(f))
	}
	for i, s := range f.Stmts {
		got := SExpr(s)
		if b, ok := s.(*BadStmt); ok {
			got = "bad " + b.Keyword
			if b.Name != nil {
				got += " " + b.Name.Name
			}
		}
		if got != want[i] {
			t.Errorf("statement %d: %s, want %s", i, got, want[i])
		}
	}
}

func fmtInts(xs []int) string {
	var b strings.Builder
	b.WriteByte('[')
	for i, x := range xs {
		if i > 0 {
			b.WriteByte(' ')
		}
		b.WriteString(itoa(x))
	}
	b.WriteByte(']')
	return b.String()
}

// TestParseNeverPanics feeds inputs that once troubled parsers of this
// kind; each must come back with a file and, where wrong, diagnostics.
func TestParseNeverPanics(t *testing.T) {
	inputs := []string{
		"", "\n", "run", "run\n", "run \n\n", "{", "}", "((((", "))))", "[", "]", "\"", "#", "let", "let =",
		"\xff\xfe", "let a = 1 [m]\x00", strings.Repeat("(", 200) + "1", strings.Repeat("-", 500) + "1",
		"species s {" + strings.Repeat(" a = 1", 100), "massline 99999999999999999999", "let a = 1e400",
		"boundary a.b|c|d: x", "fit a from 1 to 2 against \"x\" { time = \"t\" time = \"t\" }",
	}
	for _, in := range inputs {
		f, ds := Parse("m.mln", in)
		if f == nil {
			t.Fatalf("no file for %q", in)
		}
		for _, d := range ds {
			if d.Code == "internal" {
				t.Errorf("Parse(%q): %s", in, d.Message)
			}
		}
	}
}
