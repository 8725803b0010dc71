package compile

import (
	"math/rand"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// fuzzFiles are the only files a fuzzed model can include or read data
// from: the checker must never touch the real file system under fuzzing.
var fuzzFiles = map[string]string{
	"inc.mln":  "let D_inc = 1e-9 [m^2/s]\nspecies ink { diffusivity = D_inc }\n",
	"data.csv": "t [min],F [1],c [mM]\n0,0,0\n10,0.5,0.2\n",
}

func fuzzRead(path string) ([]byte, error) {
	if s, ok := fuzzFiles[filepath.Base(path)]; ok {
		return []byte(s), nil
	}
	return nil, os.ErrNotExist
}

// catalogueSeeds returns the cases of the error catalogue, the formatter
// inputs and the examples, as seeds for fuzzing the checker.
func catalogueSeeds(tb testing.TB) []string {
	tb.Helper()
	var out []string
	for _, pattern := range []string{"../testdata/lang/errors/*.mln", "../testdata/lang/format/*.mln", "../testdata/examples/*.mln"} {
		files, _ := filepath.Glob(pattern)
		for _, file := range files {
			b, err := os.ReadFile(file)
			if err != nil {
				tb.Fatal(err)
			}
			for _, cs := range splitCases(file, string(b)) {
				out = append(out, cs.src)
			}
		}
	}
	if len(out) == 0 {
		tb.Fatal("no seeds")
	}
	return out
}

// FuzzCheck checks that parsing and checking never fail on any input,
// that the model is returned exactly when there is no error, and that
// every diagnostic lies inside the text it is about.
func FuzzCheck(f *testing.F) {
	for _, s := range catalogueSeeds(f) {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		checkSource(t, src)
	})
}

// checkSource parses, formats and checks src and asserts the properties
// that must hold for any input.
func checkSource(t *testing.T, src string) {
	t.Helper()
	file, pd := dsl.Parse("fuzz.mln", src)
	for _, d := range pd {
		if d.Code == "internal" {
			t.Fatalf("Parse failed on %q: %s", src, d.Message)
		}
	}
	if !pd.HasErrors() {
		out := dsl.Format(file)
		g, ds := dsl.Parse("fuzz.mln", out)
		if ds.HasErrors() {
			t.Fatalf("the formatted text of %q does not parse: %q\n%s", src, out, diag.Text(ds, diag.Sources{"fuzz.mln": out}))
		}
		if again := dsl.Format(g); again != out {
			t.Fatalf("Format is not idempotent on %q:\nonce:  %q\ntwice: %q", src, out, again)
		}
	}
	m, cd := Check(file, &Options{ReadFile: fuzzRead})
	for _, d := range cd {
		if d.Code == "internal" {
			t.Fatalf("Check failed on %q: %s", src, d.Message)
		}
		text := src
		if d.Subject.File != "fuzz.mln" {
			text = fuzzFiles[filepath.Base(d.Subject.File)]
		}
		r := d.Subject
		if !r.Start.IsValid() || r.Start.Offset > r.End.Offset || r.End.Offset > len(text) {
			t.Fatalf("diagnostic %q has a range outside its file %q: %+v\nsource: %q", d.Message, r.File, r, src)
		}
		if utf8.ValidString(text) && dsl.PosAt(text, r.Start.Offset) != r.Start {
			t.Fatalf("diagnostic %q starts at %+v but its offset is at %+v\nsource: %q", d.Message, r.Start, dsl.PosAt(text, r.Start.Offset), src)
		}
		if d.Message == "" {
			t.Fatalf("empty message for %q", src)
		}
	}
	if m != nil && (cd.HasErrors() || pd.HasErrors()) {
		t.Fatalf("Check returned a model for a text with errors: %q", src)
	}
	if m == nil && !cd.HasErrors() && !pd.HasErrors() {
		t.Fatalf("Check returned no model and no error for %q", src)
	}
}

// TestMutations is a short, deterministic fuzzing pass that runs with
// every "go test": it mutates the seed models a few thousand times and
// checks each result as FuzzCheck does.
func TestMutations(t *testing.T) {
	seeds := catalogueSeeds(t)
	n := 3000
	if testing.Short() {
		n = 500
	}
	rng := rand.New(rand.NewSource(20260301))
	for i := 0; i < n; i++ {
		src := seeds[rng.Intn(len(seeds))]
		for k := 1 + rng.Intn(3); k > 0; k-- {
			src = mutate(rng, src)
		}
		checkSource(t, src)
	}
}

// fragments are pieces of the language that mutations insert.
var fragments = []string{
	"{", "}", "(", ")", "[", "]", "[mm]", "[m^2/s]", "[%]", "\"", "#", "\n", " ", ",", ":", "=", ".", "|",
	"let", "species", "body", "balance", "boundary", "initially", "stage", "run", "settings", "show",
	"expect", "sweep", "fit", "print", "reset", "use", "massline", "if", "then", "else", "and", "or", "not",
	"in", "to", "for", "at", "every", "log", "from", "steps", "within", "against", "scale", "until", "steady",
	"t", "r", "z", "pi", "dye", "bead", "bead.surface", "bead.centre", "tab.core|coat", "1e-9", "0", "-1",
	"1e999", "2.5", "x", "uptake(dye)", "profile(dye)", "time_to(dye, 0.5)", "fixed(1 [mM])", "symmetry",
	"film(coefficient = 1 [m/s], bulk = 1 [mM])", "bath(volume = 1 [mL])", "contact", "sphere(radius = 1 [mm])",
	"layer", "\"inc.mln\"", "\"data.csv\"", "µ", "α", "²", "\t", "\r\n", "---", "$", "\\",
}

// mutate applies one random edit to src.
func mutate(rng *rand.Rand, src string) string {
	if src == "" {
		return fragments[rng.Intn(len(fragments))]
	}
	pos := func() int {
		i := rng.Intn(len(src) + 1)
		for i > 0 && i < len(src) && !utf8.RuneStart(src[i]) {
			i--
		}
		return i
	}
	switch rng.Intn(6) {
	case 0: // insert a fragment
		i := pos()
		return src[:i] + fragments[rng.Intn(len(fragments))] + src[i:]
	case 1: // delete a span
		i, j := pos(), pos()
		if i > j {
			i, j = j, i
		}
		if j-i > 40 {
			j = i + 40
			for j < len(src) && !utf8.RuneStart(src[j]) {
				j++
			}
		}
		return src[:i] + src[j:]
	case 2: // duplicate a line
		lines := strings.Split(src, "\n")
		k := rng.Intn(len(lines))
		lines = append(lines[:k+1], lines[k:]...)
		return strings.Join(lines, "\n")
	case 3: // swap two lines
		lines := strings.Split(src, "\n")
		a, b := rng.Intn(len(lines)), rng.Intn(len(lines))
		lines[a], lines[b] = lines[b], lines[a]
		return strings.Join(lines, "\n")
	case 4: // replace a span by a fragment
		i := pos()
		j := min(len(src), i+1+rng.Intn(8))
		for j < len(src) && !utf8.RuneStart(src[j]) {
			j++
		}
		return src[:i] + fragments[rng.Intn(len(fragments))] + src[j:]
	default: // insert a random byte (sometimes invalid UTF-8)
		i := pos()
		return src[:i] + string([]byte{byte(rng.Intn(256))}) + src[i:]
	}
}
