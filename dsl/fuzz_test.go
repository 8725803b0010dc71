package dsl

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/massline/massline/dsl/diag"
)

// seedFiles returns the model texts the fuzzers start from: the
// formatter's inputs, the examples and every case of the error catalogue.
func seedFiles(tb testing.TB) []string {
	tb.Helper()
	var out []string
	for _, pattern := range []string{"../testdata/lang/format/*.mln", "../testdata/examples/*.mln", "../testdata/lang/errors/*.mln"} {
		files, _ := filepath.Glob(pattern)
		for _, file := range files {
			b, err := os.ReadFile(file)
			if err != nil {
				tb.Fatal(err)
			}
			for _, c := range strings.Split(string(b), "\n---\n") {
				out = append(out, c)
			}
		}
	}
	if len(out) == 0 {
		tb.Fatal("no seed files")
	}
	return out
}

// FuzzParse checks that Parse never fails on any input, that its
// diagnostics lie inside the input, and that a text that parses without
// errors formats to a text that parses without errors to the same tree
// and formats to itself.
func FuzzParse(f *testing.F) {
	for _, s := range seedFiles(f) {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		checkParse(t, src)
	})
}

// checkParse is the property FuzzParse checks, shared with the bounded
// mutation test.
func checkParse(t *testing.T, src string) {
	t.Helper()
	file, ds := Parse("fuzz.mln", src)
	if file == nil {
		t.Fatal("Parse returned no file")
	}
	for _, d := range ds {
		if d.Code == "internal" {
			t.Fatalf("Parse failed on %q: %s", src, d.Message)
		}
		checkRange(t, d, src)
	}
	if ds.HasErrors() {
		if len(file.Stmts) == 0 && strings.TrimSpace(src) != "" {
			t.Fatalf("a text with errors gave no statements at all: %q", src)
		}
		return
	}
	out := Format(file)
	g, ds2 := Parse("fuzz.mln", out)
	if ds2.HasErrors() {
		t.Fatalf("the formatted text does not parse:\ninput:  %q\noutput: %q\n%s", src, out, diag.Text(ds2, diag.Sources{"fuzz.mln": out}))
	}
	if again := Format(g); again != out {
		t.Fatalf("Format is not idempotent:\ninput: %q\nonce:  %q\ntwice: %q", src, out, again)
	}
	if a, b := SExprFile(file), SExprFile(g); a != b {
		t.Fatalf("formatting changed the tree:\ninput: %q\noutput: %q\nbefore: %s\nafter:  %s", src, out, a, b)
	}
	if a, b := commentTexts(file), commentTexts(g); strings.Join(a, "\n") != strings.Join(b, "\n") {
		t.Fatalf("formatting changed the comments:\ninput: %q\noutput: %q", src, out)
	}
}

// checkRange checks that a diagnostic's range lies inside src and that
// its line and column agree with its offsets.
func checkRange(t *testing.T, d *diag.Diagnostic, src string) {
	t.Helper()
	r := d.Subject
	if !r.Start.IsValid() || r.Start.Offset < 0 || r.Start.Offset > r.End.Offset || r.End.Offset > len(src) {
		t.Fatalf("diagnostic %q has a range outside the source: %+v (source %d bytes: %q)", d.Message, r, len(src), src)
	}
	if utf8Valid(src) {
		if got := PosAt(src, r.Start.Offset); got != r.Start {
			t.Fatalf("diagnostic %q starts at %+v, but its offset is at %+v in %q", d.Message, r.Start, got, src)
		}
		if got := PosAt(src, r.End.Offset); got != r.End {
			t.Fatalf("diagnostic %q ends at %+v, but its offset is at %+v in %q", d.Message, r.End, got, src)
		}
	}
}

func utf8Valid(s string) bool { return strings.ToValidUTF8(s, "\uFFFD") == s }
