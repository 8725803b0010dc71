package compile

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// TestCataloguePositions checks every diagnostic of the error catalogue:
// its range lies inside its file, its line and column agree with its
// byte offset, and the excerpt under it puts the caret on the subject.
func TestCataloguePositions(t *testing.T) {
	n := 0
	for _, file := range catalogueFiles(t) {
		b, err := os.ReadFile(file)
		if err != nil {
			t.Fatal(err)
		}
		for _, cs := range splitCases(file, string(b)) {
			ds, _ := runCase(cs.file, cs.src)
			for _, d := range ds {
				src := cs.src
				if d.Subject.File != cs.file {
					inc, err := os.ReadFile(filepath.Clean(d.Subject.File))
					if err != nil {
						t.Errorf("%s:%d: diagnostic in unknown file %q: %s", cs.file, cs.firstLine, d.Subject.File, d.Message)
						continue
					}
					src = string(inc)
				}
				checkPosition(t, d, src)
				n++
			}
		}
	}
	if n < 60 {
		t.Errorf("only %d diagnostics checked", n)
	}
}

// checkPosition checks one diagnostic's range against its source text.
func checkPosition(t *testing.T, d *diag.Diagnostic, src string) {
	t.Helper()
	r := d.Subject
	where := r.String() + " (" + d.Message + ")"
	if !r.Start.IsValid() || !r.End.IsValid() {
		t.Errorf("%s: invalid range %+v", where, r)
		return
	}
	if r.Start.Offset < 0 || r.Start.Offset > r.End.Offset || r.End.Offset > len(src) {
		t.Errorf("%s: range %d..%d outside the source (%d bytes)", where, r.Start.Offset, r.End.Offset, len(src))
		return
	}
	if got := dsl.PosAt(src, r.Start.Offset); got != r.Start {
		t.Errorf("%s: start %+v, but its offset is at %+v", where, r.Start, got)
	}
	if got := dsl.PosAt(src, r.End.Offset); got != r.End {
		t.Errorf("%s: end %+v, but its offset is at %+v", where, r.End, got)
	}
	ex := diag.Excerpt(r, src)
	if len(ex) != 2 {
		t.Errorf("%s: excerpt has %d lines", where, len(ex))
		return
	}
	line := strings.Split(src, "\n")[r.Start.Line-1]
	gutter, text, _ := strings.Cut(ex[0], "| ")
	if text != strings.ReplaceAll(strings.TrimRight(line, "\r"), "\t", " ") {
		t.Errorf("%s: excerpt shows %q, not line %d %q", where, text, r.Start.Line, line)
	}
	carets := ex[1][len(gutter)+2:]
	col := utf8.RuneCountInString(carets) - utf8.RuneCountInString(strings.TrimLeft(carets, " "))
	if col != r.Start.Column-1 {
		t.Errorf("%s: caret at column %d, want %d\n%s\n%s", where, col+1, r.Start.Column, ex[0], ex[1])
	}
	width := strings.Count(carets, "^")
	lineEnd := strings.IndexByte(src[r.Start.Offset:], '\n')
	stop := r.End.Offset
	if lineEnd >= 0 {
		stop = min(stop, r.Start.Offset+lineEnd)
	}
	want := max(1, utf8.RuneCountInString(src[r.Start.Offset:stop]))
	if width != want {
		t.Errorf("%s: %d carets under %q", where, width, src[r.Start.Offset:stop])
	}
}

// TestExcerptNonASCII checks the rendered caret line on lines with
// characters of more than one byte before and inside the subject.
func TestExcerptNonASCII(t *testing.T) {
	cases := []struct {
		src  string
		want string // the rendered diagnostics
	}{
		{
			"let α = 3 [µm] + 2 [s]\n",
			"m.mln:1:16: error: cannot add m (length) and s (time)\n" +
				"   1 | let α = 3 [µm] + 2 [s]\n" +
				"     |                ^\n" +
				"      note: left: m; right: s\n",
		},
		{
			"let β = 1 [µmm]\n",
			"m.mln:1:12: error: unknown unit \"µmm\" (did you mean \"mm\"?)\n" +
				"   1 | let β = 1 [µmm]\n" +
				"     |            ^^^\n",
		},
		{
			"let größe = 2 [µm]\nlet Δ = größe * grosse\n",
			"m.mln:2:17: error: \"grosse\" is not defined\n" +
				"   2 | let Δ = größe * grosse\n" +
				"     |                 ^^^^^^\n",
		},
		{
			"let ε = 1\tlet\n",
			"m.mln:1:14: error: the statement ends too early; expected a name\n" +
				"   1 | let ε = 1 let\n" +
				"     |              ^\n",
		},
		{
			"let τ = 2 [µm] * r²\n",
			"m.mln:1:19: error: the character \"²\" is not part of the language; write powers with ^, and units in brackets such as [m^2]\n" +
				"   1 | let τ = 2 [µm] * r²\n" +
				"     |                   ^\n",
		},
	}
	for _, c := range cases {
		f, ds := dsl.Parse("m.mln", c.src)
		if !ds.HasErrors() {
			_, ds = Check(f, nil)
		}
		if got := diag.Text(ds, diag.Sources{"m.mln": c.src}); got != c.want {
			t.Errorf("for %q got\n%s\nwant\n%s", c.src, got, c.want)
		}
		for _, d := range ds {
			checkPosition(t, d, c.src)
		}
	}
}
