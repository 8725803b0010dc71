package report

import (
	"encoding/xml"
	"flag"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

// golden compares got with testdata/name, or rewrites the file with -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("%s differs from the golden file (run go test -update after checking):\n--- got ---\n%s\n--- want ---\n%s", name, got, want)
	}
}

// svgDoc is what the tests read back from an SVG.
type svgDoc struct {
	root     xml.StartElement
	elements map[string]int // count by local name
	texts    []string       // character data of <text> elements
	series   []string       // data-series attributes of <path> elements
	titles   []string       // character data of <title> elements
	attrs    map[string]int // count by attribute name
	pathD    []string       // d attributes of paths
}

// parseSVG decodes the whole document with encoding/xml (strict mode),
// failing the test on any well-formedness error.
func parseSVG(t *testing.T, s string) svgDoc {
	t.Helper()
	d := xml.NewDecoder(strings.NewReader(s))
	d.Strict = true
	doc := svgDoc{elements: map[string]int{}, attrs: map[string]int{}}
	var stack []string
	var text strings.Builder
	depth := 0
	roots := 0
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v\n%s", err, s)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if depth == 0 {
				doc.root = e
				roots++
			}
			depth++
			doc.elements[e.Name.Local]++
			for _, a := range e.Attr {
				doc.attrs[a.Name.Local]++
				if e.Name.Local == "path" && a.Name.Local == "data-series" {
					doc.series = append(doc.series, a.Value)
				}
				if e.Name.Local == "path" && a.Name.Local == "d" {
					doc.pathD = append(doc.pathD, a.Value)
				}
			}
			stack = append(stack, e.Name.Local)
			text.Reset()
		case xml.CharData:
			text.Write(e)
		case xml.EndElement:
			depth--
			switch stack[len(stack)-1] {
			case "text":
				doc.texts = append(doc.texts, text.String())
			case "title":
				doc.titles = append(doc.titles, text.String())
			}
			stack = stack[:len(stack)-1]
			text.Reset()
		}
	}
	if roots != 1 {
		t.Fatalf("SVG has %d root elements, want 1", roots)
	}
	return doc
}

func (d svgDoc) hasText(s string) bool {
	for _, t := range d.texts {
		if t == s {
			return true
		}
	}
	return false
}

func rootAttr(e xml.StartElement, name string) (string, bool) {
	for _, a := range e.Attr {
		if a.Name.Local == name {
			return a.Value, true
		}
	}
	return "", false
}
