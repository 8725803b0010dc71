package compile

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// The error catalogue lives in testdata/lang/errors/*.mln. Each file holds
// cases separated by lines of three dashes; each case is parsed and checked
// on its own. An expected diagnostic is written as a comment on the line
// it refers to, with the marker #~ followed by one or more quoted regular
// expressions:
//
//	let a = 1 [m] + 2 [s]   #~ "cannot add m \(length\) and s \(time\)"
//
// The text between the quotes is a regular expression taken as written
// (no string escapes). Every error must be matched by a marker on its
// line and every marker must match an error on its line. A marker written
// #~warn matches a warning or note instead; warnings without a marker are
// allowed. A marker written #~^ on a line of its own refers to the line
// above (for a line whose own comment would be swallowed, as by a string
// that is not closed). Files the case includes (use) may carry markers too.

var showCatalogue = flag.Bool("catalogue.show", false, "print every diagnostic of the error catalogue")

// catalogueDir is where the error catalogue lives, relative to this package.
const catalogueDir = "../testdata/lang/errors"

// marker is one expected diagnostic.
type marker struct {
	file    string // file the marker is in (the case's name for a case)
	line    int    // line within that file (or case)
	re      *regexp.Regexp
	warning bool
	matched bool
}

// catalogueCase is one chunk of a catalogue file.
type catalogueCase struct {
	file      string // the catalogue file
	firstLine int    // line of the file where the case starts
	src       string
}

var (
	markerRE        = regexp.MustCompile(`#~(\^)?(warn)?((?:\s*"(?:[^"\\]|\\.)*")+)\s*$`)
	useRE           = regexp.MustCompile(`(?m)^\s*use\s+"([^"]+)"`)
	looksLikeMarker = regexp.MustCompile(`#~(\^|warn)?\s*"`)
	quotedRE        = regexp.MustCompile(`"((?:[^"\\]|\\.)*)"`)
)

// parseMarkers finds the expected diagnostics written in src.
func parseMarkers(t *testing.T, file, src string) []*marker {
	t.Helper()
	var out []*marker
	for i, line := range strings.Split(src, "\n") {
		m := markerRE.FindStringSubmatch(line)
		if m == nil {
			if looksLikeMarker.MatchString(line) {
				t.Errorf("%s:%d: malformed marker: %s", file, i+1, line)
			}
			continue
		}
		line := i + 1
		if m[1] != "" {
			line--
		}
		for _, q := range quotedRE.FindAllStringSubmatch(m[3], -1) {
			re, err := regexp.Compile(q[1])
			if err != nil {
				t.Errorf("%s:%d: bad regular expression %q: %v", file, i+1, q[1], err)
				continue
			}
			out = append(out, &marker{file: file, line: line, re: re, warning: m[2] != ""})
		}
	}
	return out
}

// splitCases cuts a catalogue file at lines that are exactly "---". The
// trailing newline of a case is kept out of it, so that "end of input"
// lies on the case's last line.
func splitCases(file, src string) []catalogueCase {
	var out []catalogueCase
	lines := strings.Split(src, "\n")
	start := 0
	flush := func(end int) {
		text := strings.Join(lines[start:end], "\n")
		if strings.TrimSpace(text) != "" {
			out = append(out, catalogueCase{file: file, firstLine: start + 1, src: strings.TrimRight(text, "\n")})
		}
	}
	for i, l := range lines {
		if strings.TrimRight(l, " \t\r") == "---" {
			flush(i)
			start = i + 1
		}
	}
	flush(len(lines))
	return out
}

// runCase parses and checks one case and returns every diagnostic.
func runCase(name, src string) (diag.List, map[string]string) {
	f, pd := dsl.Parse(name, src)
	_, cd := Check(f, nil)
	all := append(append(diag.List(nil), pd...), cd...)
	all.Sort()
	return all, map[string]string{name: src}
}

func catalogueFiles(t *testing.T) []string {
	t.Helper()
	files, err := filepath.Glob(filepath.Join(catalogueDir, "*.mln"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no catalogue files in %s (%v)", catalogueDir, err)
	}
	sort.Strings(files)
	return files
}

func TestErrorCatalogue(t *testing.T) {
	total := 0
	for _, file := range catalogueFiles(t) {
		b, err := os.ReadFile(file)
		if err != nil {
			t.Fatal(err)
		}
		for _, cs := range splitCases(file, string(b)) {
			name := fmt.Sprintf("%s:%d", filepath.Base(file), cs.firstLine)
			t.Run(name, func(t *testing.T) {
				total += checkCase(t, cs)
			})
		}
	}
	// The catalogue is meant to cover the language's mistakes broadly.
	if total < 60 {
		t.Errorf("the catalogue holds %d expected errors; it should hold at least 60", total)
	}
}

// checkCase runs one case against its markers and returns how many
// expected errors it holds.
func checkCase(t *testing.T, cs catalogueCase) int {
	t.Helper()
	// The case is checked under the catalogue file's name so that includes
	// and data files resolve beside it.
	ds, _ := runCase(cs.file, cs.src)
	markers := parseMarkers(t, cs.file, cs.src)
	// Markers of the files the case includes, found by following its use
	// statements (an included file's errors are reported in that file).
	extra := map[string][]*marker{}
	var follow func(file, src string)
	follow = func(file, src string) {
		for _, m := range useRE.FindAllStringSubmatch(src, -1) {
			path := filepath.Clean(filepath.Join(filepath.Dir(file), m[1]))
			if _, done := extra[path]; done || path == filepath.Clean(cs.file) {
				continue
			}
			b, err := os.ReadFile(path)
			if err != nil {
				extra[path] = nil
				continue
			}
			extra[path] = parseMarkers(t, path, string(b))
			follow(path, string(b))
		}
	}
	follow(cs.file, cs.src)
	if *showCatalogue {
		t.Logf("case at %s:%d:\n%s", cs.file, cs.firstLine, diag.Text(ds, diag.Sources{cs.file: cs.src}))
	}
	errorsWanted := 0
	for _, m := range markers {
		if !m.warning {
			errorsWanted++
		}
	}
	for _, d := range ds {
		file := d.Subject.File
		list := markers
		if file != cs.file {
			list = extra[filepath.Clean(file)]
		}
		where := fmt.Sprintf("%s:%d", file, d.Subject.Start.Line)
		if file == cs.file {
			where = fmt.Sprintf("%s:%d", file, cs.firstLine+d.Subject.Start.Line-1)
		}
		isErr := d.Severity == diag.Error
		found := false
		for _, m := range list {
			if m.line == d.Subject.Start.Line && m.warning == !isErr && m.re.MatchString(rendered(d)) {
				m.matched = true
				found = true
			}
		}
		if !found && isErr {
			t.Errorf("%s: unexpected error: %s", where, rendered(d))
		}
	}
	check := func(list []*marker, base int) {
		for _, m := range list {
			if !m.matched {
				t.Errorf("%s:%d: missing diagnostic matching %q", m.file, base+m.line-1, m.re)
			}
		}
	}
	check(markers, cs.firstLine)
	for _, list := range extra {
		check(list, 1)
	}
	return errorsWanted
}

// rendered is the message of d as the terminal shows it: the sentence and
// the suggestion, "... (did you mean "Deff"?)".
func rendered(d *diag.Diagnostic) string {
	first, _, _ := strings.Cut(diag.Text(diag.List{d}, nil), "\n")
	_, msg, _ := strings.Cut(first, ": "+d.Severity.String()+": ")
	return msg
}
